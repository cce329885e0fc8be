//! The guard's loop: bytes from a [`Source`] go through the shared [`Pipeline`]
//! (so alarms are the same, line for line, as `scan` gives on the same bytes);
//! alarms go to the event log and, when they trigger it, to the [`Escalation`].
//!
//! Which alarm may start the escalation: only one in the segment being written.
//! The backlog found at start is read first; a critical alarm there is held,
//! dropped if a later restart (new segment) follows it, and acted on only when
//! the run writes another row in that same segment — an old crash before a
//! restart, or a finished crashed file, stops nothing. Once caught up, a
//! triggering alarm acts at once.

use std::time::{Duration, Instant};

use super::{Activity, Escalation, EventLog, ProcessId};
use crate::alarm::Alarm;
use crate::parse::{SegmentReason, SkipReason};
use crate::pipeline::{Pipeline, PipelineSink};
use crate::source::{Event, Source};

/// Bytes handed to the pipeline at a time.
const FEED_SLICE_BYTES: usize = 16 * 1024;

/// When the loop ends besides the escalation finishing.
#[derive(Debug, Clone, Copy, Default)]
pub struct SuperviseOptions {
    /// End when the file has not grown for this long.
    pub idle_exit: Option<Duration>,
    /// End when this process ends; a live process counts as a run still going.
    pub pid: Option<ProcessId>,
    /// Longest single sleep (bounds reaction to a command's end or a pid's exit).
    pub max_wait: Duration,
}

/// Why the loop ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum End {
    /// Every action was taken, or the run stopped writing after one.
    Escalated,
    /// The file did not grow for the idle time.
    Idle,
    /// The `--pid` process ended.
    PidEnded,
    /// The source has nothing more to give (a scripted source played out).
    SourceEnded,
}

/// What the loop saw and did.
#[derive(Debug, Clone)]
pub struct Summary {
    pub end: End,
    /// Every alarm raised, in file order.
    pub alarms: Vec<Alarm>,
    /// The escalation was started.
    pub acted: bool,
    /// An action failed, was refused or timed out.
    pub failed: bool,
    /// Data rows read.
    pub rows: u64,
}

impl Summary {
    /// 0 no critical alarm acted on; 2 acted; 4 acted but an action failed.
    pub fn exit_code(&self) -> i32 {
        match (self.acted, self.failed) {
            (false, _) => 0,
            (true, false) => 2,
            (true, true) => 4,
        }
    }
}

/// Receives the pipeline's findings as they are made, so that an alarm is acted
/// on at its row, not after the rest of a large chunk has been read.
struct Reactor<'a> {
    escalation: &'a mut Escalation,
    log: &'a mut EventLog,
    alarms: Vec<Alarm>,
    caught_up: bool,
    /// A triggering alarm from the backlog, waiting for proof the segment goes on.
    held: Option<Alarm>,
}

impl Reactor<'_> {
    fn act(&mut self, a: &Alarm) {
        for r in self.escalation.on_alarm(a, Instant::now()) {
            self.log.action(&r);
        }
    }

    fn new_segment(&mut self) {
        if let Some(a) = self.held.take() {
            self.log.note(&format!(
                "the alarm at line {} belongs to a run that was restarted: no action",
                a.line
            ));
        }
    }
}

impl PipelineSink for Reactor<'_> {
    fn alarm(&mut self, a: &Alarm) {
        self.log.alarm(a);
        if self.escalation.triggered_by(a) {
            if self.caught_up {
                self.act(a);
            } else if self.held.is_none() {
                self.held = Some(a.clone());
            }
        }
        self.alarms.push(a.clone());
    }

    fn row(&mut self, _line: u64, _values: &[f64]) {
        if self.caught_up
            && let Some(a) = self.held.take()
        {
            self.log.note(&format!(
                "the run goes on writing after the alarm at line {} found when guard \
                 started: acting on it",
                a.line
            ));
            self.act(&a);
        }
    }

    fn segment(&mut self, _line: u64, _reason: SegmentReason) {
        self.new_segment();
    }

    fn skipped(&mut self, _line: u64, _reason: &SkipReason) {}
}

struct Loop<'a> {
    pipeline: &'a mut Pipeline,
    rx: Reactor<'a>,
    started: Instant,
    /// Bytes of the file as it was when guard started that are still to be read.
    backlog_left: Option<u64>,
}

