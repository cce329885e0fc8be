//! Many runs at once: one [`RunRow`] per followed history with what a person
//! scanning a parameter study needs — state, progress, simulated time, growth
//! per step, overflow forecast, age of the last output and whether the run has
//! stalled — and the worst-first order in which to show them. The rows are
//! plain data updated from the pipeline's output ([`RunRow`] is a
//! [`Sink`]); following the files is [`tracker`]'s job, finding them is
//! [`crate::glob`]'s, and the shared kernel notifications are [`hint`]'s.

pub mod hint;
pub mod tracker;

use std::cmp::Ordering;
use std::path::PathBuf;

use crate::alarm::Alarm;
use crate::detect::Status;
use crate::finding::Level;
use crate::parse::roles::{Role, RoleMap};
use crate::parse::{Schema, SegmentReason};
use crate::pipeline::sink::{Flow, Note, Progress, Sink};
use crate::readout::Readouts;

pub use tracker::{Fleet, FleetConfig};

/// What a row says about its run, worst first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum RunState {
    /// A critical alarm in the segment being written.
    Critical,
    /// A warning in the segment being written.
    Warning,
    /// No new output for longer than the stall limit (or the file vanished).
    Stalled,
    /// The file does not exist yet, or cannot be read.
    Waiting,
    /// Rows arrive and no alarm stands.
    Healthy,
}

impl RunState {
    /// The word shown for the state (states are never told by colour alone).
    pub fn word(self) -> &'static str {
        match self {
            RunState::Critical => "CRITICAL",
            RunState::Warning => "WARNING",
            RunState::Stalled => "STALLED",
            RunState::Waiting => "WAITING",
            RunState::Healthy => Level::Ok.word(),
        }
    }

    /// The monitoring-plugin code of the state: 0 OK, 1 warning, 2 critical,
    /// 3 unknown (nothing to judge yet, or output stopped).
    pub fn plugin_code(self) -> u8 {
        match self {
            RunState::Healthy => 0,
            RunState::Warning => 1,
            RunState::Critical => 2,
            RunState::Stalled | RunState::Waiting => 3,
        }
    }
}

/// Where the followed file stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FileState {
    /// Not seen yet.
    Waiting,
    /// Seen and being read.
    Reading,
    /// Seen before, gone now (what was read is kept).
    Missing,
}

/// One followed run: the fleet view's row and the metrics' labels and values.
#[derive(Debug, Clone)]
pub struct RunRow {
    /// Short name for display and the metrics' `run` label.
    pub name: String,
    /// The history file.
    pub path: PathBuf,
    /// Whether the file is there.
    pub file: FileState,
    /// Worst alarm level in the segment being written.
    pub level: Level,
    /// Message of the worst alarm of the segment (the latest at that level).
    pub alarm_message: Option<String>,
    /// Data rows read, all segments.
    pub rows_total: u64,
    /// Lines skipped as unreadable, all segments.
    pub skipped_total: u64,
    /// Alarms raised at warning level, all segments.
    pub warnings_total: u64,
    /// Alarms raised at critical level, all segments.
    pub criticals_total: u64,
    /// Times the file was truncated, replaced or rewritten, or a new segment began.
    pub restarts_total: u64,
    /// Bytes read from the file (all versions of it).
    pub read_bytes_total: u64,
    /// Latest simulated time (time column), when there is one.
    pub sim_time_s: Option<f64>,
    /// What the run's readouts show (growth per step with its standing, the
    /// overflow forecast, a blow-up already seen), decided as on the dashboard.
    pub readouts: Readouts,
    /// Monotonic seconds at which the readouts' wall-clock forecast was made.
    pub forecast_at_s: Option<f64>,
    /// Monotonic seconds (same clock as the tracker's) of the last new bytes.
    pub last_data_s: Option<f64>,
    /// A problem reaching the file (permission, configuration), shown as a note.
    pub note: Option<String>,
    time_col: Option<usize>,
    arrival_s: Option<f64>,
}

impl RunRow {
    /// A row for `path`, shown as `name`, before anything was read.
    pub fn new(name: String, path: PathBuf) -> Self {
        Self {
            name,
            path,
            file: FileState::Waiting,
            level: Level::Ok,
            alarm_message: None,
            rows_total: 0,
            skipped_total: 0,
            warnings_total: 0,
            criticals_total: 0,
            restarts_total: 0,
            read_bytes_total: 0,
            sim_time_s: None,
            readouts: Readouts::default(),
            forecast_at_s: None,
            last_data_s: None,
            note: None,
            time_col: None,
            arrival_s: None,
        }
    }

    /// Set the arrival instant of the bytes about to be fed (monotonic seconds).
    pub fn arriving(&mut self, now_s: f64, bytes: usize) {
        self.arrival_s = Some(now_s);
        self.last_data_s = Some(now_s);
        self.read_bytes_total += bytes as u64;
        self.file = FileState::Reading;
    }

