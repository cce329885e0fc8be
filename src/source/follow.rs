//! Follow one growing file by name. Every poll reads what was appended since the
//! saved offset (positioned reads, so the file's own state is never touched),
//! and every read that finds new bytes checks that the bytes just before the
//! offset are still those read last: a file rewritten in place, or truncated
//! and grown again past the offset, is caught before any of its bytes is taken
//! as a continuation, whenever the periodic check would have come.
//! Once per poll interval, or when a notification hints at a change, the name is
//! opened afresh — a fresh open makes network filesystems revalidate cached
//! attributes — and compared with what is held: device and inode, size against
//! the offset, and fingerprints of the first bytes and of the bytes just before
//! the offset. From that it decides: same file (continue), truncated (restart),
//! rewritten (restart), replaced (read the new file from its start), moved to a
//! new inode with the same content (continue at the offset), or gone (keep what
//! was read and wait for a file to come back). Modification times are not used:
//! on cluster filesystems they can be stale for minutes.

use std::collections::VecDeque;
use std::fs::{File, OpenOptions};
use std::io;
use std::os::unix::fs::{FileExt, FileTypeExt, MetadataExt, OpenOptionsExt};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use nix::fcntl::OFlag;

use super::hint::Hint;
use super::{Event, RestartReason, Source, strip_nul};

/// Bytes of the file's start kept as its fingerprint.
const HEAD_BYTES: usize = 512;
/// Bytes before the offset kept to recognise the same content under a new inode.
const TAIL_BYTES: usize = 64;
/// Smallest read; reads double while they come back full, up to the chunk size.
const MIN_READ_BYTES: usize = 4096;

/// What kind of thing stands at `path` when it is not a regular file that can
/// be followed (`None` for a regular file, or nothing there yet). Does not
/// open anything, so a named pipe never blocks the caller.
pub fn not_followable(path: &Path) -> Option<String> {
    let meta = std::fs::metadata(path).ok()?;
    let t = meta.file_type();
    let kind = if t.is_fifo() {
        "a named pipe (FIFO)"
    } else if t.is_socket() {
        "a socket"
    } else if t.is_char_device() || t.is_block_device() {
        "a device"
    } else if t.is_dir() {
        "a directory"
    } else {
        return None;
    };
    Some(format!(
        "'{}' is {kind}, not a history file: rhoscope follows regular files, reading them \
         by position without consuming them; let the solver write its history to a file",
        path.display()
    ))
}

/// Open `path` for reading without blocking (a named pipe would wait for a
/// writer) and refuse anything but a regular file.
fn open_regular(path: &Path) -> io::Result<File> {
    let file = OpenOptions::new()
        .read(true)
        .custom_flags(OFlag::O_NONBLOCK.bits())
        .open(path)?;
    if !file.metadata()?.is_file() {
        let why = not_followable(path)
            .unwrap_or_else(|| format!("'{}' is not a regular file", path.display()));
        return Err(io::Error::new(io::ErrorKind::InvalidInput, why));
    }
    Ok(file)
}

/// How a [`Follower`] polls.
#[derive(Debug, Clone, PartialEq)]
pub struct FollowConfig {
    /// Period of the full check (fresh open, identity, size). Default 1 s.
    pub poll_interval: Duration,
    /// Use kernel notifications on the parent directory as a wake-up hint.
    pub notify: bool,
    /// Largest read per poll; a backlog comes out in chunks of this size.
    pub chunk_bytes: usize,
}

impl Default for FollowConfig {
    fn default() -> Self {
        Self {
            poll_interval: Duration::from_secs(1),
            notify: true,
            chunk_bytes: 1 << 20,
        }
    }
}

/// Follows a file by name; see the module documentation.
pub struct Follower {
    path: PathBuf,
    cfg: FollowConfig,
    file: Option<File>,
    id: Option<(u64, u64)>,
    offset: u64,
    head: Vec<u8>,
    tail: Vec<u8>,
    seen: bool,
    start_size: Option<u64>,
    missing: bool,
    hinted: bool,
    last_check: Option<Instant>,
    pending: VecDeque<Event>,
    hint: Option<Hint>,
    /// Size of the next read: about twice the last one, so that steady
    /// appends take small reads and a backlog quickly gets whole chunks.
    next_read: usize,
}

