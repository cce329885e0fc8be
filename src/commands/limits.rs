//! `rhoscope limits`: wiring only.

use crate::cli::limits::LimitsArgs;

/// Run `rhoscope limits`; returns the exit code.
pub fn run(_args: LimitsArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'limits' is not built yet")
}
