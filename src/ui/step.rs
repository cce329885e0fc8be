//! Time-step panel: the solver's step size over time, its latest value and its
//! trend across the shown window (a collapsing step means distorting elements).

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};

use crate::app::AppState;
use crate::finding::Level;
use crate::history::trend::relative_change_per_unit;
use crate::parse::roles::Role;

use super::chart::{self, Series, Spec, legend_name};
use super::format::{num, pct};
use super::theme::Theme;

/// Fall of the step across the window that is marked as a warning (fraction).
const FALLING_FAST: f64 = -0.5;

/// Trend of the step across the window: relative change from its left edge to
/// its right edge, from a least-squares fit of ln dt to the points drawn (the
/// window's extremes per column of the chart, so the cost does not grow with
/// the rows).
pub fn trend_across(points: &[(f64, f64)], x: (f64, f64)) -> Option<f64> {
    let per_unit = relative_change_per_unit(points.iter().copied())?;
    let span = x.1 - x.0;
    Some(((1.0 + per_unit).ln() * span).exp_m1())
}

/// Chart of the time step.
pub fn chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let (Some(col), Some(x)) = (s.col(Role::StepSize), s.x_window()) else {
        let msg = if s.table.x_range().is_none() {
            "waiting for rows"
        } else {
            "no time-step column recognised"
        };
        chart::draw(f, area, Spec::empty(" time step ", msg), t);
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let points = s.table.points(col, x.0, x.1, width);
    let trend = trend_across(&points, x);
    let (arrow, lvl) = match trend {
        Some(r) if r <= FALLING_FAST => ("↓ falling fast ▲", Level::Warning),
        Some(r) if r < -0.01 => ("↘ falling", Level::Ok),
        Some(r) if r > 0.01 => ("↗ rising", Level::Ok),
        Some(_) => ("→ steady", Level::Ok),
        None => ("", Level::Ok),
    };
    let title = Line::from(vec![
        Span::styled(" time step ", t.title()),
        Span::raw(format!(
            "{} {} ",
            num(s.table.last(col), 3),
            s.column_unit(col).unwrap_or("s")
        )),
        Span::styled(
            format!(
                "trend {} {arrow} ",
                trend.map(|r| pct(Some(r))).unwrap_or("—".into())
            ),
            t.level(lvl),
        ),
    ]);
    let spec = Spec {
        title,
        series: vec![Series {
            name: legend_name("dt", s.column_name(col), area.width >= 100),
            points,
            style: t.series(2),
        }],
        x,
        x_time: s.x_is_time(),
        x_labels,
        reference: None,
        empty: "no finite time step yet",
    };
    chart::draw(f, area, spec, t);
}

/// Chart of the probe signal chosen with Tab.
pub fn probe_chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let (Some(col), Some(x)) = (s.shown_probe(), s.x_window()) else {
        chart::draw(f, area, Spec::empty(" probe ", "no probe columns"), t);
        return;
    };
    let n = s.probe_columns().len();
    let k = s.view.probe % n.max(1) + 1;
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let spec = Spec {
        title: Line::from(vec![
            Span::styled(
                match s.column_unit(col) {
                    Some(u) => format!(" probe {k}/{n}: {} [{u}] ", s.column_name(col)),
                    None => format!(" probe {k}/{n}: {} ", s.column_name(col)),
                },
                t.title(),
            ),
            Span::styled("(Tab: next) ", t.dim()),
        ]),
        series: vec![Series {
            name: s.column_name(col).to_string(),
            points: s.table.points(col, x.0, x.1, width),
            style: t.series(3),
        }],
        x,
        x_time: s.x_is_time(),
        x_labels,
        reference: None,
        empty: "no finite values in the window",
    };
    chart::draw(f, area, spec, t);
}
