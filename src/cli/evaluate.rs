//! Arguments of `rhoscope evaluate`.

use clap::Args;

/// Arguments of `rhoscope evaluate`.
#[derive(Debug, Args)]
#[command(
    after_help = "Reads every case of a labelled set through the same pipeline as `scan` and
prints, per set, a table: the level expected and raised, the first alarm line
and the lead = (crash line − first critical line) / (crash line − onset line),
then the set's totals against the targets: every blow-up caught before its
crash and none called critical before its onset, no healthy run critical or
warned, every drift warned and none critical, and a median lead of at least
0.95 (--min-lead for labelled sets).

Sets:
  catalogue   the labelled demo catalogue (scored by default)
  variants    the catalogue with twice and three times the output interval
              and other noise seeds (cases the thresholds were not set on)
  blind       cases written from docs/blind-catalogue.md alone and frozen
              before the detectors were tuned (scored by default, reported
              apart, with a breakdown by failure class)

A labelled directory of your own is scored with --labels: a labels.csv whose
header names `file` (relative to the CSV) and `level` (ok, warning, critical),
and optionally `case`, `onset_line` and `crash_line` (1-based physical lines);
other columns are ignored. `rhoscope demo --write-all DIR` and the real-solver
drivers (`python3 tests/solvers/generate.py DIR`) write such a file.

Examples:
  rhoscope evaluate
  rhoscope evaluate --case chain-stop-cd
  rhoscope evaluate --variants
  rhoscope evaluate --set variants --case chain-stop-cd
  rhoscope evaluate --labels runs/labels.csv
  rhoscope evaluate --labels runs/labels.csv --min-lead 0.9
  rhoscope evaluate --set blind --case md-drift-nve
  rhoscope evaluate --set blind --write /tmp/blind-cases

--write DIR writes the histories of the one set named by --set (only the
--case ones, if given) into DIR, created if missing, with a labels.csv that
--labels reads back; nothing is scored then, and no existing file is
overwritten.

Exit codes: 0 every set meets its targets, 1 a set misses them, 3 usage error."
)]
pub struct EvaluateArgs {
    /// Only the case of this name and the cases derived from it (repeatable).
    #[arg(long = "case", value_name = "NAME")]
    pub cases: Vec<String>,
    /// Also score the variants set (same as adding `--set variants`).
    #[arg(long)]
    pub variants: bool,
    /// Score this set (repeatable; default: catalogue and blind, unless
    /// --labels is given). See the list below.
    #[arg(long = "set", value_name = "NAME")]
    pub sets: Vec<String>,
    /// Write the histories of the set named by --set to DIR with a
    /// labels.csv, instead of scoring.
    #[arg(long, value_name = "DIR", conflicts_with_all = ["labels", "variants"])]
    pub write: Option<std::path::PathBuf>,
    /// Score the labelled histories listed in this labels.csv (repeatable).
    #[arg(long = "labels", value_name = "CSV")]
    pub labels: Vec<std::path::PathBuf>,
    /// The median lead the labelled sets are held to (default 0.95; runs of
    /// real solvers, written every few steps, are held to 0.90 in the tests).
    #[arg(long = "min-lead", value_name = "FRACTION", value_parser = lead_fraction)]
    pub min_lead: Option<f64>,
}

/// A lead fraction in [0, 1].
fn lead_fraction(s: &str) -> Result<f64, String> {
    let v: f64 = s.parse().map_err(|_| format!("'{s}' is not a number"))?;
    if (0.0..=1.0).contains(&v) {
        Ok(v)
    } else {
        Err(format!("'{s}' is not a fraction between 0 and 1"))
    }
}
