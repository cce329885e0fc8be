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
    /// Which integration scheme the detectors use and where it came from.
    pub scheme: Option<String>,
    /// Monotonic seconds when the chunk was read (live only).
    pub arrival_s: Option<f64>,
    /// Rows read and run through the detectors but left out of this batch
    /// because the loop fell behind (see [`Batch::drop_rows`]).
    pub undrawn_rows: u64,
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

    /// Append a later batch: its items after these, its estimates and arrival
    /// replacing these.
    pub fn append(&mut self, later: Batch) {
        let offset = self.values.len();
        self.values.extend_from_slice(&later.values);
        self.items.extend(later.items.into_iter().map(|i| match i {
            Item::Row { line, start, len } => Item::Row {
                line,
                start: start + offset,
                len,
            },
            other => other,
        }));
        if later.status.is_some() {
            self.status = later.status;
            self.scheme = later.scheme;
        }
        self.arrival_s = later.arrival_s.or(self.arrival_s);
        self.undrawn_rows += later.undrawn_rows;
    }

    /// Leave the rows out (keeping schemas, segments, skips and alarms) and
    /// count them in `undrawn_rows`.
    pub fn drop_rows(&mut self) {
        let before = self.items.len();
        self.items.retain(|i| !matches!(i, Item::Row { .. }));
        self.undrawn_rows += (before - self.items.len()) as u64;
        self.values = Vec::new();
    }

    /// Nothing in it.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty() && self.status.is_none() && self.undrawn_rows == 0
    }
}
impl crate::pipeline::sink::Sink for Batch {
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

#[cfg(test)]
mod tests {
    use super::*;

    fn rows_of(b: &Batch) -> Vec<(u64, Vec<f64>)> {
        b.items
            .iter()
            .filter_map(|i| match i {
                Item::Row { line, start, len } => {
                    Some((*line, b.row_values(*start, *len).to_vec()))
                }
                _ => None,
            })
            .collect()
    }

    #[test]
    fn appended_batches_keep_their_rows_and_dropped_rows_are_counted() {
        let mut a = Batch::default();
        a.push_row(2, &[1.0, 2.0]);
        let mut b = Batch::default();
        b.push_row(3, &[3.0, 4.0]);
        b.items.push(Item::Segment {
            line: 4,
            reason: SegmentReason::NewHeader,
        });
        b.arrival_s = Some(7.0);
        a.append(b);
        assert_eq!(rows_of(&a), vec![(2, vec![1.0, 2.0]), (3, vec![3.0, 4.0])]);
        assert_eq!(a.arrival_s, Some(7.0));
        a.drop_rows();
        assert!(rows_of(&a).is_empty());
        assert_eq!((a.items.len(), a.undrawn_rows), (1, 2));
        assert!(!a.is_empty());
    }
}
