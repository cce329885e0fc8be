//! Bare `rhoscope demo`: runs the invented demo scenario live in a temporary
//! folder — its solver writing the history on a thread and honouring a stop
//! file — and opens the dashboard on it with the guard armed to create that
//! stop file; `--headless` runs the guard instead and prints its event lines.
//! Wiring only: the simulation is `demo`'s, the watching `watch`'s and `guard`'s.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use anyhow::{Context, bail};

use crate::cli::actions::ActionArgs;
use crate::cli::follow::FollowArgs;
use crate::cli::guard::GuardArgs;
use crate::cli::input::InputArgs;
use crate::cli::watch::WatchArgs;
use crate::demo::live::{LiveEnd, LiveOptions, write_live};
use crate::demo::run::{Setup, StepRule};
use crate::demo::{DEMO_SCENARIO, find};

/// Wall-clock seconds the demo takes to reach its crash line if nothing stops it.
const SHOW_S: f64 = 30.0;
/// Bounds of the writing rate (lines per second).
const RATE_MIN: f64 = 20.0;
const RATE_MAX: f64 = 2_000.0;
/// The guard ends when the stopped run has written nothing for this long.
const IDLE_EXIT: Duration = Duration::from_secs(4);

/// Simulated time the demo run is planned to reach: its end time, or its step
/// budget at a fixed step, whichever comes first.
fn planned_end_s(setup: &Setup) -> f64 {
    match setup.step {
        StepRule::Fixed { dt_s } => setup.t_end_s.min(dt_s * setup.max_steps as f64),
        StepRule::Adaptive { .. } => setup.t_end_s,
    }
}

/// A fresh folder for this demo's files.
fn demo_dir() -> anyhow::Result<PathBuf> {
    let base = std::env::temp_dir();
    for n in 0..100u32 {
        let dir = base.join(format!("rhoscope-demo-{}-{n}", std::process::id()));
        match std::fs::create_dir(&dir) {
            Ok(()) => return Ok(dir),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => {
                return Err(e).with_context(|| format!("cannot create '{}'", dir.display()));
            }
        }
    }
    bail!("cannot find a free folder name under '{}'", base.display())
}

/// Wait (briefly) until the writer has created the file.
fn wait_for(file: &Path) {
    let deadline = Instant::now() + Duration::from_secs(5);
    while !file.exists() && Instant::now() < deadline {
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn words(end: &std::io::Result<LiveEnd>) -> String {
    match end {
        Ok(LiveEnd::Stopped {
            lines,
            step,
            time_s,
        }) => format!(
            "the demo solver saw the stop file at step {step} (t = {time_s:.4e} s) and ended after {lines} lines"
        ),
        Ok(LiveEnd::Finished { lines }) => {
            format!("the demo solver ran to its end ({lines} lines): nothing stopped it")
        }
        Ok(LiveEnd::Cancelled { lines }) => {
            format!("the demo solver was left running and cancelled after {lines} lines")
        }
        Err(e) => format!("the demo solver could not write: {e}"),
    }
}

/// Run the demo scenario live, watched (dashboard) or guarded (`headless`).
pub fn run(headless: bool, checkpoint_every_lines: u64) -> anyhow::Result<i32> {
    let case = find(DEMO_SCENARIO).context("the demo scenario is missing")?;
    let setup = case.setup();
    let lines = case.expected.crash_line.unwrap_or(5_000) as f64;
    let rate = (lines / SHOW_S).clamp(RATE_MIN, RATE_MAX);
    let dir = demo_dir()?;
    let file = dir.join("history.csv");
    let stop = dir.join("STOP");
    eprintln!("rhoscope demo: {}", case.description);
    eprintln!(
        "rhoscope demo: writing {} at {rate:.0} lines/s; the guard will create {} on a critical alarm; the demo solver looks for it at its checkpoints, every {checkpoint_every_lines} lines",
        file.display(),
        stop.display()
    );
    let cancel = Arc::new(AtomicBool::new(false));
    let writer: JoinHandle<std::io::Result<LiveEnd>> = {
        let cancel = Arc::clone(&cancel);
        let opts = LiveOptions {
            file: file.clone(),
            rate_lines_per_s: rate,
            stop_file: Some(stop.clone()),
            checkpoint_every_lines,
        };
        let run = case.run();
        std::thread::spawn(move || write_live(run, &opts, Some(&cancel)))
    };
    wait_for(&file);
    let actions = ActionArgs {
        touch: Some(stop.clone()),
        ..ActionArgs::default()
    };
    let input = InputArgs {
        no_config: true,
        ..InputArgs::default()
    };
    let code = if headless {
        crate::commands::guard::run(GuardArgs {
            file: file.clone(),
            actions,
            input,
            idle_exit: Some(IDLE_EXIT),
            follow: FollowArgs {
                poll: Some(Duration::from_millis(200)),
                no_notify: false,
            },
            events: None,
            quiet: false,
        })
    } else {
        crate::commands::watch::run(WatchArgs {
            file: file.clone(),
            end_time: Some(planned_end_s(&setup)),
            wall_limit: None,
            actions,
            by_key_only: false,
            input,
            follow: FollowArgs {
                poll: Some(Duration::from_millis(200)),
                no_notify: false,
            },
            events: Some(dir.join("events.jsonl")),
            fps: 10,
            retention_rows: crate::history::DEFAULT_RETENTION_ROWS,
            more: Vec::new(),
            stall_after: Duration::from_secs(600),
            esc_back: false,
        })
    };
    // The dashboard may be left before the run ends (and the guard may fail):
    // stop the demo solver then.
    if !headless || code.is_err() {
        cancel.store(true, Ordering::Relaxed);
    }
    let end = writer
        .join()
        .unwrap_or_else(|_| Err(std::io::Error::other("the demo solver panicked")));
    eprintln!("rhoscope demo: {}", words(&end));
    eprintln!(
        "rhoscope demo: files kept in {} (rhoscope scan {} reads the history again)",
        dir.display(),
        file.display()
    );
    code
}
