//! The dashboard's event loop: one channel of [`Msg`]s fed by threads (keys,
//! file data, ticks, signals). Messages are applied as they come; the screen is
//! redrawn only when the state is dirty, and at most once per frame interval,
//! so a fast file never drives the frame rate and an idle run costs no frames.
//! A stop confirmed by hand goes to the armed actions' own thread through a
//! [`StopHandle`]; nothing here advances them, so a slow frame delays no action.
//! The frame itself is drawn by the function passed in (the dashboard's
//! [`crate::ui::render`]; tests pass one that blocks).

use std::sync::atomic::Ordering;
use std::sync::mpsc::{Receiver, RecvTimeoutError, SyncSender};
use std::time::{Duration, Instant};

use ratatui::backend::Backend;
use ratatui::{Frame, Terminal};

use super::stopper::StopHandle;
use super::worker::Worker;
use super::{AppState, Effect, Msg};

/// Longest sleep when nothing is pending.
const IDLE_WAKE: Duration = Duration::from_millis(250);
/// Most messages applied between two frame checks.
const DRAIN_MAX: usize = 512;

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
    stop: &StopHandle,
    pacing: Pacing,
    draw: &mut dyn FnMut(&AppState, &mut Frame),
) -> Result<LoopStats, B::Error> {
    let mut stats = LoopStats::default();
    let mut last_frame: Option<Instant> = None;
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
            for e in state.update(msg) {
                match e {
                    Effect::Quit => state.quit = true,
                    Effect::Stop(alarm) => stop.alarm(&alarm),
                }
            }
        }
        if state.quit {
            break;
        }
        let now = Instant::now();
        if state.dirty && last_frame.is_none_or(|t| now >= t + pacing.frame_interval) {
            terminal.draw(|f| draw(state, f))?;
            state.dirty = false;
            last_frame = Some(now);
            stats.frames += 1;
        }
    }
    Ok(stats)
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
    use crate::alarm::Alarm;
    use crate::app::stopper::{StopActions, Stopper};
    use crate::app::{Config, Key};
    use ratatui::backend::TestBackend;
    use std::sync::mpsc::sync_channel;
    use std::sync::{Arc, Mutex};

    struct Recorder(Arc<Mutex<Vec<String>>>);

    impl StopActions for Recorder {
        fn on_alarm(&mut self, a: &Alarm, _: Instant) -> Option<(bool, Vec<String>)> {
            self.0.lock().unwrap().push(a.message.clone());
            Some((true, vec![format!("did it for {}", a.detector)]))
        }
        fn tick(&mut self, _: Instant) -> Option<(bool, Vec<String>)> {
            None
        }
    }

    fn render(s: &AppState, f: &mut Frame) {
        crate::ui::render(s, f);
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
        let stats = run(
            &mut term,
            &mut s,
            &rx,
            &StopHandle::none(),
            Pacing::default(),
            &mut render,
        )
        .unwrap();
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
        let stats = run(
            &mut term,
            &mut s,
            &rx,
            &StopHandle::none(),
            Pacing::default(),
            &mut render,
        )
        .unwrap();
        t.join().unwrap();
        assert_eq!(stats.frames, 0);
    }

    #[test]
    fn a_confirmed_stop_reaches_the_actions_once() {
        let (tx, rx) = sync_channel(16);
        for k in ['X', 'y', 'X', 'y'] {
            tx.send(Msg::Key(Key::Char(k))).unwrap();
        }
        let seen = Arc::new(Mutex::new(Vec::new()));
        let stopper = Stopper::spawn(
            Box::new(Recorder(Arc::clone(&seen))),
            tx.clone(),
            Duration::from_millis(10),
        );
        // Quit once the report has come back.
        let quit = std::thread::spawn(move || {
            std::thread::sleep(Duration::from_millis(500));
            let _ = tx.send(Msg::Key(Key::Char('q')));
        });
        let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
        let mut s = AppState::new(config());
        run(
            &mut term,
            &mut s,
            &rx,
            &stopper.handle(),
            Pacing::default(),
            &mut render,
        )
        .unwrap();
        quit.join().unwrap();
        stopper.stop();
        assert_eq!(seen.lock().unwrap().len(), 1);
        assert!(matches!(
            s.stop,
            crate::app::StopState::Done { ok: true, .. }
        ));
    }
}
