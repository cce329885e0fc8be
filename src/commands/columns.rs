//! `rhoscope columns`: the table of column → role, and why, for a history file.

use std::io::Read;

use anyhow::{Context, bail};

use crate::alarm::Alarm;
use crate::cli::columns::ColumnsArgs;
use crate::parse::Schema;
use crate::parse::roles::RoleMap;
use crate::pipeline::{Pipeline, PipelineSink};
use crate::report::{ColumnEntry, column_entries};
use crate::settings::Settings;

/// Bytes read before giving up on finding a first row.
const LOOK_BYTES: u64 = 16 << 20;

#[derive(Default)]
struct FirstColumns {
    columns: Option<Vec<ColumnEntry>>,
    rows: u64,
}

impl PipelineSink for FirstColumns {
    fn alarm(&mut self, _alarm: &Alarm) {}
    fn schema(&mut self, _line: u64, schema: &Schema, roles: &RoleMap) {
        if self.rows == 0 {
            self.columns = Some(column_entries(schema, roles));
        }
    }
    fn row(&mut self, _line: u64, _values: &[f64]) {
        self.rows += 1;
    }
}

/// Run `rhoscope columns`; returns the exit code.
pub fn run(args: ColumnsArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input, &args.file)?;
    for note in &settings.notes {
        eprintln!("rhoscope: {note}");
    }
    let (mut file, _) = super::scan::open_history(&args.file)?;
    let mut pipeline = Pipeline::new(&settings);
    let mut sink = FirstColumns::default();
    let mut buf = vec![0u8; 64 * 1024];
    let mut read = 0u64;
    while sink.rows == 0 && read < LOOK_BYTES {
        let n = file
            .read(&mut buf)
            .with_context(|| format!("{}: read failed", args.file.display()))?;
        if n == 0 {
            pipeline.finish(&mut sink);
            break;
        }
        read += n as u64;
        pipeline.feed(&buf[..n], None, &mut sink);
    }
    let Some(columns) = sink.columns.filter(|_| sink.rows > 0) else {
        bail!("{}: no data row, so no columns", args.file.display());
    };
    let text = if args.json {
        let mut t = serde_json::to_string_pretty(&columns)?;
        t.push('\n');
        t
    } else {
        table(&columns)
    };
    super::scan::print(&text)?;
    Ok(0)
}

/// The human table: column, unit, role, why.
fn table(columns: &[ColumnEntry]) -> String {
    let w = columns
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0)
        .max(6);
    let u = columns
        .iter()
        .map(|c| c.unit.as_deref().map_or(1, |s| s.chars().count()))
        .max()
        .unwrap_or(0)
        .max(4);
    let mut s = format!(
        "{:>3}  {:<w$}  {:<u$}  {:<13}  why\n",
        "#", "column", "unit", "role"
    );
    for (i, c) in columns.iter().enumerate() {
        s.push_str(&format!(
            "{:>3}  {:<w$}  {:<u$}  {:<13}  {}\n",
            i + 1,
            c.name,
            c.unit.as_deref().unwrap_or("-"),
            c.role,
            c.reason
        ));
    }
    s
}
