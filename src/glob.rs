//! Which files a pattern names (the runs of a fleet, the outputs a command
//! must not overwrite): shell-style patterns (`runs/*/history.csv`)
//! matched component by component — `*` any run of characters, `?` one
//! character, `[abc]`, `[a-z]` and `[!abc]` one of a set; a leading dot is
//! matched only by a pattern that starts with one, as in a shell. [`expand`]
//! lists the directories a pattern walks through (it is called again now and
//! then, so new runs join); the run's display name is the part of its path
//! that the wildcards matched.

use std::path::{Path, PathBuf};

/// True when `text` has a wildcard character.
pub fn has_wildcard(text: &str) -> bool {
    text.contains(['*', '?', '['])
}

/// Does the single path component `name` match `pattern`?
pub fn matches(pattern: &str, name: &str) -> bool {
    if name.starts_with('.') && !pattern.starts_with('.') {
        return false;
    }
    let p: Vec<char> = pattern.chars().collect();
    let n: Vec<char> = name.chars().collect();
    match_from(&p, &n)
}

fn match_from(p: &[char], n: &[char]) -> bool {
    // Iterative matcher with one backtrack point for the latest star.
    let (mut pi, mut ni) = (0usize, 0usize);
    let mut star: Option<(usize, usize)> = None;
    while ni < n.len() {
        if pi < p.len() {
            match p[pi] {
                '*' => {
                    star = Some((pi, ni));
                    pi += 1;
                    continue;
                }
                '?' => {
                    pi += 1;
                    ni += 1;
                    continue;
                }
                '[' => {
                    if let Some((ok, len)) = class(&p[pi..], n[ni])
                        && ok
                    {
                        pi += len;
                        ni += 1;
                        continue;
                    }
                }
                c if c == n[ni] => {
                    pi += 1;
                    ni += 1;
                    continue;
                }
                _ => {}
            }
        }
        match star {
            Some((sp, sn)) => {
                pi = sp + 1;
                ni = sn + 1;
                star = Some((sp, sn + 1));
            }
            None => return false,
        }
    }
    p[pi..].iter().all(|&c| c == '*')
}

/// Would `pattern` name `path` (now or when the file appears)? Both are made
/// absolute against the working directory, `.` and `..` taken lexically, then
/// matched component by component, as [`expand`] walks them.
pub fn path_matches(pattern: &str, path: &Path) -> bool {
    let norm = |p: &Path| -> Option<Vec<String>> {
        let abs = std::path::absolute(p).ok()?;
        let mut parts = Vec::new();
        for c in abs.components() {
            match c {
                std::path::Component::Normal(s) => parts.push(s.to_string_lossy().into_owned()),
                std::path::Component::ParentDir => {
                    parts.pop();
                }
                _ => {}
            }
        }
        Some(parts)
    };
    let (Some(pat), Some(name)) = (norm(Path::new(pattern)), norm(path)) else {
        return false;
    };
    pat.len() == name.len()
        && pat.iter().zip(&name).all(|(p, n)| {
            if has_wildcard(p) {
                matches(p, n)
            } else {
                p == n
            }
        })
}

/// Match `c` against the class opening `p` (`[...]`): (matched, pattern length).
/// `None` when the bracket is not closed (then it is a literal `[`).
fn class(p: &[char], c: char) -> Option<(bool, usize)> {
    let mut i = 1;
    let negate = matches!(p.get(i), Some('!') | Some('^'));
    if negate {
        i += 1;
    }
    let mut hit = false;
    let mut first = true;
    while i < p.len() {
        let x = p[i];
        if x == ']' && !first {
            return Some((hit != negate, i + 1));
        }
        first = false;
        if p.get(i + 1) == Some(&'-') && p.get(i + 2).is_some_and(|&y| y != ']') {
            let y = p[i + 2];
            hit |= x <= c && c <= y;
            i += 3;
        } else {
            hit |= x == c;
            i += 1;
        }
    }
    if p[0] == c { Some((true, 1)) } else { None }
}

/// A file found for a pattern: its path and its display name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Found {
    pub path: PathBuf,
    pub name: String,
}

