//! One kernel-notification watcher for the whole fleet (inotify allows only
//! 128 instances per user by default, so one per run would not scale): a watch
//! on each distinct directory that holds a followed file, read by the fleet's
//! own thread — no extra thread, no channel, and no allocation per event, since
//! a fleet of busy runs raises thousands of events a second. Only events that
//! say a name's content or identity changed are asked for (writes, creation,
//! deletion, renames, metadata); opens, reads and closes without writing —
//! the fleet's own polls among them — are not, so polling never feeds itself.
//!
//! Events only say "look at these runs soon"; nothing is concluded from them,
//! since network and cluster filesystems may deliver none for writes made on
//! another node — the tracker's staggered polls are what is relied on. On
//! systems without inotify the fleet is followed by polling alone.

#[cfg(target_os = "linux")]
pub use linux::SharedHint;
#[cfg(not(target_os = "linux"))]
pub use other::SharedHint;

#[cfg(target_os = "linux")]
mod linux {
    use std::collections::HashMap;
    use std::ffi::OsString;
    use std::io;
    use std::os::fd::AsFd;
    use std::path::{Path, PathBuf};
    use std::time::Duration;

    use inotify::{EventMask, Inotify, WatchMask};
    use nix::poll::{PollFd, PollFlags, PollTimeout, poll};

    /// Bytes read from the notification queue at a time (an event about a
    /// name of up to 15 bytes takes 32 bytes).
    const QUEUE_READ_BYTES: usize = 16 * 1024;

    /// The followed names in one watched directory, with their run numbers.
    struct Dir {
        names: Vec<(OsString, usize)>,
    }

    /// The shared wake-up hint.
    pub struct SharedHint {
        inotify: Inotify,
        /// Watch descriptor → index into `dirs`.
        by_wd: HashMap<i32, usize>,
        /// Directory as spelled by the caller → index into `dirs`.
        by_path: HashMap<PathBuf, usize>,
        dirs: Vec<Dir>,
        buf: Vec<u8>,
    }

    fn mask() -> WatchMask {
        WatchMask::MODIFY
            | WatchMask::CLOSE_WRITE
            | WatchMask::ATTRIB
            | WatchMask::CREATE
            | WatchMask::DELETE
            | WatchMask::MOVED_FROM
            | WatchMask::MOVED_TO
    }

    impl SharedHint {
        /// A watcher with no directory yet; `None` when notifications are not
        /// available on this system.
        pub fn new() -> Option<Self> {
            Some(Self {
                inotify: Inotify::init().ok()?,
                by_wd: HashMap::new(),
                by_path: HashMap::new(),
                dirs: Vec::new(),
                buf: vec![0; QUEUE_READ_BYTES],
            })
        }

        /// Watch the directory holding `file` (one watch per directory) and
        /// report events about its name as run number `run`. False when the
        /// directory cannot be watched (not there yet, or the watch limit
        /// reached): that run is then followed by polling alone.
        pub fn watch(&mut self, file: &Path, run: usize) -> bool {
            let Some(name) = file.file_name() else {
                return false;
            };
            let dir = match file.parent() {
                Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                _ => PathBuf::from("."),
            };
            let slot = match self.by_path.get(&dir) {
                Some(&s) => s,
                None => {
                    let Ok(wd) = self.inotify.watches().add(&dir, mask()) else {
                        return false;
                    };
                    // Two spellings of one directory share one descriptor.
                    let id = wd.get_watch_descriptor_id();
                    let s = *self.by_wd.entry(id).or_insert_with(|| {
                        self.dirs.push(Dir { names: Vec::new() });
                        self.dirs.len() - 1
                    });
                    self.by_path.insert(dir, s);
                    s
                }
            };
            self.dirs[slot].names.push((name.to_os_string(), run));
            true
        }

        /// Directories watched.
        pub fn watched(&self) -> usize {
            self.dirs.len()
        }

        /// Wait at most `max` for any notification; true when one is queued.
        pub fn wait(&self, max: Duration) -> bool {
            let ms = u16::try_from(max.as_millis()).unwrap_or(u16::MAX);
            let mut fds = [PollFd::new(self.inotify.as_fd(), PollFlags::POLLIN)];
            matches!(poll(&mut fds, PollTimeout::from(ms)), Ok(n) if n > 0)
        }

