//! Arguments shared by every command that reads a history: the file's layout,
//! role and sign overrides, and the configuration file.

use std::path::PathBuf;

use clap::{Args, ValueEnum};

use crate::parse::Delimiter;
use crate::settings::ReadSpec;

/// How to read the history file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DelimiterArg {
    Comma,
    Semicolon,
    Tab,
    Whitespace,
}

/// Options for reading a history file.
#[derive(Debug, Clone, Default, Args)]
pub struct InputArgs {
    /// Configuration file (TOML). Without it, `rhoscope.toml` beside the history
    /// is read if present (but never its [actions]).
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// Do not read `rhoscope.toml` beside the history.
    #[arg(long)]
    pub no_config: bool,
    /// Field delimiter (default: guessed from the first lines).
    #[arg(long, value_enum, value_name = "KIND")]
    pub delimiter: Option<DelimiterArg>,
    /// Read the file as JSON Lines (one object per line).
    #[arg(long, conflicts_with_all = ["delimiter", "pattern"])]
    pub jsonl: bool,
    /// Read free-form log lines with this regex; each named group is a column,
    /// e.g. 'step (?P<step>\d+) t=(?P<time>\S+)'.
    #[arg(long, value_name = "REGEX", conflicts_with = "delimiter")]
    pub pattern: Option<String>,
    /// The solver's integration scheme, as `rhoscope limits` names it (e.g.
    /// central-difference, newmark:beta=0.25,gamma=0.5, hht:alpha=-0.1): the
    /// stability margin is then reported for what the history shows.
    #[arg(long, value_name = "SCHEME")]
    pub scheme: Option<String>,
    /// The solver's time step, in the time column's units, for a file that writes
    /// time but no step counter or step size (many recorders): the output stride
    /// is then the time per row ÷ DT, and growth is read per solver step. It comes
    /// before a step size the file declares (`timestep 0.005`).
    #[arg(long, value_name = "DT")]
    pub step_size: Option<f64>,
    /// Give a column a role, e.g. --role 'E_hg=artificial' (repeatable).
    #[arg(long = "role", value_name = "COLUMN=ROLE")]
    pub roles: Vec<String>,
    /// Sign with which an energy term enters the balance, e.g. --sign external_work=-1.
    #[arg(long = "sign", value_name = "TERM=SIGN")]
    pub signs: Vec<String>,
}

impl InputArgs {
    /// How these flags ask for the history to be read.
    pub fn read_spec(&self) -> ReadSpec {
        ReadSpec {
            config: self.config.clone(),
            no_config: self.no_config,
            delimiter: self.delimiter.map(|d| match d {
                DelimiterArg::Comma => Delimiter::Byte(b','),
                DelimiterArg::Semicolon => Delimiter::Byte(b';'),
                DelimiterArg::Tab => Delimiter::Byte(b'\t'),
                DelimiterArg::Whitespace => Delimiter::Whitespace,
            }),
            jsonl: self.jsonl,
            pattern: self.pattern.clone(),
            scheme: self.scheme.clone(),
            step_size: self.step_size,
            roles: self.roles.clone(),
            signs: self.signs.clone(),
        }
    }
}
