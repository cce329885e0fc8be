//! The stop file: created atomically (a temporary file in the same directory,
//! then a rename), so a solver polling for it never sees a half-written file.
//! The file is empty; why it was created goes to the event log.

use std::fs::{self, OpenOptions};
use std::io;
use std::path::{Path, PathBuf};

/// Temporary name next to `path`, unique to this process.
fn temp_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "stop".into());
    path.with_file_name(format!(".{name}.{}.rhoscope-tmp", std::process::id()))
}

/// Create the stop file at `path` atomically.
pub fn create_stop_file(path: &Path) -> io::Result<()> {
    let tmp = temp_name(path);
    let made = OpenOptions::new()
        .write(true)
        .create(true)
        .truncate(true)
        .open(&tmp)
        .and_then(|f| f.sync_all());
    if let Err(e) = made {
        return Err(io::Error::new(
            e.kind(),
            format!("cannot create '{}': {e}", tmp.display()),
        ));
    }
    if let Err(e) = fs::rename(&tmp, path) {
        let _ = fs::remove_file(&tmp);
        return Err(io::Error::new(
            e.kind(),
            format!(
                "cannot rename '{}' to '{}': {e}",
                tmp.display(),
                path.display()
            ),
        ));
    }
    Ok(())
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

    #[test]
    fn creates_an_empty_file_and_leaves_no_temporary_behind() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("STOP");
        assert!(check_at_start(&p).is_none());
        create_stop_file(&p).unwrap();
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
        let err = create_stop_file(&p).unwrap_err();
        assert!(err.to_string().contains("cannot create"));
    }
}
