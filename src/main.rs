//! Entry point: parse the command line and dispatch; the library does the work.

fn main() {
    std::process::exit(rhoscope::commands::run_from_env());
}
