//! `rhoscope scan`: wiring only.

use crate::cli::scan::ScanArgs;

/// Run `rhoscope scan`; returns the exit code.
pub fn run(_args: ScanArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'scan' is not built yet")
}
