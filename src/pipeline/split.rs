//! Feeding a large run of bytes on two threads: the reader turns each piece
//! into a [`Batch`] of what it found (schemas, rows, segments, skipped lines)
//! on a thread of its own, and the caller's thread replays the batches, in
//! order, through the same detectors, alarm book and sink as a one-thread
//! feed. The events, their order, the checkpoints and so the alarms are those
//! of [`Pipeline::feed`] on the same slices; at most [`BATCHES_IN_FLIGHT`]
//! batches of at most [`BATCH_BYTES`] of input wait between the two threads,
//! so memory stays bounded. Fewer than [`SPLIT_MIN_BYTES`] (a live append) are
//! fed on the caller's thread alone: a thread is not worth its start there.

use std::sync::mpsc::{Receiver, SyncSender, sync_channel};

use super::sink::{Flow, Progress, Sink};
use super::{Adapter, Pipeline, State};
use crate::detect::Status;
use crate::parse::{Reader, RowSink, Schema, SegmentReason, SkipReason};

/// Batches the reader may be ahead of the detectors at most.
pub const BATCHES_IN_FLIGHT: usize = 8;
/// Input bytes per batch at most.
pub const BATCH_BYTES: usize = 64 * 1024;
/// Smallest run of bytes read on two threads.
pub const SPLIT_MIN_BYTES: usize = 4 * BATCH_BYTES;

/// One thing the reader found, in file order; a row's values are the next
/// `len` values of its batch.
enum Event {
    Schema(u64, Box<Schema>),
    Row(u64, usize),
    Segment(u64, SegmentReason),
    Skipped(u64, SkipReason),
}

/// What the reader made of one piece of input.
#[derive(Default)]
struct Batch {
    events: Vec<Event>,
    values: Vec<f64>,
    /// Physical lines completed after the piece.
    lines: u64,
    /// The piece ends a slice: a checkpoint follows it.
    ends_slice: bool,
}

impl RowSink for Batch {
    fn schema(&mut self, line: u64, schema: &Schema) {
        self.events
            .push(Event::Schema(line, Box::new(schema.clone())));
    }
    fn row(&mut self, line: u64, values: &[f64]) {
        self.values.extend_from_slice(values);
        self.events.push(Event::Row(line, values.len()));
    }
    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.events.push(Event::Segment(line, reason));
    }
    fn skipped(&mut self, line: u64, reason: SkipReason) {
        self.events.push(Event::Skipped(line, reason));
    }
}

impl Batch {
    /// Hand the events to the detectors and the sink as the reader would have.
    fn replay(self, state: &mut State, out: &mut dyn Sink, arrival_s: Option<f64>) {
        let mut a = Adapter {
            state,
            out,
            arrival_s,
        };
        let mut at = 0;
        for e in self.events {
            match e {
                Event::Schema(line, schema) => a.schema(line, &schema),
                Event::Row(line, len) => {
                    a.row(line, &self.values[at..at + len]);
                    at += len;
                }
                Event::Segment(line, reason) => a.segment(line, reason),
                Event::Skipped(line, reason) => a.skipped(line, reason),
            }
        }
    }
}

/// The pipeline's progress at a checkpoint, with the reader on its thread.
struct Detached<'a> {
    state: &'a mut State,
    lines: u64,
}

impl Progress for Detached<'_> {
    fn status(&mut self) -> &Status {
        self.state.status()
    }
    fn rows(&self) -> u64 {
        self.state.rows
    }
    fn lines(&self) -> u64 {
        self.lines
    }
    fn skipped(&self) -> u64 {
        self.state.skipped
    }
    fn scheme_note(&self) -> Option<&str> {
        self.state.scheme_note.as_deref()
    }
}

impl Pipeline {
    /// Feed `bytes` in slices of `slice_bytes` with a checkpoint after each
    /// (at `arrival_s`); a checkpoint that answers [`Flow::Stop`] ends the
    /// feeding there and is returned. A large run of bytes is read on a second
    /// thread (see the module documentation); the reader may then have read up
    /// to [`BATCHES_IN_FLIGHT`] pieces past a stop, which are dropped.
    pub fn feed_slices(
        &mut self,
        bytes: &[u8],
        arrival_s: Option<f64>,
        sink: &mut dyn Sink,
        slice_bytes: usize,
    ) -> Flow {
        let slice_bytes = slice_bytes.max(1);
        if bytes.len() < SPLIT_MIN_BYTES {
            for slice in bytes.chunks(slice_bytes) {
                self.feed(slice, arrival_s, sink);
                if sink.checkpoint(arrival_s, self) == Flow::Stop {
                    return Flow::Stop;
                }
            }
            return Flow::Go;
        }
        let Pipeline { reader, state } = self;
        std::thread::scope(|scope| {
            let (tx, rx) = sync_channel::<Batch>(BATCHES_IN_FLIGHT);
            scope.spawn(move || read_batches(bytes, reader, slice_bytes, &tx));
            detect_batches(&rx, state, sink, arrival_s)
        })
    }
}

