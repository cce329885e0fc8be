//! The dashboard's armed stop actions on a thread of their own, with their own
//! timer, so that drawing can never delay a due action: alarms come straight
//! from the data thread (and a stop confirmed by hand from the loop) through a
//! [`StopHandle`] that never blocks; the escalation's grace periods and
//! commands are advanced every tick whatever the screen does; what was done
//! goes back to the loop as [`Msg::StopReport`], queued here while the loop's
//! channel is full. [`Armed`] is the escalation of `guard` with its event log
//! and its own look at whether the followed file still grows.

use std::collections::VecDeque;
use std::path::PathBuf;
use std::sync::atomic::Ordering;
use std::sync::mpsc::{self, Receiver, RecvTimeoutError, Sender, SyncSender, TrySendError};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant, SystemTime};

use crate::act::{ActionReport, Activity, Escalation, EventLog, ProcessId};
use crate::alarm::Alarm;

use super::update::Msg;
use super::worker::Worker;

/// Default time between two advances of the actions.
pub const TICK: Duration = Duration::from_millis(100);

/// The armed stop actions, as the thread drives them: each call returns one
/// line per step taken and whether every step went well, or `None` when
/// nothing was done.
pub trait StopActions: Send {
    /// An alarm to act on (a critical one confirmed by hand, or one raised
    /// while armed for alarms).
    fn on_alarm(&mut self, alarm: &Alarm, now: Instant) -> Option<(bool, Vec<String>)>;
    /// Advance pending steps (grace periods, commands).
    fn tick(&mut self, now: Instant) -> Option<(bool, Vec<String>)>;
}

/// No actions armed.
pub struct NoActions;

impl StopActions for NoActions {
    fn on_alarm(&mut self, _: &Alarm, _: Instant) -> Option<(bool, Vec<String>)> {
        None
    }
    fn tick(&mut self, _: Instant) -> Option<(bool, Vec<String>)> {
        None
    }
}

/// Hands alarms to the actions' thread; cloneable, never blocks.
#[derive(Clone, Default)]
pub struct StopHandle(Option<Sender<Alarm>>);

impl StopHandle {
    /// A handle that goes nowhere (nothing armed, tests).
    pub fn none() -> Self {
        Self(None)
    }

    /// Hand `alarm` to the actions.
    pub fn alarm(&self, alarm: &Alarm) {
        if let Some(tx) = &self.0 {
            let _ = tx.send(alarm.clone());
        }
    }
}

/// The thread running the armed actions.
pub struct Stopper {
    worker: Worker,
    handle: StopHandle,
}

impl Stopper {
    /// Start driving `actions` every `every`, reporting to the loop through `ui`.
    pub fn spawn(mut actions: Box<dyn StopActions>, ui: SyncSender<Msg>, every: Duration) -> Self {
        let (tx, rx) = mpsc::channel::<Alarm>();
        let worker = Worker::spawn_vital("the stop actions' thread", ui.clone(), move |flag| {
            let mut out = Outbox::new(ui);
            let mut senders_gone = false;
            while !flag.load(Ordering::Relaxed) {
                for a in next_alarms(&rx, every, &mut senders_gone) {
                    out.push(actions.on_alarm(&a, Instant::now()));
                }
                out.push(actions.tick(Instant::now()));
                out.flush();
            }
        });
        Self {
            worker,
            handle: StopHandle(Some(tx)),
        }
    }

    /// A handle for the data thread or the loop.
    pub fn handle(&self) -> StopHandle {
        self.handle.clone()
    }

    /// Stop advancing the actions and wait for the thread (at most one tick).
    pub fn stop(self) {
        self.worker.stop();
    }
}

/// Alarms that arrived within `every` (waiting at most that long).
fn next_alarms(rx: &Receiver<Alarm>, every: Duration, senders_gone: &mut bool) -> Vec<Alarm> {
    if *senders_gone {
        std::thread::sleep(every);
        return Vec::new();
    }
    let mut got = Vec::new();
    match rx.recv_timeout(every) {
        Ok(a) => got.push(a),
        Err(RecvTimeoutError::Timeout) => {}
        Err(RecvTimeoutError::Disconnected) => *senders_gone = true,
    }
    got.extend(rx.try_iter());
    got
}

/// Reports waiting for room in the loop's channel, in order.
struct Outbox {
    ui: SyncSender<Msg>,
    queue: VecDeque<Msg>,
}

impl Outbox {
    fn new(ui: SyncSender<Msg>) -> Self {
        Self {
            ui,
            queue: VecDeque::new(),
        }
    }

    fn push(&mut self, r: Option<(bool, Vec<String>)>) {
        if let Some((ok, report)) = r {
            self.queue.push_back(Msg::StopReport { ok, report });
        }
    }

    fn flush(&mut self) {
        while let Some(m) = self.queue.pop_front() {
            match self.ui.try_send(m) {
                Ok(()) => {}
                Err(TrySendError::Full(m)) => {
                    self.queue.push_front(m);
                    return;
                }
                Err(TrySendError::Disconnected(_)) => {
                    self.queue.clear();
                    return;
                }
            }
        }
    }
}