    /// Take the latest estimates of the pipeline's detectors.
    pub fn take_status(&mut self, status: &Status) {
        self.readouts.status(status);
        self.forecast_at_s = self.readouts.evidence.forecast_wall_s.and(self.arrival_s);
    }

    /// Growth per solver step worth showing: a confirmed mode's, or the
    /// latest fit's when it finds no growth ([`Readouts`]).
    pub fn growth_per_step(&self) -> Option<f64> {
        self.readouts.growth_per_step()
    }

    /// Seconds since the last new output, at monotonic `now_s`.
    pub fn age_s(&self, now_s: f64) -> Option<f64> {
        self.last_data_s.map(|t| (now_s - t).max(0.0))
    }

    /// True when the run wrote before but nothing came for `stall_after_s`,
    /// or its file vanished.
    pub fn stalled(&self, now_s: f64, stall_after_s: f64) -> bool {
        self.file == FileState::Missing || self.age_s(now_s).is_some_and(|a| a > stall_after_s)
    }

    /// Wall-clock seconds left to overflow at `now_s` (the forecast counted down).
    pub fn forecast_left_s(&self, now_s: f64) -> Option<f64> {
        let (f, at) = (self.readouts.evidence.forecast_wall_s?, self.forecast_at_s?);
        Some((f - (now_s - at)).max(0.0))
    }

    /// Fraction of the simulated end time reached.
    pub fn progress(&self, end_time_s: Option<f64>) -> Option<f64> {
        let end = end_time_s.filter(|e| *e > 0.0)?;
        Some((self.sim_time_s? / end).clamp(0.0, 1.0))
    }

    /// The row's state at `now_s`: alarms first, then a stalled or missing
    /// file, then a file not there yet.
    pub fn state(&self, now_s: f64, stall_after_s: f64) -> RunState {
        match self.level {
            Level::Critical => RunState::Critical,
            Level::Warning => RunState::Warning,
            Level::Ok if self.stalled(now_s, stall_after_s) => RunState::Stalled,
            Level::Ok if self.file == FileState::Waiting || self.note.is_some() => {
                RunState::Waiting
            }
            Level::Ok => RunState::Healthy,
        }
    }
}

impl Sink for RunRow {
    fn alarm(&mut self, alarm: &Alarm) {
        match alarm.level {
            Level::Critical => self.criticals_total += 1,
            Level::Warning => self.warnings_total += 1,
            Level::Ok => {}
        }
        self.readouts.alarm(alarm);
        if alarm.level >= self.level {
            self.level = alarm.level;
            self.alarm_message = Some(alarm.message.clone());
        }
    }

    fn schema(&mut self, _line: u64, _schema: &Schema, roles: &RoleMap) {
        self.time_col = roles.find(Role::Time);
    }

    fn row(&mut self, _line: u64, values: &[f64]) {
        self.rows_total += 1;
        if let Some(t) = crate::detect::finite_at(values, self.time_col) {
            self.sim_time_s = Some(t);
        }
    }

    fn segment(&mut self, _line: u64, _reason: SegmentReason) {
        self.restarts_total += 1;
        self.level = Level::Ok;
        self.alarm_message = None;
        self.readouts.segment();
        self.forecast_at_s = None;
    }

    fn skipped(&mut self, _line: u64, reason: &crate::parse::SkipReason) {
        if !reason.is_note() {
            self.skipped_total += 1;
        }
    }

    fn note(&mut self, note: &Note) {
        match note {
            Note::Arrived { bytes, arrival_s } => {
                self.arriving(*arrival_s, *bytes);
                self.note = None;
            }
            Note::Appeared => self.file = FileState::Reading,
            Note::Missing => self.file = FileState::Missing,
            Note::ReadError(e) => self.note = Some(e.clone()),
            Note::Restarted(_) | Note::CaughtUp { .. } | Note::Shrank { .. } => {}
        }
    }

    fn checkpoint(&mut self, _arrival_s: Option<f64>, progress: &mut dyn Progress) -> Flow {
        self.take_status(progress.status());
        Flow::Go
    }
}

/// Order rows worst first: state, then the sooner forecast overflow, then the
/// larger growth per step, then the older output, then the name.
pub fn worst_first(rows: &mut [&RunRow], now_s: f64, stall_after_s: f64) {
    rows.sort_by(|a, b| compare(a, b, now_s, stall_after_s));
}

