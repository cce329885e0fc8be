//! `rhoscope watch`: wiring only.

use crate::cli::watch::WatchArgs;

/// Run `rhoscope watch`; returns the exit code.
pub fn run(_args: WatchArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'watch' is not built yet")
}
