//! Follow many histories from one thread. Each run has a [`Follower`] (the same
//! one `guard` and `watch` use, here without its own notification watch), a
//! [`Pipeline`] and a [`RunRow`]. Polls are staggered over the poll interval so
//! that the filesystem sees an even trickle of opens and reads rather than a
//! burst, and each file is polled no more often than that interval unless a
//! notification from the one shared watcher names it. Such an early poll comes
//! no sooner than `hinted_gap` after the run's last poll, and all runs together
//! get at most `hinted_polls_per_s` of them (a token bucket, served round the
//! fleet): a few busy runs are seen within a fraction of a second, while a
//! fleet of hundreds of runs written ten times a second costs hardly more
//! than polling alone. Only the bytes past each file's offset are read. The
//! patterns are expanded again every `rescan_interval`, so runs that start
//! later join the fleet.

use std::collections::HashMap;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::pipeline::Pipeline;
use crate::pipeline::drive::Follow;
use crate::settings::{ReadSpec, Settings};
use crate::source::{FollowConfig, Follower};

use super::RunRow;
use super::hint::SharedHint;
use crate::glob::{Found, expand};

/// How the fleet is followed.
#[derive(Debug, Clone)]
pub struct FleetConfig {
    /// Period of each file's poll (size and identity check, fresh open, read).
    pub poll_interval: Duration,
    /// Shortest gap between two polls of a file named by a notification.
    pub hinted_gap: Duration,
    /// Most polls per second, over the whole fleet, that notifications may
    /// add to the scheduled ones.
    pub hinted_polls_per_s: f64,
    /// Use one kernel-notification watcher as a wake-up hint.
    pub notify: bool,
    /// Largest read per poll and file (a backlog comes in several polls' worth
    /// of chunks, all read in the same poll).
    pub chunk_bytes: usize,
    /// Period of the expansion of the patterns (new runs join).
    pub rescan_interval: Duration,
    /// Most runs followed; further matches are reported, not followed.
    pub max_runs: usize,
}

impl Default for FleetConfig {
    fn default() -> Self {
        Self {
            poll_interval: Duration::from_secs(3),
            hinted_gap: Duration::from_millis(500),
            hinted_polls_per_s: 50.0,
            notify: true,
            chunk_bytes: 64 * 1024,
            rescan_interval: Duration::from_secs(10),
            max_runs: 5000,
        }
    }
}

struct Run {
    follower: Follower,
    follow: Follow,
    pipeline: Pipeline,
    row: RunRow,
}

/// When a run is polled; kept apart from the runs, in one small array, so that
/// finding the runs due touches little memory.
#[derive(Debug, Clone, Copy)]
struct Sched {
    next_poll: Instant,
    last_poll: Option<Instant>,
    /// Named by a notification since its last poll.
    hinted: bool,
}

/// The followed runs; see the module documentation.
pub struct Fleet {
    patterns: Vec<String>,
    input: ReadSpec,
    cfg: FleetConfig,
    runs: Vec<Run>,
    sched: Vec<Sched>,
    by_key: HashMap<(PathBuf, OsString), usize>,
    hint: Option<SharedHint>,
    /// Early polls that may be spent now, and when they were last counted.
    tokens: f64,
    tokens_at: Instant,
    /// Where the next round of early polls starts (fairness).
    cursor: usize,
    t0: Instant,
    last_rescan: Option<Instant>,
    /// Matches left out because of `max_runs`.
    pub left_out: usize,
}

fn key(path: &Path) -> Option<(PathBuf, OsString)> {
    let name = path.file_name()?.to_os_string();
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Some((dir, name))
}

impl Fleet {
    /// Follow the files named by `patterns` (plain paths or shell patterns),
    /// reading each with the settings `input` gives (and the `rhoscope.toml`
    /// beside it). Times in the rows are seconds since `t0`.
    pub fn new(patterns: Vec<String>, input: ReadSpec, cfg: FleetConfig, t0: Instant) -> Self {
        let hint = if cfg.notify { SharedHint::new() } else { None };
        let mut fleet = Self {
            patterns,
            input,
            cfg,
            runs: Vec::new(),
            sched: Vec::new(),
            by_key: HashMap::new(),
            hint,
            tokens: 0.0,
            tokens_at: t0,
            cursor: 0,
            t0,
            last_rescan: None,
            left_out: 0,
        };
        fleet.rescan(t0);
        fleet
    }

