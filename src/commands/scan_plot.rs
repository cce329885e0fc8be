//! `rhoscope scan --plot IMAGE`: gather the report image's data during the one
//! pass of the scan, draw it with [`crate::report_plot`], and write the file.

use std::path::{Path, PathBuf};

use anyhow::{Context, anyhow};

use crate::finding::Level;
use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::report::ScanReport;
use crate::report_plot::{ImageFormat, PlotCollector, render};
use crate::settings::Settings;

use super::scan::scan_path_with;

/// How many times over the file the detectors' status is sampled for the
/// growth and balance panels (more than the plot is wide).
const STATUS_SAMPLES: u64 = 4000;
/// Bounds on the bytes fed between two samples.
const SLICE_BYTES: (u64, u64) = (256, 1 << 20);

/// Check the image path before reading anything: its extension picks the
/// format, and it must not be the history itself.
pub fn target(history: &Path, path: &Path) -> anyhow::Result<(PathBuf, ImageFormat)> {
    let watched = Watched {
        files: &[history],
        patterns: &[],
    };
    check_outputs(
        &watched,
        &[Output {
            flag: "--plot",
            path,
            kind: OutputKind::Replaced,
        }],
    )?;
    let format = ImageFormat::from_path(path).ok_or_else(|| {
        anyhow!(
            "--plot '{}': the image name must end in .svg or .png",
            path.display()
        )
    })?;
    Ok((path.to_path_buf(), format))
}

/// Scan `file` and write the report image to `target`; returns the report.
pub fn scan_and_draw(
    file: &Path,
    settings: &Settings,
    progress: bool,
    (image, format): (PathBuf, ImageFormat),
) -> anyhow::Result<ScanReport> {
    let (report, bytes) = scan_and_render(file, settings, progress, format)?;
    write_replacing(&image, &bytes)?;
    eprintln!("rhoscope: report image written to {}", image.display());
    Ok(report)
}

/// Scan `file` in one pass and draw its report image in `format`.
pub fn scan_and_render(
    file: &Path,
    settings: &Settings,
    progress: bool,
    format: ImageFormat,
) -> anyhow::Result<(ScanReport, Vec<u8>)> {
    let size = std::fs::metadata(file).map(|m| m.len()).unwrap_or(0);
    let slice = (size / STATUS_SAMPLES).clamp(SLICE_BYTES.0, SLICE_BYTES.1) as usize;
    let mut collector = PlotCollector::new();
    let report = scan_path_with(file, settings, progress, Some((&mut collector, slice)))?;
    let verdict = report.status.code();
    let critical = report
        .alarms
        .iter()
        .filter(|a| a.level == Level::Critical)
        .count();
    let figures = vec![
        ("rows".to_string(), report.rows.to_string()),
        (
            "alarms".to_string(),
            format!("{} ({critical} critical)", report.alarms.len()),
        ),
    ];
    let data = collector.finish(&report.file, verdict, figures);
    let bytes = render(&data, format)?;
    Ok((report, bytes))
}

/// Write `bytes` to `path` through the one hardened atomic writer, so a reader
/// never sees half an image and a link at `path` is refused.
fn write_replacing(path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
    crate::outfile::write_atomic(path, bytes)
        .with_context(|| format!("--plot '{}'", path.display()))
}
