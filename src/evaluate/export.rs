//! A labelled set as files a person can open: a file name for each case's
//! history and the `labels.csv` that [`super::labelled`] reads back, so a
//! written set scores with `rhoscope evaluate --labels` exactly as it does in
//! memory. Pure: the command writes what this returns.

use serde::Serialize;

use crate::finding::Level;

use super::Label;

/// A file name from a case name: ASCII letters, digits, `.`, `-` and `_`
/// kept, anything else (spaces, `×`, separators) turned into `_`.
pub fn file_stem(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_') {
                c
            } else {
                '_'
            }
        })
        .collect()
}

/// The extension that suits a history, from its first line that starts like
/// a row of numbers or a JSON object (banners and headers are skipped):
/// `jsonl`, `csv`, `tsv`, else `txt`.
pub fn extension(bytes: &[u8]) -> &'static str {
    let head = String::from_utf8_lossy(&bytes[..bytes.len().min(8192)]);
    let line = head
        .lines()
        .map(str::trim)
        .find(|l| l.starts_with(|c: char| c.is_ascii_digit() || "-+.{".contains(c)))
        .unwrap_or("");
    if line.starts_with('{') {
        "jsonl"
    } else if line.contains(',') {
        "csv"
    } else if line.contains('\t') {
        "tsv"
    } else {
        "txt"
    }
}

/// The file name of a case's history.
pub fn file_name(case: &str, bytes: &[u8]) -> String {
    format!("{}.{}", file_stem(case), extension(bytes))
}

/// One row of a labels file, as [`super::labelled`] reads it back.
#[derive(Serialize)]
struct Row<'a> {
    case: &'a str,
    file: &'a str,
    level: Level,
    onset_line: Option<u64>,
    crash_line: Option<u64>,
}

/// The text of a labels file: `case,file,level,onset_line,crash_line`, one
/// row per `(case, file, label)`, quoted where a name needs it.
pub fn labels_csv(rows: &[(String, String, Label)]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    for (case, file, l) in rows {
        // Serialising plain fields to memory cannot fail.
        let _ = w.serialize(Row {
            case,
            file,
            level: l.level,
            onset_line: l.onset_line,
            crash_line: l.crash_line,
        });
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use std::path::Path;

    use super::*;

    #[test]
    fn names_and_extensions_suit_a_directory_listing() {
        assert_eq!(file_stem("chain-cd every×2"), "chain-cd_every_2");
        assert_eq!(extension(b"time,ke\n0,1\n"), "csv");
        assert_eq!(extension(b"{\"t\": 0}\n"), "jsonl");
        assert_eq!(extension(b"t\tx\n1\t2\n"), "tsv");
        assert_eq!(extension(b"banner, with a comma\nstep ke\n0 1.5\n"), "txt");
        assert_eq!(extension(b"  0.0  1.0\n"), "txt");
        assert_eq!(file_name("a b", b"1;2\n"), "a_b.txt");
    }

    #[test]
    fn labels_read_back_as_written() {
        let rows = vec![
            (
                "blow, up".to_string(),
                "blow__up.csv".to_string(),
                Label {
                    level: Level::Critical,
                    onset_line: Some(40),
                    crash_line: Some(90),
                },
            ),
            (
                "calm".to_string(),
                "calm.txt".to_string(),
                Label {
                    level: Level::Ok,
                    onset_line: None,
                    crash_line: None,
                },
            ),
        ];
        let text = labels_csv(&rows);
        assert!(text.starts_with("case,file,level,onset_line,crash_line\n"));
        let back = super::super::labelled::parse(&text, Path::new("d")).expect("reads back");
        assert_eq!(back.len(), 2);
        for (case, (name, file, label)) in back.iter().zip(&rows) {
            assert_eq!(&case.name, name);
            assert_eq!(case.label, *label);
            match &case.input {
                super::super::Input::Path(p) => assert_eq!(p, &Path::new("d").join(file)),
                other => panic!("{other:?}"),
            }
        }
    }
}
