//! `rhoscope watch`: wiring only. Loads the settings and the armed actions,
//! enters the terminal, starts the threads (keys, signals, ticks, file data)
//! feeding one channel, runs the dashboard loop, restores the terminal and
//! prints a one-line summary.

use std::io::Write;
use std::path::Path;
use std::sync::mpsc::sync_channel;
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use anyhow::{Context, bail};

use crate::act::plan::{check_action_outputs, escalation};
use crate::act::{ActionSpec, Escalation, EscalationConfig, EventLog, ProcessId};
use crate::app::feed::Feed;
use crate::app::run::{Pacing, Ticker};
use crate::app::stopper::{Armed, Stopper, TICK};
use crate::app::{AppState, Config, StopState};
use crate::cli::follow::POLL_DEFAULT;
use crate::cli::watch::WatchArgs;
use crate::finding::Level;
use crate::settings::Settings;
use crate::source::{FollowConfig, Follower};
use crate::tui;

/// Exit code when a stop action failed (as `guard`).
const EXIT_ACTION_FAILED: i32 = 4;
/// Exit code when a thread the dashboard needs panicked (Rust's code for a panic).
pub const EXIT_THREAD_FAILED: i32 = 101;

/// Plain sentences for the confirmation dialog: exactly what will be done.
pub fn describe_actions(cfg: &EscalationConfig) -> Vec<String> {
    let grace = crate::ui::format::duration(Some(cfg.grace.as_secs_f64()));
    let dry = if cfg.dry_run {
        "[dry run: only logged] "
    } else {
        ""
    };
    cfg.actions
        .iter()
        .enumerate()
        .map(|(i, a)| {
            let what = match a {
                ActionSpec::Touch(p) => format!(
                    "create the stop file {} (a solver that polls for it writes a restart and ends)",
                    p.display()
                ),
                ActionSpec::Signal { signal, target } => format!(
                    "send {signal} to process {} (checked first to be the same process)",
                    target.pid
                ),
                ActionSpec::Run {
                    command,
                    time_limit,
                } => format!(
                    "run `{command}` (killed after {})",
                    crate::ui::format::duration(Some(time_limit.as_secs_f64()))
                ),
            };
            if i == 0 {
                format!("{dry}{what}")
            } else {
                format!("{dry}then, if the run still writes {grace} later: {what}")
            }
        })
        .collect()
}

