//! The scan of a finished or crashed history: one pass of the file through
//! the pipeline into a [`ScanReport`] ([`scan_file`]), optionally gathering
//! the report image's data on the way and drawing it ([`scan_and_render`]).
//! No terminal here: progress is a callback given the bytes read.

use std::path::Path;

use anyhow::bail;

use crate::finding::Level;
use crate::pipeline::Pipeline;
use crate::pipeline::drive::{FILE_SLICE_BYTES, drive_file};
use crate::report::{ReportBuilder, ScanReport};
use crate::report_plot::{ImageFormat, PlotCollector, Tee, render};
use crate::settings::Settings;

/// How many times over the file the detectors' status is sampled for the
/// image's growth and balance panels (more than the plot is wide).
const STATUS_SAMPLES: u64 = 4000;
/// Bounds on the bytes fed between two samples.
const SLICE_BYTES: (u64, u64) = (256, 1 << 20);

/// Called with (bytes read, file size) as the reading goes on.
pub type OnRead<'a> = &'a mut dyn FnMut(u64, u64);

/// Scan the history at `path` into a report. A file that cannot be opened, or
/// holds no data row, is an error naming the file.
pub fn scan_file(path: &Path, settings: &Settings, on_read: OnRead) -> anyhow::Result<ScanReport> {
    scan_with(path, settings, on_read, None)
}

/// [`scan_file`], also gathering the report image's data into `plot` when
/// given (the detectors' status is sampled every `plot.1` bytes).
fn scan_with(
    path: &Path,
    settings: &Settings,
    on_read: OnRead,
    plot: Option<(&mut PlotCollector, usize)>,
) -> anyhow::Result<ScanReport> {
    let mut pipeline = Pipeline::new(settings);
    let mut builder = ReportBuilder::default();
    let bytes = match plot {
        None => drive_file(path, &mut pipeline, &mut builder, FILE_SLICE_BYTES, on_read)?,
        Some((plot, slice_bytes)) => {
            let mut tee = Tee {
                report: &mut builder,
                plot,
            };
            drive_file(path, &mut pipeline, &mut tee, slice_bytes, on_read)?
        }
    };
    if pipeline.rows() == 0 {
        bail!("{}: {}", path.display(), pipeline.no_data_reason(bytes));
    }
    let file = path.display().to_string();
    Ok(builder.finish(&file, pipeline.rows(), pipeline.skipped(), pipeline.lines()))
}

/// Scan `path` in one pass and draw its report image in `format`.
pub fn scan_and_render(
    path: &Path,
    settings: &Settings,
    on_read: OnRead,
    format: ImageFormat,
) -> anyhow::Result<(ScanReport, Vec<u8>)> {
    let size = std::fs::metadata(path).map(|m| m.len()).unwrap_or(0);
    let slice = (size / STATUS_SAMPLES).clamp(SLICE_BYTES.0, SLICE_BYTES.1) as usize;
    let mut collector = PlotCollector::new();
    let report = scan_with(path, settings, on_read, Some((&mut collector, slice)))?;
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
