//! Put the exposition text in a file atomically: write a temporary file in the
//! same directory, flush it to disk, then rename it over the target, so a
//! collector reading the directory never sees half a file. The temporary name
//! does not end in `.prom`, so the textfile collector passes over it.

use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// The temporary file used for `target`.
pub fn temp_path(target: &Path) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "metrics".into());
    target.with_file_name(format!(".{name}.tmp-{}", std::process::id()))
}

/// Write `text` to `target` atomically (temporary file, then rename).
pub fn atomic_write(target: &Path, text: &str) -> io::Result<()> {
    let tmp = temp_path(target);
    let result = (|| {
        let mut f = File::create(&tmp)?;
        f.write_all(text.as_bytes())?;
        f.sync_all()?;
        fs::rename(&tmp, target)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result.map_err(|e| {
        io::Error::new(
            e.kind(),
            format!("cannot write '{}': {e}", target.display()),
        )
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn replaces_the_file_whole_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("rhoscope.prom");
        atomic_write(&target, "a 1\n").unwrap();
        atomic_write(&target, "a 2\n").unwrap();
        assert_eq!(fs::read_to_string(&target).unwrap(), "a 2\n");
        let names: Vec<_> = fs::read_dir(dir.path()).unwrap().flatten().collect();
        assert_eq!(names.len(), 1, "only the target remains");
        let missing = dir.path().join("no/such/dir/x.prom");
        let err = atomic_write(&missing, "a 1\n").unwrap_err();
        assert!(err.to_string().contains("x.prom"), "{err}");
    }
}
