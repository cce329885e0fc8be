//! Energy panel: the energy terms of the file over time, with the balance error
//! in the title.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};

use crate::app::AppState;
use crate::finding::Level;
use crate::parse::roles::EnergyTerm;

use super::chart::{self, Series, Spec, legend_name};
use super::format::pct;
use super::growth::{empty_spec, x_name};
use super::theme::{Theme, symbol};

/// Plain name of an energy term.
pub fn term_name(t: EnergyTerm) -> &'static str {
    match t {
        EnergyTerm::Kinetic => "kinetic",
        EnergyTerm::Internal => "internal",
        EnergyTerm::ExternalWork => "external work",
        EnergyTerm::Dissipated => "dissipated",
        EnergyTerm::Artificial => "artificial",
        EnergyTerm::Total => "total",
    }
}

/// Level of a balance error against the warning threshold (fraction).
pub fn balance_level(err: Option<f64>, warning: f64) -> Level {
    match err {
        Some(e) if !e.is_finite() => Level::Critical,
        Some(e) if e.abs() >= 2.0 * warning => Level::Critical,
        Some(e) if e.abs() >= warning => Level::Warning,
        _ => Level::Ok,
    }
}

/// Balance error above which the panel marks a warning (fraction; the
/// detectors' default threshold).
const BALANCE_WARNING: f64 = 0.05;

/// Chart of the energy terms.
pub fn chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let terms = s.energy_columns();
    let Some(x) = s.x_window() else {
        chart::draw(f, area, empty_spec(" energy terms ", "waiting for rows"), t);
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let series: Vec<Series> = terms
        .iter()
        .enumerate()
        .map(|(n, (col, term))| Series {
            name: legend_name(term_name(*term), s.column_name(*col), area.width >= 100),
            points: s.table.points(*col, x.0, x.1, width),
            style: t.series(n),
        })
        .collect();
    let err = s.evidence.balance_error;
    let lvl = balance_level(err, BALANCE_WARNING);
    let title = Line::from(vec![
        Span::styled(" energy terms ", t.title()),
        Span::styled(
            format!("balance error {} {} ", pct(err), symbol(lvl)),
            t.level(lvl),
        ),
    ]);
    let spec = Spec {
        title,
        series,
        x,
        x_name: x_name(s),
        x_labels,
        reference: None,
        empty: "no energy columns recognised",
    };
    chart::draw(f, area, spec, t);
}
