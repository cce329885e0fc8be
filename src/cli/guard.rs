//! Arguments of `rhoscope guard`.

use clap::Args;

/// Arguments of `rhoscope guard`.
#[derive(Debug, Args)]
pub struct GuardArgs {}
