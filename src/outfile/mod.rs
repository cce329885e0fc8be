//! Files rhoscope writes beside a run it watches (stop file, event log, metrics
//! textfile, report image) and the two rules that keep the run safe from them:
//! [`check_outputs`] refuses any output that is a watched history (same device
//! and inode after following links, or the same resolved path when it does not
//! exist yet), and [`write_atomic`] replaces a file whole without ever following
//! a symlink or using a name another user could guess. Everything that writes
//! such a file goes through here; the commands only say which paths are which.

mod atomic;
mod clash;

pub use atomic::{temp_name_for, write_atomic};
pub use clash::{Clash, Output, OutputKind, Watched, check_outputs, same_file};
