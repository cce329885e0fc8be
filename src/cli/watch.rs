//! Arguments of `rhoscope watch`.

use clap::Args;

/// Arguments of `rhoscope watch`.
#[derive(Debug, Args)]
pub struct WatchArgs {}
