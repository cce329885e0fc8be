//! Is an output one of the files being watched? Two paths name the same file
//! when they lead to the same device and inode (after following links: a
//! symlink or a hard link to the history is the history), or — when a file does
//! not exist yet — when they resolve to the same absolute path (directories and
//! links resolved, a dangling link followed by hand). Every command that writes
//! something calls [`check_outputs`] once, before it starts, with the files it
//! follows and the files it will write.

use std::fs;
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

use thiserror::Error;

use crate::glob;

/// Most links followed by hand when resolving a dangling one (as the kernel's
/// own limit on nested links, order of magnitude: common practice, no source).
const MAX_HOPS: usize = 40;

/// How an output is written, which decides what may stand at its path.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutputKind {
    /// Replaced whole through a temporary file and a rename (stop file, metrics
    /// textfile, report image): a symlink or a non-file there is refused.
    Replaced,
    /// Appended to (event log): may be a link, a pipe or a device, not a directory.
    Appended,
}

/// One path a command will write, with the flag that named it.
#[derive(Debug, Clone, Copy)]
pub struct Output<'a> {
    /// The option as the user wrote it (`--touch`, `--events`, `[actions] touch`).
    pub flag: &'a str,
    /// The path given.
    pub path: &'a Path,
    /// How it is written.
    pub kind: OutputKind,
}

/// What a command follows: files by name, and shell patterns of runs.
#[derive(Debug, Clone, Copy, Default)]
pub struct Watched<'a> {
    /// Histories named literally (they need not exist yet).
    pub files: &'a [&'a Path],
    /// Patterns whose matches are followed, now and as runs appear.
    pub patterns: &'a [&'a str],
}

/// Why an output path was refused.
#[derive(Debug, Error, PartialEq, Eq)]
pub enum Clash {
    /// The output is a followed history.
    #[error(
        "{flag} '{output}' is the watched history '{watched}' ({how}): rhoscope never \
         writes to a file it follows; give {flag} another path"
    )]
    Watched {
        flag: String,
        output: PathBuf,
        watched: PathBuf,
        how: &'static str,
    },
    /// The output would be followed as a run of a pattern.
    #[error(
        "{flag} '{output}' matches '{pattern}', the runs being followed: it would be read \
         as a history; give {flag} a path outside the pattern"
    )]
    Pattern {
        flag: String,
        output: PathBuf,
        pattern: String,
    },
    /// Two outputs are one file.
    #[error(
        "{flag} '{output}' and {other_flag} '{other}' are the same file ({how}); give each its own path"
    )]
    Outputs {
        flag: String,
        output: PathBuf,
        other_flag: String,
        other: PathBuf,
        how: &'static str,
    },
    /// A replaced output stands on a symlink or something that is not a file.
    #[error(
        "{flag} '{output}' {what}: rhoscope replaces files whole and never writes through links"
    )]
    NotAFile {
        flag: String,
        output: PathBuf,
        what: &'static str,
    },
    /// An output is a directory.
    #[error("{flag} '{output}' is a directory, not a file")]
    Directory { flag: String, output: PathBuf },
}

/// What identifies a path: its file (when it exists) and its resolved name.
struct Identity {
    dev_ino: Option<(u64, u64)>,
    resolved: Option<PathBuf>,
}

impl Identity {
    fn of(p: &Path) -> Self {
        Self {
            dev_ino: fs::metadata(p).ok().map(|m| (m.dev(), m.ino())),
            resolved: resolve(p),
        }
    }

    /// How `self` and `other` are the same file, if they are.
    fn matches(&self, other: &Identity) -> Option<&'static str> {
        if let (Some(a), Some(b)) = (self.dev_ino, other.dev_ino) {
            return (a == b).then_some("same device and inode");
        }
        match (&self.resolved, &other.resolved) {
            (Some(a), Some(b)) if a == b => Some("same path once links are resolved"),
            _ => None,
        }
    }
}

/// The absolute path `p` leads to, following links (by hand for a dangling
/// one) and resolving its directory even when the file itself does not exist.
fn resolve(p: &Path) -> Option<PathBuf> {
    let mut p = std::path::absolute(p).ok()?;
    for _ in 0..MAX_HOPS {
        if let Ok(c) = fs::canonicalize(&p) {
            return Some(c);
        }
        match fs::read_link(&p) {
            // A dangling link: follow it relative to its own directory.
            Ok(target) => {
                let base = p.parent().map(Path::to_path_buf).unwrap_or_default();
                p = base.join(target);
            }
            // The file does not exist: resolve its directory, keep its name.
            Err(_) => {
                let name = p.file_name()?.to_owned();
                let dir = p.parent()?;
                let dir = fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf());
                return Some(dir.join(name));
            }
        }
    }
    None
}

