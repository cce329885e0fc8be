//! Header lines: decoding (UTF-8, or Latin-1 when the bytes are not UTF-8, so that a
//! `µ` written by an old runtime survives), splitting into names with the csv crate
//! where quotes may occur, and separating a unit from its name
//! (`Time [s]`, `kinetic energy (J)`, `disp/mm`).

use super::{Column, Delimiter};

/// Decode header bytes. Returns the text and whether the bytes were not UTF-8
/// (they are then read as Latin-1, one byte per character).
pub fn decode(bytes: &[u8]) -> (String, bool) {
    match std::str::from_utf8(bytes) {
        Ok(s) => (s.to_owned(), false),
        Err(_) => (bytes.iter().map(|&b| char::from(b)).collect(), true),
    }
}

/// Split a header line into columns.
pub fn columns(text: &str, delimiter: Delimiter) -> Vec<Column> {
    let names: Vec<String> = match delimiter {
        Delimiter::Whitespace => whitespace_names(text),
        Delimiter::Byte(d) => quoted_names(text, d),
    };
    names.iter().map(|n| split_unit(n)).collect()
}

fn quoted_names(text: &str, d: u8) -> Vec<String> {
    let text = text.trim_end_matches([' ', '\t', '\r']);
    let text = text.strip_suffix(char::from(d)).unwrap_or(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .delimiter(d)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut record = csv::StringRecord::new();
    match reader.read_record(&mut record) {
        Ok(true) => record.iter().map(str::to_owned).collect(),
        // A stray quote: fall back to a plain split, never fail on a header.
        _ => text
            .split(char::from(d))
            .map(|s| s.trim().to_owned())
            .collect(),
    }
}

/// Whitespace-separated names; a bracketed unit standing alone (`Time [s]`) is
/// joined to the name before it.
fn whitespace_names(text: &str) -> Vec<String> {
    let mut names: Vec<String> = Vec::new();
    for tok in text.split_ascii_whitespace() {
        let is_unit = (tok.starts_with('[') && tok.ends_with(']'))
            || (tok.starts_with('(') && tok.ends_with(')'));
        match names.last_mut() {
            Some(prev) if is_unit => {
                prev.push(' ');
                prev.push_str(tok);
            }
            _ => names.push(tok.to_owned()),
        }
    }
    names
}

/// Names of a whitespace-separated header whose names hold spaces
/// (`ext work [J]`), matched to the fields of the first data row by position:
/// each header word goes to the field whose gap-to-gap span holds the word's
/// middle. `None` unless every field gets at least one word.
pub fn align_whitespace(text: &str, data: &[u8]) -> Option<Vec<Column>> {
    let fields = spans(data.iter().map(|&b| b == b' ' || b == b'\t' || b == b'\r'));
    if fields.len() < 2 {
        return None;
    }
    let chars: Vec<char> = text.chars().collect();
    // A bracketed unit standing alone belongs to the word before it.
    let mut words: Vec<(usize, usize)> = Vec::new();
    for (a, b) in spans(chars.iter().map(|c| c.is_whitespace())) {
        let unit = matches!((chars[a], chars[b - 1]), ('[', ']') | ('(', ')'));
        match words.last_mut() {
            Some(last) if unit => last.1 = b,
            _ => words.push((a, b)),
        }
    }
    // Boundaries between fields: the middle of each gap.
    let bounds: Vec<usize> = fields.windows(2).map(|w| (w[0].1 + w[1].0) / 2).collect();
    let mut names: Vec<Vec<String>> = vec![Vec::new(); fields.len()];
    for (a, b) in words {
        let mid = (a + b) / 2;
        let col = bounds.iter().take_while(|&&x| x <= mid).count();
        names[col].push(chars[a..b].iter().collect());
    }
    if names.iter().any(Vec::is_empty) {
        return None;
    }
    Some(names.iter().map(|w| split_unit(&w.join(" "))).collect())
}

/// Start and end (exclusive) of each run of non-blank items.
fn spans(blank: impl Iterator<Item = bool>) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    let mut len = 0;
    for (i, is_blank) in blank.enumerate() {
        match (is_blank, start) {
            (false, None) => start = Some(i),
            (true, Some(a)) => {
                out.push((a, i));
                start = None;
            }
            _ => {}
        }
        len = i + 1;
    }
    if let Some(a) = start {
        out.push((a, len));
    }
    out
}

/// `Time [s]` → (`Time`, `s`); `kinetic energy (J)` → (`kinetic energy`, `J`);
/// `disp/mm` → (`disp`, `mm`); `W_ext` → (`W_ext`, none).
pub fn split_unit(raw: &str) -> Column {
    let raw = raw.trim();
    for (open, close) in [('[', ']'), ('(', ')'), ('{', '}')] {
        if let Some(stripped) = raw.strip_suffix(close)
            && let Some(at) = stripped.rfind(open)
        {
            let name = stripped[..at].trim();
            let unit = stripped[at + open.len_utf8()..].trim();
            if !name.is_empty() {
                return Column {
                    name: name.to_owned(),
                    unit: (!unit.is_empty()).then(|| unit.to_owned()),
                };
            }
        }
    }
    if let Some((name, unit)) = raw.rsplit_once('/') {
        let (name, unit) = (name.trim(), unit.trim());
        if !name.is_empty() && !unit.is_empty() && unit.len() <= 8 && !unit.contains(' ') {
            return Column {
                name: name.to_owned(),
                unit: Some(unit.to_owned()),
            };
        }
    }
    Column {
        name: raw.to_owned(),
        unit: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_are_split() {
        let c = split_unit("Time [s]");
        assert_eq!((c.name.as_str(), c.unit.as_deref()), ("Time", Some("s")));
        let c = split_unit("kinetic energy (J)");
        assert_eq!(
            (c.name.as_str(), c.unit.as_deref()),
            ("kinetic energy", Some("J"))
        );
        let c = split_unit("W_ext");
        assert_eq!((c.name.as_str(), c.unit), ("W_ext", None));
    }

    #[test]
    fn latin1_micro_sign() {
        let (text, latin1) = decode(b"disp [\xb5m]");
        assert!(latin1);
        assert_eq!(split_unit(&text).unit.as_deref(), Some("\u{b5}m"));
    }

    #[test]
    fn whitespace_header_keeps_units_with_names() {
        let cols = columns("time [s]  ke (J) w_ext", Delimiter::Whitespace);
        let names: Vec<_> = cols.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["time", "ke", "w_ext"]);
    }

    #[test]
    fn aligned_header_with_spaces_in_names() {
        let head = "    step      time [s]     kinetic [J]   ext work [J]";
        let row = b"       1  0.100000D-03  0.000000D+00  0.000000D+00";
        let cols = align_whitespace(head, row).unwrap_or_default();
        let names: Vec<_> = cols.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["step", "time", "kinetic", "ext work"]);
        assert_eq!(cols[3].unit.as_deref(), Some("J"));
    }

    #[test]
    fn quoted_csv_header() {
        let cols = columns(
            "\"Time [s]\",\"energy, kinetic (J)\",",
            Delimiter::Byte(b','),
        );
        assert_eq!(cols.len(), 2);
        assert_eq!(cols[1].name, "energy, kinetic");
    }
}
