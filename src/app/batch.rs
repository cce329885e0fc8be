//! A batch of what the reader and detectors produced from one chunk of the
//! followed file: schemas, rows, segments, skipped lines and alarms in file
//! order, plus the detectors' latest estimates. Many rows travel as one message
//! so the data rate never drives the frame rate.

use crate::alarm::Alarm;
use crate::detect::Status;
use crate::parse::roles::RoleMap;
use crate::parse::{Schema, SegmentReason, SkipReason};

/// One item of a batch, in file order.
#[derive(Debug, Clone)]
pub enum Item {
    /// A schema (and its roles) applies from `line` on.
    Schema {
        line: u64,
        schema: Schema,
        roles: RoleMap,
    },
    /// A data row; its values are `Batch::values[start..start + len]`.
    Row { line: u64, start: usize, len: usize },
    /// A new segment (restart) begins at `line`.
    Segment { line: u64, reason: SegmentReason },
    /// A line was skipped.
    Skipped { line: u64, reason: SkipReason },
    /// An alarm was raised.
    Alarm(Alarm),
}

/// Everything produced from one chunk of input.
#[derive(Debug, Clone, Default)]
pub struct Batch {
    pub items: Vec<Item>,
    /// Row values, flat; rows point into it.
    pub values: Vec<f64>,
    /// Latest detector estimates after this chunk.
    pub status: Option<Status>,
    /// Monotonic seconds when the chunk was read (live only).
    pub arrival_s: Option<f64>,
}

impl Batch {
    /// Append a row.
    pub fn push_row(&mut self, line: u64, values: &[f64]) {
        let start = self.values.len();
        self.values.extend_from_slice(values);
        self.items.push(Item::Row {
            line,
            start,
            len: values.len(),
        });
    }

    /// Values of a row item.
    pub fn row_values(&self, start: usize, len: usize) -> &[f64] {
        self.values.get(start..start + len).unwrap_or(&[])
    }

    /// Nothing in it.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty() && self.status.is_none()
    }
}
impl crate::pipeline::PipelineSink for Batch {
    fn alarm(&mut self, alarm: &Alarm) {
        self.items.push(Item::Alarm(alarm.clone()));
    }
    fn schema(&mut self, line: u64, schema: &Schema, roles: &RoleMap) {
        self.items.push(Item::Schema {
            line,
            schema: schema.clone(),
            roles: roles.clone(),
        });
    }
    fn row(&mut self, line: u64, values: &[f64]) {
        self.push_row(line, values);
    }
    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.items.push(Item::Segment { line, reason });
    }
    fn skipped(&mut self, line: u64, reason: &SkipReason) {
        self.items.push(Item::Skipped {
            line,
            reason: reason.clone(),
        });
    }
}
