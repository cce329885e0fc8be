//! The scan report: serde types of the JSON contract that scripts rely on, and a
//! [`ReportBuilder`] that collects it from a [`Pipeline`](crate::pipeline::Pipeline)
//! as a [`Sink`]. Non-finite numbers are written as `null`. Pure: the
//! command prints what this module builds.

use serde::{Deserialize, Serialize};

use crate::alarm::Alarm;
use crate::finding::Level;
use crate::parse::roles::RoleMap;
use crate::parse::{NamesFrom, Schema, SegmentReason, SkipReason};
use crate::pipeline::sink::{Note, Sink};

/// How many skipped lines are listed one by one (all are counted).
pub const MAX_LISTED_SKIPS: usize = 100;

/// The report of `rhoscope scan --json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScanReport {
    /// The history file as given on the command line.
    pub file: String,
    /// Data rows read.
    pub rows: u64,
    /// Lines that looked like data but were skipped (wrong field count, not a
    /// number, over-long).
    pub skipped_rows: u64,
    /// Worst alarm level: `ok`, `warning` or `critical`.
    pub status: Level,
    /// Every raised alarm in file order.
    pub alarms: Vec<AlarmEntry>,
    /// The earliest alarm of any level.
    pub first_warning: Option<Mark>,
    /// The earliest critical alarm.
    pub first_critical: Option<Mark>,
    /// The first row where a column that had held finite values turned non-finite
    /// or overflowed its print field.
    pub blowup: Option<Mark>,
    /// Physical lines in the file.
    pub lines: u64,
    /// Columns of the last segment, with their roles.
    pub columns: Vec<ColumnEntry>,
    /// Restarts: where a new segment began and why.
    pub segments: Vec<SegmentEntry>,
    /// Skipped lines and notes, the first [`MAX_LISTED_SKIPS`] of them.
    pub skipped: Vec<SkipEntry>,
    /// Text lines outside any table (a banner, an echoed input deck, run
    /// statistics): neither rows nor skipped rows.
    #[serde(default)]
    pub text_lines_outside_table: u64,
    /// How the columns of the last segment were found.
    #[serde(default)]
    pub table: TableEntry,
    /// The configuration file applied (named with `--config`, or found beside
    /// the history), if any: it can change roles, thresholds and the format.
    #[serde(default)]
    pub config: Option<String>,
    /// Things the reader of the report should know about the scan itself
    /// (a configuration found beside the history, a file that shrank while it
    /// was read).
    #[serde(default)]
    pub notes: Vec<String>,
}

/// How the columns were found: where their names came from, what the reader
/// inferred, what the file declares.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct TableEntry {
    /// Where the names came from, in words (`header at line 12`,
    /// `no header: generic names c1..cN`).
    pub names_from: String,
    /// 1-based line of the header, when the names come from a header line.
    pub header_line: Option<u64>,
    /// What the reader inferred or noticed, one sentence each (output stride,
    /// step size from time differences, a banner over some columns).
    pub notes: Vec<String>,
    /// The integration scheme a comment line declares (`# scheme: …`), as written.
    pub declared_scheme: Option<String>,
    /// A step size a text line declares (`timestep 0.005`).
    pub declared_step_size: Option<f64>,
}

impl TableEntry {
    /// The entry for a schema.
    pub fn of(schema: &Schema) -> TableEntry {
        let header_line = match schema.names_from {
            NamesFrom::HeaderLine(l) | NamesFrom::CommentLine(l) => Some(l),
            _ => None,
        };
        TableEntry {
            names_from: schema.names_from.to_string(),
            header_line,
            notes: schema.notes.clone(),
            declared_scheme: schema.declared.scheme.as_ref().map(|(_, s)| s.clone()),
            declared_step_size: schema.declared.step_size.map(|(_, v)| v),
        }
    }
}

/// One alarm in the report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AlarmEntry {
    /// `warning` or `critical`.
    pub level: Level,
    /// Which detector raised it.
    pub detector: String,
    /// 1-based physical line of the file at which it was decided.
    pub line: u64,
    /// Simulated time at that line, when known.
    pub time: Option<f64>,
    /// One sentence.
    pub message: String,
    /// The figures behind it (growth per step, balance error, forecast, onset,
    /// stability margin), those that apply.
    #[serde(default)]
    pub evidence: crate::finding::Evidence,
}

/// A place in the file.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Mark {
    /// 1-based physical line.
    pub line: u64,
    /// Simulated time there, when known.
    pub time: Option<f64>,
}

/// A column and its role.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ColumnEntry {
    pub name: String,
    pub unit: Option<String>,
    /// Role key, as `--role` takes it.
    pub role: String,
    /// Why this role.
    pub reason: String,
}

/// A restart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SegmentEntry {
    pub line: u64,
    /// `new_header`, `time_backwards` or `truncated`.
    pub reason: String,
}

/// A skipped line or a note about one.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SkipEntry {
    pub line: u64,
    pub reason: String,
}

fn finite(v: Option<f64>) -> Option<f64> {
    v.filter(|x| x.is_finite())
}

