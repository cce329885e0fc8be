//! The only loops that feed a [`Pipeline`]: [`drive_file`] reads a plain file
//! from start to end (`scan`, `columns`, `evaluate`; [`drive_bytes`] the same
//! for a history in memory), and [`Follow`] turns the events of
//! a followed [`Source`] into pipeline input (`guard`, the dashboard's data
//! thread, each run of the fleet). Both hand the bytes on in slices with a
//! [`checkpoint`](Sink::checkpoint) after each, where the sink may sample the
//! detectors' status or stop the reading, through
//! [`Pipeline::feed_slices`], which reads a large run of bytes (a plain file,
//! a backlog) on a second thread ([`super::split`]).
//!
//! Following, the behaviour every consumer shares, decided once here:
//! - the bytes that were in the file when following began are the backlog,
//!   fed without an arrival instant (their wall-clock pace is unknown);
//!   [`Note::CaughtUp`] is told once, when the backlog is read (or the source
//!   has nothing more right now, or the file was restarted);
//! - a truncated, replaced or rewritten file is told as [`Note::Restarted`],
//!   then the pipeline starts a new segment at line 1 and the new content is
//!   read from its start;
//! - a read error is told once until a read succeeds or the message changes;
//!   the caller decides how long to wait before the next poll.

use std::fs::File;
use std::io::Read;
use std::path::Path;
use std::time::Instant;

use anyhow::{Context, bail};

use super::Pipeline;
use super::sink::{Flow, Note, Sink};
use crate::source::{Event, Source};

/// Bytes fed per slice when reading a plain file.
pub const FILE_SLICE_BYTES: usize = 1 << 20;
/// Bytes read from a plain file at a time; each read is fed on two threads
/// ([`super::split`]).
pub const FILE_READ_BYTES: usize = 4 << 20;

/// Open `path` for reading as a history, with a one-line error naming the file.
pub fn open_history(path: &Path) -> anyhow::Result<(File, u64)> {
    let meta =
        std::fs::metadata(path).with_context(|| format!("{}: cannot open", path.display()))?;
    if meta.is_dir() {
        bail!("{}: is a directory, not a history file", path.display());
    }
    let file = File::open(path).with_context(|| format!("{}: cannot open", path.display()))?;
    Ok((file, meta.len()))
}

/// Read the whole file at `path` through `pipeline` into `sink`, `slice_bytes`
/// at a time, with a checkpoint after each slice and one after the end of the
/// file. `on_read(read, size)` is called after each read (for a progress
/// bar). A checkpoint that answers [`Flow::Stop`] ends the reading there.
/// A file that gives fewer bytes than it held when opened is told as
/// [`Note::Shrank`] before the last checkpoint. Returns the bytes read.
pub fn drive_file(
    path: &Path,
    pipeline: &mut Pipeline,
    sink: &mut dyn Sink,
    slice_bytes: usize,
    on_read: &mut dyn FnMut(u64, u64),
) -> anyhow::Result<u64> {
    let (mut file, size) = open_history(path)?;
    let mut buf = vec![0u8; FILE_READ_BYTES.max(slice_bytes)];
    let mut total = 0u64;
    loop {
        let n = match file.read(&mut buf) {
            Ok(0) => break,
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => {
                return Err(e).with_context(|| format!("{}: read failed", path.display()));
            }
        };
        total += n as u64;
        if pipeline.feed_slices(&buf[..n], None, sink, slice_bytes) == Flow::Stop {
            return Ok(total);
        }
        on_read(total, size);
    }
    pipeline.finish(sink);
    if total < size {
        sink.note(&Note::Shrank {
            size_at_start: size,
            read: total,
        });
    }
    sink.checkpoint(None, pipeline);
    Ok(total)
}

/// Read a whole history held in memory through `pipeline` into `sink`, as
/// [`drive_file`] reads a file (one slice, then the end).
pub fn drive_bytes(bytes: &[u8], pipeline: &mut Pipeline, sink: &mut dyn Sink) {
    let flow = if bytes.is_empty() {
        sink.checkpoint(None, pipeline)
    } else {
        pipeline.feed_slices(bytes, None, sink, bytes.len())
    };
    if flow == Flow::Stop {
        return;
    }
    pipeline.finish(sink);
    sink.checkpoint(None, pipeline);
}