        /// Read every queued event and call `mark` with the run number of each
        /// followed name it concerns (a run may come more than once). Returns
        /// true when the kernel's queue overflowed and events were lost: the
        /// caller should then treat every run as named.
        pub fn drain(&mut self, mut mark: impl FnMut(usize)) -> bool {
            let mut overflow = false;
            loop {
                let events = match self.inotify.read_events(&mut self.buf) {
                    Ok(ev) => ev,
                    Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                    // WouldBlock: the queue is empty. Anything else: give up
                    // this round; the polls carry on regardless.
                    Err(_) => break,
                };
                for ev in events {
                    if ev.mask.contains(EventMask::Q_OVERFLOW) {
                        overflow = true;
                        continue;
                    }
                    let (Some(name), Some(&slot)) =
                        (ev.name, self.by_wd.get(&ev.wd.get_watch_descriptor_id()))
                    else {
                        continue;
                    };
                    for (n, run) in &self.dirs[slot].names {
                        if n.as_os_str() == name {
                            mark(*run);
                        }
                    }
                }
            }
            overflow
        }
    }
}

#[cfg(not(target_os = "linux"))]
mod other {
    use std::path::Path;
    use std::time::Duration;

    /// No shared watcher on this system: the fleet polls.
    pub struct SharedHint;

    impl SharedHint {
        /// Always `None` here.
        pub fn new() -> Option<Self> {
            None
        }
        /// Never watches.
        pub fn watch(&mut self, _file: &Path, _run: usize) -> bool {
            false
        }
        /// No directory is watched.
        pub fn watched(&self) -> usize {
            0
        }
        /// Sleeps for `max`.
        pub fn wait(&self, max: Duration) -> bool {
            std::thread::sleep(max);
            false
        }
        /// Nothing to read.
        pub fn drain(&mut self, _mark: impl FnMut(usize)) -> bool {
            false
        }
    }
}

#[cfg(all(test, target_os = "linux"))]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::io::Write;
    use std::time::Duration;

    fn drained(h: &mut SharedHint) -> Vec<usize> {
        let mut got = Vec::new();
        h.drain(|r| got.push(r));
        got.sort_unstable();
        got.dedup();
        got
    }

    #[test]
    fn writes_name_their_run_and_reads_name_none() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a.csv");
        let b = dir.path().join("b.csv");
        std::fs::write(&a, "time,x\n").unwrap();
        std::fs::write(&b, "time,x\n").unwrap();
        let mut h = SharedHint::new().unwrap();
        assert!(h.watch(&a, 0));
        assert!(h.watch(&b, 1));
        assert_eq!(h.watched(), 1, "one watch for the shared directory");
        assert!(!h.wait(Duration::from_millis(1)), "quiet before any write");

        // Opening and reading a followed file (as a poll does) raises nothing.
        let _ = std::fs::read(&a).unwrap();
        assert!(!h.wait(Duration::from_millis(20)));
        assert!(drained(&mut h).is_empty());

        let mut f = std::fs::OpenOptions::new().append(true).open(&b).unwrap();
        f.write_all(b"0.1,2\n").unwrap();
        assert!(h.wait(Duration::from_secs(5)));
        assert_eq!(drained(&mut h), vec![1]);

        // An unfollowed name in the same directory names no run.
        std::fs::write(dir.path().join("other.txt"), "x").unwrap();
        assert!(h.wait(Duration::from_secs(5)));
        assert!(drained(&mut h).is_empty());

        // Replacing a file by rename names its run.
        let tmp = dir.path().join("a.tmp");
        std::fs::write(&tmp, "time,x\n0,1\n").unwrap();
        std::fs::rename(&tmp, &a).unwrap();
        assert!(h.wait(Duration::from_secs(5)));
        assert_eq!(drained(&mut h), vec![0]);
    }

    #[test]
    fn a_missing_directory_is_not_watched() {
        let dir = tempfile::tempdir().unwrap();
        let mut h = SharedHint::new().unwrap();
        assert!(!h.watch(&dir.path().join("nope").join("h.csv"), 0));
        assert_eq!(h.watched(), 0);
    }
}
