//! Arguments of `rhoscope fleet`.

use std::path::PathBuf;
use std::time::Duration;

use clap::Args;

use super::actions::parse_duration;
use super::follow::FollowArgs;
use super::input::InputArgs;

const FLEET_EXAMPLES: &str = "\
Examples:
  # One look at a parameter study: worst runs first, exit code of the worst.
  rhoscope fleet 'study/*/history.csv' --once --end-time 0.05

  # Keep following every run (new ones join) and publish their state for
  # the node exporter's textfile collector, and on http://127.0.0.1:9464/metrics.
  rhoscope fleet 'study/*/history.csv' --end-time 0.05 \\
      --textfile /var/lib/node_exporter/textfile/rhoscope.prom --listen 9464

Quote the pattern so rhoscope expands it (and finds runs that start later);
`*`, `?` and `[...]` match within one path component.

State codes (metric rhoscope_run_state, and the exit code of --once): 0
healthy, 1 warning, 2 critical, 3 unknown (waiting for the file, stalled, or
unreadable). An alarm is advice, not proof; this command never stops a run.";

/// Arguments of `rhoscope fleet`.
#[derive(Debug, Clone, Args)]
#[command(after_help = FLEET_EXAMPLES)]
pub struct FleetArgs {
    /// History files, or quoted shell patterns such as 'runs/*/history.csv'.
    #[arg(value_name = "FILE|PATTERN", required = true)]
    pub files: Vec<String>,
    /// Read what the files hold now, print the table (and write the metrics)
    /// once, and exit with the worst state's code.
    #[arg(long)]
    pub once: bool,
    /// Simulated end time of the runs in seconds, for progress.
    #[arg(long, value_name = "SECONDS")]
    pub end_time: Option<f64>,
    /// A run whose history has not grown for this long is flagged as stalled.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration, default_value = "10m")]
    pub stall_after: Duration,
    /// Period of the search for new files matching the patterns.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration, default_value = "10s")]
    pub rescan: Duration,
    #[command(flatten)]
    pub follow: FollowArgs,
    /// Write the runs' state to this file in the Prometheus text format,
    /// atomically (temporary file, then rename), every --every.
    #[arg(long, value_name = "FILE")]
    pub textfile: Option<PathBuf>,
    /// Serve the same text on http://ADDR/metrics; a bare port listens on
    /// 127.0.0.1 only.
    #[arg(long, value_name = "ADDR")]
    pub listen: Option<String>,
    /// Period of the metrics update.
    #[arg(long, value_name = "DURATION", value_parser = parse_duration, default_value = "15s")]
    pub every: Duration,
    #[command(flatten)]
    pub input: InputArgs,
}
