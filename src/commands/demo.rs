//! `rhoscope demo`: wiring only.

use crate::cli::demo::DemoArgs;

/// Run `rhoscope demo`; returns the exit code.
pub fn run(_args: DemoArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'demo' is not built yet")
}
