//! The data thread of the dashboard: polls a byte [`Source`] (the followed
//! file, or a scripted fake in tests), runs the bytes through the shared
//! [`Pipeline`] and sends what came out as [`Msg::Data`] batches of at most
//! [`CHUNK_BYTES`] of input each, so a large backlog arrives as many small
//! messages the loop can interleave with keys and frames. Alarms can also be
//! passed to an observer (the event log, the armed actions) on this thread.
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
use crate::pipeline::Pipeline;
use crate::settings::Settings;
use crate::source::{Event, Source, strip_nul};

use super::batch::{Batch, Item};
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
        mut on_alarm: Box<dyn FnMut(&Alarm) + Send>,
    ) -> Self
    where
        S: Source + Send + 'static,
    {
        let worker = Worker::spawn_vital("the data thread", tx.clone(), move |flag| {
            let mut pipeline = Pipeline::new(&settings);
            let mut out = Outlet {
                tx,
                held: VecDeque::new(),
            };
            while !flag.load(Ordering::Relaxed) {
                let ok = match source.poll() {
                    Ok(Some(Event::Data(bytes))) => {
                        let bytes = strip_nul(bytes);
                        let arrival_s = t0.elapsed().as_secs_f64();
                        bytes.chunks(CHUNK_BYTES).all(|chunk| {
                            let mut b = Batch::default();
                            pipeline.feed(chunk, Some(arrival_s), &mut b);
                            finish(&mut b, &mut pipeline, arrival_s, &mut on_alarm);
                            out.send(Msg::Data(Box::new(b)))
                        })
                    }
                    Ok(Some(Event::Restart(reason))) => {
                        let mut b = Batch::default();
                        pipeline.restart(&mut b);
                        let arrival_s = t0.elapsed().as_secs_f64();
                        finish(&mut b, &mut pipeline, arrival_s, &mut on_alarm);
                        out.send(Msg::Source(format!(
                            "{}: reading it again from its start",
                            reason.describe()
                        ))) && out.send(Msg::Data(Box::new(b)))
                    }
                    Ok(Some(Event::Appeared)) => {
                        out.send(Msg::Source("file found: reading".into()))
                    }
                    Ok(Some(Event::Missing)) => out.send(Msg::Source(
                        "the file is gone: waiting for it to come back".into(),
                    )),
                    Ok(None) => {
                        // Nothing new: retry what the loop had no room for.
                        let ok = out.flush();
                        source.wait(max_wait);
                        ok
                    }
                    Err(e) => {
                        let ok = out.send(Msg::Source(format!("cannot read the file: {e}")));
                        source.wait(max_wait);
                        ok
                    }
                };
                if !ok {
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

fn finish(
    b: &mut Batch,
    pipeline: &mut Pipeline,
    arrival_s: f64,
    on_alarm: &mut Box<dyn FnMut(&Alarm) + Send>,
) {
    for item in &b.items {
        if let Item::Alarm(a) = item {
            on_alarm(a);
        }
    }
    b.status = Some(pipeline.status().clone());
    b.arrival_s = Some(arrival_s);
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::source::{Scripted, Step};
    use std::sync::mpsc::sync_channel;

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
        let (tx, rx) = sync_channel(4);
        let mut source = Scripted::new(steps);
        source.wait_sleep = Duration::from_millis(5);
        let feed = Feed::spawn(
            source,
            Settings::default(),
            tx,
            Instant::now(),
            Duration::from_millis(10),
            Box::new(|_| {}),
        );
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
    fn alarms_reach_the_observer_while_the_loop_reads_nothing() {
        // 20,000 healthy rows then NaN, into a channel of one the loop never reads.
        let mut text = String::from("time,displacement\n");
        for i in 0..20_000 {
            let t = f64::from(i) * 1e-3;
            text.push_str(&format!("{t},{}\n", (30.0 * t).cos()));
        }
        text.push_str("20.0,NaN\n");
        let (tx, rx) = sync_channel(1);
        let mut source = Scripted::new(vec![Step::Event(Event::Data(text.into_bytes()))]);
        source.wait_sleep = Duration::from_millis(5);
        let seen = std::sync::Arc::new(std::sync::Mutex::new(Vec::new()));
        let seen_in = std::sync::Arc::clone(&seen);
        let feed = Feed::spawn(
            source,
            Settings::default(),
            tx,
            Instant::now(),
            Duration::from_millis(10),
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