/// What one [`Follow::poll`] did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Polled {
    /// New bytes (this many) were read.
    Data(usize),
    /// The file was truncated, replaced or rewritten; its new content
    /// follows as data.
    Restarted,
    /// The file appeared or went missing.
    Changed,
    /// Nothing new right now.
    Quiet,
    /// Reading failed (the sink was told); poll again after a wait.
    Failed,
    /// A checkpoint asked to stop: the rest of that event was not read.
    Stopped,
}

/// The state of following one source; see the module documentation.
#[derive(Debug)]
pub struct Follow {
    t0: Instant,
    slice_bytes: usize,
    /// Backlog bytes still to read, once the source has said how large the
    /// file was when following began.
    backlog_left: Option<u64>,
    caught_up: bool,
    last_error: Option<String>,
}

impl Follow {
    /// Follow with arrival instants in seconds since `t0`, feeding at most
    /// `slice_bytes` between checkpoints.
    pub fn new(t0: Instant, slice_bytes: usize) -> Self {
        Self {
            t0,
            slice_bytes: slice_bytes.max(1),
            backlog_left: None,
            caught_up: false,
            last_error: None,
        }
    }

    /// True once the backlog has been read.
    pub fn caught_up(&self) -> bool {
        self.caught_up
    }

    /// Take one event from `source` and pass what it holds through `pipeline`
    /// into `sink`; bytes read now arrive at `now`.
    pub fn poll<S: Source + ?Sized>(
        &mut self,
        source: &mut S,
        pipeline: &mut Pipeline,
        sink: &mut dyn Sink,
        now: Instant,
    ) -> Polled {
        let event = source.poll();
        let arrival_s = now.saturating_duration_since(self.t0).as_secs_f64();
        match event {
            Ok(Some(Event::Data(bytes))) => {
                self.last_error = None;
                if !self.caught_up && self.backlog_left.is_none() {
                    self.backlog_left = source.start_size();
                }
                sink.note(&Note::Arrived {
                    bytes: bytes.len(),
                    arrival_s,
                });
                let mut rest = &bytes[..];
                if !self.caught_up
                    && let Some(left) = self.backlog_left
                {
                    let k = usize::try_from(left).unwrap_or(usize::MAX).min(rest.len());
                    // Backlog rows were written before following began: they
                    // are fed without an arrival instant, so the detectors
                    // take no wall-clock pace from how fast they were read.
                    if self.feed(&rest[..k], None, pipeline, sink) == Flow::Stop {
                        return Polled::Stopped;
                    }
                    let left = left - k as u64;
                    self.backlog_left = Some(left);
                    rest = &rest[k..];
                    if left == 0 {
                        self.catch_up(pipeline, sink);
                    }
                }
                if self.feed(rest, Some(arrival_s), pipeline, sink) == Flow::Stop {
                    return Polled::Stopped;
                }
                Polled::Data(bytes.len())
            }
            Ok(Some(Event::Restart(reason))) => {
                self.last_error = None;
                sink.note(&Note::Restarted(reason));
                pipeline.restart(sink);
                if sink.checkpoint(Some(arrival_s), pipeline) == Flow::Stop {
                    return Polled::Stopped;
                }
                // A new file's bytes are all new.
                self.catch_up(pipeline, sink);
                Polled::Restarted
            }
            Ok(Some(Event::Appeared)) => {
                self.last_error = None;
                sink.note(&Note::Appeared);
                Polled::Changed
            }
            Ok(Some(Event::Missing)) => {
                self.last_error = None;
                sink.note(&Note::Missing);
                Polled::Changed
            }
            Ok(None) => {
                self.catch_up(pipeline, sink);
                Polled::Quiet
            }
            Err(e) => {
                let msg = e.to_string();
                if self.last_error.as_deref() != Some(msg.as_str()) {
                    sink.note(&Note::ReadError(msg.clone()));
                    self.last_error = Some(msg);
                }
                self.catch_up(pipeline, sink);
                Polled::Failed
            }
        }
    }

    /// Poll until the source has nothing more right now, reading fails or a
    /// checkpoint stops it; returns true when anything at all happened.
    pub fn drain<S: Source + ?Sized>(
        &mut self,
        source: &mut S,
        pipeline: &mut Pipeline,
        sink: &mut dyn Sink,
        now: Instant,
    ) -> bool {
        let mut changed = false;
        loop {
            match self.poll(source, pipeline, sink, now) {
                Polled::Quiet => return changed,
                Polled::Failed | Polled::Stopped => return true,
                Polled::Data(_) | Polled::Restarted | Polled::Changed => changed = true,
            }
        }
    }

