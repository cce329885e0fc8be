//! `rhoscope scan --plot IMAGE`: check the image's path before reading, scan
//! and draw with [`crate::scan::scan_and_render`], and write the image through
//! the one atomic writer.

use std::path::{Path, PathBuf};

use anyhow::{Context, anyhow};

use crate::outfile::{Output, OutputKind, Watched, check_outputs};
use crate::report::ScanReport;
use crate::report_plot::ImageFormat;
use crate::scan::{OnRead, scan_and_render};
use crate::settings::Settings;

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
    on_read: OnRead,
    (image, format): (PathBuf, ImageFormat),
) -> anyhow::Result<ScanReport> {
    let (report, bytes) = scan_and_render(file, settings, on_read, format)?;
    write_replacing(&image, &bytes)?;
    eprintln!("rhoscope: report image written to {}", image.display());
    Ok(report)
}

/// Write `bytes` to `path` through the one hardened atomic writer, so a reader
/// never sees half an image and a link at `path` is refused.
fn write_replacing(path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
    crate::outfile::write_atomic(path, bytes)
        .with_context(|| format!("--plot '{}'", path.display()))
}
