//! Arguments of `rhoscope demo`.

use std::path::PathBuf;

use clap::{ArgGroup, Args};

/// Arguments of `rhoscope demo`: the invented simulations and labelled cases.
#[derive(Debug, Args)]
#[command(
    group(ArgGroup::new("mode").args(["list", "write", "write_all", "live"]).multiple(false)),
    after_help = "Examples:
  rhoscope demo --list
  rhoscope demo --write chain-stop-cd /tmp/chain.csv
  rhoscope demo --write-all /tmp/cases
  rhoscope demo --live /tmp/run.csv --rate 100 --stop-file /tmp/run.stop

Every case is a real simulation of an invented structure (spring chains, trusses)
with a real integrator; its label (ok, warning, critical), onset line and crash
line come from the simulation itself."
)]
pub struct DemoArgs {
    /// List the labelled cases: name, expected level, onset and crash lines, description.
    #[arg(long)]
    pub list: bool,

    /// Write one case's history to FILE.
    #[arg(long, num_args = 2, value_names = ["SCENARIO", "FILE"])]
    pub write: Option<Vec<String>>,

    /// Write every case into DIR (one file per case, plus labels.csv).
    #[arg(long, value_name = "DIR")]
    pub write_all: Option<PathBuf>,

    /// Write a history to FILE line by line, as a running solver does.
    #[arg(long, value_name = "FILE")]
    pub live: Option<PathBuf>,

    /// Case written by --live (default: the demo scenario).
    #[arg(long, value_name = "NAME", requires = "live")]
    pub scenario: Option<String>,

    /// Lines per second written by --live (0: as fast as possible).
    #[arg(
        long,
        value_name = "LINES_PER_S",
        default_value_t = 50.0,
        requires = "live"
    )]
    pub rate: f64,

    /// With --live: stop when this file appears, after writing a last comment line.
    #[arg(long, value_name = "PATH", requires = "live")]
    pub stop_file: Option<PathBuf>,
}
