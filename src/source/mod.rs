//! Where bytes come from while a run is followed live. [`Follower`] follows a
//! growing file on disk (local or on a cluster filesystem) by polling what is
//! reliable — size, device and inode, with a periodic reopen — and uses kernel
//! notifications on the parent directory only as a wake-up hint. [`Scripted`] is a
//! fake source that plays a fixed script, for tests of guard and the dashboard.
//! Sources only read: they never write, lock or truncate the followed file.
//! They hand out raw bytes; splitting into lines is the pipeline's job, and
//! the one loop that polls a source is `pipeline::drive::Follow`.

mod fake;
mod follow;
mod hint;

pub use fake::{Scripted, Step};
pub use follow::{FollowConfig, Follower, not_followable};

use std::io;
use std::time::Duration;

/// Why the followed file must be read again from its start.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RestartReason {
    /// The file became shorter than what was already read (truncated in place).
    Truncated,
    /// Another file now has the name (rename over it, or delete and re-create).
    Replaced,
    /// Same file, but its first bytes changed (rewritten from the start).
    Rewritten,
}

impl RestartReason {
    /// Short words for logs.
    pub fn describe(self) -> &'static str {
        match self {
            RestartReason::Truncated => "file truncated",
            RestartReason::Replaced => "file replaced",
            RestartReason::Rewritten => "file rewritten from its start",
        }
    }
}

/// What a source has to report.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Event {
    /// The file exists now (first seen); reading starts at its beginning.
    Appeared,
    /// New bytes, in file order, continuing the previous ones.
    Data(Vec<u8>),
    /// Forget any partial line; the following data is a new file's start.
    Restart(RestartReason),
    /// The name no longer leads to a file; what was read is kept.
    Missing,
}

/// A source of bytes that can be polled without blocking.
pub trait Source {
    /// The next thing that happened, or `None` when nothing is new right now.
    /// Never blocks for long: a backlog comes out as a series of `Data` events.
    fn poll(&mut self) -> io::Result<Option<Event>>;

    /// Sleep until something may have changed (a notification, or the poll
    /// period elapsed), for at most `max`.
    fn wait(&mut self, max: Duration);

    /// True when nothing more will ever come (a finished script); a followed
    /// file never ends by itself.
    fn ended(&self) -> bool {
        false
    }

    /// Size in bytes of what was already there when following began (0 when the
    /// file did not exist yet), once known; `None` when the source cannot tell.
    fn start_size(&self) -> Option<u64> {
        None
    }
}

/// Strip NUL bytes (left by a writer that kept its offset across a truncation).
/// Returns the input unchanged when there are none.
pub fn strip_nul(bytes: Vec<u8>) -> Vec<u8> {
    if memchr::memchr(0, &bytes).is_none() {
        return bytes;
    }
    bytes.into_iter().filter(|&b| b != 0).collect()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn nul_runs_are_removed_and_newlines_kept() {
        let v = strip_nul(b"\0\0\0a,1\n\0b,2\n".to_vec());
        assert_eq!(v, b"a,1\nb,2\n");
        assert_eq!(strip_nul(b"x\n".to_vec()), b"x\n");
    }
}

#[cfg(test)]
mod follow_tests;
