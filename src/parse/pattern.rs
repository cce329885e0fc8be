//! Free-form solver log lines read through a user regex: each named capture group
//! is a column (in the order the groups appear in the pattern); lines that do not
//! match are ignored, as most lines of a log are not history rows.

use regex::bytes::Regex;

use super::header::split_unit;
use super::{Column, number};

/// Columns named by the pattern's named groups.
pub fn columns(re: &Regex) -> Vec<Column> {
    re.capture_names().flatten().map(split_unit).collect()
}

/// What a line gave.
#[derive(Debug, PartialEq, Eq)]
pub enum Match {
    /// The line does not match: not a history row.
    NoMatch,
    /// All groups read as numbers into the output.
    Row,
    /// The group with this 0-based column index did not take part or is not a number.
    Bad(usize),
}

/// Match `line` and read every named group into `out` (cleared first).
pub fn read(re: &Regex, line: &[u8], out: &mut Vec<f64>) -> Match {
    out.clear();
    let Some(caps) = re.captures(line) else {
        return Match::NoMatch;
    };
    for (i, name) in re.capture_names().flatten().enumerate() {
        match caps
            .name(name)
            .and_then(|m| number::parse_field(m.as_bytes()))
        {
            Some(v) => out.push(v),
            None => return Match::Bad(i),
        }
    }
    Match::Row
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn named_groups_are_columns() {
        let re = Regex::new(r"step (?P<step>\d+) t=(?P<time>\S+) dt=(?P<dt>\S+)").unwrap();
        let names: Vec<_> = columns(&re).into_iter().map(|c| c.name).collect();
        assert_eq!(names, ["step", "time", "dt"]);
        let mut v = Vec::new();
        assert_eq!(
            read(&re, b"INFO step 12 t=1.5D-03 dt=2e-6 ok", &mut v),
            Match::Row
        );
        assert_eq!(v.len(), 3);
        assert_eq!(read(&re, b"writing restart", &mut v), Match::NoMatch);
        assert_eq!(read(&re, b"step 3 t=abc dt=1", &mut v), Match::Bad(1));
    }
}