/// The files `pattern` names now, sorted by path. A pattern without wildcards
/// names its one file, whether it exists yet or not. Unreadable directories
/// are passed over (a run directory being created or removed).
pub fn expand(pattern: &str) -> Vec<Found> {
    if !has_wildcard(pattern) {
        return vec![Found {
            path: PathBuf::from(pattern),
            name: pattern.to_string(),
        }];
    }
    let absolute = pattern.starts_with('/');
    let parts: Vec<&str> = pattern.split('/').filter(|s| !s.is_empty()).collect();
    let base = if absolute {
        PathBuf::from("/")
    } else {
        PathBuf::new()
    };
    let mut out = Vec::new();
    walk(&base, &parts, &mut Vec::new(), &mut out);
    out.sort_by(|a, b| a.path.cmp(&b.path));
    out
}

fn walk(dir: &Path, parts: &[&str], matched: &mut Vec<String>, out: &mut Vec<Found>) {
    let Some((part, rest)) = parts.split_first() else {
        return;
    };
    let last = rest.is_empty();
    if !has_wildcard(part) {
        let next = dir.join(part);
        if last {
            if next.is_file() {
                out.push(found(next, matched));
            }
        } else if next.is_dir() {
            walk(&next, rest, matched, out);
        }
        return;
    }
    let listing = if dir.as_os_str().is_empty() {
        std::fs::read_dir(".")
    } else {
        std::fs::read_dir(dir)
    };
    let Ok(entries) = listing else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(name) = name.to_str() else {
            continue;
        };
        if !matches(part, name) {
            continue;
        }
        let next = dir.join(name);
        matched.push(name.to_string());
        if last {
            if next.is_file() {
                out.push(found(next, matched));
            }
        } else if next.is_dir() {
            walk(&next, rest, matched, out);
        }
        matched.pop();
    }
}

fn found(path: PathBuf, matched: &[String]) -> Found {
    Found {
        name: matched.join("/"),
        path,
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // Expected results follow the POSIX shell's pattern matching notation
    // (IEEE Std 1003.1-2017, XCU 2.13 "Pattern Matching Notation").
    #[test]
    fn wildcards_as_in_the_shell() {
        assert!(matches("*.csv", "run1.csv"));
        assert!(!matches("*.csv", "run1.csv.bak"));
        assert!(matches("r??", "r01"));
        assert!(!matches("r??", "r1"));
        assert!(matches("r[0-9]*", "r7-long"));
        assert!(!matches("r[!0-9]*", "r7"));
        assert!(matches("r[!0-9]*", "rx"));
        assert!(matches("a*b*c", "axxbyyc"));
        assert!(!matches("a*b*c", "axxbyy"));
        assert!(matches("*", "history.csv"));
        assert!(path_matches("r*/history.csv", Path::new("r1/history.csv")));
        assert!(path_matches(
            "./r*/history.csv",
            Path::new("r9/./history.csv")
        ));
        assert!(!path_matches(
            "r*/history.csv",
            Path::new("r1/metrics.prom")
        ));
        assert!(!path_matches(
            "r*/history.csv",
            Path::new("x/r1/history.csv")
        ));
        assert!(path_matches(
            "r*/history.csv",
            Path::new("x/../r2/history.csv")
        ));
        assert!(!matches("*", ".hidden"), "a leading dot needs a dot");
        assert!(matches(".*", ".hidden"));
        assert!(matches("[]x]", "]"), "a ] first in a class is literal");
        assert!(matches("a[", "a["), "an unclosed bracket is literal");
    }

    #[test]
    fn expand_walks_directories_and_names_runs_by_what_matched() {
        let dir = tempfile::tempdir().unwrap();
        for r in ["r01", "r02", "skip"] {
            std::fs::create_dir(dir.path().join(r)).unwrap();
        }
        std::fs::write(dir.path().join("r01/history.csv"), "t\n").unwrap();
        std::fs::write(dir.path().join("r02/history.csv"), "t\n").unwrap();
        std::fs::write(dir.path().join("skip/other.csv"), "t\n").unwrap();
        let pat = format!("{}/r*/history.csv", dir.path().display());
        let got = expand(&pat);
        let names: Vec<&str> = got.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["r01", "r02"]);
        assert!(got[0].path.ends_with("r01/history.csv"));
        // New runs join on the next expansion.
        std::fs::create_dir(dir.path().join("r03")).unwrap();
        std::fs::write(dir.path().join("r03/history.csv"), "t\n").unwrap();
        assert_eq!(expand(&pat).len(), 3);
        // A plain path names its file even before it exists.
        let plain = expand("not/yet/there.csv");
        assert_eq!(plain[0].name, "not/yet/there.csv");
    }
}