/// True when `a` and `b` are the same file (see the module documentation).
pub fn same_file(a: &Path, b: &Path) -> bool {
    Identity::of(a).matches(&Identity::of(b)).is_some()
}

/// Refuse any output that is a watched file (or would match a watched
/// pattern), two outputs that are one file, a replaced output standing on a
/// link or a non-file, and any output that is a directory.
pub fn check_outputs(watched: &Watched<'_>, outputs: &[Output<'_>]) -> Result<(), Clash> {
    let mut files: Vec<PathBuf> = watched.files.iter().map(|p| p.to_path_buf()).collect();
    for pat in watched.patterns {
        files.extend(glob::expand(pat).into_iter().map(|f| f.path));
    }
    let watched_ids: Vec<(&Path, Identity)> = files
        .iter()
        .map(|p| (p.as_path(), Identity::of(p)))
        .collect();
    let mut seen: Vec<(&Output<'_>, Identity)> = Vec::new();
    for out in outputs {
        let id = Identity::of(out.path);
        for (w, wid) in &watched_ids {
            if let Some(how) = id.matches(wid) {
                return Err(Clash::Watched {
                    flag: out.flag.to_string(),
                    output: out.path.to_path_buf(),
                    watched: w.to_path_buf(),
                    how,
                });
            }
        }
        let names = [Some(out.path.to_path_buf()), id.resolved.clone()];
        if let Some(pat) = watched
            .patterns
            .iter()
            .find(|pat| names.iter().flatten().any(|n| glob::path_matches(pat, n)))
        {
            return Err(Clash::Pattern {
                flag: out.flag.to_string(),
                output: out.path.to_path_buf(),
                pattern: pat.to_string(),
            });
        }
        for (other, oid) in &seen {
            if let Some(how) = id.matches(oid) {
                return Err(Clash::Outputs {
                    flag: out.flag.to_string(),
                    output: out.path.to_path_buf(),
                    other_flag: other.flag.to_string(),
                    other: other.path.to_path_buf(),
                    how,
                });
            }
        }
        check_kind(out)?;
        seen.push((out, id));
    }
    Ok(())
}

fn check_kind(out: &Output<'_>) -> Result<(), Clash> {
    let Ok(meta) = fs::symlink_metadata(out.path) else {
        return Ok(());
    };
    let not_a_file = |what| Clash::NotAFile {
        flag: out.flag.to_string(),
        output: out.path.to_path_buf(),
        what,
    };
    let is_dir = fs::metadata(out.path).is_ok_and(|m| m.is_dir());
    if is_dir {
        return Err(Clash::Directory {
            flag: out.flag.to_string(),
            output: out.path.to_path_buf(),
        });
    }
    match out.kind {
        OutputKind::Appended => Ok(()),
        OutputKind::Replaced if meta.file_type().is_symlink() => {
            Err(not_a_file("is a symbolic link"))
        }
        OutputKind::Replaced if !meta.is_file() => Err(not_a_file("is not a regular file")),
        OutputKind::Replaced => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::os::unix::fs::symlink;

    fn files<'a>(f: &'a [&'a Path]) -> Watched<'a> {
        Watched {
            files: f,
            patterns: &[],
        }
    }

    fn out(flag: &'static str, path: &Path, kind: OutputKind) -> Output<'static> {
        Output {
            flag,
            path: Box::leak(path.to_path_buf().into_boxed_path()),
            kind,
        }
    }

    #[test]
    fn the_history_itself_is_refused_under_every_spelling() {
        let dir = tempfile::tempdir().unwrap();
        let h = dir.path().join("h.csv");
        fs::write(&h, "t,x\n").unwrap();
        let sub = dir.path().join("sub");
        fs::create_dir(&sub).unwrap();
        let dotted = sub.join("..").join("h.csv");
        let link = dir.path().join("link.csv");
        symlink(&h, &link).unwrap();
        let hard = dir.path().join("hard.csv");
        fs::hard_link(&h, &hard).unwrap();
        for (p, kind) in [
            (&h, OutputKind::Replaced),
            (&dotted, OutputKind::Replaced),
            (&link, OutputKind::Appended),
            (&hard, OutputKind::Replaced),
        ] {
            let e = check_outputs(&files(&[&h]), &[out("--touch", p, kind)]).unwrap_err();
            let msg = e.to_string();
            assert!(matches!(e, Clash::Watched { .. }), "{p:?}: {msg}");
            assert!(msg.contains(&*p.to_string_lossy()), "{msg}");
            assert!(msg.contains(&*h.to_string_lossy()), "{msg}");
        }
        let other = dir.path().join("STOP");
        check_outputs(
            &files(&[&h]),
            &[out("--touch", &other, OutputKind::Replaced)],
        )
        .unwrap();
    }

    #[test]
    fn a_history_that_does_not_exist_yet_is_compared_by_resolved_path() {
        let dir = tempfile::tempdir().unwrap();
        let h = dir.path().join("later.csv");
        let same = dir.path().join(".").join("later.csv");
        let e = check_outputs(
            &files(&[&h]),
            &[out("--events", &same, OutputKind::Appended)],
        );
        assert!(matches!(e, Err(Clash::Watched { how, .. }) if how.contains("path")));
        // A dangling link to the future history is the history too.
        let link = dir.path().join("events.jsonl");
        symlink("later.csv", &link).unwrap();
        let e = check_outputs(
            &files(&[&h]),
            &[out("--events", &link, OutputKind::Appended)],
        );
        assert!(matches!(e, Err(Clash::Watched { .. })), "{e:?}");
        let fine = dir.path().join("other.jsonl");
        check_outputs(
            &files(&[&h]),
            &[out("--events", &fine, OutputKind::Appended)],
        )
        .unwrap();
    }

    #[test]
    fn two_outputs_on_one_file_and_links_for_replaced_outputs_are_refused() {
        let dir = tempfile::tempdir().unwrap();
        let h = dir.path().join("h.csv");
        let a = dir.path().join("STOP");
        let e = check_outputs(
            &files(&[&h]),
            &[
                out("--touch", &a, OutputKind::Replaced),
                out("--events", &a, OutputKind::Appended),
            ],
        )
        .unwrap_err();
        assert!(matches!(e, Clash::Outputs { .. }), "{e}");
        assert!(e.to_string().contains("--touch") && e.to_string().contains("--events"));
        let target = dir.path().join("target");
        fs::write(&target, "keep").unwrap();
        let link = dir.path().join("metrics.prom");
        symlink(&target, &link).unwrap();
        let e = check_outputs(
            &files(&[&h]),
            &[out("--textfile", &link, OutputKind::Replaced)],
        );
        assert!(matches!(e, Err(Clash::NotAFile { .. })), "{e:?}");
        check_outputs(
            &files(&[&h]),
            &[out("--events", &link, OutputKind::Appended)],
        )
        .unwrap();
        let e = check_outputs(
            &files(&[&h]),
            &[out("--plot", dir.path(), OutputKind::Replaced)],
        );
        assert!(matches!(e, Err(Clash::Directory { .. })), "{e:?}");
        assert!(same_file(&link, &target));
        assert!(!same_file(&h, &target));
    }

    #[test]
    fn an_output_a_pattern_would_follow_is_refused_even_before_it_exists() {
        let dir = tempfile::tempdir().unwrap();
        let r1 = dir.path().join("r1");
        fs::create_dir(&r1).unwrap();
        fs::write(r1.join("history.csv"), "t,x\n").unwrap();
        let pattern = format!("{}/r*/history.csv", dir.path().display());
        let w = Watched {
            files: &[],
            patterns: &[pattern.as_str()],
        };
        let existing = r1.join("history.csv");
        let e = check_outputs(&w, &[out("--textfile", &existing, OutputKind::Replaced)]);
        assert!(matches!(e, Err(Clash::Watched { .. })), "{e:?}");
        let future = dir.path().join("r2").join("history.csv");
        let e = check_outputs(&w, &[out("--textfile", &future, OutputKind::Replaced)]);
        let msg = e.unwrap_err().to_string();
        assert!(
            msg.contains("r2/history.csv") && msg.contains("r*/history.csv"),
            "{msg}"
        );
        let fine = dir.path().join("fleet.prom");
        check_outputs(&w, &[out("--textfile", &fine, OutputKind::Replaced)]).unwrap();
    }
}
