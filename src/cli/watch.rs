//! Arguments of `rhoscope watch`.

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use super::actions::{ActionArgs, parse_duration};
use super::follow::FollowArgs;
use super::input::InputArgs;

const WATCH_EXAMPLES: &str = "\
Examples:
  # Look at a running job from a login node (works over SSH, 80x24 and up).
  rhoscope watch /scratch/run42/history.csv --end-time 0.05 --wall-limit 3.5h

  # Watch and be protected: on a critical alarm create the stop file the
  # solver polls for (as guard does); X in the dashboard does it by hand.
  rhoscope watch run/history.csv --touch run/STOP --events watch.jsonl

  # Many runs, worst first; Enter opens one, Esc comes back.
  rhoscope watch 'study/*/history.csv' --end-time 0.05

Keys: q quit, space pause, + and - zoom, 0 whole run, Tab probe signal,
a acknowledge, X stop the run (asks y/N first), ? help.

An alarm is advice, not proof. Stopping a run discards the work done since
its last checkpoint; the site's own rules and licensed practice decide.
Set NO_COLOR to draw without colours (states are also told in words).

Exit codes: 0 healthy, 1 warning, 2 critical (worst state of the last
segment seen), 3 usage or input error, 4 a stop action failed.";

/// Arguments of `rhoscope watch`.
#[derive(Debug, Clone, Args)]
#[command(after_help = WATCH_EXAMPLES)]
pub struct WatchArgs {
    /// The history file the solver writes (it may not exist yet).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    /// More histories, for the fleet view (one line per run). FILE may also be
    /// a quoted pattern such as 'runs/*/history.csv'; new matches join.
    #[arg(value_name = "MORE")]
    pub more: Vec<PathBuf>,
    /// Fleet view: a run whose history has not grown for this long is stalled.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration, default_value = "10m")]
    pub stall_after: Duration,
    /// Esc leaves the dashboard (set when opened from the fleet view).
    #[arg(skip)]
    pub esc_back: bool,
    /// Simulated end time of the run in seconds, for progress and time to finish.
    #[arg(long, value_name = "SECONDS")]
    pub end_time: Option<f64>,
    /// Wall-clock time the job has left now (e.g. 3.5h, 90m), to tell whether
    /// the run will finish in time; on Slurm `squeue -h -j $JOB -o %L` shows it.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration)]
    pub wall_limit: Option<Duration>,
    #[command(flatten)]
    pub actions: ActionArgs,
    /// Take the armed actions only with the stop key (after y/N), never by
    /// themselves on an alarm.
    #[arg(long)]
    pub by_key_only: bool,
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub follow: FollowArgs,
    /// Append every alarm and action to this file, as JSON Lines.
    #[arg(long, value_name = "FILE")]
    pub events: Option<PathBuf>,
    /// Most frames drawn per second.
    #[arg(long, value_name = "N", default_value_t = 10,
          value_parser = clap::value_parser!(u32).range(1..=60))]
    pub fps: u32,
    /// Rows kept at full resolution for zooming in (older rows are kept as a
    /// min/max envelope).
    #[arg(long, value_name = "ROWS", default_value_t = 20_000)]
    pub retention_rows: usize,
}
