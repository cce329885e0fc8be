//! Arguments of `rhoscope columns`.

use clap::Args;

/// Arguments of `rhoscope columns`.
#[derive(Debug, Args)]
pub struct ColumnsArgs {}
