//! From configured actions to an escalation: [`escalation`] checks the
//! [`ActionSettings`] (a signal needs a process, a command must not be empty,
//! the process is captured with its start time) and orders them stop file →
//! signal → command; [`check_action_outputs`] refuses, before anything is
//! followed, a stop file or event log that is the history itself.

use std::path::Path;
use std::time::Duration;

use anyhow::{Context, bail};

use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::settings::ActionSettings;

use super::{ActionSpec, EscalationConfig, ProcessId, parse_signal};

/// Default wait between escalation steps.
pub const DEFAULT_GRACE: Duration = Duration::from_secs(300);
/// Default time limit of a `--run` command.
pub const DEFAULT_RUN_LIMIT: Duration = Duration::from_secs(120);

/// Validate `a` into an escalation for the history `file` and the process
/// `pid` (its start time captured now, so a reused PID is never signalled).
pub fn escalation(
    a: &ActionSettings,
    pid: Option<i64>,
    file: &Path,
) -> anyhow::Result<(EscalationConfig, Option<ProcessId>)> {
    let pid = match pid {
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

/// Refuse a stop file or event log that is the history `file` (or that are
/// one file between them); see [`check_outputs`]. `touch_from_flag` says
/// whether the stop file came from `--touch` (else from `[actions] touch`),
/// so the error names where it was given.
pub fn check_action_outputs(
    file: &Path,
    touch_from_flag: bool,
    cfg: &EscalationConfig,
    events: Option<&Path>,
) -> anyhow::Result<()> {
    let touch_flag = if touch_from_flag {
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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn actions_are_ordered_stop_file_then_signal_then_command() {
        let a = ActionSettings {
            run: Some("true".into()),
            signal: Some("TERM".into()),
            touch: Some("STOP".into()),
            ..ActionSettings::default()
        };
        let me = i64::from(std::process::id());
        let (cfg, pid) = escalation(&a, Some(me), Path::new("h.csv")).unwrap();
        let kinds: Vec<&str> = cfg
            .actions
            .iter()
            .map(|s| match s {
                ActionSpec::Touch(_) => "touch",
                ActionSpec::Signal { .. } => "signal",
                ActionSpec::Run { .. } => "run",
            })
            .collect();
        assert_eq!(kinds, ["touch", "signal", "run"]);
        assert!(pid.is_some());
        assert_eq!(cfg.grace, DEFAULT_GRACE);
    }

    #[test]
    fn a_signal_without_a_process_or_an_empty_command_is_refused() {
        let signal = ActionSettings {
            signal: Some("TERM".into()),
            ..ActionSettings::default()
        };
        let e = format!(
            "{:#}",
            escalation(&signal, None, Path::new("h")).unwrap_err()
        );
        assert!(e.contains("needs --pid"), "{e}");
        let empty = ActionSettings {
            run: Some("  ".into()),
            ..ActionSettings::default()
        };
        let e = format!(
            "{:#}",
            escalation(&empty, None, Path::new("h")).unwrap_err()
        );
        assert!(e.contains("empty"), "{e}");
    }
}
