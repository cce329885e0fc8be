//! The escalation: configured actions, fired in order on the first alarm that
//! triggers them — the first at once, each next one only if the run still writes
//! after the grace period — each at most once. Used by `guard`, and by the
//! dashboard when actions are armed there. The caller owns the clock and the
//! observation of the run; this type only decides and fires.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use nix::sys::signal::Signal;

use super::command::{CommandEnd, RunningCommand, alarm_env};
use super::process::ProcessId;
use super::stopfile::{check_at_start, create_stop_file};
use crate::alarm::Alarm;
use crate::finding::Level;

/// One configured action.
#[derive(Debug, Clone, PartialEq)]
pub enum ActionSpec {
    /// Create a stop file (atomically).
    Touch(PathBuf),
    /// Send a signal to a verified process.
    Signal { signal: Signal, target: ProcessId },
    /// Run a shell command with a time limit.
    Run {
        command: String,
        time_limit: Duration,
    },
}

impl ActionSpec {
    /// Short description for logs: `touch PATH`, `signal SIGTERM to 1234`, `run CMD`.
    pub fn describe(&self) -> String {
        match self {
            ActionSpec::Touch(p) => format!("touch {}", p.display()),
            ActionSpec::Signal { signal, target } => format!("signal {signal} to {}", target.pid),
            ActionSpec::Run { command, .. } => format!("run {command}"),
        }
    }
}

/// Everything the escalation needs to know, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct EscalationConfig {
    /// In the order they escalate.
    pub actions: Vec<ActionSpec>,
    /// Wait after an action before the next one, if the run still writes.
    pub grace: Duration,
    /// Warnings trigger the escalation too (not only critical alarms).
    pub on_warning: bool,
    /// Log what would be done, do nothing.
    pub dry_run: bool,
    /// The followed history, passed to commands as `RHOSCOPE_FILE`.
    pub file: PathBuf,
}

/// How one action went.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Outcome {
    Done(String),
    DryRun(String),
    /// A command was started; its end comes in a later report.
    Started(String),
    Failed(String),
    /// Not done on purpose (for example, a PID that changed hands).
    Refused(String),
    TimedOut(String),
}

impl Outcome {
    /// True for failures, refusals and time-outs.
    pub fn failed(&self) -> bool {
        matches!(
            self,
            Outcome::Failed(_) | Outcome::Refused(_) | Outcome::TimedOut(_)
        )
    }
}

/// One action taken (or its end, for a command).
#[derive(Debug, Clone, PartialEq)]
pub struct ActionReport {
    /// Position in the configured order.
    pub index: usize,
    pub action: String,
    pub outcome: Outcome,
    /// The alarm that triggered the escalation.
    pub alarm: Alarm,
}

/// What the caller observed of the run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Activity {
    /// Last instant the followed file grew.
    pub last_growth: Option<Instant>,
    /// Whether the `--pid` process is alive, when one was given.
    pub pid_alive: Option<bool>,
}

/// Configured actions and where the escalation stands.
pub struct Escalation {
    cfg: EscalationConfig,
    trigger: Option<Alarm>,
    next: usize,
    fired_at: Option<Instant>,
    running: Option<(usize, RunningCommand)>,
    failures: usize,
    stopped: bool,
}

impl Escalation {
    /// Armed, nothing fired yet.
    pub fn new(cfg: EscalationConfig) -> Self {
        Self {
            cfg,
            trigger: None,
            next: 0,
            fired_at: None,
            running: None,
            failures: 0,
            stopped: false,
        }
    }

    /// The configuration.
    pub fn config(&self) -> &EscalationConfig {
        &self.cfg
    }

    /// Cautions to print at start (a stop file already there, a missing directory).
    pub fn warnings_at_start(&self) -> Vec<String> {
        self.cfg
            .actions
            .iter()
            .filter_map(|a| match a {
                ActionSpec::Touch(p) => check_at_start(p),
                _ => None,
            })
            .collect()
    }

    /// True when `alarm` is severe enough to start the escalation.
    pub fn triggered_by(&self, alarm: &Alarm) -> bool {
        alarm.level == Level::Critical || (self.cfg.on_warning && alarm.level == Level::Warning)
    }

    /// The alarm that started the escalation, if any.
    pub fn trigger(&self) -> Option<&Alarm> {
        self.trigger.as_ref()
    }

    /// True once an alarm has started the escalation.
    pub fn acted(&self) -> bool {
        self.trigger.is_some()
    }

    /// True when any action failed, was refused or timed out.
    pub fn any_failed(&self) -> bool {
        self.failures > 0
    }

    /// True when nothing more will happen: every action fired (and any command
    /// ended), or the run stopped writing so no further step is needed.
    /// With no action configured it never finishes: alarms are only logged.
    pub fn finished(&self) -> bool {
        !self.cfg.actions.is_empty()
            && self.trigger.is_some()
            && self.running.is_none()
            && (self.next >= self.cfg.actions.len() || self.stopped)
    }

