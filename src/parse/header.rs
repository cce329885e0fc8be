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
    fn quoted_csv_header() {
        let cols = columns(
            "\"Time [s]\",\"energy, kinetic (J)\",",
            Delimiter::Byte(b','),
        );
        assert_eq!(cols.len(), 2);
        assert_eq!(cols[1].name, "energy, kinetic");
    }
}
