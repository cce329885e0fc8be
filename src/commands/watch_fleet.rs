//! `rhoscope watch` on several files or a pattern: the fleet view. Wiring
//! only: a [`Fleet`] follows every run on its own thread and hands snapshots
//! of the rows to this loop, which draws them, reads keys, and on Enter leaves
//! the fleet view for the selected run's dashboard (the usual single-run
//! `watch`, which comes back on Esc or q) while the fleet goes on following.

use std::io::Write;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{RecvTimeoutError, sync_channel};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use anyhow::{Context, bail};

use crate::app::fleet::{FleetEffect, FleetView};
use crate::app::update::Msg;
use crate::cli::follow::POLL_FLEET_DEFAULT;
use crate::cli::watch::WatchArgs;
use crate::fleet::{Fleet, FleetConfig, RunRow};
use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::tui;

/// Latest rows and the monotonic seconds they were taken at, with a counter.
type Snapshot = Arc<Mutex<(u64, Vec<RunRow>, f64)>>;

/// True when `watch` was given several files or a pattern.
pub fn is_fleet(args: &WatchArgs) -> bool {
    !args.more.is_empty() || crate::glob::has_wildcard(&args.file.to_string_lossy())
}

struct Follow {
    stop: Arc<AtomicBool>,
    handle: Option<JoinHandle<()>>,
}

impl Follow {
    fn spawn(mut fleet: Fleet, snap: Snapshot) -> Self {
        let stop = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&stop);
        let handle = std::thread::spawn(move || {
            let mut last: Option<Instant> = None;
            while !flag.load(Ordering::Relaxed) {
                let now = Instant::now();
                fleet.step(now);
                if last.is_none_or(|t| now.duration_since(t) >= Duration::from_millis(500)) {
                    last = Some(now);
                    let rows: Vec<RunRow> = fleet.rows().cloned().collect();
                    if let Ok(mut s) = snap.lock() {
                        *s = (s.0 + 1, rows, fleet.secs(now));
                    }
                }
                fleet.wait(Duration::from_millis(250), Duration::from_millis(50));
            }
        });
        Self {
            stop,
            handle: Some(handle),
        }
    }

    fn stop(mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

/// Run the fleet view; returns the exit code (0 after quitting).
pub fn run(args: WatchArgs) -> anyhow::Result<i32> {
    tui::install_panic_hook();
    let a = &args.actions;
    if a.touch.is_some() || a.signal.is_some() || a.run.is_some() || a.pid.is_some() {
        bail!(
            "the fleet view arms no stop actions (one stop file or command cannot fit every run): \
             guard each run beside its solver, as in examples/batch-job.sh"
        );
    }
    let mut patterns = vec![args.file.to_string_lossy().into_owned()];
    patterns.extend(args.more.iter().map(|p| p.to_string_lossy().into_owned()));
    if let Some(p) = &args.events {
        let pats: Vec<&str> = patterns.iter().map(String::as_str).collect();
        let watched = Watched {
            files: &[],
            patterns: &pats,
        };
        let out = Output {
            flag: "--events",
            path: p,
            kind: OutputKind::Appended,
        };
        check_outputs(&watched, &[out])?;
    }
    let t0 = Instant::now();
    let cfg = FleetConfig {
        poll_interval: args
            .follow
            .poll_or(POLL_FLEET_DEFAULT)
            .max(Duration::from_secs(1)),
        notify: !args.follow.no_notify,
        ..FleetConfig::default()
    };
    let fleet = Fleet::new(patterns.clone(), args.input.read_spec(), cfg, t0);
    let snap: Snapshot = Arc::new(Mutex::new((0, Vec::new(), 0.0)));
    let follow = Follow::spawn(fleet, Arc::clone(&snap));
    let mut view = FleetView::new(
        patterns.join(" "),
        args.stall_after.as_secs_f64(),
        args.end_time,
        super::watch::colour_allowed(),
    );
    let result = fleet_loop(&args, &mut view, &snap);
    follow.stop();
    result?;
    // The terminal may be gone (a hang-up): a summary that cannot be written is dropped.
    let _ = writeln!(
        std::io::stdout(),
        "rhoscope watch: {} runs followed",
        view.rows.len()
    );
    Ok(0)
}

fn fleet_loop(args: &WatchArgs, view: &mut FleetView, snap: &Snapshot) -> anyhow::Result<()> {
    let mut seen = 0u64;
    loop {
        let (tx, rx) = sync_channel(64);
        let mut session = tui::enter().context("cannot set up the terminal")?;
        let signals = tui::spawn_signals(tx.clone()).context("cannot listen for signals")?;
        let input = tui::Input::spawn(tx);
        view.dirty = true;
        let mut open: Option<PathBuf> = None;
        let mut quit = false;
        while open.is_none() && !quit {
            match rx.recv_timeout(Duration::from_millis(250)) {
                Ok(Msg::Key(k)) => match view.key(k) {
                    FleetEffect::Open(p) => open = Some(p),
                    FleetEffect::Quit => quit = true,
                    FleetEffect::None => {}
                },
                Ok(Msg::Signal(_) | Msg::HangUp) => {
                    tui::set_leaving();
                    quit = true;
                }
                Ok(_) => view.dirty = true,
                Err(RecvTimeoutError::Timeout) => {}
                Err(RecvTimeoutError::Disconnected) => quit = true,
            }
            if let Ok(s) = snap.lock()
                && s.0 != seen
            {
                seen = s.0;
                let (rows, now_s) = (s.1.clone(), s.2);
                drop(s);
                view.set_rows(rows, now_s);
            }
            if view.dirty {
                session
                    .terminal
                    .draw(|f| crate::ui::fleet::render(view, f))
                    .context("cannot draw on the terminal")?;
                view.dirty = false;
            }
        }
        drop(rx);
        signals.close();
        input.stop();
        drop(session);
        let Some(path) = open else {
            return Ok(());
        };
        let mut one = args.clone();
        one.file = path.clone();
        one.more.clear();
        one.esc_back = true;
        view.note = match super::watch::run(one) {
            Ok(_) => Some(format!("back from {}", path.display())),
            Err(e) => Some(format!("cannot watch {}: {e:#}", path.display())),
        };
        if tui::leaving() {
            // The dashboard ended for a signal or a closed terminal: so does this view.
            return Ok(());
        }
    }
}