impl Follower {
    /// Follow `path` (which need not exist yet).
    pub fn new(path: impl Into<PathBuf>, cfg: FollowConfig) -> Self {
        let path = path.into();
        let hint = if cfg.notify { Hint::new(&path) } else { None };
        Self {
            path,
            cfg,
            file: None,
            id: None,
            offset: 0,
            head: Vec::new(),
            tail: Vec::new(),
            seen: false,
            start_size: None,
            missing: false,
            hinted: false,
            last_check: None,
            pending: VecDeque::new(),
            hint,
            next_read: MIN_READ_BYTES,
        }
    }

    /// The followed path.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Bytes read from the current file so far.
    pub fn offset(&self) -> u64 {
        self.offset
    }

    /// True when kernel notifications are in use as a wake-up hint.
    pub fn notified(&self) -> bool {
        self.hint.is_some()
    }

    /// Tell the follower that something may have happened to its name (a
    /// notification seen by someone else): the next poll that finds no new
    /// bytes opens the name afresh instead of waiting for the periodic check.
    pub fn nudge(&mut self) {
        self.hinted = true;
    }

    fn periodic_check_due(&self) -> bool {
        self.file.is_none()
            || self
                .last_check
                .is_none_or(|t| t.elapsed() >= self.cfg.poll_interval)
    }

    fn adopt(&mut self, file: File, id: (u64, u64), restart: Option<RestartReason>) {
        self.file = Some(file);
        self.id = Some(id);
        if let Some(r) = restart {
            self.restart(r);
        }
    }

    /// Forget what was read and start the file again from its beginning.
    fn restart(&mut self, reason: RestartReason) {
        self.offset = 0;
        self.head.clear();
        self.tail.clear();
        self.pending.push_back(Event::Restart(reason));
    }

