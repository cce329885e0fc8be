//! `rhoscope columns`: the table of column → role, and why, for a history file.

use anyhow::bail;

use crate::alarm::Alarm;
use crate::cli::columns::ColumnsArgs;
use crate::parse::roles::RoleMap;
use crate::parse::{Schema, SkipReason};
use crate::pipeline::Pipeline;
use crate::pipeline::drive::drive_file;
use crate::pipeline::sink::{Flow, Progress, Sink};
use crate::report::{ColumnEntry, TableEntry, column_entries};
use crate::settings::Settings;

/// Bytes read before giving up on finding a first row.
const LOOK_BYTES: u64 = 16 << 20;
/// Bytes fed between two looks at whether a row has come.
const SLICE_BYTES: usize = 64 * 1024;

#[derive(Default)]
struct FirstColumns {
    columns: Option<Vec<ColumnEntry>>,
    table: TableEntry,
    rows: u64,
    /// Text lines outside the table before its first row.
    outside: u64,
    /// Notes the reader made before the first row (encoding, header).
    notes: Vec<String>,
    slices: u64,
}

impl Sink for FirstColumns {
    fn alarm(&mut self, _alarm: &Alarm) {}
    fn schema(&mut self, _line: u64, schema: &Schema, roles: &RoleMap) {
        if self.rows == 0 {
            self.columns = Some(column_entries(schema, roles));
            self.table = TableEntry::of(schema);
        }
    }
    fn row(&mut self, _line: u64, _values: &[f64]) {
        self.rows += 1;
    }
    fn skipped(&mut self, line: u64, reason: &SkipReason) {
        if self.rows > 0 {
            return;
        }
        match reason {
            SkipReason::OutsideTable { lines, .. } => self.outside += lines,
            r if r.is_note() => self.notes.push(format!("line {line}: {r}")),
            _ => {}
        }
    }
    /// Enough once a row has come, or after [`LOOK_BYTES`] without one.
    fn checkpoint(&mut self, _arrival_s: Option<f64>, _p: &mut dyn Progress) -> Flow {
        self.slices += 1;
        if self.rows > 0 || self.slices * SLICE_BYTES as u64 >= LOOK_BYTES {
            Flow::Stop
        } else {
            Flow::Go
        }
    }
}

/// Run `rhoscope columns`; returns the exit code.
pub fn run(args: ColumnsArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input.read_spec(), &args.file)?;
    for note in &settings.notes {
        eprintln!("rhoscope: {note}");
    }
    let mut pipeline = Pipeline::new(&settings);
    let mut sink = FirstColumns::default();
    let bytes = drive_file(
        &args.file,
        &mut pipeline,
        &mut sink,
        SLICE_BYTES,
        &mut |_, _| {},
    )?;
    let Some(columns) = sink.columns.clone().filter(|_| sink.rows > 0) else {
        bail!(
            "{}: {}, so no columns",
            args.file.display(),
            pipeline.no_data_reason(bytes)
        );
    };
    let text = if args.json {
        let mut t = serde_json::to_string_pretty(&columns)?;
        t.push('\n');
        t
    } else {
        let mut t = preface(&sink);
        t.push_str(&table(&columns));
        t.push_str(&notes(
            &sink,
            pipeline.scheme_note(),
            settings.parse.step_size,
        ));
        t
    };
    super::out::print(&text)?;
    Ok(0)
}

/// Where the names came from, before the table.
fn preface(sink: &FirstColumns) -> String {
    format!("names: {}\n", sink.table.names_from)
}

/// What the reader inferred and noticed, after the table.
fn notes(sink: &FirstColumns, scheme: Option<&str>, given_step: Option<f64>) -> String {
    let t = &sink.table;
    let mut lines: Vec<String> = t.notes.clone();
    if sink.outside > 0 {
        lines.push(format!(
            "text lines outside the table before it ({}): banner, echoed input, statistics",
            sink.outside
        ));
    }
    lines.extend(scheme.map(str::to_owned));
    lines.extend(step_note(t, given_step));
    lines.extend(sink.notes.iter().cloned());
    let mut s = String::new();
    for l in lines {
        s.push_str("note: ");
        s.push_str(&l);
        s.push('\n');
    }
    s
}

/// Which step size is used, when the reader's notes have not said it: the file's
/// declaration, and a given one (`--step-size`, `input.step_size`) that comes
/// before it.
fn step_note(t: &TableEntry, given: Option<f64>) -> Option<String> {
    let said = |what: &str| t.notes.iter().any(|n| n.contains(what));
    let (said_declared, said_given) = (said("declared at line"), said("given with --step-size"));
    match (given, t.declared_step_size) {
        (None, Some(dt)) if !said_declared => {
            Some(format!("the file declares a step size of {dt:e}"))
        }
        (Some(g), None) if !said_given => Some(format!(
            "the step size {g:e} given with --step-size (or input.step_size) is used where no column holds one"
        )),
        (Some(_), Some(dt)) if said_given => Some(format!(
            "the file's declared step size {dt:e} gives way to the one given"
        )),
        (Some(g), Some(dt)) => Some(format!(
            "the step size {g:e} given with --step-size (or input.step_size) comes before the file's declared {dt:e}"
        )),
        _ => None,
    }
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
