//! The data thread of the dashboard: follows a byte [`Source`] (the followed
//! file, or a scripted fake in tests) through the shared [`Pipeline`] with
//! the one follow loop ([`Follow`]) and sends what came out as [`Msg::Data`]
//! batches of at most [`CHUNK_BYTES`] of input each, so a large backlog
//! arrives as many small messages the loop can interleave with keys and
//! frames; what happens to the file (found, gone, rewritten, unreadable)
//! goes as [`Msg::Source`] in the words of [`Note::describe`]. Alarms can
//! also be passed to an observer (the event log, the armed actions) on this
//! thread.
//! It never waits on the loop: while the loop's channel is full (a slow or
//! stuck frame) batches are merged and held, the file is read on and every
//! row still goes through the detectors, so alarms keep reaching the
//! observer; past [`HELD_VALUES_MAX`] held values the rows are left undrawn
//! (and counted) rather than held.

use std::collections::VecDeque;
use std::sync::atomic::Ordering;
use std::sync::mpsc::{SyncSender, TrySendError};
use std::time::{Duration, Instant};

use crate::alarm::Alarm;
use crate::parse::roles::RoleMap;
use crate::parse::{Schema, SegmentReason, SkipReason};
use crate::pipeline::Pipeline;
use crate::pipeline::drive::{Follow, Polled};
use crate::pipeline::sink::{Flow, Note, Progress, Sink};
use crate::settings::Settings;
use crate::source::Source;

use super::batch::Batch;
use super::update::Msg;
use super::worker::Worker;

/// Input bytes per batch sent to the loop.
pub const CHUNK_BYTES: usize = 64 * 1024;
/// Most row values held for a loop that has fallen behind (8 bytes each).
pub const HELD_VALUES_MAX: usize = 4 << 20;

/// Messages for the loop, sent without waiting: held in order while its
/// channel is full, consecutive data batches merged.
struct Outlet {
    tx: SyncSender<Msg>,
    held: VecDeque<Msg>,
}

impl Outlet {
    /// Queue `m` and send what the channel takes; false once the loop is gone.
    fn send(&mut self, m: Msg) -> bool {
        match (self.held.back_mut(), m) {
            (Some(Msg::Data(prev)), Msg::Data(b)) => {
                prev.append(*b);
                if prev.values.len() > HELD_VALUES_MAX {
                    prev.drop_rows();
                }
            }
            (_, m) => self.held.push_back(m),
        }
        self.flush()
    }

    /// Send held messages while the channel has room; false once the loop is gone.
    fn flush(&mut self) -> bool {
        while let Some(m) = self.held.pop_front() {
            match self.tx.try_send(m) {
                Ok(()) => {}
                Err(TrySendError::Full(m)) => {
                    self.held.push_front(m);
                    return true;
                }
                Err(TrySendError::Disconnected(_)) => return false,
            }
        }
        true
    }
}

/// Handle of the data thread.
pub struct Feed {
    worker: Worker,
}

impl Feed {
    /// Start reading `source` through a pipeline made from `settings`. Arrival
    /// instants are seconds since `t0`; `max_wait` bounds each idle sleep.
    /// `on_alarm` sees every raised alarm in order (e.g. to write an event log).
    pub fn spawn<S>(
        mut source: S,
        settings: Settings,
        tx: SyncSender<Msg>,
        t0: Instant,
        max_wait: Duration,
        on_alarm: Box<dyn FnMut(&Alarm) + Send>,
    ) -> Self
    where
        S: Source + Send + 'static,
    {
        let worker = Worker::spawn_vital("the data thread", tx.clone(), move |flag| {
            let mut pipeline = Pipeline::new(&settings);
            let mut follow = Follow::new(t0, CHUNK_BYTES);
            let mut sink = Batcher {
                batch: Batch::default(),
                out: Outlet {
                    tx,
                    held: VecDeque::new(),
                },
                on_alarm,
                gone: false,
            };
            while !flag.load(Ordering::Relaxed) {
                let polled = follow.poll(&mut source, &mut pipeline, &mut sink, Instant::now());
                if matches!(polled, Polled::Quiet | Polled::Failed) {
                    // Nothing new: retry what the loop had no room for.
                    sink.gone |= !sink.out.flush();
                    source.wait(max_wait);
                }
                if sink.gone {
                    return;
                }
            }
        });
        Self { worker }
    }

    /// Ask the thread to end and wait for it. Drop the receiver first, or the
    /// thread may wait on a full channel.
    pub fn stop(self) {
        self.worker.stop();
    }
}

/// The data thread's [`Sink`]: what the pipeline makes goes into a batch,
/// sent to the loop at each checkpoint with the detectors' status; alarms go
/// to the observer at once; notes about the file go as [`Msg::Source`].
struct Batcher {
    batch: Batch,
    out: Outlet,
    on_alarm: Box<dyn FnMut(&Alarm) + Send>,
    /// The loop has gone (its receiver was dropped).
    gone: bool,
}

