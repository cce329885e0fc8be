//! The dashboard's event loop: one channel of [`Msg`]s fed by threads (keys,
//! file data, ticks, signals). Messages are applied as they come; the screen is
//! redrawn only when the state is dirty, and at most once per frame interval,
//! so a fast file never drives the frame rate and an idle run costs no frames.
//! Effects go to the armed stop actions through [`StopActions`].

use std::sync::atomic::Ordering;
use std::sync::mpsc::{Receiver, RecvTimeoutError, SyncSender};
use std::time::{Duration, Instant};

use ratatui::Terminal;
use ratatui::backend::Backend;

use crate::alarm::Alarm;

use super::worker::Worker;
use super::{AppState, Effect, Msg};

/// Longest sleep when nothing is pending, so armed actions are advanced.
const IDLE_WAKE: Duration = Duration::from_millis(250);
/// Most messages applied between two frame checks.
const DRAIN_MAX: usize = 512;

/// What the loop tells the armed stop actions, and what they report back as
/// one line per step taken (`ok` false when any step failed or was refused).
pub trait StopActions {
    /// An alarm to act on (a critical one confirmed by hand, or one raised
    /// while armed for alarms).
    fn on_alarm(&mut self, alarm: &Alarm, now: Instant) -> Option<(bool, Vec<String>)>;
    /// Advance pending steps (grace periods, commands); `last_data` is when the
    /// followed file last grew.
    fn tick(&mut self, now: Instant, last_data: Option<Instant>) -> Option<(bool, Vec<String>)>;
}

/// No actions armed.
pub struct NoActions;

impl StopActions for NoActions {
    fn on_alarm(&mut self, _: &Alarm, _: Instant) -> Option<(bool, Vec<String>)> {
        None
    }
    fn tick(&mut self, _: Instant, _: Option<Instant>) -> Option<(bool, Vec<String>)> {
        None
    }
}

/// Frame pacing of the loop.
#[derive(Debug, Clone, Copy)]
pub struct Pacing {
    /// Shortest time between two frames.
    pub frame_interval: Duration,
}

impl Default for Pacing {
    fn default() -> Self {
        Self {
            frame_interval: Duration::from_millis(100),
        }
    }
}

/// Counters of one loop run (for tests and the idle-cost check).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct LoopStats {
    pub messages: u64,
    pub frames: u64,
}

/// Run until the state asks to quit or every sender is gone.
pub fn run<B: Backend>(
    terminal: &mut Terminal<B>,
    state: &mut AppState,
    rx: &Receiver<Msg>,
    actions: &mut dyn StopActions,
    pacing: Pacing,
) -> Result<LoopStats, B::Error> {
    let mut stats = LoopStats::default();
    let mut last_frame: Option<Instant> = None;
    let mut last_data: Option<Instant> = None;
    loop {
        let now = Instant::now();
        let due = last_frame.map(|t| t + pacing.frame_interval).unwrap_or(now);
        let wait = if state.dirty {
            due.saturating_duration_since(now)
        } else {
            IDLE_WAKE
        };
        let first = match rx.recv_timeout(wait) {
            Ok(m) => Some(m),
            Err(RecvTimeoutError::Timeout) => None,
            Err(RecvTimeoutError::Disconnected) => break,
        };
        let mut pending = first.into_iter().collect::<Vec<_>>();
        while pending.len() < DRAIN_MAX {
            match rx.try_recv() {
                Ok(m) => pending.push(m),
                Err(_) => break,
            }
        }
        for msg in pending {
            stats.messages += 1;
            if matches!(msg, Msg::Data(_)) {
                last_data = Some(Instant::now());
            }
            let fx = state.update(msg);
            apply(state, actions, fx);
        }
        if let Some((ok, report)) = actions.tick(Instant::now(), last_data) {
            state.update(Msg::StopReport { ok, report });
        }
        if state.quit {
            break;
        }
        let now = Instant::now();
        if state.dirty && last_frame.is_none_or(|t| now >= t + pacing.frame_interval) {
            terminal.draw(|f| crate::ui::render(state, f))?;
            state.dirty = false;
            last_frame = Some(now);
            stats.frames += 1;
        }
    }
    Ok(stats)
}

