//! Report image of one history: a page with a title block (file, verdict, key
//! figures) and panels on one aligned x axis — energies, energy-balance error,
//! time step, growth per step with ρ = 1 marked, and a few probes — with the
//! alarms, the estimated onset, restarts and the first non-finite value drawn
//! as labelled vertical markers. Greys and dash patterns only, so it reads in
//! greyscale print.
//!
//! [`PlotCollector`] gathers the data as a [`crate::pipeline::sink::Sink`]
//! (one [`crate::envelope::Envelope`] per series, bounded memory); [`render_svg`] and [`render_png`] turn
//! a [`PlotData`] into bytes. No files here: the caller writes the bytes.

pub mod collect;
mod draw;

use std::path::Path;

pub use collect::{PlotCollector, Tee};

/// Page size in pixels (width, height).
pub const PAGE_PX: (u32, u32) = (1200, 1560);

/// What kind of event a vertical marker shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MarkerKind {
    /// A warning alarm was raised.
    Warning,
    /// A critical alarm was raised.
    Critical,
    /// The growing mode's estimated start.
    Onset,
    /// The first non-finite value in a row.
    Crash,
    /// A restart: new header, rewound time or replaced file.
    Restart,
}

/// A labelled vertical line at `x`.
#[derive(Debug, Clone, PartialEq)]
pub struct Marker {
    /// What happened.
    pub kind: MarkerKind,
    /// Position on the x axis (time, or line when there is no time column).
    pub x: f64,
    /// Line in the file.
    pub line: u64,
    /// Short label drawn beside the line.
    pub label: String,
}

/// One line of a panel: already downsampled (x, y) points.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Column or quantity name.
    pub name: String,
    /// Unit from the header, if any.
    pub unit: Option<String>,
    /// Points in drawing order.
    pub points: Vec<(f64, f64)>,
}

/// The title block.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TitleBlock {
    /// The history file as given.
    pub file: String,
    /// The verdict: `ok`, `warning` or `critical`.
    pub verdict: String,
    /// Key figures as (label, value) pairs, e.g. ("growth per step", "1.0213").
    pub figures: Vec<(String, String)>,
}

/// Everything drawn on the page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PlotData {
    /// File, verdict and key figures.
    pub title: TitleBlock,
    /// Label of the shared x axis, with its unit.
    pub x_label: String,
    /// Energy columns.
    pub energies: Vec<Series>,
    /// Relative energy-balance error (fraction) as estimated by the detectors.
    pub balance: Option<Series>,
    /// Time step (or output interval, when no step is written).
    pub step: Option<Series>,
    /// Growth per solver step as estimated by the detectors.
    pub growth: Option<Series>,
    /// Probe columns.
    pub probes: Vec<Series>,
    /// Alarms, onset, restarts, first non-finite value.
    pub markers: Vec<Marker>,
}

/// Image format, chosen by the file extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImageFormat {
    /// Scalable vector graphics.
    Svg,
    /// Portable network graphics.
    Png,
}

impl ImageFormat {
    /// The format for `path` from its extension (`.svg` or `.png`, any case).
    pub fn from_path(path: &Path) -> Option<ImageFormat> {
        let ext = path.extension()?.to_str()?.to_ascii_lowercase();
        match ext.as_str() {
            "svg" => Some(ImageFormat::Svg),
            "png" => Some(ImageFormat::Png),
            _ => None,
        }
    }
}

/// Drawing failed.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// The plotting backend reported an error.
    #[error("drawing the report image failed: {0}")]
    Draw(String),
    /// PNG encoding failed.
    #[error("encoding the PNG failed: {0}")]
    Encode(String),
}

/// The page as an SVG document.
pub fn render_svg(data: &PlotData) -> Result<String, PlotError> {
    draw::svg(data, PAGE_PX)
}

/// The page as PNG bytes.
pub fn render_png(data: &PlotData) -> Result<Vec<u8>, PlotError> {
    draw::png(data, PAGE_PX)
}

/// The page in `format`, as bytes.
pub fn render(data: &PlotData, format: ImageFormat) -> Result<Vec<u8>, PlotError> {
    match format {
        ImageFormat::Svg => render_svg(data).map(String::into_bytes),
        ImageFormat::Png => render_png(data),
    }
}
