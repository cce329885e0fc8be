//! `rhoscope scan`: read a finished or crashed history through the pipeline and
//! print the report (text, or JSON for scripts); the exit code is the status.

use std::io::{IsTerminal, Write};
use std::path::Path;

use anyhow::{Context, bail};

use crate::cli::scan::ScanArgs;
use crate::pipeline::Pipeline;
use crate::pipeline::drive::{FILE_SLICE_BYTES, drive_file};
use crate::report::{ReportBuilder, ScanReport};
use crate::report_plot::{PlotCollector, Tee};
use crate::settings::Settings;

/// Files at least this large get a progress bar (when stderr is a terminal).
const PROGRESS_MIN_BYTES: u64 = 64 << 20;

/// Run `rhoscope scan`; returns the exit code.
pub fn run(args: ScanArgs) -> anyhow::Result<i32> {
    let settings = Settings::load(&args.input, &args.file)?;
    for note in &settings.notes {
        eprintln!("rhoscope: {note}");
    }
    let plot = match &args.plot {
        Some(p) => Some(super::scan_plot::target(&args.file, p)?),
        None => None,
    };
    let progress = std::io::stderr().is_terminal();
    let mut report = match plot {
        None => scan_path(&args.file, &settings, progress)?,
        Some(target) => super::scan_plot::scan_and_draw(&args.file, &settings, progress, target)?,
    };
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

/// Print text on stdout; a closed pipe (`| head`) is not an error.
pub fn print(text: &str) -> anyhow::Result<()> {
    write_stdout(text.as_bytes())
}

/// Write to stdout; a closed pipe (`| head`) is not an error.
pub fn write_stdout(bytes: &[u8]) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        Err(e) => Err(e).context("cannot write to stdout"),
    }
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

/// Scan the history at `path` into a report. A file that cannot be opened, or
/// holds no data row, is an error (exit 3).
pub fn scan_path(path: &Path, settings: &Settings, progress: bool) -> anyhow::Result<ScanReport> {
    scan_path_with(path, settings, progress, None)
}

/// [`scan_path`], also gathering the report image's data into `plot` when given
/// (the detectors' status is sampled every `plot.1` bytes).
pub fn scan_path_with(
    path: &Path,
    settings: &Settings,
    progress: bool,
    plot: Option<(&mut PlotCollector, usize)>,
) -> anyhow::Result<ScanReport> {
    let mut pipeline = Pipeline::new(settings);
    let mut builder = ReportBuilder::default();
    let bar = progress_bar(path, progress);
    let mut on_read = |read: u64, _size: u64| {
        if let Some(b) = &bar {
            b.set_position(read);
        }
    };
    let bytes = match plot {
        None => drive_file(
            path,
            &mut pipeline,
            &mut builder,
            FILE_SLICE_BYTES,
            &mut on_read,
        )?,
        Some((plot, slice_bytes)) => {
            let mut tee = Tee {
                report: &mut builder,
                plot,
            };
            drive_file(path, &mut pipeline, &mut tee, slice_bytes, &mut on_read)?
        }
    };
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    if pipeline.rows() == 0 {
        let what = if bytes == 0 {
            "the file is empty".to_owned()
        } else if pipeline.schema().columns.is_empty() {
            format!("no header or data row in {} lines", pipeline.lines())
        } else {
            format!("a header but no data row in {} lines", pipeline.lines())
        };
        let skipped = if pipeline.skipped() > 0 {
            format!(" ({} lines skipped as unreadable)", pipeline.skipped())
        } else {
            String::new()
        };
        bail!("{}: no data row: {what}{skipped}", path.display());
    }
    let file = path.display().to_string();
    Ok(builder.finish(&file, pipeline.rows(), pipeline.skipped(), pipeline.lines()))
}
