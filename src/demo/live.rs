//! The live writer: hands a run's history to a file line by line at a given
//! rate, flushing each line as a solver does, and honours a stop file the way a
//! solver that polls for one does — only at its checkpoints (every N output
//! lines), where it writes a last comment line (restart written, run ended) and
//! returns. The only file I/O of the demo module.

use std::fs::File;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use super::run::Run;

/// How to write live.
#[derive(Debug, Clone, PartialEq)]
pub struct LiveOptions {
    /// The history file to create (truncated if it exists).
    pub file: PathBuf,
    /// Lines per second; 0 or less writes as fast as possible.
    pub rate_lines_per_s: f64,
    /// A file whose appearance stops the run.
    pub stop_file: Option<PathBuf>,
    /// The stop file is looked for at checkpoints, every this many lines
    /// written (0 or 1: before every line).
    pub checkpoint_every_lines: u64,
}

/// Lines between checkpoints when nothing else is asked for.
pub const DEFAULT_CHECKPOINT_EVERY_LINES: u64 = 100;

/// How the live run ended.
#[derive(Debug, Clone, PartialEq)]
pub enum LiveEnd {
    /// The history was written to its end (possibly a crash row).
    Finished { lines: u64 },
    /// The stop file appeared; the note line was written.
    Stopped { lines: u64, step: u64, time_s: f64 },
    /// The caller asked to cancel (no note written).
    Cancelled { lines: u64 },
}

fn exists(p: &Path) -> bool {
    std::fs::metadata(p).is_ok()
}

/// Write `run` to `opts.file` live. Checks the stop file at each checkpoint;
/// `cancel`, when given and set, ends the writing quietly (for a caller's thread).
pub fn write_live(
    mut run: Run,
    opts: &LiveOptions,
    cancel: Option<&AtomicBool>,
) -> io::Result<LiveEnd> {
    let mut out = File::create(&opts.file)?;
    let interval =
        (opts.rate_lines_per_s > 0.0).then(|| Duration::from_secs_f64(1.0 / opts.rate_lines_per_s));
    let mut next = Instant::now();
    let mut lines = 0u64;
    loop {
        if cancel.is_some_and(|c| c.load(Ordering::Relaxed)) {
            return Ok(LiveEnd::Cancelled { lines });
        }
        let every = opts.checkpoint_every_lines.max(1);
        if let Some(stop) = &opts.stop_file
            && lines.is_multiple_of(every)
            && exists(stop)
        {
            let (step, time_s) = (run.step_number(), run.time_s());
            let text = format!(
                "stop file {} seen at the checkpoint after line {lines} (step {step}, t = {time_s:e} s; checkpoints every {every} lines): restart written, run ended",
                stop.display()
            );
            if let Some(note) = run.comment(&text) {
                writeln!(out, "{note}")?;
                out.flush()?;
                lines += 1;
            }
            return Ok(LiveEnd::Stopped {
                lines,
                step,
                time_s,
            });
        }
        let Some(line) = run.next_line() else {
            return Ok(LiveEnd::Finished { lines });
        };
        writeln!(out, "{line}")?;
        out.flush()?;
        lines += 1;
        if let Some(dt) = interval {
            next += dt;
            let now = Instant::now();
            if next > now {
                std::thread::sleep(next - now);
            } else {
                next = now;
            }
        }
    }
}