impl Loop<'_> {
    /// Feed new bytes. Those that were in the file when guard started are the
    /// backlog; the first byte past them is live, even when guard reads slower
    /// than the run writes.
    fn feed(&mut self, bytes: &[u8], now: Instant) {
        let arrival_s = now.duration_since(self.started).as_secs_f64();
        let mut rest = bytes;
        if !self.rx.caught_up
            && let Some(left) = self.backlog_left
        {
            let k = usize::try_from(left).unwrap_or(usize::MAX).min(rest.len());
            self.feed_slices(&rest[..k], arrival_s);
            let left = left - k as u64;
            self.backlog_left = Some(left);
            rest = &rest[k..];
            if left == 0 {
                self.catch_up();
            }
        }
        self.feed_slices(rest, arrival_s);
    }

    /// Feed in slices, and stop once the escalation is complete: what follows
    /// would not change what guard does.
    fn feed_slices(&mut self, bytes: &[u8], arrival_s: f64) {
        for piece in bytes.chunks(FEED_SLICE_BYTES) {
            if self.rx.escalation.finished() {
                return;
            }
            self.pipeline.feed(piece, Some(arrival_s), &mut self.rx);
        }
    }

    /// The backlog is read: from now on a triggering alarm acts at once.
    fn catch_up(&mut self) {
        if self.rx.caught_up {
            return;
        }
        self.rx.caught_up = true;
        self.rx.log.note(&format!(
            "caught up: {} lines read, following live",
            self.pipeline.lines()
        ));
        if let Some(a) = &self.rx.held {
            self.rx.log.note(&format!(
                "a {} alarm at line {} was already in the file: acting only if the run \
                 writes on in that segment",
                serde_json::to_value(a.level)
                    .ok()
                    .and_then(|v| v.as_str().map(str::to_owned))
                    .unwrap_or_default(),
                a.line
            ));
        }
    }

    fn restart(&mut self) {
        self.rx.new_segment();
        self.pipeline.restart(&mut self.rx);
        // A new file's bytes are all new.
        self.catch_up();
    }
}

/// Follow `source` until the escalation finishes, the file goes idle or the
/// `--pid` process ends. Errors reading the source are logged and retried.
pub fn supervise<S: Source>(
    source: &mut S,
    pipeline: &mut Pipeline,
    escalation: &mut Escalation,
    log: &mut EventLog,
    opts: &SuperviseOptions,
) -> Summary {
    let started = Instant::now();
    let max_wait = if opts.max_wait.is_zero() {
        Duration::from_millis(250)
    } else {
        opts.max_wait
    };
    let mut lp = Loop {
        pipeline,
        rx: Reactor {
            escalation,
            log,
            alarms: Vec::new(),
            caught_up: false,
            held: None,
        },
        started,
        backlog_left: None,
    };
    let mut last_growth: Option<Instant> = None;
    let mut last_error: Option<String> = None;
    let end = loop {
        let now = Instant::now();
        let mut quiet = false;
        match source.poll() {
            Ok(Some(Event::Data(bytes))) => {
                last_growth = Some(now);
                if lp.backlog_left.is_none() {
                    lp.backlog_left = source.start_size();
                }
                lp.feed(&bytes, now);
            }
            Ok(Some(Event::Restart(r))) => {
                last_growth = Some(now);
                lp.rx.log.note(&format!(
                    "{}: reading it again from its start",
                    r.describe()
                ));
                lp.restart();
            }
            Ok(Some(Event::Appeared)) => lp.rx.log.note("the file is there: following it"),
            Ok(Some(Event::Missing)) => lp
                .rx
                .log
                .note("the file is gone: keeping what was read, waiting for it to come back"),
            Ok(None) => quiet = true,
            Err(e) => {
                let msg = e.to_string();
                if last_error.as_deref() != Some(msg.as_str()) {
                    lp.rx.log.note(&format!("cannot read the file: {msg}"));
                    last_error = Some(msg);
                }
                quiet = true;
            }
        }
        if quiet {
            lp.catch_up();
        }
        let pid_alive = opts.pid.map(|p| p.alive());
        let activity = Activity {
            last_growth,
            pid_alive,
        };
        for r in lp.rx.escalation.tick(Instant::now(), &activity) {
            lp.rx.log.action(&r);
        }
        if lp.rx.escalation.finished() {
            break End::Escalated;
        }
        if !quiet {
            continue;
        }
        if lp.rx.escalation.busy() {
            // A command is running: keep reading, check it often, never exit under it.
            source.wait(max_wait.min(Duration::from_millis(20)));
            continue;
        }
        if pid_alive == Some(false) {
            break End::PidEnded;
        }
        if source.ended() {
            break End::SourceEnded;
        }
        let now = Instant::now();
        let idle_since = last_growth.unwrap_or(started);
        let mut wait = max_wait;
        if let Some(idle) = opts.idle_exit {
            let due = idle_since + idle;
            if now >= due {
                break End::Idle;
            }
            wait = wait.min(due - now);
        }
        if let Some(due) = lp.rx.escalation.next_deadline() {
            wait = wait.min(due.saturating_duration_since(now));
        }
        source.wait(wait);
    };
    if let Some(a) = &lp.rx.held {
        lp.rx.log.note(&format!(
            "the alarm at line {} was in the file before guard started and the run wrote \
             nothing after it: no action taken",
            a.line
        ));
    }
    Summary {
        end,
        alarms: lp.rx.alarms,
        acted: lp.rx.escalation.acted(),
        failed: lp.rx.escalation.any_failed(),
        rows: lp.pipeline.rows(),
    }
}
