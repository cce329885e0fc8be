//! Arguments that arm the stopping actions; flattened into `guard` (and into
//! `watch`, which arms the same actions while the dashboard runs).

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use crate::settings::actions::ActionSettings;
pub use crate::settings::actions::parse_duration;

/// Actions taken on the first critical alarm, in this order as an escalation:
/// stop file, then signal, then command.
#[derive(Debug, Clone, Default, Args)]
pub struct ActionArgs {
    /// Create this stop file (atomically) on the alarm; many solvers poll for one,
    /// write a restart and end cleanly. First step of the escalation.
    #[arg(long, value_name = "PATH")]
    pub touch: Option<PathBuf>,
    /// Send this signal to --pid (TERM, SIGTERM or 15; INT, USR1, ...), after
    /// checking it is still the same process (start time). Second step.
    #[arg(long, value_name = "SIG", requires = "pid")]
    pub signal: Option<String>,
    /// The solver's (or launcher's) process: signalled by --signal, and watched —
    /// guard ends when it ends, and a live process counts as a run still going.
    #[arg(long, value_name = "PID", allow_negative_numbers = true)]
    pub pid: Option<i64>,
    /// Run this shell command (`sh -c`), e.g. to cancel the job through the
    /// scheduler; the alarm is in RHOSCOPE_LEVEL, RHOSCOPE_DETECTOR, RHOSCOPE_LINE,
    /// RHOSCOPE_TIME, RHOSCOPE_MESSAGE, RHOSCOPE_FILE. Last step.
    #[arg(long, value_name = "CMD")]
    pub run: Option<String>,
    /// Time limit of the --run command; it is killed after it [default: 2m].
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub run_limit: Option<Duration>,
    /// Wait between steps: the next step is taken only if the run still writes
    /// (the file grows, or --pid is alive) after this long [default: 5m].
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub grace: Option<Duration>,
    /// Act on warnings too, not only on critical alarms.
    #[arg(long)]
    pub on_warning: bool,
    /// Only log what would be done; touch, signal and run nothing.
    #[arg(long)]
    pub dry_run: bool,
}

impl ActionArgs {
    /// The actions these flags ask for (`--pid` apart: it names the process
    /// they act on, not an action).
    pub fn settings(&self) -> ActionSettings {
        ActionSettings {
            touch: self.touch.clone(),
            signal: self.signal.clone(),
            run: self.run.clone(),
            run_limit: self.run_limit,
            grace: self.grace,
            on_warning: self.on_warning,
            dry_run: self.dry_run,
        }
    }
}