    /// Seconds since `t0` at `now`.
    pub fn secs(&self, now: Instant) -> f64 {
        now.saturating_duration_since(self.t0).as_secs_f64()
    }

    /// The rows, in the order the runs joined.
    pub fn rows(&self) -> impl Iterator<Item = &RunRow> {
        self.runs.iter().map(|r| &r.row)
    }

    /// Number of runs followed.
    pub fn len(&self) -> usize {
        self.runs.len()
    }

    /// True when no file matched yet.
    pub fn is_empty(&self) -> bool {
        self.runs.is_empty()
    }

    /// True when kernel notifications are in use.
    pub fn notified(&self) -> bool {
        self.hint.is_some()
    }

    /// Expand the patterns again and add the runs not followed yet; returns
    /// how many joined. New runs get their first poll spread over the interval.
    pub fn rescan(&mut self, now: Instant) -> usize {
        self.last_rescan = Some(now);
        let mut found: Vec<Found> = Vec::new();
        for p in &self.patterns {
            found.extend(expand(p));
        }
        let fresh: Vec<Found> = found
            .into_iter()
            .filter(|f| key(&f.path).is_some_and(|k| !self.by_key.contains_key(&k)))
            .collect();
        let room = self.cfg.max_runs.saturating_sub(self.runs.len());
        self.left_out = fresh.len().saturating_sub(room);
        let n = fresh.len().min(room);
        for (i, f) in fresh.into_iter().take(room).enumerate() {
            let offset = self.cfg.poll_interval.mul_f64(i as f64 / n.max(1) as f64);
            self.add(f, now + offset);
        }
        n
    }

    fn add(&mut self, f: Found, first_poll: Instant) {
        let Some(k) = key(&f.path) else {
            return;
        };
        let mut row = RunRow::new(f.name, f.path.clone());
        let settings = match Settings::load(&self.input, &f.path) {
            Ok(s) => s,
            Err(e) => {
                row.note = Some(format!("{e:#}"));
                Settings::default()
            }
        };
        if let Some(h) = self.hint.as_mut() {
            h.watch(&f.path, self.runs.len());
        }
        let follower = Follower::new(
            f.path,
            FollowConfig {
                poll_interval: self.cfg.poll_interval,
                notify: false,
                chunk_bytes: self.cfg.chunk_bytes,
            },
        );
        self.by_key.insert(k, self.runs.len());
        self.runs.push(Run {
            follower,
            follow: Follow::new(self.t0, self.cfg.chunk_bytes),
            pipeline: Pipeline::new(&settings),
            row,
        });
        self.sched.push(Sched {
            next_poll: first_poll,
            last_poll: None,
            hinted: false,
        });
    }

    /// Poll every run that is due at `now` (and rescan when due); returns the
    /// number of runs polled.
    pub fn step(&mut self, now: Instant) -> usize {
        if self
            .last_rescan
            .is_none_or(|t| now.saturating_duration_since(t) >= self.cfg.rescan_interval)
        {
            self.rescan(now);
        }
        self.take_hints();
        let rate = self.cfg.hinted_polls_per_s.max(0.0);
        let since = now.saturating_duration_since(self.tokens_at).as_secs_f64();
        // At most one second's worth of early polls can be saved up.
        self.tokens = (self.tokens + since * rate).min(rate.max(1.0));
        self.tokens_at = self.tokens_at.max(now);
        let n = self.runs.len();
        let mut polled = 0;
        let mut next_cursor = self.cursor;
        for k in 0..n {
            let i = (self.cursor + k) % n;
            let s = self.sched[i];
            let scheduled = s.next_poll <= now;
            let early = !scheduled
                && s.hinted
                && self.tokens >= 1.0
                && s.last_poll.is_none_or(|t| t + self.cfg.hinted_gap <= now);
            if !(scheduled || early) {
                continue;
            }
            if early {
                self.tokens -= 1.0;
                next_cursor = i + 1;
            }
            polled += 1;
            if let Some(run) = self.runs.get_mut(i) {
                if s.hinted {
                    run.follower.nudge();
                }
                run.follow
                    .drain(&mut run.follower, &mut run.pipeline, &mut run.row, now);
            }
            self.sched[i] = Sched {
                next_poll: now + self.cfg.poll_interval,
                last_poll: Some(now),
                hinted: false,
            };
        }
        self.cursor = if n == 0 { 0 } else { next_cursor % n };
        polled
    }