/// When the followed file last changed size or modification time, seen by
/// looking at it (not through the data thread, which may be busy).
struct Growth {
    path: PathBuf,
    seen: Option<(u64, Option<SystemTime>)>,
    grew_at: Option<Instant>,
}

impl Growth {
    fn observe(&mut self, now: Instant) -> Option<Instant> {
        let now_seen = std::fs::metadata(&self.path)
            .ok()
            .map(|m| (m.len(), m.modified().ok()));
        if self.seen.is_some() && now_seen.is_some() && now_seen != self.seen {
            self.grew_at = Some(now);
        }
        if now_seen.is_some() {
            self.seen = now_seen;
        }
        self.grew_at
    }
}

/// The escalation armed from the dashboard: `guard`'s escalation, its event
/// log, and the process given with `--pid`.
pub struct Armed {
    escalation: Escalation,
    pid: Option<ProcessId>,
    log: Arc<Mutex<EventLog>>,
    growth: Growth,
}

impl Armed {
    /// Arm `escalation` for the history `file`.
    pub fn new(
        escalation: Escalation,
        pid: Option<ProcessId>,
        log: Arc<Mutex<EventLog>>,
        file: PathBuf,
    ) -> Self {
        Self {
            escalation,
            pid,
            log,
            growth: Growth {
                path: file,
                seen: None,
                grew_at: None,
            },
        }
    }

    fn lines(&mut self, reports: Vec<ActionReport>) -> Option<(bool, Vec<String>)> {
        if reports.is_empty() {
            return None;
        }
        let mut ok = true;
        let mut lines = Vec::new();
        for r in &reports {
            if let Ok(mut log) = self.log.lock() {
                log.action(r);
            }
            ok &= !r.outcome.failed();
            lines.push(format!(
                "step {} {}: {} ({})",
                r.index + 1,
                r.action,
                r.outcome.word(),
                r.outcome.detail()
            ));
        }
        Some((ok, lines))
    }
}

impl StopActions for Armed {
    fn on_alarm(&mut self, alarm: &Alarm, now: Instant) -> Option<(bool, Vec<String>)> {
        self.growth.observe(now);
        let r = self.escalation.on_alarm(alarm, now);
        self.lines(r)
    }

    fn tick(&mut self, now: Instant) -> Option<(bool, Vec<String>)> {
        let activity = Activity {
            last_growth: self.growth.observe(now),
            pid_alive: self.pid.as_ref().map(|p| p.alive()),
        };
        let r = self.escalation.tick(now, &activity);
        self.lines(r)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::finding::Evidence;
    use crate::finding::Level;
    use std::sync::mpsc::sync_channel;

    /// Counts alarms and ticks; reports each alarm.
    struct Counter(Arc<Mutex<(usize, usize)>>);

    impl StopActions for Counter {
        fn on_alarm(&mut self, a: &Alarm, _: Instant) -> Option<(bool, Vec<String>)> {
            self.0.lock().unwrap().0 += 1;
            Some((true, vec![format!("acted on {}", a.detector)]))
        }
        fn tick(&mut self, _: Instant) -> Option<(bool, Vec<String>)> {
            self.0.lock().unwrap().1 += 1;
            None
        }
    }

    fn alarm() -> Alarm {
        Alarm {
            level: Level::Critical,
            detector: "nonfinite",
            line: 3,
            time: None,
            message: "NaN".into(),
            evidence: Evidence::default(),
        }
    }

    #[test]
    fn alarms_are_acted_on_and_ticks_go_on_while_the_loop_reads_nothing() {
        // A channel of one the loop never reads: reports wait, nothing blocks.
        let (tx, rx) = sync_channel(1);
        let seen = Arc::new(Mutex::new((0, 0)));
        let s = Stopper::spawn(
            Box::new(Counter(Arc::clone(&seen))),
            tx,
            Duration::from_millis(10),
        );
        let h = s.handle();
        for _ in 0..3 {
            h.alarm(&alarm());
        }
        let deadline = Instant::now() + Duration::from_secs(10);
        while seen.lock().unwrap().1 < 20 && Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(10));
        }
        let (alarms, ticks) = *seen.lock().unwrap();
        assert_eq!(alarms, 3);
        assert!(ticks >= 20, "{ticks} ticks");
        // The three reports come out in order once the loop reads.
        let mut got = Vec::new();
        while got.len() < 3 && Instant::now() < deadline {
            if let Ok(Msg::StopReport { report, .. }) = rx.recv_timeout(Duration::from_secs(1)) {
                got.extend(report);
            }
        }
        assert_eq!(got, vec!["acted on nonfinite"; 3]);
        s.stop();
    }

    #[test]
    fn the_thread_ends_when_the_loop_is_gone() {
        let (tx, rx) = sync_channel(1);
        drop(rx);
        let s = Stopper::spawn(Box::new(NoActions), tx, Duration::from_millis(5));
        s.handle().alarm(&alarm());
        StopHandle::none().alarm(&alarm());
        s.stop();
    }
}
