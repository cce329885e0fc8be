//! Arguments of `rhoscope guard`.

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use super::actions::{ActionArgs, parse_duration};
use super::follow::FollowArgs;
use super::input::InputArgs;

const GUARD_EXAMPLES: &str = "\
Examples:
  # Beside the solver in a batch script: stop file first, then the scheduler.
  rhoscope guard run/history.csv --touch run/STOP \\
      --run 'scancel \"$SLURM_JOB_ID\"' --grace 10m --events guard.jsonl &

  # Signal the solver after verifying it is still the same process.
  rhoscope guard out.dat --signal TERM --pid \"$SOLVER_PID\"

  # Contract for scripts: exits 2 after creating STOP on a critical alarm,
  # 0 once the file has not grown for 3 s with no critical alarm.
  rhoscope guard growing.csv --touch STOP --idle-exit 3s

Exit codes: 0 no critical alarm; 2 acted on a critical alarm; 3 usage or
input error; 4 acted, but an action failed.

An alarm is advice. Stopping a run discards the work since its last
checkpoint; the site's own rules for job control apply.";

/// Arguments of `rhoscope guard`.
#[derive(Debug, Clone, Args)]
#[command(after_help = GUARD_EXAMPLES)]
pub struct GuardArgs {
    /// The history file the solver writes (it may not exist yet).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub actions: ActionArgs,
    #[command(flatten)]
    pub input: InputArgs,
    /// End when the file has not grown for this long (500ms, 3s, 2m). Make it
    /// longer than the output interval plus the filesystem's attribute-cache lag.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub idle_exit: Option<Duration>,
    #[command(flatten)]
    pub follow: FollowArgs,
    /// Append every alarm and action to this file, as JSON Lines.
    #[arg(long, value_name = "FILE")]
    pub events: Option<PathBuf>,
    /// Print nothing on stderr (the event log still gets everything).
    #[arg(long, short)]
    pub quiet: bool,
}
