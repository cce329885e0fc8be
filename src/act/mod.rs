//! Actions that stop a run, for `guard` and the dashboard: a stop file created
//! atomically, a signal to a process verified by its start time, a shell command
//! with a time limit; the [`Escalation`] that fires them in order, each at most
//! once, built from the configured actions by [`plan`]; and the [`EventLog`]
//! that records every alarm and action. An alarm is
//! advice: these only do what the user configured, and say what they did.

mod command;
mod escalation;
mod log;
pub mod plan;
mod process;
mod stopfile;

pub use command::{CommandEnd, RunningCommand, alarm_env};
pub use escalation::{ActionReport, ActionSpec, Activity, Escalation, EscalationConfig, Outcome};
pub use log::{EventLog, Record, stderr_line, utc_clock};
pub use process::{ProcessId, Refusal, parse_signal, start_ticks_from_stat};
pub use stopfile::{check_at_start, create_stop_file};

#[cfg(test)]
mod escalation_tests;