    /// True while a started command has not ended yet.
    pub fn busy(&self) -> bool {
        self.running.is_some()
    }

    /// When the next decision is due (end of the grace period), if one is pending.
    pub fn next_deadline(&self) -> Option<Instant> {
        if self.running.is_some() || self.finished() || self.trigger.is_none() {
            return None;
        }
        self.fired_at.map(|t| t + self.cfg.grace)
    }

    /// An alarm arrived: the first triggering one fires the first action at once.
    pub fn on_alarm(&mut self, alarm: &Alarm, now: Instant) -> Vec<ActionReport> {
        let mut out = Vec::new();
        if self.trigger.is_some() || !self.triggered_by(alarm) {
            return out;
        }
        self.trigger = Some(alarm.clone());
        self.fire_next(now, &mut out);
        out
    }

    /// Advance: collect a command's end, and after the grace period fire the
    /// next action if the run still writes (the file grew in the second half of
    /// the grace period, or the `--pid` process is alive).
    pub fn tick(&mut self, now: Instant, activity: &Activity) -> Vec<ActionReport> {
        let mut out = Vec::new();
        if let Some((index, cmd)) = self.running.as_mut()
            && let Some(end) = cmd.poll(now)
        {
            let index = *index;
            self.running = None;
            let limit_word = |d: Duration| format!("still running after {d:?}: killed");
            let outcome = match end {
                CommandEnd::Success => Outcome::Done("exit status 0".into()),
                CommandEnd::Failed(m) => Outcome::Failed(m),
                CommandEnd::TimedOut(d) => Outcome::TimedOut(limit_word(d)),
            };
            let failed = outcome.failed();
            self.report(index, outcome, &mut out);
            if failed {
                self.fire_next(now, &mut out);
            }
        }
        if let Some(due) = self.next_deadline()
            && now >= due
        {
            let half = self.fired_at.map(|t| t + self.cfg.grace / 2);
            let grew = matches!((activity.last_growth, half), (Some(g), Some(h)) if g >= h);
            if grew || activity.pid_alive == Some(true) {
                self.fire_next(now, &mut out);
            } else {
                self.stopped = true;
            }
        }
        out
    }

    fn report(&mut self, index: usize, outcome: Outcome, out: &mut Vec<ActionReport>) {
        if outcome.failed() {
            self.failures += 1;
        }
        if let Some(alarm) = &self.trigger {
            out.push(ActionReport {
                index,
                action: self.cfg.actions[index].describe(),
                outcome,
                alarm: alarm.clone(),
            });
        }
    }

    /// Fire the next action; a failed one is followed at once by the next.
    fn fire_next(&mut self, now: Instant, out: &mut Vec<ActionReport>) {
        while self.next < self.cfg.actions.len() {
            let index = self.next;
            self.next += 1;
            self.fired_at = Some(now);
            let outcome = self.fire(index);
            let failed = outcome.failed();
            self.report(index, outcome, out);
            if !failed {
                return;
            }
        }
    }

    fn fire(&mut self, index: usize) -> Outcome {
        let dry = self.cfg.dry_run;
        match &self.cfg.actions[index] {
            ActionSpec::Touch(p) if dry => Outcome::DryRun(format!("would create {}", p.display())),
            ActionSpec::Touch(p) => match create_stop_file(p, &self.cfg.file) {
                Ok(()) => Outcome::Done(format!("created {}", p.display())),
                Err(e) => Outcome::Failed(e.to_string()),
            },
            ActionSpec::Signal { signal, target } => match target.verify() {
                Err(e) => Outcome::Refused(e.to_string()),
                Ok(()) if dry => Outcome::DryRun(format!(
                    "would send {signal} to process {} (identity verified)",
                    target.pid
                )),
                Ok(()) => match target.signal(*signal) {
                    Ok(()) => Outcome::Done(format!("sent {signal} to process {}", target.pid)),
                    Err(e) => Outcome::Failed(e),
                },
            },
            ActionSpec::Run { command, .. } if dry => {
                Outcome::DryRun(format!("would run: {command}"))
            }
            ActionSpec::Run {
                command,
                time_limit,
            } => {
                let Some(alarm) = self.trigger.as_ref() else {
                    return Outcome::Failed("no alarm to pass on".into());
                };
                let env = alarm_env(alarm, &self.cfg.file);
                match RunningCommand::start(command, &env, *time_limit) {
                    Ok(cmd) => {
                        self.running = Some((index, cmd));
                        Outcome::Started(format!("started with a limit of {time_limit:?}"))
                    }
                    Err(e) => Outcome::Failed(format!("cannot start sh: {e}")),
                }
            }
        }
    }
}
