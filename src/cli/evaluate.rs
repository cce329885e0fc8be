//! Arguments of `rhoscope evaluate`.

use clap::Args;

/// Arguments of `rhoscope evaluate`.
#[derive(Debug, Args)]
#[command(
    after_help = "Runs every labelled demo case through the same pipeline as `scan` and
prints, per case, the level expected and raised, the first alarm line and the
lead = (crash line − first critical line) / (crash line − onset line), then the
totals against the targets.

Examples:
  rhoscope evaluate
  rhoscope evaluate --case chain-stop-cd
  rhoscope evaluate --variants

Exit codes: 0 targets met, 1 targets missed, 3 usage error."
)]
pub struct EvaluateArgs {
    /// Only the case of this name (repeatable).
    #[arg(long = "case", value_name = "NAME")]
    pub cases: Vec<String>,
    /// Also run variants the detectors were not tuned on: every case written
    /// with twice and three times the output interval, and with other noise seeds.
    #[arg(long)]
    pub variants: bool,
}
