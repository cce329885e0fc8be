//! Replace a file whole: the bytes go to a fresh temporary file in the same
//! directory — created with `O_CREAT|O_EXCL|O_NOFOLLOW` under a name nobody can
//! guess, so a planted file or symlink is never opened — then to disk (fsync),
//! then a rename puts it in place, and the directory is synced so the rename
//! survives a crash. A destination that is a symlink, or anything but a regular
//! file, is refused: rhoscope replaces files, never what a link points at.
//!
//! A reader of the directory sees either the old file or the new one, never
//! half of one. Temporary names start with a dot and end in `.tmp`, so a
//! collector that reads `*.prom` files passes over them.

use std::collections::hash_map::RandomState;
use std::fs::{self, File, OpenOptions};
use std::hash::{BuildHasher, Hasher};
use std::io::{self, Write};
use std::os::unix::fs::{FileTypeExt, OpenOptionsExt};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use nix::fcntl::OFlag;

/// How many fresh names to try when one is taken (a collision means someone
/// plants files in the directory; 64-bit random names do not collide by chance).
const NAME_TRIES: usize = 16;

/// A 64-bit value another process cannot predict: std's hasher keys come from
/// the operating system's random source; the counter and the clock make each
/// call differ within the process.
fn unpredictable() -> u64 {
    static CALLS: AtomicU64 = AtomicU64::new(0);
    let mut h = RandomState::new().build_hasher();
    h.write_u64(CALLS.fetch_add(1, Ordering::Relaxed));
    h.write_u32(std::process::id());
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .unwrap_or_default();
    h.write_u128(now.as_nanos());
    h.finish()
}

/// A fresh temporary name beside `dest`: `.NAME.HEX16.tmp`.
pub fn temp_name_for(dest: &Path) -> PathBuf {
    let name = dest
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".into());
    dest.with_file_name(format!(".{name}.{:016x}.tmp", unpredictable()))
}

fn err(kind: io::ErrorKind, msg: String) -> io::Error {
    io::Error::new(kind, msg)
}

/// Refuse a destination that is a symlink or not a regular file.
fn check_destination(dest: &Path) -> io::Result<()> {
    match fs::symlink_metadata(dest) {
        Ok(m) if m.file_type().is_symlink() => Err(err(
            io::ErrorKind::InvalidInput,
            format!(
                "'{}' is a symbolic link: rhoscope does not write through links \
                 (remove the link or name the real file)",
                dest.display()
            ),
        )),
        Ok(m) if m.is_dir() => Err(err(
            io::ErrorKind::InvalidInput,
            format!("'{}' is a directory, not a file", dest.display()),
        )),
        Ok(m) if m.file_type().is_fifo() || !m.is_file() => Err(err(
            io::ErrorKind::InvalidInput,
            format!("'{}' is not a regular file", dest.display()),
        )),
        Ok(_) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(err(
            e.kind(),
            format!("cannot inspect '{}': {e}", dest.display()),
        )),
    }
}

/// Create a new temporary file beside `dest`, refusing anything already there.
fn create_temp(dest: &Path) -> io::Result<(PathBuf, File)> {
    let mut last = None;
    for _ in 0..NAME_TRIES {
        let tmp = temp_name_for(dest);
        match OpenOptions::new()
            .write(true)
            .create_new(true)
            .custom_flags((OFlag::O_NOFOLLOW | OFlag::O_CLOEXEC).bits())
            .mode(0o644)
            .open(&tmp)
        {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => last = Some(tmp),
            Err(e) => {
                return Err(err(
                    e.kind(),
                    format!("cannot create '{}': {e}", tmp.display()),
                ));
            }
        }
    }
    Err(err(
        io::ErrorKind::AlreadyExists,
        format!(
            "cannot create a temporary file beside '{}': {NAME_TRIES} fresh names were taken \
             (last '{}')",
            dest.display(),
            last.map(|p| p.display().to_string()).unwrap_or_default()
        ),
    ))
}

/// The directory that holds `dest` (`.` for a bare name).
fn parent_dir(dest: &Path) -> &Path {
    match dest.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    }
}

