//! `rhoscope guard`: wiring only. Validates the action flags (and a named
//! configuration's `[actions]` table) into an escalation, opens the event log,
//! follows the file through the shared pipeline, and maps the end to an exit code.

use std::path::Path;
use std::time::Duration;

use anyhow::{Context, bail};

use crate::act::Escalation;
use crate::act::{ActionSpec, EscalationConfig, EventLog, ProcessId, parse_signal};
use crate::cli::actions::{ActionArgs, parse_duration};
use crate::cli::follow::POLL_DEFAULT;
use crate::cli::guard::GuardArgs;
use crate::guard::{End, SuperviseOptions, supervise};
use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::pipeline::Pipeline;
use crate::settings::Settings;
use crate::source::{FollowConfig, Follower};

/// Default wait between escalation steps.
pub const DEFAULT_GRACE: Duration = Duration::from_secs(300);
/// Default time limit of a `--run` command.
pub const DEFAULT_RUN_LIMIT: Duration = Duration::from_secs(120);

/// Keys accepted in the `[actions]` table of a configuration named with `--config`.
const TABLE_KEYS: [&str; 7] = [
    "touch",
    "signal",
    "run",
    "run_limit",
    "grace",
    "on_warning",
    "dry_run",
];

/// Flags over the `[actions]` table: one validated set of action arguments.
fn merge_table(args: &ActionArgs, table: Option<&toml::Table>) -> anyhow::Result<ActionArgs> {
    let mut a = args.clone();
    let Some(t) = table else {
        return Ok(a);
    };
    for key in t.keys() {
        if !TABLE_KEYS.contains(&key.as_str()) {
            bail!(
                "unknown key '{key}' in [actions] (known: {})",
                TABLE_KEYS.join(", ")
            );
        }
    }
    let text = |k: &str| -> anyhow::Result<Option<String>> {
        match t.get(k) {
            None => Ok(None),
            Some(toml::Value::String(s)) => Ok(Some(s.clone())),
            Some(v) => bail!("[actions] {k} must be a string, not '{v}'"),
        }
    };
    let flag = |k: &str| -> anyhow::Result<bool> {
        match t.get(k) {
            None => Ok(false),
            Some(toml::Value::Boolean(b)) => Ok(*b),
            Some(v) => bail!("[actions] {k} must be true or false, not '{v}'"),
        }
    };
    let dur = |k: &str| -> anyhow::Result<Option<Duration>> {
        text(k)?
            .map(|s| parse_duration(&s).map_err(|e| anyhow::anyhow!("[actions] {k}: {e}")))
            .transpose()
    };
    a.touch = a.touch.or(text("touch")?.map(Into::into));
    a.signal = a.signal.or(text("signal")?);
    a.run = a.run.or(text("run")?);
    a.run_limit = a.run_limit.or(dur("run_limit")?);
    a.grace = a.grace.or(dur("grace")?);
    a.on_warning |= flag("on_warning")?;
    a.dry_run |= flag("dry_run")?;
    Ok(a)
}

/// Validate action arguments into an escalation (stop file → signal → command)
/// and the watched process. Shared with `watch`, which arms the same actions.
pub fn escalation_from_args(
    args: &ActionArgs,
    table: Option<&toml::Table>,
    file: &Path,
) -> anyhow::Result<(EscalationConfig, Option<ProcessId>)> {
    let a = merge_table(args, table)?;
    let pid = match a.pid {
        Some(p) => Some(ProcessId::capture(p).with_context(|| format!("--pid '{p}'"))?),
        None => None,
    };
    let mut actions = Vec::new();
    if let Some(p) = &a.touch {
        actions.push(ActionSpec::Touch(p.clone()));
    }
    if let Some(s) = &a.signal {
        let signal = parse_signal(s).map_err(|e| anyhow::anyhow!("--signal: {e}"))?;
        let Some(target) = pid else {
            bail!("--signal '{s}' needs --pid: the process to signal");
        };
        actions.push(ActionSpec::Signal { signal, target });
    }
    if let Some(c) = &a.run {
        if c.trim().is_empty() {
            bail!("--run: the command is empty");
        }
        actions.push(ActionSpec::Run {
            command: c.clone(),
            time_limit: a.run_limit.unwrap_or(DEFAULT_RUN_LIMIT),
        });
    }
    let cfg = EscalationConfig {
        actions,
        grace: a.grace.unwrap_or(DEFAULT_GRACE),
        on_warning: a.on_warning,
        dry_run: a.dry_run,
        file: file.to_path_buf(),
    };
    Ok((cfg, pid))
}

