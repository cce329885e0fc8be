//! `rhoscope scan`: wiring only. Loads the settings, scans the file with
//! [`crate::scan`] (with a progress bar on a terminal, and the report image
//! when `--plot` asks for one) and prints the report as text or JSON; the
//! exit code is the status.

use std::io::IsTerminal;
use std::path::Path;

use anyhow::Context;

use crate::cli::scan::ScanArgs;
use crate::settings::Settings;

use super::out::write_stdout;

/// Files at least this large get a progress bar (when stderr is a terminal).
const PROGRESS_MIN_BYTES: u64 = 64 << 20;

/// Run `rhoscope scan`; returns the exit code.
pub fn run(args: ScanArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input.read_spec(), &args.file)?;
    for note in &settings.notes {
        eprintln!("rhoscope: {note}");
    }
    let plot = match &args.plot {
        Some(p) => Some(super::scan_plot::target(&args.file, p)?),
        None => None,
    };
    let bar = progress_bar(&args.file, std::io::stderr().is_terminal());
    let mut on_read = |read: u64, _size: u64| {
        if let Some(b) = &bar {
            b.set_position(read);
        }
    };
    let scanned = match plot {
        None => crate::scan::scan_file(&args.file, &settings, &mut on_read),
        Some(target) => {
            super::scan_plot::scan_and_draw(&args.file, &settings, &mut on_read, target)
        }
    };
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    let mut report = scanned?;
    for note in &report.notes {
        eprintln!("rhoscope: {note}");
    }
    report.config = settings
        .config_file
        .as_ref()
        .map(|p| p.display().to_string());
    report.notes.splice(0..0, settings.notes.iter().cloned());
    let mut text = if args.json {
        serde_json::to_vec(&report).context("cannot write the report")?
    } else {
        report.to_text().into_bytes()
    };
    if args.json {
        text.push(b'\n');
    }
    write_stdout(&text)?;
    Ok(report.exit_code())
}

/// A progress bar on stderr for files of at least [`PROGRESS_MIN_BYTES`].
fn progress_bar(path: &Path, show: bool) -> Option<indicatif::ProgressBar> {
    let size = std::fs::metadata(path).map(|m| m.len()).unwrap_or(0);
    (show && size >= PROGRESS_MIN_BYTES).then(|| {
        let bar = indicatif::ProgressBar::with_draw_target(
            Some(size),
            indicatif::ProgressDrawTarget::stderr(),
        );
        if let Ok(style) = indicatif::ProgressStyle::with_template(
            "{bar:40} {bytes}/{total_bytes} {binary_bytes_per_sec} eta {eta}",
        ) {
            bar.set_style(style);
        }
        bar
    })
}