/// Replace `dest` with `bytes` atomically; see the module documentation.
/// Errors name the file and what failed.
pub fn write_atomic(dest: &Path, bytes: &[u8]) -> io::Result<()> {
    check_destination(dest)?;
    let (tmp, mut file) = create_temp(dest)?;
    let written = file.write_all(bytes).and_then(|_| file.sync_all());
    drop(file);
    if let Err(e) = written {
        let _ = fs::remove_file(&tmp);
        return Err(err(
            e.kind(),
            format!("cannot write '{}': {e}", tmp.display()),
        ));
    }
    // rename(2) replaces a symlink planted at `dest` since the check above
    // (it never follows the destination), so the link's target is never touched.
    if let Err(e) = fs::rename(&tmp, dest) {
        let _ = fs::remove_file(&tmp);
        return Err(err(
            e.kind(),
            format!(
                "cannot rename '{}' to '{}': {e}",
                tmp.display(),
                dest.display()
            ),
        ));
    }
    // Make the rename itself durable. Some filesystems refuse fsync on a
    // directory; the file is in place either way, so that is not an error.
    if let Ok(d) = File::open(parent_dir(dest)) {
        let _ = d.sync_all();
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::os::unix::fs::symlink;

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn replaces_whole_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("out.prom");
        write_atomic(&p, b"a 1\n").unwrap();
        write_atomic(&p, b"a 2\n").unwrap();
        assert_eq!(fs::read(&p).unwrap(), b"a 2\n");
        assert_eq!(names(dir.path()), vec!["out.prom"]);
        let bare = dir.path().join("STOP");
        write_atomic(&bare, b"").unwrap();
        assert_eq!(fs::metadata(&bare).unwrap().len(), 0);
    }

    #[test]
    fn temporary_names_differ_every_call_and_hide_from_collectors() {
        let p = Path::new("/x/STOP");
        let a = temp_name_for(p);
        let b = temp_name_for(p);
        assert_ne!(a, b);
        let s = a.file_name().unwrap().to_string_lossy().into_owned();
        assert!(s.starts_with(".STOP.") && s.ends_with(".tmp"), "{s}");
    }

    #[test]
    fn a_symlink_at_the_destination_is_refused_and_its_target_untouched() {
        let dir = tempfile::tempdir().unwrap();
        let victim = dir.path().join("history.csv");
        fs::write(&victim, "t,x\n0,1\n").unwrap();
        let stop = dir.path().join("STOP");
        symlink(&victim, &stop).unwrap();
        let e = write_atomic(&stop, b"").unwrap_err();
        assert!(e.to_string().contains("symbolic link"), "{e}");
        assert_eq!(fs::read_to_string(&victim).unwrap(), "t,x\n0,1\n");
        assert!(
            fs::symlink_metadata(&stop)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(names(dir.path()), vec!["STOP", "history.csv"]);
    }

    #[test]
    fn a_dangling_symlink_is_refused_and_nothing_is_created_through_it() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("elsewhere");
        let stop = dir.path().join("STOP");
        symlink(&target, &stop).unwrap();
        assert!(write_atomic(&stop, b"x").is_err());
        assert!(!target.exists());
    }

    #[test]
    fn directories_and_fifos_are_refused() {
        let dir = tempfile::tempdir().unwrap();
        let sub = dir.path().join("sub");
        fs::create_dir(&sub).unwrap();
        assert!(
            write_atomic(&sub, b"x")
                .unwrap_err()
                .to_string()
                .contains("directory")
        );
        let fifo = dir.path().join("pipe");
        nix::unistd::mkfifo(&fifo, nix::sys::stat::Mode::S_IRWXU).unwrap();
        assert!(
            write_atomic(&fifo, b"x")
                .unwrap_err()
                .to_string()
                .contains("not a regular file")
        );
    }

    #[test]
    fn a_missing_directory_names_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("no/such/STOP");
        let e = write_atomic(&p, b"").unwrap_err();
        assert!(e.to_string().contains("cannot create"), "{e}");
        assert!(e.to_string().contains("STOP"), "{e}");
    }
}
