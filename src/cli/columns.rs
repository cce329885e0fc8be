//! Arguments of `rhoscope columns`.

use std::path::PathBuf;

use clap::Args;

use super::input::InputArgs;

/// Arguments of `rhoscope columns`.
#[derive(Debug, Args)]
#[command(after_help = "Examples:
  rhoscope columns run/history.csv
  rhoscope columns --role 'Q=dissipated' run/history.csv")]
pub struct ColumnsArgs {
    /// History file written by the solver.
    pub file: PathBuf,
    /// Print the table as JSON.
    #[arg(long)]
    pub json: bool,
    #[command(flatten)]
    pub input: InputArgs,
}
