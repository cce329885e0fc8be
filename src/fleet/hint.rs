//! One kernel-notification watcher for the whole fleet (inotify allows only
//! 128 instances per user by default, so one per run would not scale): a watch
//! on each distinct directory that holds a followed file. Events only say
//! "look at these names soon"; nothing is concluded from them, since network
//! and cluster filesystems may deliver none for writes made on another node —
//! the tracker's staggered polls are what is relied on.

use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::sync::mpsc::{Receiver, RecvTimeoutError, sync_channel};
use std::sync::{Arc, Mutex};
use std::time::Duration;

use notify::{RecommendedWatcher, RecursiveMode, Watcher};

/// The shared wake-up hint.
pub struct SharedHint {
    watcher: RecommendedWatcher,
    dirs: HashSet<PathBuf>,
    touched: Arc<Mutex<HashSet<PathBuf>>>,
    rx: Receiver<()>,
}

impl SharedHint {
    /// A watcher with no directory yet; `None` when notifications are not
    /// available on this system.
    pub fn new() -> Option<Self> {
        let touched = Arc::new(Mutex::new(HashSet::new()));
        let sink = Arc::clone(&touched);
        let (tx, rx) = sync_channel::<()>(1);
        let watcher = notify::recommended_watcher(move |res: notify::Result<notify::Event>| {
            if let Ok(ev) = res
                && let Ok(mut set) = sink.lock()
            {
                set.extend(ev.paths);
            }
            // A full channel already holds a wake-up: coalesce.
            let _ = tx.try_send(());
        })
        .ok()?;
        Some(Self {
            watcher,
            dirs: HashSet::new(),
            touched,
            rx,
        })
    }

    /// Watch the directory holding `file` (once per directory). False when the
    /// directory cannot be watched (not there yet, or the watch limit reached).
    pub fn watch_parent(&mut self, file: &Path) -> bool {
        let dir = match file.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        if self.dirs.contains(&dir) {
            return true;
        }
        let ok = self
            .watcher
            .watch(&dir, RecursiveMode::NonRecursive)
            .is_ok();
        if ok {
            self.dirs.insert(dir);
        }
        ok
    }

    /// Directories watched.
    pub fn watched(&self) -> usize {
        self.dirs.len()
    }

    /// Wait at most `max` for any notification; true when one came.
    pub fn wait(&self, max: Duration) -> bool {
        match self.rx.recv_timeout(max) {
            Ok(()) => true,
            Err(RecvTimeoutError::Timeout) => false,
            Err(RecvTimeoutError::Disconnected) => {
                std::thread::sleep(max);
                false
            }
        }
    }

    /// The paths named by notifications since the last call.
    pub fn take(&self) -> HashSet<PathBuf> {
        self.touched
            .lock()
            .map(|mut s| std::mem::take(&mut *s))
            .unwrap_or_default()
    }
}