impl Sink for Batcher {
    fn alarm(&mut self, alarm: &Alarm) {
        (self.on_alarm)(alarm);
        self.batch.alarm(alarm);
    }
    fn schema(&mut self, line: u64, schema: &Schema, roles: &RoleMap) {
        self.batch.schema(line, schema, roles);
    }
    fn row(&mut self, line: u64, values: &[f64]) {
        self.batch.row(line, values);
    }
    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.batch.segment(line, reason);
    }
    fn skipped(&mut self, line: u64, reason: &SkipReason) {
        self.batch.skipped(line, reason);
    }
    fn note(&mut self, note: &Note) {
        match note {
            Note::Arrived { .. } | Note::CaughtUp { .. } => {}
            Note::Appeared
            | Note::Missing
            | Note::Restarted(_)
            | Note::ReadError(_)
            | Note::Shrank { .. } => {
                self.gone |= !self.out.send(Msg::Source(note.describe()));
            }
        }
    }
    fn checkpoint(&mut self, arrival_s: Option<f64>, progress: &mut dyn Progress) -> Flow {
        let mut b = std::mem::take(&mut self.batch);
        b.status = Some(progress.status().clone());
        b.scheme = progress.scheme_note().map(str::to_string);
        b.arrival_s = arrival_s;
        self.gone |= !self.out.send(Msg::Data(Box::new(b)));
        if self.gone { Flow::Stop } else { Flow::Go }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::app::batch::Item;
    use crate::source::{Event, Scripted, Step};
    use std::sync::mpsc::{Receiver, sync_channel};

    /// A data thread reading `steps` into a channel of `capacity`, alarms to `on_alarm`.
    fn start(
        steps: Vec<Step>,
        capacity: usize,
        on_alarm: Box<dyn FnMut(&Alarm) + Send>,
    ) -> (Feed, Receiver<Msg>) {
        let (tx, rx) = sync_channel(capacity);
        let mut source = Scripted::new(steps);
        source.wait_sleep = Duration::from_millis(5);
        let feed = Feed::spawn(
            source,
            Settings::default(),
            tx,
            Instant::now(),
            Duration::from_millis(10),
            on_alarm,
        );
        (feed, rx)
    }

    #[test]
    fn a_scripted_file_arrives_as_rows_in_small_batches() {
        let mut text = String::from("time,kinetic_energy,internal_energy\n");
        for i in 0..5_000 {
            let t = f64::from(i) * 1e-3;
            text.push_str(&format!("{t},{},{}\n", t.cos().powi(2), t.sin().powi(2)));
        }
        let steps = vec![
            Step::Event(Event::Appeared),
            Step::Event(Event::Data(text.into_bytes())),
        ];
        let (feed, rx) = start(steps, 4, Box::new(|_| {}));
        let mut rows = 0;
        let mut batches = 0;
        let deadline = Instant::now() + Duration::from_secs(10);
        while rows < 5_000 && Instant::now() < deadline {
            if let Ok(Msg::Data(b)) = rx.recv_timeout(Duration::from_secs(1)) {
                batches += 1;
                rows += b
                    .items
                    .iter()
                    .filter(|i| matches!(i, Item::Row { .. }))
                    .count();
                assert!(b.status.is_some());
            }
        }
        drop(rx);
        feed.stop();
        assert_eq!(rows, 5_000);
        assert!(batches >= 2, "a backlog must come as several batches");
    }

    #[test]
    fn what_happens_to_the_file_reaches_the_loop_before_the_rows_after_it() {
        let steps = vec![
            Step::Event(Event::Appeared),
            Step::Event(Event::Data(b"t x\n0 1\n1 2\n".to_vec())),
            Step::Event(Event::Restart(crate::source::RestartReason::Truncated)),
            Step::Event(Event::Data(b"t x\n0 5\n".to_vec())),
            Step::Fail("stale handle".into()),
            Step::Fail("stale handle".into()),
            Step::Event(Event::Missing),
        ];
        let (feed, rx) = start(steps, 64, Box::new(|_| {}));
        let mut said: Vec<String> = Vec::new();
        let deadline = Instant::now() + Duration::from_secs(10);
        while !said.last().is_some_and(|s| s.contains("gone")) && Instant::now() < deadline {
            match rx.recv_timeout(Duration::from_millis(200)) {
                Ok(Msg::Source(text)) => said.push(text),
                Ok(Msg::Data(b)) => {
                    for i in &b.items {
                        match i {
                            Item::Row { line, .. } => said.push(format!("row {line}")),
                            Item::Segment { line, .. } => said.push(format!("segment {line}")),
                            _ => {}
                        }
                    }
                }
                _ => {}
            }
        }
        drop(rx);
        feed.stop();
        assert_eq!(
            said,
            [
                "the file is there: following it",
                "row 2",
                "row 3",
                "file truncated: reading it again from its start",
                "segment 1",
                "row 2",
                // Told once while the same error repeats.
                "cannot read the file: stale handle",
                "the file is gone: keeping what was read, waiting for it to come back",
            ]
        );
    }

    #[test]
    fn alarms_reach_the_observer_while_the_loop_reads_nothing() {
        // 20,000 healthy rows then NaN, into a channel of one the loop never reads.
        let mut text = String::from("time,displacement\n");
        for i in 0..20_000 {
            let t = f64::from(i) * 1e-3;
            text.push_str(&format!("{t},{}\n", (30.0 * t).cos()));
        }
        text.push_str("20.0,NaN\n");
        let seen = std::sync::Arc::new(std::sync::Mutex::new(Vec::new()));
        let seen_in = std::sync::Arc::clone(&seen);
        let (feed, rx) = start(
            vec![Step::Event(Event::Data(text.into_bytes()))],
            1,
            Box::new(move |a| seen_in.lock().unwrap().push(a.detector)),
        );
        let deadline = Instant::now() + Duration::from_secs(30);
        while !seen.lock().unwrap().contains(&"nonfinite") && Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(10));
        }
        assert!(seen.lock().unwrap().contains(&"nonfinite"), "{seen:?}");
        // Everything held comes out once the loop reads: every row, in order.
        let mut rows = 0;
        let mut last = 0;
        while let Ok(Msg::Data(b)) = rx.recv_timeout(Duration::from_millis(500)) {
            for i in &b.items {
                if let Item::Row { line, .. } = i {
                    assert!(*line > last);
                    last = *line;
                    rows += 1;
                }
            }
            rows += b.undrawn_rows;
        }
        drop(rx);
        feed.stop();
        assert_eq!(rows, 20_001);
    }
}