    /// True when `file` holds `expect` at `at`.
    fn holds(file: &File, at: u64, expect: &[u8]) -> io::Result<bool> {
        if expect.is_empty() {
            return Ok(true);
        }
        let mut space = [0u8; HEAD_BYTES];
        let Some(got) = space.get_mut(..expect.len()) else {
            return Ok(false);
        };
        let mut done = 0;
        while done < got.len() {
            match file.read_at(&mut got[done..], at + done as u64) {
                Ok(0) => return Ok(false),
                Ok(n) => done += n,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        }
        Ok(got == expect)
    }

    /// True when `file` (of `size` bytes) still holds what was read: the
    /// first bytes and the bytes just before the offset.
    fn same_content(&self, file: &File, size: u64) -> io::Result<bool> {
        Ok(size >= self.offset && Self::holds(file, 0, &self.head)? && self.tail_holds(file)?)
    }

    /// True when the bytes just before the offset are still those read.
    fn tail_holds(&self, file: &File) -> io::Result<bool> {
        let tail_at = self.offset - self.tail.len() as u64;
        Self::holds(file, tail_at, &self.tail)
    }

    /// Open the name afresh and decide what became of the file.
    fn check(&mut self) -> io::Result<()> {
        self.hinted = false;
        self.last_check = Some(Instant::now());
        let file = match open_regular(&self.path) {
            Ok(f) => f,
            Err(e) if e.kind() == io::ErrorKind::NotFound => {
                self.start_size.get_or_insert(0);
                if self.seen && !self.missing {
                    self.missing = true;
                    self.pending.push_back(Event::Missing);
                }
                return Ok(());
            }
            Err(e) => {
                return Err(io::Error::new(
                    e.kind(),
                    format!("cannot open '{}': {e}", self.path.display()),
                ));
            }
        };
        let meta = file.metadata()?;
        let id = (meta.dev(), meta.ino());
        let size = meta.len();
        self.start_size.get_or_insert(size);
        let was_missing = std::mem::replace(&mut self.missing, false);
        match self.id {
            None => {
                self.seen = true;
                self.adopt(file, id, None);
                self.pending.push_back(Event::Appeared);
            }
            Some(old) if old != id => {
                if !was_missing && self.same_content(&file, size)? {
                    // Same bytes under a new inode (moved or migrated): continue.
                    self.adopt(file, id, None);
                } else {
                    self.adopt(file, id, Some(RestartReason::Replaced));
                }
            }
            Some(_) => {
                if size < self.offset {
                    self.adopt(file, id, Some(RestartReason::Truncated));
                } else if !Self::holds(&file, 0, &self.head)? || !self.tail_holds(&file)? {
                    self.adopt(file, id, Some(RestartReason::Rewritten));
                } else {
                    self.adopt(file, id, None);
                }
            }
        }
        Ok(())
    }

    /// Read what follows the offset, up to one chunk.
    fn read_more(&mut self) -> io::Result<Option<Vec<u8>>> {
        let Some(file) = self.file.as_ref() else {
            return Ok(None);
        };
        // A fresh buffer, handed on as the event's bytes: no copy, and no
        // buffer per follower left idle between polls (a fleet has hundreds).
        let want = self.next_read.min(self.cfg.chunk_bytes).max(1);
        let mut buf = vec![0u8; want];
        let n = loop {
            match file.read_at(&mut buf, self.offset) {
                Ok(n) => break n,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        };
        self.next_read = if n == want {
            want.saturating_mul(2)
        } else {
            n.saturating_mul(2).max(MIN_READ_BYTES)
        };
        if n == 0 {
            // At the end: a size below the offset means truncation in place.
            if file.metadata()?.len() < self.offset {
                self.restart(RestartReason::Truncated);
            }
            return Ok(None);
        }
        // New bytes: before taking them as a continuation, the bytes before
        // the offset must be those read last. Checked after the read, so a
        // rewrite at any moment before it is seen here.
        if !self.tail_holds(file)? {
            self.restart(RestartReason::Rewritten);
            return Ok(None);
        }
        buf.truncate(n);
        let data = &buf[..];
        if self.head.len() < HEAD_BYTES && self.offset == self.head.len() as u64 {
            let take = (HEAD_BYTES - self.head.len()).min(n);
            self.head.extend_from_slice(&data[..take]);
        }
        if n >= TAIL_BYTES {
            self.tail.clear();
            self.tail.extend_from_slice(&data[n - TAIL_BYTES..]);
        } else {
            self.tail.extend_from_slice(data);
            let excess = self.tail.len().saturating_sub(TAIL_BYTES);
            self.tail.drain(..excess);
        }
        self.offset += n as u64;
        Ok(Some(strip_nul(buf)))
    }
}

impl Source for Follower {
    fn poll(&mut self) -> io::Result<Option<Event>> {
        if let Some(e) = self.pending.pop_front() {
            return Ok(Some(e));
        }
        if self.periodic_check_due() {
            self.check()?;
            if let Some(e) = self.pending.pop_front() {
                return Ok(Some(e));
            }
        }
        if let Some(data) = self.read_more()? {
            // Data explains a hint; no need for a fresh open.
            self.hinted = false;
            return Ok(Some(Event::Data(data)));
        }
        if self.hinted {
            // Woken but nothing appended: maybe a rename, deletion or re-creation.
            self.check()?;
            if self.pending.is_empty()
                && let Some(data) = self.read_more()?
            {
                return Ok(Some(Event::Data(data)));
            }
        }
        Ok(self.pending.pop_front())
    }

    fn start_size(&self) -> Option<u64> {
        self.start_size
    }

    fn wait(&mut self, max: Duration) {
        let since = self.last_check.map_or(Duration::MAX, |t| t.elapsed());
        let d = self.cfg.poll_interval.saturating_sub(since).min(max);
        if d.is_zero() {
            return;
        }
        match &self.hint {
            Some(h) => {
                if h.wait(d) {
                    self.hinted = true;
                }
            }
            None => std::thread::sleep(d),
        }
    }
}