fn apply(state: &mut AppState, actions: &mut dyn StopActions, fx: Vec<Effect>) {
    for e in fx {
        match e {
            Effect::Quit => state.quit = true,
            Effect::Stop(alarm) | Effect::Alarm(alarm) => {
                if let Some((ok, report)) = actions.on_alarm(&alarm, Instant::now()) {
                    state.update(Msg::StopReport { ok, report });
                }
            }
        }
    }
}

/// Sends [`Msg::Tick`] with monotonic seconds since `t0` every `every`.
pub struct Ticker(Worker);

impl Ticker {
    /// Start ticking into `tx`.
    pub fn spawn(tx: SyncSender<Msg>, t0: Instant, every: Duration) -> Self {
        Self(Worker::spawn(move |flag| {
            let step = Duration::from_millis(50).min(every);
            let mut next = Instant::now() + every;
            while !flag.load(Ordering::Relaxed) {
                std::thread::sleep(step);
                if Instant::now() >= next {
                    next += every;
                    let now_s = t0.elapsed().as_secs_f64();
                    if tx.send(Msg::Tick { now_s }).is_err() {
                        return;
                    }
                }
            }
        }))
    }

    /// Stop and wait for the thread.
    pub fn stop(self) {
        self.0.stop();
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::app::{Config, Key};
    use ratatui::backend::TestBackend;
    use std::sync::mpsc::sync_channel;

    struct Recorder(Vec<String>);

    impl StopActions for Recorder {
        fn on_alarm(&mut self, a: &Alarm, _: Instant) -> Option<(bool, Vec<String>)> {
            self.0.push(a.message.clone());
            Some((true, vec![format!("did it for {}", a.detector)]))
        }
        fn tick(&mut self, _: Instant, _: Option<Instant>) -> Option<(bool, Vec<String>)> {
            None
        }
    }

    fn config() -> Config {
        Config {
            file: "h.csv".into(),
            actions: vec!["create the stop file STOP".into()],
            ..Config::default()
        }
    }

    #[test]
    fn many_messages_cost_few_frames_and_quit_ends_the_loop() {
        let (tx, rx) = sync_channel(1024);
        for _ in 0..500 {
            tx.send(Msg::Resize).unwrap();
        }
        tx.send(Msg::Key(Key::Char('q'))).unwrap();
        let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
        let mut s = AppState::new(config());
        let stats = run(&mut term, &mut s, &rx, &mut NoActions, Pacing::default()).unwrap();
        assert_eq!(stats.messages, 501);
        assert!(stats.frames <= 2, "{} frames", stats.frames);
    }

    #[test]
    fn nothing_changed_means_no_frame() {
        let (tx, rx) = sync_channel(8);
        let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
        let mut s = AppState::new(config());
        s.dirty = false;
        let t = std::thread::spawn(move || {
            std::thread::sleep(Duration::from_millis(600));
            drop(tx);
        });
        let stats = run(&mut term, &mut s, &rx, &mut NoActions, Pacing::default()).unwrap();
        t.join().unwrap();
        assert_eq!(stats.frames, 0);
    }

    #[test]
    fn a_confirmed_stop_reaches_the_actions_once() {
        let (tx, rx) = sync_channel(16);
        for k in ['X', 'y', 'X', 'y', 'q'] {
            tx.send(Msg::Key(Key::Char(k))).unwrap();
        }
        let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
        let mut s = AppState::new(config());
        let mut rec = Recorder(vec![]);
        run(&mut term, &mut s, &rx, &mut rec, Pacing::default()).unwrap();
        assert_eq!(rec.0.len(), 1);
        assert!(matches!(
            s.stop,
            crate::app::StopState::Done { ok: true, .. }
        ));
    }
}
