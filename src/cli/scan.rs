//! Arguments of `rhoscope scan`.

use std::path::PathBuf;

use clap::Args;

use super::input::InputArgs;

/// Arguments of `rhoscope scan`.
#[derive(Debug, Args)]
#[command(after_help = "Examples:
  rhoscope scan run/history.csv
  rhoscope scan --json run/history.csv | jq .status
  rhoscope scan run/history.csv --plot report.svg
  rhoscope scan --pattern 'step (?P<step>\\d+) t=(?P<time>\\S+) E=(?P<energy>\\S+)' solver.log

Exit codes: 0 ok, 1 warning, 2 critical, 3 unreadable input, no data row, or usage error.")]
pub struct ScanArgs {
    /// History file written by the solver.
    pub file: PathBuf,
    /// Print the report as one JSON object on stdout.
    #[arg(long)]
    pub json: bool,
    /// Also draw a report image of the run (SVG or PNG, by the extension).
    #[arg(long, value_name = "IMAGE")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub input: InputArgs,
}
