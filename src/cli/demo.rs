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
  rhoscope demo --live /tmp/run.csv --rate 100 --stop-file /tmp/run.stop --checkpoint-every 50

Every case is a real simulation of an invented structure (spring chains, trusses)
with a real integrator; its label (ok, warning, critical), onset line and crash
line come from the simulation itself. Without a mode, `rhoscope demo` writes the
demo scenario live into a new folder under the temporary directory, opens the
dashboard on it with the guard armed to create the stop file the demo solver
honours, and keeps the files there afterwards.

What the demo shows: a braced mast sways in a gusting wind, healthy, for about
16 s; then its top reaches a clearance collar that latches and holds, and the
stiffer structure puts the fixed step just past central difference's stability
limit (omega*dt = 2.005). The energy balance breaks, the growth per step rises
above 1 (about 1.18), the guard raises a critical alarm and creates the stop
file; the overflow forecast counts down until the demo solver reaches its next
checkpoint (every 100 lines, --checkpoint-every), writes its note line and ends,
well before the history would have overflowed. An alarm is advice; stopping a
run discards the work since its last checkpoint."
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

    /// The demo solver looks for the stop file only at its checkpoints, every
    /// this many lines (as solvers poll every N steps and write a restart first);
    /// 1 looks before every line.
    #[arg(
        long,
        value_name = "LINES",
        default_value_t = crate::demo::live::DEFAULT_CHECKPOINT_EVERY_LINES,
        value_parser = clap::value_parser!(u64).range(1..)
    )]
    pub checkpoint_every: u64,
}
