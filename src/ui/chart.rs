//! A line chart of already downsampled series over the shared x window, with an
//! optional horizontal reference line (ρ = 1, zero balance error). Panels build
//! their series; this draws them.

use ratatui::Frame;
use ratatui::layout::{Alignment, Rect};
use ratatui::style::Style;
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::{
    Axis, Block, Borders, Chart, Dataset, GraphType, LegendPosition, Paragraph,
};

use super::format::{axis_labels, num};
use super::theme::Theme;

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
    /// Label of the x axis (`t [s]`, `line`); shown only when `x_labels` is set.
    pub x_name: &'a str,
    pub x_labels: bool,
    /// A horizontal line always kept in view, with its legend name.
    pub reference: Option<(f64, &'a str)>,
    /// Text shown instead of an empty plot.
    pub empty: &'a str,
}

/// y range of the points and the reference, padded by 5 %.
fn y_bounds(series: &[Series], reference: Option<f64>) -> Option<(f64, f64)> {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for (_, y) in series.iter().flat_map(|s| s.points.iter()) {
        lo = lo.min(*y);
        hi = hi.max(*y);
    }
    if lo > hi {
        return None;
    }
    if let Some(r) = reference {
        lo = lo.min(r);
        hi = hi.max(r);
    }
    let pad = if hi > lo {
        0.05 * (hi - lo)
    } else {
        0.01 * hi.abs().max(1e-300)
    };
    Some((lo - pad, hi + pad))
}

/// Draw a chart in `area` (bordered, titled).
pub fn draw(f: &mut Frame, area: Rect, spec: Spec, theme: &Theme) {
    let block = Block::default()
        .borders(Borders::ALL)
        .border_style(theme.border())
        .title(spec.title);
    let Some((ylo, yhi)) = y_bounds(&spec.series, spec.reference.map(|r| r.0)) else {
        f.render_widget(
            Paragraph::new(Span::styled(spec.empty, theme.dim()))
                .alignment(Alignment::Center)
                .block(block),
            area,
        );
        return;
    };
    let reference_pts: Vec<(f64, f64)> = spec
        .reference
        .map(|(y, _)| vec![(spec.x.0, y), (spec.x.1, y)])
        .unwrap_or_default();
    let mut sets: Vec<Dataset> = Vec::new();
    if let Some((_, name)) = spec.reference {
        sets.push(
            Dataset::default()
                .name(name.to_string())
                .marker(Marker::Braille)
                .graph_type(GraphType::Line)
                .style(theme.reference())
                .data(&reference_pts),
        );
    }
    for s in &spec.series {
        sets.push(
            Dataset::default()
                .name(s.name.clone())
                .marker(Marker::Braille)
                .graph_type(GraphType::Line)
                .style(s.style)
                .data(&s.points),
        );
    }
    let x_axis = if spec.x_labels {
        Axis::default()
            .bounds([spec.x.0, spec.x.1])
            .style(theme.dim())
            .title(Span::styled(spec.x_name.to_string(), theme.dim()))
            .labels([
                Span::raw(num(Some(spec.x.0), 4)),
                Span::raw(num(Some(spec.x.1), 4)),
            ])
    } else {
        Axis::default().bounds([spec.x.0, spec.x.1])
    };
    let y_axis = Axis::default()
        .bounds([ylo, yhi])
        .style(theme.dim())
        .labels(axis_labels(ylo, yhi).map(Span::raw));
    let legend = (area.height >= 8 && area.width >= 50).then_some(LegendPosition::TopLeft);
    let chart = Chart::new(sets)
        .block(block)
        .x_axis(x_axis)
        .y_axis(y_axis)
        .legend_position(legend);
    f.render_widget(chart, area);
}
