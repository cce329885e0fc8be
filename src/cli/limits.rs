//! Arguments of `rhoscope limits`.

use clap::Args;

/// Arguments of `rhoscope limits`.
#[derive(Debug, Args)]
pub struct LimitsArgs {}