    /// Mark the runs that notifications named since the last call.
    fn take_hints(&mut self) {
        let Some(h) = self.hint.as_mut() else {
            return;
        };
        let sched = &mut self.sched;
        let overflow = h.drain(|i| {
            if let Some(s) = sched.get_mut(i) {
                s.hinted = true;
            }
        });
        if overflow {
            for s in sched.iter_mut() {
                s.hinted = true;
            }
        }
    }

    /// Poll every run at once, whatever its schedule (a one-off look).
    pub fn poll_all(&mut self, now: Instant) -> usize {
        for s in &mut self.sched {
            s.next_poll = now;
        }
        self.step(now)
    }

    /// The next instant any run is due (or a rescan), counting the early
    /// polls that notifications asked for and the budget allows.
    pub fn next_due(&self) -> Instant {
        let rescan = self
            .last_rescan
            .map_or(self.t0, |t| t + self.cfg.rescan_interval);
        let mut due = rescan;
        let mut hinted: Option<Instant> = None;
        for s in &self.sched {
            due = due.min(s.next_poll);
            if s.hinted {
                let at = s.last_poll.map_or(self.t0, |t| t + self.cfg.hinted_gap);
                hinted = Some(hinted.map_or(at, |h: Instant| h.min(at)));
            }
        }
        let rate = self.cfg.hinted_polls_per_s;
        if let Some(at) = hinted
            && rate > 0.0
        {
            let wait_s = ((1.0 - self.tokens) / rate).max(0.0);
            due = due.min(at.max(self.tokens_at + Duration::from_secs_f64(wait_s)));
        }
        due
    }

