//! [`ReadSpec`]: how the user asked for a history to be read — which
//! configuration file, which layout, scheme, roles and signs — as plain data.
//! The command line builds one (`cli::input`); so can a test or another
//! front end. [`Settings::load`](super::Settings::load) validates it.

use std::path::PathBuf;

use crate::parse::Delimiter;

/// How to read a history, as asked; see the module documentation.
#[derive(Debug, Clone, Default)]
pub struct ReadSpec {
    /// The configuration file named by the user; its `[actions]` are taken.
    pub config: Option<PathBuf>,
    /// Do not read `rhoscope.toml` beside the history.
    pub no_config: bool,
    /// The field delimiter, when not guessed.
    pub delimiter: Option<Delimiter>,
    /// Read the file as JSON Lines.
    pub jsonl: bool,
    /// Read free-form lines with this regex (named groups are columns).
    pub pattern: Option<String>,
    /// The solver's scheme as `rhoscope limits` names it.
    pub scheme: Option<String>,
    /// The solver's time step, in the time column's units (before a step the
    /// file declares).
    pub step_size: Option<f64>,
    /// Role overrides as written, `COLUMN=ROLE`.
    pub roles: Vec<String>,
    /// Energy signs as written, `TERM=SIGN`.
    pub signs: Vec<String>,
}
