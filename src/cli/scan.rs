//! Arguments of `rhoscope scan`.

use clap::Args;

/// Arguments of `rhoscope scan`.
#[derive(Debug, Args)]
pub struct ScanArgs {}
