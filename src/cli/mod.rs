//! Command-line structures (clap derive). No logic: `settings` validates them,
//! `commands` wires them. One file per subcommand's arguments.

pub mod actions;
pub mod columns;
pub mod demo;
pub mod evaluate;
pub mod fleet;
pub mod follow;
pub mod guard;
pub mod input;
pub mod limits;
pub mod scan;
pub mod shell;
pub mod watch;

use clap::{Parser, Subcommand};

/// Watch transient-simulation histories for numerical instability.
#[derive(Debug, Parser)]
#[command(name = "rhoscope", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Read a finished or crashed history and report its alarms.
    Scan(scan::ScanArgs),
    /// Show the role detected for each column of a history, and why.
    Columns(columns::ColumnsArgs),
    /// Stability limit and spectral radius of an integration scheme at a step.
    Limits(Box<limits::LimitsArgs>),
    /// Follow a growing history headless and act on a critical alarm.
    Guard(guard::GuardArgs),
    /// Live dashboard of a running history, with the guard's actions armed if asked.
    Watch(watch::WatchArgs),
    /// Run an invented simulation that goes unstable, watched and stopped.
    Demo(demo::DemoArgs),
    /// Follow many runs at once, worst first, and publish their state as metrics.
    Fleet(fleet::FleetArgs),
    /// Score the detectors on the labelled demo cases (the same pipeline as scan).
    Evaluate(evaluate::EvaluateArgs),
    /// Write a shell completion script to stdout (bash, zsh, fish, elvish, powershell).
    Completions(shell::CompletionsArgs),
    /// Write the manual page (roff) to stdout.
    Man(shell::ManArgs),
}
