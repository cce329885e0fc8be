//! `rhoscope guard`: wiring only.

use crate::cli::guard::GuardArgs;

/// Run `rhoscope guard`; returns the exit code.
pub fn run(_args: GuardArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'guard' is not built yet")
}
