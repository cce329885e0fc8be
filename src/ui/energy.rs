//! Energy panel: the energy terms of the file over time, with the balance error
//! in the title.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};

use crate::app::AppState;
use crate::parse::roles::EnergyTerm;

use super::chart::{self, Series, Spec, legend_name};
use super::format::pct;
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

/// The balance error as the screens give it: the value, the symbol of the
/// energy detector's standing level and the configured warning threshold.
pub fn balance_words(s: &AppState, narrow: bool) -> String {
    let r = &s.readouts;
    let mut w = format!(
        "{} {}",
        pct(r.evidence.balance_error),
        symbol(r.balance_level)
    );
    if !narrow {
        w.push_str(&format!(
            " (warning at ±{:.1} %)",
            100.0 * s.config.balance_warning
        ));
    }
    w
}

/// Chart of the energy terms.
pub fn chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let terms = s.energy_columns();
    let Some(x) = s.x_window() else {
        chart::draw(
            f,
            area,
            Spec::empty(" energy terms ", "waiting for rows"),
            t,
        );
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
    let cols: Vec<usize> = terms.iter().map(|(c, _)| *c).collect();
    let name = match s.shared_unit(&cols) {
        Some(u) => format!(" energy terms [{u}] "),
        None => " energy terms ".to_string(),
    };
    let title = Line::from(vec![
        Span::styled(name, t.title()),
        Span::styled(
            format!("balance error {} ", balance_words(s, area.width < 70)),
            t.level(s.readouts.balance_level),
        ),
    ]);
    let spec = Spec {
        title,
        series,
        x,
        x_time: s.x_is_time(),
        x_labels,
        reference: None,
        empty: "no energy columns recognised",
    };
    chart::draw(f, area, spec, t);
}
