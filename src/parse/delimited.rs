//! Delimited text: guessing the delimiter from a line, telling a header from a
//! data row, and the numeric hot path that turns a data line into f64 values
//! without allocating (memchr to find delimiters, `fast-float2` for the digits,
//! the tolerant slow path only for the fields it rejects).

use memchr::memchr;

use super::Delimiter;
use super::number::{parse_slow, trim};

/// Guess the delimiter of a line: tab when tabs separate the fields (not stray
/// tabs among space-aligned columns), else semicolon when present (decimal commas
/// are written with semicolon delimiters), else comma, else whitespace.
pub fn guess_delimiter(line: &[u8]) -> Delimiter {
    let line = trim(line);
    if memchr(b'\t', line).is_some() && !has_space_gap(line) {
        Delimiter::Byte(b'\t')
    } else if memchr(b';', line).is_some() {
        Delimiter::Byte(b';')
    } else if memchr(b',', line).is_some() {
        Delimiter::Byte(b',')
    } else {
        Delimiter::Whitespace
    }
}

/// True when two spaces in a row separate tokens somewhere without a tab among them.
fn has_space_gap(line: &[u8]) -> bool {
    line.split(|&b| b != b' ' && b != b'\t')
        .any(|gap| gap.len() >= 2 && !gap.contains(&b'\t'))
}

/// Why a data line could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowError {
    /// The field at this 0-based index is not a number.
    NotANumber(usize),
}

/// Parse every field of `line` into `out` (cleared first). Whitespace around
/// fields is ignored; a trailing delimiter at the end of the line is allowed.
pub fn parse_row(line: &[u8], delimiter: Delimiter, out: &mut Vec<f64>) -> Result<(), RowError> {
    out.clear();
    match delimiter {
        Delimiter::Whitespace => parse_ws(line, out),
        Delimiter::Byte(d) => parse_delimited(line, d, out),
    }
}

#[inline]
fn is_blank(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\r')
}

fn parse_ws(line: &[u8], out: &mut Vec<f64>) -> Result<(), RowError> {
    let n = line.len();
    let mut i = 0;
    loop {
        while i < n && is_blank(line[i]) {
            i += 1;
        }
        if i >= n {
            return Ok(());
        }
        let rest = &line[i..];
        if let Ok((v, used)) = fast_float2::parse_partial::<f64, _>(rest)
            && (used == rest.len() || is_blank(rest[used]))
        {
            out.push(v);
            i += used;
            continue;
        }
        let end = rest.iter().position(|&b| is_blank(b)).unwrap_or(rest.len());
        match parse_slow(&rest[..end]) {
            Some(v) => out.push(v),
            None => return Err(RowError::NotANumber(out.len())),
        }
        i += end;
    }
}

fn parse_delimited(line: &[u8], d: u8, out: &mut Vec<f64>) -> Result<(), RowError> {
    let pad = |b: u8| b != d && is_blank(b);
    let mut line = line;
    while let [rest @ .., last] = line
        && pad(*last)
    {
        line = rest;
    }
    if let [rest @ .., last] = line
        && *last == d
    {
        line = rest;
    }
    let n = line.len();
    let mut i = 0;
    loop {
        while i < n && pad(line[i]) {
            i += 1;
        }
        let rest = &line[i..];
        if let Ok((v, used)) = fast_float2::parse_partial::<f64, _>(rest) {
            let mut j = used;
            while j < rest.len() && pad(rest[j]) {
                j += 1;
            }
            if j == rest.len() {
                out.push(v);
                return Ok(());
            }
            if rest[j] == d {
                out.push(v);
                i += j + 1;
                continue;
            }
        }
        let end = memchr(d, rest).unwrap_or(rest.len());
        match parse_slow(trim(&rest[..end])) {
            Some(v) => out.push(v),
            None => return Err(RowError::NotANumber(out.len())),
        }
        if end == rest.len() {
            return Ok(());
        }
        i += end + 1;
    }
}

/// How a non-comment line reads: all numbers, or (some) words.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LineKind {
    Data,
    /// Every field is a word (not a number): a header.
    Header,
    /// Mixed: some fields numbers, some words.
    Mixed {
        /// The first field is a number (a damaged row rather than a sentence).
        first_is_number: bool,
        /// Number of fields.
        fields: usize,
    },
}