/// Collects a [`ScanReport`] from the pipeline's output.
#[derive(Debug, Default)]
pub struct ReportBuilder {
    alarms: Vec<AlarmEntry>,
    blowup: Option<Mark>,
    columns: Vec<ColumnEntry>,
    segments: Vec<SegmentEntry>,
    skipped: Vec<SkipEntry>,
    outside: u64,
    table: TableEntry,
    notes: Vec<String>,
}

impl Sink for ReportBuilder {
    fn alarm(&mut self, a: &Alarm) {
        let time = finite(a.time);
        if a.detector == "nonfinite" && a.level == Level::Critical && self.blowup.is_none() {
            self.blowup = Some(Mark { line: a.line, time });
        }
        self.alarms.push(AlarmEntry {
            level: a.level,
            detector: a.detector.to_owned(),
            line: a.line,
            time,
            message: a.message.clone(),
            evidence: a.evidence.clone(),
        });
    }

    fn schema(&mut self, _line: u64, schema: &Schema, roles: &RoleMap) {
        self.columns = column_entries(schema, roles);
        self.table = TableEntry::of(schema);
    }

    fn segment(&mut self, line: u64, reason: SegmentReason) {
        let reason = match reason {
            SegmentReason::NewHeader => "new_header",
            SegmentReason::TimeBackwards => "time_backwards",
            SegmentReason::Truncated => "truncated",
        };
        self.segments.push(SegmentEntry {
            line,
            reason: reason.to_owned(),
        });
    }

    fn skipped(&mut self, line: u64, reason: &SkipReason) {
        if let SkipReason::OutsideTable { lines, .. } = reason {
            self.outside += lines;
            return;
        }
        if self.skipped.len() < MAX_LISTED_SKIPS {
            self.skipped.push(SkipEntry {
                line,
                reason: reason.to_string(),
            });
        }
    }

    fn note(&mut self, note: &Note) {
        if let Note::Shrank { .. } = note {
            self.notes.push(note.describe());
        }
    }
}

/// One entry per column: name, unit, role key and reason.
pub fn column_entries(schema: &Schema, roles: &RoleMap) -> Vec<ColumnEntry> {
    schema
        .columns
        .iter()
        .enumerate()
        .map(|(i, c)| ColumnEntry {
            name: c.name.clone(),
            unit: c.unit.clone(),
            role: roles.roles.get(i).map_or("probe", |r| r.key()).to_owned(),
            reason: roles.reasons.get(i).cloned().unwrap_or_default(),
        })
        .collect()
}

impl ReportBuilder {
    /// The report, given the file name and the pipeline's counts.
    pub fn finish(self, file: &str, rows: u64, skipped_rows: u64, lines: u64) -> ScanReport {
        let status = self
            .alarms
            .iter()
            .map(|a| a.level)
            .max()
            .unwrap_or(Level::Ok);
        let mark = |a: &AlarmEntry| Mark {
            line: a.line,
            time: a.time,
        };
        let first_warning = self.alarms.iter().find(|a| a.level > Level::Ok).map(mark);
        let first_critical = self
            .alarms
            .iter()
            .find(|a| a.level == Level::Critical)
            .map(mark);
        ScanReport {
            file: file.to_owned(),
            rows,
            skipped_rows,
            status,
            alarms: self.alarms,
            first_warning,
            first_critical,
            blowup: self.blowup,
            lines,
            columns: self.columns,
            segments: self.segments,
            skipped: self.skipped,
            text_lines_outside_table: self.outside,
            table: self.table,
            config: None,
            notes: self.notes,
        }
    }
}

impl ScanReport {
    /// Exit code by the monitoring-plugin convention: 0 ok, 1 warning, 2 critical.
    pub fn exit_code(&self) -> i32 {
        self.status.exit_code()
    }

    /// A short human-readable report.
    pub fn to_text(&self) -> String {
        use std::fmt::Write;
        let mut s = String::new();
        let status = self.status.word();
        let _ = writeln!(
            s,
            "{}: {status} — {} rows, {} skipped, {} alarms",
            self.file,
            self.rows,
            self.skipped_rows,
            self.alarms.len()
        );
        let at = |m: &Mark| match m.time {
            Some(t) => format!("line {} (t = {t:.6e})", m.line),
            None => format!("line {}", m.line),
        };
        if let Some(b) = &self.blowup {
            let _ = writeln!(s, "  blow-up at {}", at(b));
        }
        for a in &self.alarms {
            let level = if a.level == Level::Critical {
                "critical"
            } else {
                "warning "
            };
            let m = Mark {
                line: a.line,
                time: a.time,
            };
            let _ = writeln!(s, "  {level} {:<10} {}: {}", a.detector, at(&m), a.message);
        }
        for g in &self.segments {
            let _ = writeln!(
                s,
                "  restart at line {} ({})",
                g.line,
                g.reason.replace('_', " ")
            );
        }
        for k in self.skipped.iter().take(5) {
            let _ = writeln!(s, "  skipped line {}: {}", k.line, k.reason);
        }
        if self.skipped.len() > 5 {
            let _ = writeln!(s, "  … see --json for the full list of skipped lines");
        }
        if self.text_lines_outside_table > 0 {
            let _ = writeln!(
                s,
                "  text lines outside the table ({})",
                self.text_lines_outside_table
            );
        }
        s
    }
}