    /// Sleep until the next run is due or a notification names a file, for at
    /// most `max`, and no less than `min_sleep` (so a busy fleet is polled in
    /// small batches rather than one file per wake-up).
    pub fn wait(&self, max: Duration, min_sleep: Duration) {
        let now = Instant::now();
        let d = self
            .next_due()
            .saturating_duration_since(now)
            .max(min_sleep)
            .min(max);
        match &self.hint {
            Some(h) => {
                if h.wait(d) {
                    // Let a burst of writes gather before polling.
                    std::thread::sleep(min_sleep);
                }
            }
            None => std::thread::sleep(d),
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::fleet::FileState;
    use std::io::Write;

    fn healthy_rows(from: usize, to: usize) -> String {
        // Lightly damped free vibration x = e^(−ζωt)·cos(ωt), ω = 2π·5, ζ = 0.02.
        let mut s = String::new();
        for i in from..to {
            let t = i as f64 * 1e-3;
            let w = 2.0 * std::f64::consts::PI * 5.0;
            let x = (-0.02 * w * t).exp() * (w * t).cos();
            s.push_str(&format!("{t:.6},{x:.9e}\n"));
        }
        s
    }

    #[test]
    fn runs_join_are_read_incrementally_and_vanish_as_missing() {
        let dir = tempfile::tempdir().unwrap();
        let run_dir = |n: &str| {
            let d = dir.path().join(n);
            std::fs::create_dir_all(&d).unwrap();
            d.join("history.csv")
        };
        let a = run_dir("a");
        std::fs::write(&a, format!("time,displacement\n{}", healthy_rows(0, 100))).unwrap();
        let cfg = FleetConfig {
            poll_interval: Duration::from_millis(1),
            rescan_interval: Duration::from_millis(1),
            notify: false,
            ..FleetConfig::default()
        };
        let t0 = Instant::now();
        let pattern = format!("{}/*/history.csv", dir.path().display());
        let mut fleet = Fleet::new(vec![pattern], ReadSpec::default(), cfg, t0);
        assert_eq!(fleet.len(), 1);
        std::thread::sleep(Duration::from_millis(5));
        fleet.step(Instant::now());
        let r = fleet.rows().next().unwrap();
        assert_eq!((r.name.as_str(), r.rows_total), ("a", 100));
        assert!(
            (r.sim_time_s.unwrap() - 0.099).abs() < 1e-9,
            "last time written"
        );

        // Appended lines are read, and only those.
        let mut f = std::fs::OpenOptions::new().append(true).open(&a).unwrap();
        f.write_all(healthy_rows(100, 150).as_bytes()).unwrap();
        let b = run_dir("b");
        std::fs::write(&b, format!("time,displacement\n{}", healthy_rows(0, 10))).unwrap();
        std::thread::sleep(Duration::from_millis(5));
        fleet.step(Instant::now());
        std::thread::sleep(Duration::from_millis(5));
        fleet.step(Instant::now());
        assert_eq!(fleet.len(), 2, "a new run joins on a rescan");
        let rows: Vec<&RunRow> = fleet.rows().collect();
        assert_eq!(rows[0].rows_total, 150);
        let size_a = std::fs::metadata(&a).unwrap().len();
        assert_eq!(rows[0].read_bytes_total, size_a, "each byte read once");
        assert_eq!(rows[1].rows_total, 10);

        std::fs::remove_file(&b).unwrap();
        std::thread::sleep(Duration::from_millis(5));
        fleet.step(Instant::now());
        let rows: Vec<&RunRow> = fleet.rows().collect();
        assert_eq!(rows[1].file, FileState::Missing);
        assert_eq!(rows[1].rows_total, 10, "what was read is kept");
    }

    #[test]
    fn first_polls_are_spread_over_the_interval() {
        let dir = tempfile::tempdir().unwrap();
        for i in 0..10 {
            std::fs::write(dir.path().join(format!("r{i}.csv")), "time,x\n").unwrap();
        }
        let cfg = FleetConfig {
            poll_interval: Duration::from_secs(10),
            notify: false,
            ..FleetConfig::default()
        };
        let t0 = Instant::now();
        let pattern = format!("{}/*.csv", dir.path().display());
        let mut fleet = Fleet::new(vec![pattern], ReadSpec::default(), cfg, t0);
        assert_eq!(fleet.step(t0), 1, "one run due at the start");
        assert_eq!(fleet.step(t0 + Duration::from_millis(4_500)), 4);
        assert_eq!(fleet.step(t0 + Duration::from_millis(9_999)), 5);
        assert_eq!(fleet.step(t0 + Duration::from_millis(10_001)), 1);
    }

    #[test]
    fn notifications_bring_runs_forward_within_the_budget_and_round_the_fleet() {
        let dir = tempfile::tempdir().unwrap();
        let path = |i: usize| dir.path().join(format!("r{i}.csv"));
        for i in 0..10 {
            std::fs::write(
                path(i),
                format!("time,displacement\n{}", healthy_rows(0, 20)),
            )
            .unwrap();
        }
        let cfg = FleetConfig {
            poll_interval: Duration::from_secs(3600),
            hinted_polls_per_s: 2.0,
            ..FleetConfig::default()
        };
        let t0 = Instant::now();
        let pattern = format!("{}/*.csv", dir.path().display());
        let mut fleet = Fleet::new(vec![pattern], ReadSpec::default(), cfg, t0);
        if !fleet.notified() {
            eprintln!("skipped: no kernel notifications here");
            return;
        }
        assert_eq!(fleet.step(t0), 1, "only the first run is due by schedule");
        for i in 0..10 {
            let mut f = std::fs::OpenOptions::new()
                .append(true)
                .open(path(i))
                .unwrap();
            f.write_all(healthy_rows(20, 21).as_bytes()).unwrap();
        }
        // Let every event arrive (the kernel queues them at once; allow for a
        // slow machine).
        let hint = fleet.hint.as_ref().unwrap();
        assert!(hint.wait(Duration::from_secs(10)));
        std::thread::sleep(Duration::from_millis(100));

        // Two early polls a second, whoever asked first, round the fleet.
        let mut t = t0;
        for round in 0..5 {
            t += Duration::from_secs(1);
            assert_eq!(fleet.step(t), 2, "round {round}: the budget");
            assert_eq!(fleet.step(t), 0, "round {round}: budget spent");
        }
        let rows: Vec<u64> = fleet.rows().map(|r| r.rows_total).collect();
        assert_eq!(rows, vec![21; 10], "every run read its new row once");

        // The polls' own opens and reads raise nothing: the fleet goes quiet.
        std::thread::sleep(Duration::from_millis(100));
        assert_eq!(fleet.step(t + Duration::from_secs(10)), 0);
    }
}
