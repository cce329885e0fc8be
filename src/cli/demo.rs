//! Arguments of `rhoscope demo`.

use clap::Args;

/// Arguments of `rhoscope demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {}
