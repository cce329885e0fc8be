//! Arguments of `rhoscope completions` and `rhoscope man`.

use clap::{Args, ValueEnum};

/// A shell `rhoscope completions` writes a script for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Shell {
    Bash,
    Zsh,
    Fish,
    Elvish,
    Powershell,
}

/// Arguments of `rhoscope completions`.
#[derive(Debug, Args)]
#[command(after_help = "Examples:
  rhoscope completions bash > ~/.local/share/bash-completion/completions/rhoscope
  rhoscope completions zsh > ~/.zfunc/_rhoscope      # with fpath+=(~/.zfunc) before compinit
  rhoscope completions fish > ~/.config/fish/completions/rhoscope.fish")]
pub struct CompletionsArgs {
    /// The shell to write the completion script for.
    #[arg(value_enum)]
    pub shell: Shell,
}

/// Arguments of `rhoscope man`.
#[derive(Debug, Args)]
#[command(after_help = "Examples:
  rhoscope man > ~/.local/share/man/man1/rhoscope.1 && man rhoscope
  rhoscope man | man -l -")]
pub struct ManArgs {}
