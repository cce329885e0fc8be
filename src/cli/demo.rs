//! Arguments of `rhoscope demo`.

use std::path::PathBuf;

use clap::{ArgGroup, Args};

/// Arguments of `rhoscope demo`: the invented simulations and labelled cases.
#[derive(Debug, Args)]
#[command(
    group(ArgGroup::new("mode").args(["list", "write", "write_all", "live", "headless"]).multiple(false)),
    after_help = "Examples:
  rhoscope demo                # the demo run going unstable, on the dashboard, stopped by the guard
  rhoscope demo --headless     # the same without a dashboard: the guard's event lines
  rhoscope demo --list
  rhoscope demo --write chain-stop-cd /tmp/chain.csv
  rhoscope demo --write-all /tmp/cases
  rhoscope demo --live /tmp/run.csv --rate 100 --stop-file /tmp/run.stop

Every case is a real simulation of an invented structure (spring chains, trusses)
with a real integrator; its label (ok, warning, critical), onset line and crash
line come from the simulation itself. Without a mode, `rhoscope demo` writes the
demo scenario live into a new folder under the temporary directory, opens the
dashboard on it with the guard armed to create the stop file the demo solver
honours, and keeps the files there afterwards."
)]
pub struct DemoArgs {
    /// Run the live demo without the dashboard: print the guard's event lines
    /// and exit once the demo run has stopped (for scripts and CI).
    #[arg(long)]
    pub headless: bool,

    /// List the labelled cases: name, expected level, description.
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