/// The reading thread: slices → pieces → batches, until the end or the
/// receiver gone (a checkpoint stopped).
fn read_batches(bytes: &[u8], reader: &mut Reader, slice_bytes: usize, tx: &SyncSender<Batch>) {
    let piece_bytes = slice_bytes.min(BATCH_BYTES);
    for slice in bytes.chunks(slice_bytes) {
        let pieces = slice.len().div_ceil(piece_bytes);
        for (i, piece) in slice.chunks(piece_bytes).enumerate() {
            let mut batch = Batch::default();
            reader.feed(piece, &mut batch);
            batch.lines = reader.lines();
            batch.ends_slice = i + 1 == pieces;
            if tx.send(batch).is_err() {
                return;
            }
        }
    }
}

/// The caller's thread: batches → detectors → sink, with the checkpoints.
fn detect_batches(
    rx: &Receiver<Batch>,
    state: &mut State,
    sink: &mut dyn Sink,
    arrival_s: Option<f64>,
) -> Flow {
    for batch in rx {
        let (lines, ends_slice) = (batch.lines, batch.ends_slice);
        batch.replay(state, sink, arrival_s);
        if ends_slice {
            let mut progress = Detached { state, lines };
            if sink.checkpoint(arrival_s, &mut progress) == Flow::Stop {
                return Flow::Stop;
            }
        }
    }
    Flow::Go
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::alarm::Alarm;
    use crate::settings::Settings;

    /// A history of `n` rows whose first column turns unstable at `from`
    /// (×1.05 per row, the sign flipping: the signature of an explicit
    /// integrator past its limit), with a comment line and a short row inside.
    fn history(n: i32, from: i32) -> Vec<u8> {
        let mut s = String::from("time,kinetic_energy,internal_energy,x1\n");
        for i in 0..n {
            let t = f64::from(i) * 1e-3;
            let g = if i > from {
                (-1.05f64).powi(i - from)
            } else {
                1.0
            };
            s.push_str(&format!(
                "{t},{},{},{}\n",
                t.cos().powi(2),
                t.sin().powi(2),
                g * (50.0 * t).sin()
            ));
            if i == n / 3 {
                s.push_str("# a note\n1,2\n");
            }
        }
        s.into_bytes()
    }

    /// Alarms and checkpoints (rows and lines at each) of a feed.
    #[derive(Default)]
    struct Seen {
        alarms: Vec<Alarm>,
        checkpoints: Vec<(u64, u64)>,
        rows: u64,
    }

    impl Sink for Seen {
        fn alarm(&mut self, a: &Alarm) {
            self.alarms.push(a.clone());
        }
        fn row(&mut self, _line: u64, _values: &[f64]) {
            self.rows += 1;
        }
        fn checkpoint(&mut self, _arrival_s: Option<f64>, p: &mut dyn Progress) -> Flow {
            self.checkpoints.push((p.rows(), p.lines()));
            Flow::Go
        }
    }

    #[test]
    fn two_threads_give_the_events_and_checkpoints_of_one() {
        let text = history(12_000, 9_000);
        assert!(text.len() > 2 * SPLIT_MIN_BYTES, "{} bytes", text.len());
        for slice in [1000, 100_000, 1 << 20] {
            let mut one = Pipeline::new(&Settings::default());
            let mut seen_one = Seen::default();
            for s in text.chunks(slice) {
                one.feed(s, Some(1.0), &mut seen_one);
                seen_one.checkpoint(Some(1.0), &mut one);
            }
            let mut two = Pipeline::new(&Settings::default());
            let mut seen_two = Seen::default();
            assert_eq!(
                two.feed_slices(&text, Some(1.0), &mut seen_two, slice),
                Flow::Go
            );
            assert!(!seen_one.alarms.is_empty(), "the growth is alarmed");
            assert_eq!(seen_two.alarms, seen_one.alarms, "slice {slice}");
            assert_eq!(seen_two.checkpoints, seen_one.checkpoints);
            assert_eq!(seen_two.rows, seen_one.rows);
            assert_eq!((two.rows(), two.lines()), (one.rows(), one.lines()));
        }
    }

    #[test]
    fn a_stop_ends_the_feed_at_its_checkpoint() {
        struct StopAt(u64, u64);
        impl Sink for StopAt {
            fn alarm(&mut self, _a: &Alarm) {}
            fn row(&mut self, _line: u64, _values: &[f64]) {
                self.1 += 1;
            }
            fn checkpoint(&mut self, _arrival_s: Option<f64>, p: &mut dyn Progress) -> Flow {
                if p.rows() >= self.0 {
                    Flow::Stop
                } else {
                    Flow::Go
                }
            }
        }
        let text = history(40_000, 40_000);
        let mut p = Pipeline::new(&Settings::default());
        let mut sink = StopAt(5_000, 0);
        assert_eq!(p.feed_slices(&text, None, &mut sink, 50_000), Flow::Stop);
        // The stop came at the first checkpoint past 5,000 rows: one 50 kB
        // slice (about 1,000 rows of ~50 bytes) later at most.
        assert!((5_000..7_000).contains(&sink.1), "{}", sink.1);
        assert_eq!(p.rows(), sink.1);
    }
}
