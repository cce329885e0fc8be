//! Wiring of each subcommand: argument structs in, exit code out. No domain logic.

pub mod columns;
pub mod demo;
pub mod demo_dashboard;
pub mod evaluate;
pub mod fleet;
pub mod guard;
pub mod limits;
mod out;
pub mod scan;
pub mod scan_plot;
pub mod shell;
pub mod watch;
pub mod watch_fleet;

use clap::Parser;

use crate::cli::{Cli, Command};

/// Exit code for usage errors and unreadable input (monitoring-plugin convention: unknown).
pub const EXIT_UNKNOWN: i32 = 3;

/// Parse the process arguments and run; returns the exit code.
pub fn run_from_env() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let code = if e.use_stderr() { EXIT_UNKNOWN } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    let result = match cli.command {
        Command::Scan(a) => scan::run(a),
        Command::Columns(a) => columns::run(a),
        Command::Limits(a) => limits::run(*a),
        Command::Guard(a) => guard::run(a),
        Command::Watch(a) if watch_fleet::is_fleet(&a) => watch_fleet::run(a),
        Command::Watch(a) => watch::run(a),
        Command::Demo(a) => demo::run(a),
        Command::Fleet(a) => fleet::run(a),
        Command::Evaluate(a) => evaluate::run(a),
        Command::Completions(a) => shell::completions(a),
        Command::Man(a) => shell::man(a),
    };
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("rhoscope: {e:#}");
            EXIT_UNKNOWN
        }
    }
}
