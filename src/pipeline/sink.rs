//! The one way results leave the pipeline: a [`Sink`] receives, in file order,
//! the schemas, rows, segments, skipped lines and alarms the pipeline makes,
//! the [`Note`]s the drive loop has about the file itself (it appeared, went
//! missing, was rewritten, could not be read, the backlog is read), and a
//! [`checkpoint`](Sink::checkpoint) after every slice of input, where it may
//! read the detectors' latest estimates through [`Progress`] and ask the loop
//! to stop. The report, the report image, the guard's reactor, the fleet's
//! rows and the dashboard's batches implement it and need nothing else of the
//! pipeline.

use crate::alarm::Alarm;
use crate::detect::Status;
use crate::parse::roles::RoleMap;
use crate::parse::{Schema, SegmentReason, SkipReason};
use crate::source::RestartReason;

/// Something about the followed file rather than its rows.
#[derive(Debug, Clone, PartialEq)]
pub enum Note {
    /// The file exists now (first seen, or back after going missing).
    Appeared,
    /// New bytes arrived, before they are read; `arrival_s` as passed to the detectors.
    Arrived { bytes: usize, arrival_s: f64 },
    /// The file is read again from its start (a new segment follows).
    Restarted(RestartReason),
    /// The name no longer leads to a file; what was read is kept.
    Missing,
    /// Reading failed (told once until a read succeeds or the message changes).
    ReadError(String),
    /// Everything that was in the file when following began has been read;
    /// what follows is live. `lines` physical lines were read by then.
    CaughtUp { lines: u64 },
    /// A plain file held `size_at_start` bytes when its reading began but
    /// gave only `read`: it was truncated or replaced while being read.
    Shrank { size_at_start: u64, read: u64 },
}

impl Note {
    /// One sentence for a log line or a status line.
    pub fn describe(&self) -> String {
        match self {
            Note::Appeared => "the file is there: following it".into(),
            Note::Arrived { bytes, .. } => format!("{bytes} new bytes"),
            Note::Restarted(r) => format!("{}: reading it again from its start", r.describe()),
            Note::Missing => {
                "the file is gone: keeping what was read, waiting for it to come back".into()
            }
            Note::ReadError(e) => format!("cannot read the file: {e}"),
            Note::CaughtUp { lines } => format!("caught up: {lines} lines read, following live"),
            Note::Shrank {
                size_at_start,
                read,
            } => format!(
                "file shrank during scan: {size_at_start} bytes when the scan began, {read} read; \
                 the report covers only what was read (was the file truncated or rewritten?)"
            ),
        }
    }
}

/// Whether the loop feeding a sink should go on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Flow {
    Go,
    /// Stop reading: nothing more would change what this sink does.
    Stop,
}

/// What a sink may read of the pipeline at a checkpoint.
pub trait Progress {
    /// The detectors' latest estimates.
    fn status(&mut self) -> &Status;
    /// Data rows read so far.
    fn rows(&self) -> u64;
    /// Physical lines completed so far.
    fn lines(&self) -> u64;
    /// Lines skipped so far (notes not counted).
    fn skipped(&self) -> u64;
    /// Which integration scheme the detectors use and where it came from, in words.
    fn scheme_note(&self) -> Option<&str>;
}

/// Receives, in file order, what the pipeline finds. Only `alarm` is required.
pub trait Sink {
    /// A raised alarm (one per raise, not one per row).
    fn alarm(&mut self, alarm: &Alarm);
    /// A schema (with the roles of its columns) applies from `line` on.
    fn schema(&mut self, _line: u64, _schema: &Schema, _roles: &RoleMap) {}
    /// A data row at 1-based physical `line`, before the alarms it raises.
    fn row(&mut self, _line: u64, _values: &[f64]) {}
    /// A new segment (restart) begins at `line`.
    fn segment(&mut self, _line: u64, _reason: SegmentReason) {}
    /// A line was skipped (or noted); counted, never fatal.
    fn skipped(&mut self, _line: u64, _reason: &SkipReason) {}
    /// Something about the file itself (see [`Note`]).
    fn note(&mut self, _note: &Note) {}
    /// After every slice of input read, after a restart, and once at the end
    /// of a plain file; `arrival_s` is the arrival instant of the bytes read
    /// (when following live).
    fn checkpoint(&mut self, _arrival_s: Option<f64>, _progress: &mut dyn Progress) -> Flow {
        Flow::Go
    }
}

/// A sink that ignores everything (for callers that only want the status).
impl Sink for () {
    fn alarm(&mut self, _alarm: &Alarm) {}
}

/// Collects alarms into a vector.
impl Sink for Vec<Alarm> {
    fn alarm(&mut self, alarm: &Alarm) {
        self.push(alarm.clone());
    }
}