/// Classify a line by its fields; `scratch` is reused.
pub fn classify(line: &[u8], delimiter: Delimiter, scratch: &mut Vec<f64>) -> LineKind {
    if parse_row(line, delimiter, scratch).is_ok() {
        return LineKind::Data;
    }
    let numeric = |f: &[u8]| super::number::parse_field(f).is_some();
    let fields: Vec<&[u8]> = match delimiter {
        Delimiter::Whitespace => line
            .split(|&b| is_blank(b))
            .filter(|f| !f.is_empty())
            .collect(),
        Delimiter::Byte(d) => line.split(|&b| b == d).collect(),
    };
    if fields.iter().any(|f| numeric(f)) {
        LineKind::Mixed {
            first_is_number: fields.first().is_some_and(|f| numeric(f)),
            fields: fields.len(),
        }
    } else {
        LineKind::Header
    }
}

/// A rule: a line drawn with `-`, `=`, `_`, `~`, `+` or `|` (at least three of
/// the first four), as tables print under or above a header.
pub fn is_rule(line: &[u8]) -> bool {
    let drawn = line
        .iter()
        .filter(|b| matches!(b, b'-' | b'=' | b'_' | b'~'))
        .count();
    drawn >= 3
        && line.iter().all(|b| {
            matches!(
                b,
                b'-' | b'=' | b'_' | b'~' | b'+' | b'|' | b' ' | b'\t' | b'\r'
            )
        })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::parse::is_field_overflow;

    #[test]
    fn guesses() {
        assert_eq!(guess_delimiter(b"1,2,3"), Delimiter::Byte(b','));
        assert_eq!(guess_delimiter(b"1,5;2,5;3,5"), Delimiter::Byte(b';'));
        assert_eq!(guess_delimiter(b"  1.0  2.0"), Delimiter::Whitespace);
        assert_eq!(guess_delimiter(b"1\t2\t3"), Delimiter::Byte(b'\t'));
        assert_eq!(
            guess_delimiter(b"time [s]\tkinetic energy"),
            Delimiter::Byte(b'\t')
        );
        assert_eq!(
            guess_delimiter(b"  1.0\t  2.0    3.0"),
            Delimiter::Whitespace
        );
    }

    #[test]
    fn rows() {
        let mut v = Vec::new();
        parse_row(b" 1.0  2.0D+00 ***** nan", Delimiter::Whitespace, &mut v).unwrap();
        assert_eq!(v.len(), 4);
        assert!(is_field_overflow(v[2]));
        assert!(v[3].is_nan());
        parse_row(b"1.0, 2.5 ,-inf,", Delimiter::Byte(b','), &mut v).unwrap();
        assert_eq!(v.len(), 3);
        assert_eq!(v[2], f64::NEG_INFINITY);
        parse_row(b" 1.0\t2.5 \t3\r", Delimiter::Byte(b'\t'), &mut v).unwrap();
        assert_eq!(v.len(), 3);
        assert_eq!(
            parse_row(b"1.0,x,3", Delimiter::Byte(b','), &mut v),
            Err(RowError::NotANumber(1))
        );
        assert_eq!(
            parse_row(b"1.0,,3", Delimiter::Byte(b','), &mut v),
            Err(RowError::NotANumber(1))
        );
    }

    #[test]
    fn kinds() {
        let mut s = Vec::new();
        assert_eq!(
            classify(b"time ke ie", Delimiter::Whitespace, &mut s),
            LineKind::Header
        );
        assert_eq!(
            classify(b"1 2 3", Delimiter::Whitespace, &mut s),
            LineKind::Data
        );
        assert_eq!(
            classify(b"restart at step 100", Delimiter::Whitespace, &mut s),
            LineKind::Mixed {
                first_is_number: false,
                fields: 4
            }
        );
        assert_eq!(
            classify(b"1.0,abc", Delimiter::Byte(b','), &mut s),
            LineKind::Mixed {
                first_is_number: true,
                fields: 2
            }
        );
        assert!(is_rule(b"------  -------"));
        assert!(is_rule(b"+=====+=====+"));
        assert!(!is_rule(b"*****"));
        assert!(!is_rule(b"--"));
    }
}
