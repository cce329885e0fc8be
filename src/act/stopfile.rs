//! The stop file: created atomically through the one hardened writer
//! ([`crate::outfile::write_atomic`]), so a solver polling for it never sees a
//! half-written file and a planted link is never followed. The file is empty;
//! why it was created goes to the event log.

use std::io;
use std::path::Path;

use crate::outfile::{same_file, write_atomic};

/// Create the stop file at `path` atomically (see [`write_atomic`]: never
/// through a symlink, never under a guessable name). `watched` is the history:
/// should the stop path have become that file since the start, nothing is written.
pub fn create_stop_file(path: &Path, watched: &Path) -> io::Result<()> {
    if same_file(path, watched) {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "stop file '{}' is the watched history '{}': not written",
                path.display(),
                watched.display()
            ),
        ));
    }
    write_atomic(path, b"")
}

/// A warning to print at start when the stop file is already there (a solver
/// started now would stop at once), or a directory that cannot take it.
pub fn check_at_start(path: &Path) -> Option<String> {
    if path.exists() {
        return Some(format!(
            "stop file '{}' already exists: a solver that polls for it may stop at once; \
             remove it if it is left over from an earlier run",
            path.display()
        ));
    }
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    if !dir.is_dir() {
        return Some(format!(
            "directory '{}' of the stop file does not exist: creating the stop file will fail",
            dir.display()
        ));
    }
    None
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::fs;

    #[test]
    fn creates_an_empty_file_and_leaves_no_temporary_behind() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("STOP");
        assert!(check_at_start(&p).is_none());
        let h = dir.path().join("h.csv");
        create_stop_file(&p, &h).unwrap();
        assert_eq!(fs::metadata(&p).unwrap().len(), 0);
        let names: Vec<_> = fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(names.len(), 1, "only the stop file remains");
        assert!(check_at_start(&p).unwrap().contains("already exists"));
    }

    #[test]
    fn a_missing_directory_is_reported() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("nope").join("STOP");
        assert!(check_at_start(&p).unwrap().contains("does not exist"));
        let err = create_stop_file(&p, &dir.path().join("h.csv")).unwrap_err();
        assert!(err.to_string().contains("cannot create"));
    }

    #[test]
    fn the_history_is_never_replaced_by_the_stop_file() {
        let dir = tempfile::tempdir().unwrap();
        let h = dir.path().join("h.csv");
        fs::write(&h, "t,x\n0,1\n").unwrap();
        let err = create_stop_file(&h, &h).unwrap_err();
        assert!(err.to_string().contains("watched history"), "{err}");
        assert_eq!(fs::read_to_string(&h).unwrap(), "t,x\n0,1\n");
    }
}
