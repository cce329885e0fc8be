//! The data thread of the dashboard: polls a byte [`Source`] (the followed
//! file, or a scripted fake in tests), runs the bytes through the shared
//! [`Pipeline`] and sends what came out as [`Msg::Data`] batches of at most
//! [`CHUNK_BYTES`] of input each, so a large backlog arrives as many small
//! messages the loop can interleave with keys and frames. Alarms can also be
//! passed to an observer (the event log) on this thread.

use std::sync::atomic::Ordering;
use std::sync::mpsc::SyncSender;
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
        let worker = Worker::spawn(move |flag| {
            let mut pipeline = Pipeline::new(&settings);
            let send = |m: Msg| tx.send(m).is_ok();
            while !flag.load(Ordering::Relaxed) {
                let ok = match source.poll() {
                    Ok(Some(Event::Data(bytes))) => {
                        let bytes = strip_nul(bytes);
                        let arrival_s = t0.elapsed().as_secs_f64();
                        bytes.chunks(CHUNK_BYTES).all(|chunk| {
                            let mut b = Batch::default();
                            pipeline.feed(chunk, Some(arrival_s), &mut b);
                            finish(&mut b, &mut pipeline, arrival_s, &mut on_alarm);
                            send(Msg::Data(Box::new(b)))
                        })
                    }
                    Ok(Some(Event::Restart(reason))) => {
                        let mut b = Batch::default();
                        pipeline.restart(&mut b);
                        let arrival_s = t0.elapsed().as_secs_f64();
                        finish(&mut b, &mut pipeline, arrival_s, &mut on_alarm);
                        send(Msg::Source(format!(
                            "{}: reading it again from its start",
                            reason.describe()
                        ))) && send(Msg::Data(Box::new(b)))
                    }
                    Ok(Some(Event::Appeared)) => send(Msg::Source("file found: reading".into())),
                    Ok(Some(Event::Missing)) => send(Msg::Source(
                        "the file is gone: waiting for it to come back".into(),
                    )),
                    Ok(None) => {
                        source.wait(max_wait);
                        true
                    }
                    Err(e) => {
                        let ok = send(Msg::Source(format!("cannot read the file: {e}")));
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
}
