//! A background thread that runs until asked to stop: the one shape shared by
//! the dashboard's data thread, its ticker and its terminal-input reader.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread::JoinHandle;

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

    /// Set the flag and wait for the thread to return.
    pub fn stop(mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

#[cfg(test)]
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
}
