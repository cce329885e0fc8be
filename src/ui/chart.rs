//! A line chart of already downsampled series over the shared x window, with an
//! optional horizontal reference line (ρ = 1, zero balance error). Panels build
//! their series; this draws them. Every value passes [`crate::scale::fit`]
//! first (finite, clamped, symmetric log where the values span decades), so
//! the chart widget sees only coordinates in the unit square and a frame costs
//! at most [`MAX_SERIES`] series of the points the panel passed (the panels
//! pass at most two per column of the plot). The legend sits on the bottom
//! border; without colour the series differ by marker as well.

use ratatui::Frame;
use ratatui::layout::{Alignment, Rect};
use ratatui::style::Style;
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Axis, Block, Borders, Chart, Dataset, GraphType, Paragraph};

use crate::scale::{Fitted, fit};

use super::format::{axis_labels, count, num, sim_time};
use super::theme::Theme;

/// Most series drawn in one chart; the legend counts the rest.
pub const MAX_SERIES: usize = 8;
/// Values spanning more decades than this go on a symmetric log axis.
pub const DECADES: f64 = 4.0;
/// Plot rows from which a non-linear axis also labels its middle.
const MID_LABEL_ROWS: u16 = 7;

/// One series to draw.
pub struct Series {
    pub name: String,
    pub points: Vec<(f64, f64)>,
    pub style: Style,
}

/// What a chart shows.
pub struct Spec<'a> {
    pub title: Line<'a>,
    pub series: Vec<Series>,
    /// The x window shared by all charts.
    pub x: (f64, f64),
    /// x is simulated time (else line numbers): the axis' end labels read
    /// `t 0.12000 s` or `line 1,234`, shown only when `x_labels` is set.
    pub x_time: bool,
    pub x_labels: bool,
    /// A horizontal line always kept in view, with its legend name.
    pub reference: Option<(f64, &'a str)>,
    /// Text shown instead of an empty plot.
    pub empty: &'a str,
}

impl<'a> Spec<'a> {
    /// A chart with nothing to plot yet: its title and the text shown instead.
    pub fn empty(title: &'a str, empty: &'a str) -> Spec<'a> {
        Spec {
            title: Line::from(title),
            series: vec![],
            x: (0.0, 1.0),
            x_time: false,
            x_labels: false,
            reference: None,
            empty,
        }
    }
}

/// A series' legend name: what it is, and the column it comes from when that
/// says something more and there is room.
pub fn legend_name(what: &str, column: &str, room: bool) -> String {
    if room && !column.eq_ignore_ascii_case(what) {
        format!("{what} ({column})")
    } else {
        what.to_string()
    }
}

/// The series' points taken into the unit square (see [`crate::scale::fit`]),
/// at most [`MAX_SERIES`] of them: the chart data path, on its own for tests.
pub fn fitted(spec: &Spec) -> Option<Fitted> {
    let pts: Vec<&[(f64, f64)]> = spec
        .series
        .iter()
        .take(MAX_SERIES)
        .map(|s| s.points.as_slice())
        .collect();
    fit(&pts, spec.reference.map(|r| r.0), spec.x, DECADES)
}

/// The legend on the bottom border: a glyph per series (its marker without
/// colour) and its name.
fn legend<'a>(spec: &Spec, theme: &Theme) -> Line<'a> {
    let mut spans = vec![Span::raw(" ")];
    if let Some((_, name)) = spec.reference {
        spans.push(Span::styled(format!("── {name} "), theme.reference()));
    }
    for (n, s) in spec.series.iter().take(MAX_SERIES).enumerate() {
        let (_, glyph) = theme.marker(n);
        spans.push(Span::styled(format!("{glyph} {} ", s.name), s.style));
    }
    if spec.series.len() > MAX_SERIES {
        spans.push(Span::styled(
            format!("+{} more not drawn ", spec.series.len() - MAX_SERIES),
            theme.dim(),
        ));
    }
    Line::from(spans)
}

/// An end label of the x axis: a simulated time as every screen writes it,
/// or a line number.
fn x_label(x: f64, time: bool) -> String {
    if time {
        sim_time(x)
    } else if (0.0..1e15).contains(&x) {
        format!("line {}", count(x.round() as u64))
    } else {
        format!("line {}", num(Some(x), 4))
    }
}

/// Draw a chart in `area` (bordered, titled, legend on the bottom border).
pub fn draw(f: &mut Frame, area: Rect, spec: Spec, theme: &Theme) {
    let Some(fitted) = fitted(&spec) else {
        let block = Block::default()
            .borders(Borders::ALL)
            .border_style(theme.border())
            .title(spec.title);
        f.render_widget(
            Paragraph::new(Span::styled(spec.empty, theme.dim()))
                .alignment(Alignment::Center)
                .block(block),
            area,
        );
        return;
    };
    let mut title = spec.title.clone();
    if let Some(w) = fitted.scale.word() {
        title
            .spans
            .push(Span::styled(format!("· {w} axis "), theme.dim()));
    }
    let block = Block::default()
        .borders(Borders::ALL)
        .border_style(theme.border())
        .title(title)
        .title_bottom(legend(&spec, theme));
    let reference_pts: Vec<(f64, f64)> = fitted
        .reference
        .map(|y| vec![(0.0, y), (1.0, y)])
        .unwrap_or_default();
    let mut sets: Vec<Dataset> = Vec::new();
    if !reference_pts.is_empty() {
        sets.push(
            Dataset::default()
                .marker(Marker::Braille)
                .graph_type(GraphType::Line)
                .style(theme.reference())
                .data(&reference_pts),
        );
    }
    for (n, (s, pts)) in spec.series.iter().zip(&fitted.series).enumerate() {
        let (marker, _) = theme.marker(n);
        sets.push(
            Dataset::default()
                .marker(marker)
                .graph_type(GraphType::Line)
                .style(s.style)
                .data(pts),
        );
    }
    let x_axis = if spec.x_labels {
        Axis::default()
            .bounds([0.0, 1.0])
            .style(theme.dim())
            .labels([
                Span::raw(x_label(spec.x.0, spec.x_time)),
                Span::raw(x_label(spec.x.1, spec.x_time)),
            ])
    } else {
        Axis::default().bounds([0.0, 1.0])
    };
    let [lo, mid, hi] = fitted.y_labels;
    let [lo_s, hi_s] = axis_labels(lo, hi);
    let plot_rows = area.height.saturating_sub(2 + u16::from(spec.x_labels) * 2);
    let labels: Vec<Span> = if fitted.scale.word().is_some() && plot_rows >= MID_LABEL_ROWS {
        vec![
            Span::raw(lo_s),
            Span::raw(num(Some(mid), 2)),
            Span::raw(hi_s),
        ]
    } else {
        vec![Span::raw(lo_s), Span::raw(hi_s)]
    };
    let y_axis = Axis::default()
        .bounds([0.0, 1.0])
        .style(theme.dim())
        .labels(labels);
    let chart = Chart::new(sets)
        .block(block)
        .x_axis(x_axis)
        .y_axis(y_axis)
        .legend_position(None);
    f.render_widget(chart, area);
}
