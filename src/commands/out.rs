//! Writing a command's answer on stdout, where a closed pipe (`| head`) is
//! not an error.

use std::io::Write;

use anyhow::Context;

/// Print text on stdout; a closed pipe is not an error.
pub fn print(text: &str) -> anyhow::Result<()> {
    write_stdout(text.as_bytes())
}

/// Write to stdout; a closed pipe is not an error.
pub fn write_stdout(bytes: &[u8]) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(e).context("cannot write to stdout"),
    }
}
