//! `rhoscope columns`: wiring only.

use crate::cli::columns::ColumnsArgs;

/// Run `rhoscope columns`; returns the exit code.
pub fn run(_args: ColumnsArgs) -> anyhow::Result<i32> {
    anyhow::bail!("'columns' is not built yet")
}
