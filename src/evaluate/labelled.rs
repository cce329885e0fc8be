//! A labelled directory as a set: a `labels.csv` whose header names at least
//! `file` (relative to the CSV's folder) and `level` (`ok`, `warning`,
//! `critical`; `expected` is taken too), and optionally `case`,
//! `onset_line` and `crash_line`. Other columns (a `basis` in words, the
//! solver's name) are kept for people and ignored here. The real-solver
//! drivers (`tests/solvers/generate.py`) and `rhoscope demo --write-all` write
//! such files.

use std::path::Path;

use anyhow::{Context, bail};
use serde::Deserialize;

use super::{Case, Input, Label, Set};
use crate::finding::Level;
use crate::settings::Settings;

/// One row of a labels file, by column name.
#[derive(Debug, Deserialize)]
struct Row {
    #[serde(default)]
    case: Option<String>,
    file: String,
    #[serde(alias = "expected")]
    level: Level,
    #[serde(default)]
    onset_line: Option<u64>,
    #[serde(default)]
    crash_line: Option<u64>,
}

/// The labelled cases of a labels file's text; `dir` is the folder the file
/// names are relative to. Errors name the line and what is wrong with it.
pub fn parse(text: &str, dir: &Path) -> anyhow::Result<Vec<Case>> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let headers = reader.headers().context("reading the header line")?.clone();
    for need in ["file", "level"] {
        let found = headers
            .iter()
            .any(|h| h == need || (need == "level" && h == "expected"));
        if !found {
            bail!(
                "the header line has no '{need}' column (it has: {})",
                headers.iter().collect::<Vec<_>>().join(", ")
            );
        }
    }
    let mut cases = Vec::new();
    for record in reader.records() {
        let record = record.context("reading a row")?;
        let line = record.position().map_or(0, |p| p.line());
        let row: Row = record.deserialize(Some(&headers)).map_err(|e| {
            let why = match e.kind() {
                csv::ErrorKind::Deserialize { err, .. } => err.to_string(),
                _ => e.to_string(),
            };
            anyhow::anyhow!("line {line}: {why}")
        })?;
        let name = row.case.clone().unwrap_or_else(|| row.file.clone());
        check(&row, &name).with_context(|| format!("line {line}"))?;
        cases.push(Case {
            name,
            input: Input::Path(dir.join(&row.file)),
            label: Label {
                level: row.level,
                onset_line: row.onset_line,
                crash_line: row.crash_line,
            },
        });
    }
    Ok(cases)
}

/// A label that can be scored: a blow-up has its crash line, nothing starts
/// after it crashes, a healthy run has neither.
fn check(row: &Row, name: &str) -> anyhow::Result<()> {
    match row.level {
        Level::Critical if row.crash_line.is_none() => {
            bail!("'{name}' is labelled critical but has no crash_line")
        }
        Level::Ok if row.onset_line.is_some() || row.crash_line.is_some() => {
            bail!("'{name}' is labelled ok but has an onset or crash line")
        }
        _ => {}
    }
    if let (Some(o), Some(c)) = (row.onset_line, row.crash_line)
        && o > c
    {
        bail!("onset_line {o} is after crash_line {c}");
    }
    Ok(())
}

/// Read a labels file into a set named after it, read with `settings`.
pub fn read(path: &Path, settings: &Settings) -> anyhow::Result<Set> {
    let text = std::fs::read_to_string(path)
        .with_context(|| format!("cannot read labels file '{}'", path.display()))?;
    let dir = path.parent().unwrap_or(Path::new("."));
    let cases = parse(&text, dir).with_context(|| format!("labels file '{}'", path.display()))?;
    if cases.is_empty() {
        bail!("labels file '{}' lists no case to score", path.display());
    }
    Ok(Set {
        name: path.display().to_string(),
        title: format!("Labelled runs in {}", path.display()),
        settings: settings.clone(),
        cases,
        min_lead: super::score::MIN_LEAD,
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    const TEXT: &str = "case,file,solver,level,onset_line,crash_line,basis\n\
        a,a.out,x,critical,1,90,\"eigen, past 2\"\n\
        b,b.log,y,ok,,,\"bounded\"\n\
        c,c.log,y,warning,40,,drift\n";

    #[test]
    fn reads_by_column_name_and_ignores_the_rest() {
        let cases = parse(TEXT, Path::new("/d")).unwrap();
        assert_eq!(cases.len(), 3);
        assert_eq!(cases[0].name, "a");
        assert!(matches!(&cases[0].input, Input::Path(p) if p == Path::new("/d/a.out")));
        assert_eq!(
            cases[0].label,
            Label {
                level: Level::Critical,
                onset_line: Some(1),
                crash_line: Some(90)
            }
        );
        assert_eq!(cases[1].label.level, Level::Ok);
        assert_eq!(cases[2].label.onset_line, Some(40));
    }

    #[test]
    fn the_demo_writers_columns_are_read_too() {
        let text = "case,file,expected,onset_line,crash_line\nx,x.csv,critical,5,9\n";
        let cases = parse(text, Path::new(".")).unwrap();
        assert_eq!(cases[0].label.level, Level::Critical);
    }

    #[test]
    fn errors_name_the_line_and_the_fault() {
        let bad_level = "file,level\na,fine\n";
        let e = format!("{:#}", parse(bad_level, Path::new(".")).unwrap_err());
        assert!(e.contains("line 2"), "{e}");
        let no_crash = "file,level,onset_line,crash_line\na,ok,,\nb,critical,3,\n";
        let e = format!("{:#}", parse(no_crash, Path::new(".")).unwrap_err());
        assert!(e.contains("line 3") && e.contains("crash_line"), "{e}");
        let no_file = "name,level\na,ok\n";
        let e = format!("{:#}", parse(no_file, Path::new(".")).unwrap_err());
        assert!(e.contains("'file'"), "{e}");
    }
}