fn compare(a: &RunRow, b: &RunRow, now_s: f64, stall_after_s: f64) -> Ordering {
    let inf = f64::INFINITY;
    a.state(now_s, stall_after_s)
        .cmp(&b.state(now_s, stall_after_s))
        .then_with(|| {
            let fa = a.forecast_left_s(now_s).unwrap_or(inf);
            let fb = b.forecast_left_s(now_s).unwrap_or(inf);
            fa.total_cmp(&fb)
        })
        .then_with(|| {
            let ga = a.growth_per_step().unwrap_or(0.0);
            let gb = b.growth_per_step().unwrap_or(0.0);
            gb.total_cmp(&ga)
        })
        .then_with(|| {
            let aa = a.age_s(now_s).unwrap_or(0.0);
            let ab = b.age_s(now_s).unwrap_or(0.0);
            ab.total_cmp(&aa)
        })
        .then_with(|| a.name.cmp(&b.name))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::finding::Evidence;

    fn alarm(level: Level) -> Alarm {
        Alarm {
            level,
            detector: "growth",
            line: 10,
            time: None,
            message: format!("{level:?} here"),
            evidence: Evidence::default(),
        }
    }

    /// A confirmed growing mode forecast to overflow in `wall_s` seconds.
    fn forecast(wall_s: f64) -> Status {
        Status {
            evidence: Evidence {
                growth_per_step: Some(1.1),
                forecast_wall_s: Some(wall_s),
                ..Evidence::default()
            },
            growth_confirmed: true,
            levels: vec![],
        }
    }

    fn row(name: &str) -> RunRow {
        let mut r = RunRow::new(name.into(), PathBuf::from(name));
        r.arriving(0.0, 10);
        r
    }

    #[test]
    fn state_takes_the_worst_alarm_and_a_new_segment_clears_it() {
        let mut r = row("a");
        assert_eq!(r.state(1.0, 60.0), RunState::Healthy);
        r.alarm(&alarm(Level::Critical));
        r.alarm(&alarm(Level::Warning));
        assert_eq!(r.state(1.0, 60.0), RunState::Critical);
        assert_eq!(r.alarm_message.as_deref(), Some("Critical here"));
        assert_eq!((r.criticals_total, r.warnings_total), (1, 1));
        r.segment(20, SegmentReason::Truncated);
        assert_eq!(r.state(1.0, 60.0), RunState::Healthy);
        assert_eq!(r.criticals_total, 1, "counters survive a new segment");
    }

    #[test]
    fn a_quiet_run_is_stalled_and_an_unseen_file_is_waiting() {
        let r = row("a");
        assert_eq!(r.state(59.0, 60.0), RunState::Healthy);
        assert_eq!(r.state(61.0, 60.0), RunState::Stalled);
        let w = RunRow::new("w".into(), PathBuf::from("w"));
        assert_eq!(w.state(1000.0, 60.0), RunState::Waiting);
        assert_eq!(w.state(1000.0, 60.0).plugin_code(), 3);
    }

    #[test]
    fn forecast_counts_down_and_progress_is_clamped() {
        let mut r = row("a");
        r.take_status(&forecast(100.0));
        // Tolerance: plain subtraction of small integers, exact in f64.
        assert!((r.forecast_left_s(30.0).unwrap() - 70.0).abs() < 1e-12);
        assert!(r.forecast_left_s(500.0).unwrap().abs() < 1e-12);
        r.sim_time_s = Some(0.5);
        assert!((r.progress(Some(2.0)).unwrap() - 0.25).abs() < 1e-12);
        r.sim_time_s = Some(3.0);
        assert!((r.progress(Some(2.0)).unwrap() - 1.0).abs() < 1e-12);
        assert!(r.progress(None).is_none());
    }

    #[test]
    fn worst_first_puts_critical_then_sooner_overflow_then_growth() {
        let mut c1 = row("c1");
        c1.alarm(&alarm(Level::Critical));
        c1.take_status(&forecast(300.0));
        let mut c2 = row("c2");
        c2.alarm(&alarm(Level::Critical));
        c2.take_status(&forecast(20.0));
        let mut w = row("w");
        w.alarm(&alarm(Level::Warning));
        let mut h_grow = row("h-grow");
        h_grow.take_status(&Status {
            evidence: Evidence {
                growth_per_step: Some(1.001),
                ..Evidence::default()
            },
            growth_confirmed: true,
            levels: vec![],
        });
        let h_calm = row("h-calm");
        let mut stalled = row("s");
        stalled.last_data_s = Some(-500.0);
        let waiting = RunRow::new("x".into(), PathBuf::from("x"));
        let mut v = vec![&h_calm, &waiting, &w, &c1, &stalled, &h_grow, &c2];
        worst_first(&mut v, 1.0, 60.0);
        let names: Vec<&str> = v.iter().map(|r| r.name.as_str()).collect();
        assert_eq!(names, ["c2", "c1", "w", "s", "x", "h-grow", "h-calm"]);
    }
}
