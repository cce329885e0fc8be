//! `rhoscope guard`: wiring only. Turns the action flags over a named
//! configuration's `[actions]` into an escalation ([`crate::act::plan`]),
//! opens the event log, follows the file through the shared pipeline
//! ([`crate::guard`]), and maps the end to an exit code.

use std::time::Duration;

use anyhow::{Context, bail};

use crate::act::plan::{check_action_outputs, escalation};
use crate::act::{ActionSpec, Escalation, EventLog};
use crate::cli::follow::POLL_DEFAULT;
use crate::cli::guard::GuardArgs;
use crate::guard::{End, SuperviseOptions, supervise};
use crate::pipeline::Pipeline;
use crate::settings::Settings;
use crate::source::{FollowConfig, Follower};

/// Run `rhoscope guard`; returns the exit code.
pub fn run(args: GuardArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input.read_spec(), &args.file)?;
    if let Some(why) = crate::source::not_followable(&args.file) {
        bail!("{why}");
    }
    if args.file.exists() {
        std::fs::File::open(&args.file)
            .with_context(|| format!("cannot read '{}'", args.file.display()))?;
    }
    let actions = args.actions.settings().over(settings.actions.as_ref());
    let (cfg, pid) = escalation(&actions, args.actions.pid, &args.file)?;
    let touch_from_flag = args.actions.touch.is_some();
    check_action_outputs(&args.file, touch_from_flag, &cfg, args.events.as_deref())?;
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