    fn feed(
        &mut self,
        bytes: &[u8],
        arrival_s: Option<f64>,
        pipeline: &mut Pipeline,
        sink: &mut dyn Sink,
    ) -> Flow {
        pipeline.feed_slices(bytes, arrival_s, sink, self.slice_bytes)
    }

    fn catch_up(&mut self, pipeline: &Pipeline, sink: &mut dyn Sink) {
        if !self.caught_up {
            self.caught_up = true;
            sink.note(&Note::CaughtUp {
                lines: pipeline.lines(),
            });
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::alarm::Alarm;
    use crate::parse::SegmentReason;
    use crate::pipeline::sink::Progress;
    use crate::settings::Settings;
    use crate::source::{RestartReason, Scripted, Step};
    use std::io::Write;

    /// Everything a sink is told, as short words, in order.
    #[derive(Default)]
    struct Record {
        said: Vec<String>,
        stop_after_rows: Option<usize>,
        rows: usize,
    }

    impl Sink for Record {
        fn alarm(&mut self, a: &Alarm) {
            self.said.push(format!("alarm {} {}", a.detector, a.line));
        }
        fn row(&mut self, line: u64, _values: &[f64]) {
            self.rows += 1;
            self.said.push(format!("row {line}"));
        }
        fn segment(&mut self, line: u64, _reason: SegmentReason) {
            self.said.push(format!("segment {line}"));
        }
        fn note(&mut self, note: &Note) {
            self.said.push(match note {
                Note::Arrived { bytes, .. } => format!("arrived {bytes}"),
                other => other.describe(),
            });
        }
        fn checkpoint(&mut self, _arrival_s: Option<f64>, _p: &mut dyn Progress) -> Flow {
            self.said.push("checkpoint".into());
            if self.stop_after_rows.is_some_and(|n| self.rows >= n) {
                Flow::Stop
            } else {
                Flow::Go
            }
        }
    }

    fn data(b: &[u8]) -> Step {
        Step::Event(Event::Data(b.to_vec()))
    }

    fn follow(steps: Vec<Step>, start_size: Option<u64>, slice: usize) -> (Vec<String>, Pipeline) {
        let mut source = Scripted::new(steps);
        source.start_size = start_size;
        let mut pipeline = Pipeline::new(&Settings::default());
        let mut sink = Record::default();
        let t0 = Instant::now();
        let mut f = Follow::new(t0, slice);
        while !source.ended() {
            f.poll(&mut source, &mut pipeline, &mut sink, t0);
        }
        (sink.said, pipeline)
    }

    #[test]
    fn the_backlog_is_told_read_at_its_last_byte() {
        // 8 bytes were in the file at start: "t x\n0 1\n"; "1 2\n" came later
        // in the same read.
        let (said, _) = follow(vec![data(b"t x\n0 1\n1 2\n")], Some(8), 1 << 20);
        assert_eq!(
            said,
            [
                "arrived 12",
                "row 2",
                "checkpoint",
                "caught up: 2 lines read, following live",
                "row 3",
                "checkpoint"
            ]
        );
    }

    #[test]
    fn backlog_bytes_carry_no_arrival_instant_and_live_bytes_do() {
        // What reaches the detectors' clock: backlog rows were not seen
        // arriving, so they must not give a wall-clock pace.
        struct Arrivals(Vec<Option<f64>>);
        impl Sink for Arrivals {
            fn alarm(&mut self, _a: &Alarm) {}
            fn checkpoint(&mut self, arrival_s: Option<f64>, _p: &mut dyn Progress) -> Flow {
                self.0.push(arrival_s);
                Flow::Go
            }
        }
        let mut source = Scripted::new(vec![data(b"t x\n0 1\n1 2\n"), data(b"2 3\n")]);
        source.start_size = Some(8);
        let mut pipeline = Pipeline::new(&Settings::default());
        let mut sink = Arrivals(Vec::new());
        let t0 = Instant::now();
        let mut f = Follow::new(t0, 1 << 20);
        let later = t0 + std::time::Duration::from_secs(2);
        f.poll(&mut source, &mut pipeline, &mut sink, later);
        f.poll(&mut source, &mut pipeline, &mut sink, later);
        assert_eq!(sink.0, [None, Some(2.0), Some(2.0)]);
    }

    #[test]
    fn without_a_known_backlog_the_first_quiet_poll_catches_up() {
        let (said, _) = follow(
            vec![data(b"t x\n0 1\n"), Step::Quiet, Step::Quiet],
            None,
            1 << 20,
        );
        assert_eq!(
            said,
            [
                "arrived 8",
                "row 2",
                "checkpoint",
                "caught up: 2 lines read, following live"
            ]
        );
    }

    #[test]
    fn a_rewritten_file_is_told_then_read_as_a_new_segment_from_line_one() {
        let (said, p) = follow(
            vec![
                data(b"t x\n0 1\n1 2\n"),
                Step::Event(Event::Restart(RestartReason::Rewritten)),
                data(b"t x\n0 5\n"),
            ],
            Some(12),
            1 << 20,
        );
        let from = said.iter().position(|s| s.contains("rewritten")).unwrap();
        assert_eq!(
            said[from..],
            [
                "file rewritten from its start: reading it again from its start",
                "segment 1",
                "checkpoint",
                "arrived 8",
                "row 2",
                "checkpoint"
            ]
        );
        // Rows after the restart are the new file's, once each.
        assert_eq!(said.iter().filter(|s| s.starts_with("row")).count(), 3);
        assert_eq!(p.rows(), 3);
    }

    #[test]
    fn a_read_error_is_told_once_until_reading_succeeds() {
        let (said, _) = follow(
            vec![
                Step::Fail("stale handle".into()),
                Step::Fail("stale handle".into()),
                Step::Fail("permission denied".into()),
                Step::Event(Event::Appeared),
                Step::Fail("permission denied".into()),
                Step::Event(Event::Missing),
            ],
            Some(0),
            1 << 20,
        );
        assert_eq!(
            said,
            [
                "cannot read the file: stale handle",
                "caught up: 0 lines read, following live",
                "cannot read the file: permission denied",
                "the file is there: following it",
                "cannot read the file: permission denied",
                "the file is gone: keeping what was read, waiting for it to come back"
            ]
        );
    }

    #[test]
    fn slices_bound_the_bytes_between_checkpoints_and_a_stop_ends_the_event() {
        let mut text = String::from("t x\n");
        for i in 0..100 {
            text.push_str(&format!("{i} 1\n"));
        }
        let mut source = Scripted::new(vec![data(text.as_bytes())]);
        let mut pipeline = Pipeline::new(&Settings::default());
        let mut sink = Record {
            stop_after_rows: Some(10),
            ..Record::default()
        };
        let t0 = Instant::now();
        let mut f = Follow::new(t0, 16);
        assert_eq!(
            f.poll(&mut source, &mut pipeline, &mut sink, t0),
            Polled::Stopped
        );
        // Each 16-byte slice holds at most four 4-byte rows.
        assert!((10..=14).contains(&sink.rows), "{}", sink.rows);
        assert!(sink.said.iter().filter(|s| *s == "checkpoint").count() >= 3);
    }

    #[test]
    fn a_plain_file_gives_the_alarms_of_the_whole_bytes_at_once() {
        let mut text = String::from("time,kinetic_energy,internal_energy\n");
        for i in 0..3000 {
            let t = f64::from(i) * 1e-3;
            let g = if i > 2000 {
                1.05f64.powi(i - 2000)
            } else {
                1.0
            };
            text.push_str(&format!(
                "{t},{},{}\n",
                g * t.cos().powi(2),
                t.sin().powi(2)
            ));
        }
        text.push_str("3.0,nan,nan\n");
        let whole = crate::evaluate::alarms_of(text.as_bytes(), &Settings::default());
        assert!(!whole.is_empty());
        let mut file = tempfile::NamedTempFile::new().unwrap();
        file.write_all(text.as_bytes()).unwrap();
        let mut pipeline = Pipeline::new(&Settings::default());
        let mut alarms: Vec<Alarm> = Vec::new();
        let mut reads = 0;
        let n = drive_file(
            file.path(),
            &mut pipeline,
            &mut alarms,
            1000,
            &mut |_, _| reads += 1,
        )
        .unwrap();
        assert_eq!(n, text.len() as u64);
        assert!(reads >= 1);
        assert_eq!(alarms, whole);
    }

    #[test]
    fn a_missing_file_or_a_directory_is_named_in_the_error() {
        let mut p = Pipeline::new(&Settings::default());
        let dir = tempfile::tempdir().unwrap();
        let gone = dir.path().join("gone.csv");
        for (path, words) in [
            (gone.as_path(), "cannot open"),
            (dir.path(), "is a directory"),
        ] {
            let e =
                drive_file(path, &mut p, &mut (), FILE_SLICE_BYTES, &mut |_, _| {}).unwrap_err();
            let e = format!("{e:#}");
            assert!(
                e.contains(&path.display().to_string()) && e.contains(words),
                "{e}"
            );
        }
    }
}
