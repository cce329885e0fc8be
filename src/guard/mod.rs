//! The guard's loop: a followed [`Source`] is driven through the shared
//! [`Pipeline`] by the one follow loop ([`Follow`]), so the alarms are the
//! same, line for line, as `scan` gives on the same bytes. What the guard does
//! with them is its [`Reactor`](reactor::Reactor)'s job (a [`Sink`]); this
//! loop keeps the escalation's clock going and decides when to end: the
//! escalation finished, the file idle for the idle time, or the `--pid`
//! process gone.

mod reactor;

use std::time::{Duration, Instant};

use crate::act::{Activity, Escalation, EventLog, ProcessId};
use crate::alarm::Alarm;
use crate::pipeline::Pipeline;
use crate::pipeline::drive::{Follow, Polled};
use crate::source::Source;

use reactor::Reactor;

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
    let mut follow = Follow::new(started, FEED_SLICE_BYTES);
    let mut rx = Reactor::new(escalation, log);
    let mut last_growth: Option<Instant> = None;
    let end = loop {
        let polled = follow.poll(source, pipeline, &mut rx, Instant::now());
        if matches!(polled, Polled::Data(_) | Polled::Restarted) {
            last_growth = Some(Instant::now());
        }
        let quiet = matches!(polled, Polled::Quiet | Polled::Failed);
        let pid_alive = opts.pid.map(|p| p.alive());
        let activity = Activity {
            last_growth,
            pid_alive,
        };
        for r in rx.escalation.tick(Instant::now(), &activity) {
            rx.log.action(&r);
        }
        if rx.escalation.finished() {
            break End::Escalated;
        }
        if !quiet {
            continue;
        }
        if rx.escalation.busy() {
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
        if let Some(due) = rx.escalation.next_deadline() {
            wait = wait.min(due.saturating_duration_since(now));
        }
        source.wait(wait);
    };
    rx.finish();
    Summary {
        end,
        acted: rx.escalation.acted(),
        failed: rx.escalation.any_failed(),
        alarms: rx.alarms,
        rows: pipeline.rows(),
    }
}
