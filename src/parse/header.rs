//! Header lines: decoding (UTF-8, or Latin-1 when the bytes are not UTF-8, so that a
//! `µ` written by an old runtime survives), splitting into names with the csv crate
//! where quotes may occur, and separating a unit from its name
//! (`Time [s]`, `kinetic energy (J)`, `disp/mm`); a banner spanning several
//! columns (`------- stress [GPa] -------`) is not a name. Names are cleaned of
//! control characters and terminal escapes here, before anything prints them.

use super::unicode::clean_name;
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
    // Without a quote or a line break the csv crate splits and trims exactly
    // so; building its reader costs far more than the split.
    if !text.contains(['"', '\r', '\n']) {
        return text
            .split(char::from(d))
            .map(|s| s.trim().to_owned())
            .collect();
    }
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
    let cleaned = clean_name(raw);
    let raw = cleaned.as_str();
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

/// A word made only of rule characters (`-----`, `=====`).
fn is_rule_word(w: &str) -> bool {
    w.len() >= 3 && w.chars().all(|c| matches!(c, '-' | '=' | '~' | '_'))
}

/// A whitespace-separated header with a banner over some columns,
/// `Time[ps] Etot[eV] ---- stress [GPa] ----`: the names before and after the
/// banner, and the banner's words (`stress [GPa]`). `None` without a run of
/// rule characters among the words.
pub fn banner(text: &str) -> Option<(Vec<String>, String, Vec<String>)> {
    let toks: Vec<&str> = text.split_ascii_whitespace().collect();
    let first = toks.iter().position(|t| is_rule_word(t))?;
    let last = toks.iter().rposition(|t| is_rule_word(t))?;
    let inside: Vec<&str> = toks[first..=last]
        .iter()
        .copied()
        .filter(|t| !is_rule_word(t))
        .collect();
    // A single rule with words after it: the banner runs to the end.
    let (words, after) = if first == last {
        (toks[first + 1..].to_vec(), Vec::new())
    } else {
        (inside, toks[last + 1..].to_vec())
    };
    let before = whitespace_names(&toks[..first].join(" "));
    let after = whitespace_names(&after.join(" "));
    Some((before, clean_name(&words.join(" ")), after))
}

/// The columns of a banner header over `n` fields: names before and after it,
/// generic `cK` names (with the banner's unit, if it has one) for the fields
/// under it, and a note saying so. `None` when the names leave no field for the
/// banner.
pub fn banner_columns(text: &str, n: usize) -> Option<(Vec<Column>, String)> {
    let (before, words, after) = banner(text)?;
    let named = before.len() + after.len();
    if named >= n {
        return None;
    }
    let under = split_unit(&words);
    let mut cols: Vec<Column> = before.iter().map(|w| split_unit(w)).collect();
    let from = cols.len();
    let to = n - after.len();
    cols.extend((from..to).map(|i| Column {
        name: format!("c{}", i + 1),
        unit: under.unit.clone(),
    }));
    cols.extend(after.iter().map(|w| split_unit(w)));
    let span = if to - from == 1 {
        format!("column c{to}")
    } else {
        format!("columns c{}–c{to}", from + 1)
    };
    let note = if words.is_empty() {
        format!("{span} sit under a rule in the header, not under names: generic names")
    } else {
        format!(
            "{span} sit under the banner \"{words}\" in the header, not under names: generic names"
        )
    };
    Some((cols, note))
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
    fn banner_over_columns_gets_generic_names() {
        // The header of a molecular-dynamics logger: four energies and a
        // temperature, then six stress components under one banner.
        let head = "Time[ps]      Etot[eV]     Epot[eV]     Ekin[eV]    T[K]      \
                    ---------------------- stress [GPa] -----------------------";
        let (cols, note) = banner_columns(head, 11).unwrap_or_default();
        let names: Vec<_> = cols.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(
            names,
            [
                "Time", "Etot", "Epot", "Ekin", "T", "c6", "c7", "c8", "c9", "c10", "c11"
            ]
        );
        assert_eq!(cols[4].unit.as_deref(), Some("K"));
        assert_eq!(cols[7].unit.as_deref(), Some("GPa"));
        assert!(
            note.contains("c6–c11") && note.contains("stress [GPa]"),
            "{note}"
        );
        // Names after the banner keep their places.
        let (cols, _) = banner_columns("t ==== forces ==== ke", 5).unwrap_or_default();
        let names: Vec<_> = cols.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["t", "c2", "c3", "c4", "ke"]);
        assert!(banner_columns("t ke ie", 3).is_none());
        assert!(banner_columns("a b ---- x ----", 2).is_none());
    }

    #[test]
    fn names_are_cleaned_before_units_are_split() {
        let c = split_unit("\u{1b}]0;title\u{7}Time [s]");
        assert_eq!((c.name.as_str(), c.unit.as_deref()), ("Time", Some("s")));
        let c = split_unit("disp\u{1b}[2J (mm)");
        assert_eq!((c.name.as_str(), c.unit.as_deref()), ("disp", Some("mm")));
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