/// Refuse, before anything is followed, a stop file or event log that is the
/// history (or that are one file between them); see [`check_outputs`].
pub fn check_action_outputs(
    file: &Path,
    args: &ActionArgs,
    cfg: &EscalationConfig,
    events: Option<&Path>,
) -> anyhow::Result<()> {
    let touch_flag = if args.touch.is_some() {
        "--touch"
    } else {
        "[actions] touch"
    };
    let mut outputs = Vec::new();
    for a in &cfg.actions {
        if let ActionSpec::Touch(p) = a {
            outputs.push(Output {
                flag: touch_flag,
                path: p,
                kind: OutputKind::Replaced,
            });
        }
    }
    if let Some(p) = events {
        outputs.push(Output {
            flag: "--events",
            path: p,
            kind: OutputKind::Appended,
        });
    }
    let watched = Watched {
        files: &[file],
        patterns: &[],
    };
    check_outputs(&watched, &outputs)?;
    Ok(())
}

/// Run `rhoscope guard`; returns the exit code.
pub fn run(args: GuardArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input, &args.file)?;
    if let Some(why) = crate::source::not_followable(&args.file) {
        bail!("{why}");
    }
    if args.file.exists() {
        std::fs::File::open(&args.file)
            .with_context(|| format!("cannot read '{}'", args.file.display()))?;
    }
    let (cfg, pid) = escalation_from_args(&args.actions, settings.actions.as_ref(), &args.file)?;
    check_action_outputs(&args.file, &args.actions, &cfg, args.events.as_deref())?;
    let mut log = EventLog::open(args.events.as_deref(), !args.quiet)?;
    for n in &settings.notes {
        log.note(n);
    }
    let mut escalation = Escalation::new(cfg);
    for w in escalation.warnings_at_start() {
        log.note(&w);
    }
    let steps: Vec<String> = escalation
        .config()
        .actions
        .iter()
        .map(ActionSpec::describe)
        .collect();
    let poll = args.follow.poll_or(POLL_DEFAULT);
    let mut follower = Follower::new(
        &args.file,
        FollowConfig {
            poll_interval: poll,
            notify: !args.follow.no_notify,
            ..FollowConfig::default()
        },
    );
    log.note(&format!(
        "guarding '{}': {}; check every {:?}{}{}",
        args.file.display(),
        if steps.is_empty() {
            "no action configured, alarms are only logged".to_string()
        } else {
            format!(
                "on the first {} alarm: {}{}",
                if escalation.config().on_warning {
                    "warning or critical"
                } else {
                    "critical"
                },
                steps.join(", then "),
                if escalation.config().dry_run {
                    " (dry run: nothing is done)"
                } else {
                    ""
                }
            )
        },
        poll,
        if follower.notified() {
            ", woken early by notifications"
        } else {
            ""
        },
        args.idle_exit
            .map(|d| format!("; ends after {d:?} without growth"))
            .unwrap_or_default(),
    ));
    let mut pipeline = Pipeline::new(&settings);
    let opts = SuperviseOptions {
        idle_exit: args.idle_exit,
        pid,
        max_wait: poll.min(Duration::from_millis(250)),
    };
    let out = supervise(
        &mut follower,
        &mut pipeline,
        &mut escalation,
        &mut log,
        &opts,
    );
    let why = match out.end {
        End::Escalated => "the escalation is complete",
        End::Idle => "the file stopped growing",
        End::PidEnded => "the watched process ended",
        End::SourceEnded => "the input ended",
    };
    log.note(&format!(
        "ending ({why}): {} rows, {} alarms, exit {}",
        out.rows,
        out.alarms.len(),
        out.exit_code()
    ));
    Ok(out.exit_code())
}
