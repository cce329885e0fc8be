//! `rhoscope fleet`: wiring only. Follows many runs headless through a
//! [`Fleet`], prints their table (once) or their state changes (while
//! following), and publishes their state as metrics (file and/or HTTP).

use std::io::Write;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use anyhow::{Context as _, bail};

use crate::cli::fleet::FleetArgs;
use crate::cli::follow::POLL_FLEET_DEFAULT;
use crate::fleet::{Fleet, FleetConfig, RunRow, RunState, worst_first};
use crate::metrics::{self, Context};
use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::ui::fleet::Cells;

/// The table of runs, worst first, as plain text (one line per run); the
/// cells are worded as in the fleet view ([`Cells`]).
pub fn table(rows: &[&RunRow], ctx: &Context) -> String {
    let w = rows
        .iter()
        .map(|r| r.name.chars().count())
        .fold(24, usize::max);
    let mut out = format!(
        "{:<9} {:<w$} {:>10} {:>11} {:>6} {:>12} {:>10} {:>8}  {}\n",
        "state", "run", "rows", "sim time", "done", "growth/step", "overflow", "quiet", "note"
    );
    for r in rows {
        let c = Cells::of(r, ctx.now_s, ctx.stall_after_s, ctx.end_time_s);
        let note = r
            .note
            .clone()
            .or_else(|| r.alarm_message.clone())
            .unwrap_or_default();
        out.push_str(&format!(
            "{:<9} {:<w$} {:>10} {:>11} {:>6} {:>12} {:>10} {:>8}  {}\n",
            c.state, r.name, r.rows_total, c.sim_time, c.done, c.growth, c.overflow, c.quiet, note
        ));
    }
    out
}

/// Exit code for the worst state: critical 2, then warning 1, then unknown 3, else 0.
pub fn exit_code(states: impl IntoIterator<Item = RunState>) -> i32 {
    let states: Vec<RunState> = states.into_iter().collect();
    if states.contains(&RunState::Critical) {
        2
    } else if states.contains(&RunState::Warning) {
        1
    } else if states
        .iter()
        .any(|s| matches!(s, RunState::Stalled | RunState::Waiting))
    {
        3
    } else {
        0
    }
}

/// Run `rhoscope fleet`; returns the exit code.
pub fn run(args: FleetArgs) -> anyhow::Result<i32> {
    if let Some(t) = args.end_time
        && !(t.is_finite() && t > 0.0)
    {
        bail!("--end-time '{t}' must be a positive number of seconds");
    }
    let listen = match &args.listen {
        Some(a) => Some(metrics::serve::parse_listen(a).map_err(anyhow::Error::msg)?),
        None => None,
    };
    if let Some(p) = &args.textfile {
        let patterns: Vec<&str> = args.files.iter().map(String::as_str).collect();
        let watched = Watched {
            files: &[],
            patterns: &patterns,
        };
        check_outputs(
            &watched,
            &[Output {
                flag: "--textfile",
                path: p,
                kind: OutputKind::Replaced,
            }],
        )?;
    }
    let t0 = Instant::now();
    let cfg = FleetConfig {
        poll_interval: args.follow.poll_or(POLL_FLEET_DEFAULT),
        notify: !args.follow.no_notify && !args.once,
        rescan_interval: args.rescan,
        ..FleetConfig::default()
    };
    let mut fleet = Fleet::new(args.files.clone(), args.input.read_spec(), cfg, t0);
    let ctx_at = |fleet: &Fleet, now: Instant| Context {
        now_s: fleet.secs(now),
        stall_after_s: args.stall_after.as_secs_f64(),
        end_time_s: args.end_time,
    };

    if args.once {
        fleet.poll_all(t0);
        if fleet.is_empty() {
            bail!("no file matches {}", args.files.join(" "));
        }
        let now = Instant::now();
        let ctx = ctx_at(&fleet, now);
        let mut rows: Vec<&RunRow> = fleet.rows().collect();
        worst_first(&mut rows, ctx.now_s, ctx.stall_after_s);
        if let Some(p) = &args.textfile {
            crate::outfile::write_atomic(p, metrics::render(&rows, &ctx).as_bytes())?;
        }
        print!("{}", table(&rows, &ctx));
        let _ = std::io::stdout().flush();
        return Ok(exit_code(
            rows.iter().map(|r| r.state(ctx.now_s, ctx.stall_after_s)),
        ));
    }

    let stop = Arc::new(AtomicBool::new(false));
    for sig in [
        signal_hook::consts::SIGINT,
        signal_hook::consts::SIGTERM,
        signal_hook::consts::SIGHUP,
    ] {
        signal_hook::flag::register(sig, Arc::clone(&stop)).context("cannot listen for signals")?;
    }
    let shared: metrics::serve::Shared = Arc::default();
    let server = match listen {
        Some(addr) => {
            let s = metrics::serve::Server::start(addr, Arc::clone(&shared))?;
            eprintln!("rhoscope fleet: metrics on http://{}/metrics", s.addr());
            Some(s)
        }
        None => None,
    };
    eprintln!(
        "rhoscope fleet: following {} run(s){}",
        fleet.len(),
        if fleet.notified() {
            ""
        } else {
            " (polling only)"
        }
    );
    let mut last_publish: Option<Instant> = None;
    let mut known: Vec<RunState> = Vec::new();
    while !stop.load(Ordering::Relaxed) {
        let now = Instant::now();
        fleet.step(now);
        let ctx = ctx_at(&fleet, now);
        report_changes(&fleet, &ctx, &mut known);
        if last_publish.is_none_or(|t| now.duration_since(t) >= args.every) {
            last_publish = Some(now);
            let mut rows: Vec<&RunRow> = fleet.rows().collect();
            worst_first(&mut rows, ctx.now_s, ctx.stall_after_s);
            let text = metrics::render(&rows, &ctx);
            if let Some(p) = &args.textfile
                && let Err(e) = crate::outfile::write_atomic(p, text.as_bytes())
            {
                eprintln!("rhoscope fleet: {e}");
            }
            shared.set(text);
        }
        fleet.wait(Duration::from_millis(500), Duration::from_millis(50));
    }
    if let Some(s) = server {
        s.stop();
    }
    Ok(exit_code(known))
}

/// One stderr line per run whose state changed since the last call.
fn report_changes(fleet: &Fleet, ctx: &Context, known: &mut Vec<RunState>) {
    for (i, r) in fleet.rows().enumerate() {
        let s = r.state(ctx.now_s, ctx.stall_after_s);
        let before = known.get(i).copied();
        if before == Some(s) {
            continue;
        }
        if i >= known.len() {
            known.push(s);
        } else {
            known[i] = s;
        }
        if before.is_none() && s == RunState::Waiting {
            continue;
        }
        let why = r
            .alarm_message
            .as_deref()
            .or(r.note.as_deref())
            .unwrap_or("");
        eprintln!(
            "rhoscope fleet: {} {} -> {} {why}",
            r.name,
            before.map_or("joined", RunState::word),
            s.word()
        );
    }
}
