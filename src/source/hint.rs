//! Kernel notifications used only as a wake-up hint: a watch on the followed
//! file's parent directory (so that a rename or re-creation does not end the
//! watch). Any event about the file's name wakes the follower early; nothing is
//! concluded from events, since network filesystems may deliver none at all.

use std::ffi::OsString;
use std::path::Path;
use std::sync::mpsc::{Receiver, RecvTimeoutError, sync_channel};
use std::time::Duration;

use notify::{RecommendedWatcher, RecursiveMode, Watcher};

/// A wake-up hint from the parent directory's notifications.
pub struct Hint {
    // Kept alive for as long as the hint is used.
    _watcher: RecommendedWatcher,
    rx: Receiver<()>,
}

impl Hint {
    /// Watch `file`'s parent directory; `None` when notifications are not available
    /// (no such directory, watch limit reached, unsupported platform).
    pub fn new(file: &Path) -> Option<Self> {
        let parent = match file.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => Path::new(".").to_path_buf(),
        };
        let name: Option<OsString> = file.file_name().map(|n| n.to_os_string());
        let (tx, rx) = sync_channel::<()>(1);
        let mut watcher = notify::recommended_watcher(move |res: notify::Result<notify::Event>| {
            let relevant = match (&res, &name) {
                // Opens, reads and closes without writing — the follower's own
                // included — say nothing new; waking on them would feed a loop.
                (Ok(ev), _) if matches!(ev.kind, notify::EventKind::Access(_)) => false,
                (Ok(ev), Some(n)) => {
                    ev.paths.is_empty() || ev.paths.iter().any(|p| p.file_name() == Some(n))
                }
                _ => true,
            };
            if relevant {
                // A full channel already holds a wake-up: coalesce.
                let _ = tx.try_send(());
            }
        })
        .ok()?;
        watcher.watch(&parent, RecursiveMode::NonRecursive).ok()?;
        Some(Self {
            _watcher: watcher,
            rx,
        })
    }

    /// Wait for a hint at most `max`; true when one arrived.
    pub fn wait(&self, max: Duration) -> bool {
        match self.rx.recv_timeout(max) {
            Ok(()) => {
                // Drain a second queued hint so that one burst costs one wake-up.
                let _ = self.rx.try_recv();
                true
            }
            Err(RecvTimeoutError::Timeout) => false,
            Err(RecvTimeoutError::Disconnected) => {
                std::thread::sleep(max);
                false
            }
        }
    }
}
