//! A background thread that runs until asked to stop: the one shape shared by
//! the dashboard's data thread, its ticker, its stop actions and its
//! terminal-input reader. A thread the dashboard cannot do without reports
//! its panic to the loop ([`Worker::spawn_vital`]), which then ends.

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::SyncSender;
use std::thread::JoinHandle;

use super::update::Msg;

/// The text of a panic's payload.
fn panic_text(payload: &(dyn std::any::Any + Send)) -> String {
    payload
        .downcast_ref::<&str>()
        .map(|s| (*s).to_string())
        .or_else(|| payload.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "a panic without a message".into())
}

/// A thread running `body(stop_flag)`; the body checks the flag and returns when set.
pub struct Worker {
    stop: Arc<AtomicBool>,
    handle: Option<JoinHandle<()>>,
}

impl Worker {
    /// Start `body` on its own thread with the flag it must poll.
    pub fn spawn(body: impl FnOnce(Arc<AtomicBool>) + Send + 'static) -> Self {
        let stop = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&stop);
        let handle = std::thread::spawn(move || body(flag));
        Self {
            stop,
            handle: Some(handle),
        }
    }

    /// As [`Worker::spawn`], for a thread the dashboard cannot do without
    /// (`what` names it): if the body panics, [`Msg::Fatal`] tells the loop.
    pub fn spawn_vital(
        what: &'static str,
        tx: SyncSender<Msg>,
        body: impl FnOnce(Arc<AtomicBool>) + Send + 'static,
    ) -> Self {
        Self::spawn(move |flag| {
            if let Err(p) = catch_unwind(AssertUnwindSafe(|| body(flag))) {
                let _ = tx.send(Msg::Fatal(format!("{what} failed: {}", panic_text(&*p))));
            }
        })
    }

    /// Set the flag and wait for the thread to return.
    pub fn stop(mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use std::sync::atomic::AtomicUsize;
    use std::time::Duration;

    #[test]
    fn stop_ends_the_body_and_joins() {
        let turns = Arc::new(AtomicUsize::new(0));
        let seen = Arc::clone(&turns);
        let w = Worker::spawn(move |flag| {
            while !flag.load(Ordering::Relaxed) {
                seen.fetch_add(1, Ordering::Relaxed);
                std::thread::sleep(Duration::from_millis(1));
            }
        });
        std::thread::sleep(Duration::from_millis(20));
        w.stop();
        let after = turns.load(Ordering::Relaxed);
        std::thread::sleep(Duration::from_millis(20));
        assert_eq!(
            turns.load(Ordering::Relaxed),
            after,
            "the body ran on after stop"
        );
        assert!(after > 0, "the body never ran");
    }

    #[test]
    fn a_vital_thread_that_panics_tells_the_loop() {
        let (tx, rx) = std::sync::mpsc::sync_channel(1);
        let w = Worker::spawn_vital("the data thread", tx, |_| panic!("index out of range"));
        let m = rx.recv_timeout(Duration::from_secs(5)).unwrap();
        match m {
            Msg::Fatal(text) => assert_eq!(text, "the data thread failed: index out of range"),
            other => panic!("{other:?}"),
        }
        w.stop();
    }
}