/// True when colours may be used (`NO_COLOR` unset or empty).
pub fn colour_allowed() -> bool {
    std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// Run `rhoscope watch`; returns the exit code.
pub fn run(args: WatchArgs) -> anyhow::Result<i32> {
    tui::install_panic_hook();
    if let Some(why) = crate::source::not_followable(&args.file) {
        bail!("{why}");
    }
    if let Some(t) = args.end_time
        && !(t.is_finite() && t > 0.0)
    {
        bail!("--end-time '{t}' must be a positive number of seconds");
    }
    let settings = Settings::load(&args.input.read_spec(), &args.file)?;
    let actions = args.actions.settings().over(settings.actions.as_ref());
    let (cfg, pid) = escalation(&actions, args.actions.pid, &args.file)?;
    let touch_from_flag = args.actions.touch.is_some();
    check_action_outputs(&args.file, touch_from_flag, &cfg, args.events.as_deref())?;
    let log = EventLog::open(args.events.as_deref(), false)
        .with_context(|| "cannot open the event log".to_string())?;
    watch(args, settings, cfg, pid, log)
}

fn watch(
    args: WatchArgs,
    settings: Settings,
    cfg: EscalationConfig,
    pid: Option<ProcessId>,
    log: EventLog,
) -> anyhow::Result<i32> {
    let escalation = Escalation::new(cfg.clone());
    let start_notes: Vec<String> = settings
        .notes
        .iter()
        .cloned()
        .chain(escalation.warnings_at_start())
        .collect();
    let log = Arc::new(Mutex::new(log));
    let armed = Armed::new(escalation, pid, Arc::clone(&log), args.file.clone());
    let t0 = Instant::now();
    let mut state = AppState::new(Config {
        file: args.file.display().to_string(),
        color: colour_allowed(),
        end_time_s: args.end_time,
        wall_left_at_start: args.wall_limit,
        started_s: 0.0,
        actions: describe_actions(&cfg),
        auto_stop: !args.by_key_only,
        retention_rows: args.retention_rows,
        balance_warning: settings.detect.balance_warning,
    });
    state.esc_quits = args.esc_back;
    if !Path::new(&args.file).exists() {
        state.note = Some("waiting for the file to appear".into());
    }
    for n in start_notes {
        state.push_event(crate::app::Event {
            level: Level::Warning,
            source: "start".into(),
            line: None,
            time: None,
            text: n,
        });
    }

    let (tx, rx) = sync_channel(256);
    let stopper = Stopper::spawn(Box::new(armed), tx.clone(), TICK);
    let mut session = tui::enter().context("cannot set up the terminal")?;
    let signals = tui::spawn_signals(tx.clone()).context("cannot listen for signals")?;
    let input = tui::Input::spawn(tx.clone());
    let ticker = Ticker::spawn(tx.clone(), t0, Duration::from_secs(1));
    let poll = args.follow.poll_or(POLL_DEFAULT);
    let follower = Follower::new(
        args.file.clone(),
        FollowConfig {
            poll_interval: poll,
            notify: !args.follow.no_notify,
            ..FollowConfig::default()
        },
    );
    let alarm_log = Arc::clone(&log);
    // Alarms reach the armed actions from the data thread, never through the
    // drawing loop.
    let to_actions = (!args.by_key_only).then(|| stopper.handle());
    let feed = Feed::spawn(
        follower,
        settings,
        tx,
        t0,
        poll.min(Duration::from_millis(500)),
        Box::new(move |a| {
            if let Ok(mut l) = alarm_log.lock() {
                l.alarm(a);
            }
            if let Some(h) = &to_actions {
                h.alarm(a);
            }
        }),
    );
    let pacing = Pacing {
        frame_interval: Duration::from_secs_f64(1.0 / f64::from(args.fps)),
    };
    let result = crate::app::run::run(
        &mut session.terminal,
        &mut state,
        &rx,
        &stopper.handle(),
        pacing,
        &mut crate::ui::render,
    );
    drop(session);
    drop(rx);
    signals.close();
    input.stop();
    ticker.stop();
    feed.stop();
    stopper.stop();
    if state.leave_all || result.is_err() {
        // A signal, a closed terminal or one that cannot be drawn on: a view
        // this one was opened from leaves too.
        tui::set_leaving();
    }
    result.context("cannot draw on the terminal")?;

    let stop = match &state.stop {
        StopState::Idle => "no stop action taken".to_string(),
        StopState::Requested { .. } => "stop actions started".to_string(),
        StopState::Done { ok, report } => format!(
            "stop actions {}: {}",
            if *ok { "taken" } else { "FAILED" },
            report.join("; ")
        ),
    };
    // The terminal may be gone (a hang-up): a summary that cannot be written is dropped.
    let mut out = std::io::stdout();
    let _ = writeln!(
        out,
        "rhoscope watch: {} rows of {}; state {}; {stop}",
        state.rows,
        args.file.display(),
        state.level.word()
    );
    if let Some(n) = &state.note {
        let _ = writeln!(out, "rhoscope watch: {n}");
    }
    if let Some(f) = &state.fatal {
        let _ = writeln!(std::io::stderr(), "rhoscope watch: {f}");
    }
    Ok(exit_code(&state))
}

/// The exit code of a dashboard session: [`EXIT_THREAD_FAILED`] when a
/// thread it needs failed, [`EXIT_ACTION_FAILED`] when a stop action did,
/// else the worst level seen.
pub fn exit_code(state: &AppState) -> i32 {
    match (&state.fatal, &state.stop, state.level) {
        (Some(_), _, _) => EXIT_THREAD_FAILED,
        (_, StopState::Done { ok: false, .. }, _) => EXIT_ACTION_FAILED,
        (_, _, level) => level.exit_code(),
    }
}
