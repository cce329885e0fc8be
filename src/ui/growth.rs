//! Growth panels: the growth per step (spectral radius of the fitted one-step
//! map) over time with the stability line ρ = 1, and the readouts a
//! practitioner asks for first — growth rate, dominant mode, onset, the
//! overflow countdown and the stability margin of the declared scheme.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph};

use crate::app::AppState;
use crate::app::state::{D_BALANCE, D_GROWTH};
use crate::finding::Level;

use super::chart::{self, Series, Spec};
use super::format::{count, duration, hz, num, pct};
use super::theme::{Theme, symbol};

use crate::app::state::NEAR_ONE_PER_STEP as NEAR_ONE;

/// Below this a fitted frequency is a real, non-oscillating mode (Hz).
const MONOTONE_HZ: f64 = 1e-9;

/// Chart of the growth per step against the shared x window.
pub fn chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let Some(x) = s.x_window() else {
        chart::draw(
            f,
            area,
            empty_spec(" growth per step ", "waiting for rows"),
            t,
        );
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let points = s.derived.points(D_GROWTH, x.0, x.1, width);
    let now = s.evidence.growth_per_step;
    let lvl = growth_level(now);
    let title = Line::from(vec![
        Span::styled(" growth per step ", t.title()),
        Span::styled(
            format!("ρ {} {} ", num(now, 5), growth_words(now, area.width < 60)),
            t.level(lvl),
        ),
    ]);
    let spec = Spec {
        title,
        series: vec![Series {
            name: "ρ per step".into(),
            points,
            style: t.series(0),
        }],
        x,
        x_name: x_name(s),
        x_labels,
        reference: Some((1.0, "ρ = 1 stability limit")),
        empty: "no estimate yet: the detectors need a window of rows",
    };
    chart::draw(f, area, spec, t);
}

/// Chart of the energy balance error against the shared x window.
pub fn balance_chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let Some(x) = s.x_window() else {
        chart::draw(
            f,
            area,
            empty_spec(" energy balance error ", "waiting for rows"),
            t,
        );
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let points = s.derived.points(D_BALANCE, x.0, x.1, width);
    let spec = Spec {
        title: Line::from(vec![
            Span::styled(" energy balance error ", t.title()),
            Span::raw(format!("{} ", pct(s.evidence.balance_error))),
        ]),
        series: vec![Series {
            name: "(created − lost) / energy scale".into(),
            points,
            style: t.series(1),
        }],
        x,
        x_name: x_name(s),
        x_labels,
        reference: Some((0.0, "balanced")),
        empty: "no energy columns recognised",
    };
    chart::draw(f, area, spec, t);
}

pub(crate) fn empty_spec<'a>(title: &'a str, empty: &'a str) -> Spec<'a> {
    Spec {
        title: Line::from(title),
        series: vec![],
        x: (0.0, 1.0),
        x_name: "",
        x_labels: false,
        reference: None,
        empty,
    }
}

pub(crate) fn x_name(s: &AppState) -> &'static str {
    if s.x_is_time() { "t [s]" } else { "line" }
}

fn growth_level(rho: Option<f64>) -> Level {
    match rho {
        Some(r) if !r.is_finite() => Level::Critical,
        Some(r) if r > 1.0 + NEAR_ONE => Level::Warning,
        _ => Level::Ok,
    }
}

fn near_one(rho: Option<f64>) -> bool {
    rho.is_some_and(|r| (r - 1.0).abs() <= NEAR_ONE)
}

fn growth_words(rho: Option<f64>, short: bool) -> &'static str {
    match rho {
        None => "",
        Some(r) if !r.is_finite() => "✖ not finite",
        _ if near_one(rho) && short => "≈ 1",
        _ if near_one(rho) => "≈ 1: no clear growth",
        Some(r) if r > 1.0 && short => "▲ above 1",
        Some(r) if r > 1.0 => "▲ above 1: growing",
        Some(_) if short => "✔ ≤ 1",
        Some(_) => "✔ at or below 1",
    }
}

/// Within this fraction of the rows' Nyquist frequency a mode is read as one
/// that flips sign from row to row (sampling tolerance, common practice, no source).
const NYQUIST_FRAC: f64 = 0.02;

/// The fitted frequency; a real eigenvalue has none to speak of, and a mode at
/// the Nyquist frequency of the rows (`row_interval_s` apart) flips sign every
/// row — an alias of the step-to-step flip of an explicit scheme past its limit,
/// not a physical frequency.
fn mode_words(f_hz: Option<f64>, row_interval_s: Option<f64>, narrow: bool) -> String {
    let nyquist_hz = row_interval_s
        .filter(|d| *d > 0.0 && d.is_finite())
        .map(|d| 0.5 / d);
    match (f_hz, nyquist_hz) {
        (Some(f), _) if f.abs() < MONOTONE_HZ && narrow => "monotone".into(),
        (Some(f), _) if f.abs() < MONOTONE_HZ => "0 Hz (monotone)".into(),
        (Some(f), Some(n)) if (f.abs() - n).abs() <= NYQUIST_FRAC * n => {
            let tail = if narrow {
                "(flips)"
            } else {
                "(sign flips every row)"
            };
            format!("{} {tail}", hz(f_hz))
        }
        _ => hz(f_hz),
    }
}

/// Mean simulated time between rows, when x is time.
fn row_interval_s(s: &AppState) -> Option<f64> {
    if !s.x_is_time() {
        return None;
    }
    let (lo, hi) = s.table.x_range()?;
    let rows = s.table.rows();
    (rows > 1).then(|| (hi - lo) / (rows - 1) as f64)
}

/// The readouts block: one fact per line, label then value.
pub fn readouts(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let e = &s.evidence;
    let inner_w = usize::from(area.width.saturating_sub(2));
    let label_w = if inner_w >= 44 { 18 } else { 12 };

    let narrow = inner_w < 44;
    let past = if narrow {
        "✖ past limit"
    } else {
        "✖ past the limit"
    };
    let mut rows: Vec<(&str, String, Level)> = Vec::new();
    rows.push((
        if narrow {
            "growth/step"
        } else {
            "growth per step"
        },
        match e.growth_per_step {
            Some(_) if near_one(e.growth_per_step) => {
                format!("ρ {} ≈ 1", num(e.growth_per_step, 5))
            }
            Some(_) => format!(
                "ρ {} {}",
                num(e.growth_per_step, 5),
                symbol(growth_level(e.growth_per_step))
            ),
            None => "— (no estimate yet)".to_string(),
        },
        growth_level(e.growth_per_step),
    ));
    let efold = e
        .growth_rate_per_s
        .filter(|r| *r > 0.0)
        .map(|r| format!(" (e-fold {} s)", num(Some(1.0 / r), 3)))
        .unwrap_or_default();
    rows.push((
        if narrow { "rate" } else { "growth rate" },
        match e.growth_rate_per_s {
            None => "—".to_string(),
            Some(_) => format!(
                "{} /s{}",
                num(e.growth_rate_per_s, 3),
                if narrow { "" } else { &efold }
            ),
        },
        Level::Ok,
    ));
    rows.push((
        if narrow { "mode" } else { "dominant mode" },
        mode_words(e.frequency_hz, row_interval_s(s), narrow),
        Level::Ok,
    ));
    let onset = match (e.onset_line, e.onset_time) {
        (Some(l), Some(tm)) => format!("line {} · t {}", count(l), num(Some(tm), 4)),
        (Some(l), None) => format!("line {}", count(l)),
        (None, Some(tm)) => format!("t {}", num(Some(tm), 4)),
        (None, None) => "—".into(),
    };
    rows.push(("onset", onset, Level::Ok));
    let forecast = match e.forecast_steps {
        None => "—".into(),
        Some(n) => {
            let mut v = format!("{} steps", count(n.max(0.0).round() as u64));
            // Wall-clock seconds only while rows flow: a quiet run is not counting down.
            let quiet = s.quiet_for_s().is_some();
            if let Some(w) = e.forecast_wall_s.filter(|_| !quiet) {
                v.push_str(&format!(" · {}", duration(Some(w))));
            }
            if quiet && !narrow {
                v.push_str(" at the last row");
            }
            if !narrow && let Some(tm) = e.forecast_time {
                v.push_str(&format!(" · t {}", num(Some(tm), 4)));
            }
            v
        }
    };
    let f_lvl = if e.forecast_steps.is_some() {
        Level::Critical
    } else {
        Level::Ok
    };
    rows.push(("overflow in", forecast, f_lvl));
    let (margin, m_lvl) = match e.stability_margin {
        None => (
            if narrow {
                "— (no scheme)"
            } else {
                "— (no scheme declared)"
            }
            .to_string(),
            Level::Ok,
        ),
        Some(m) if m < 0.0 => (format!("{} {past}", pct(Some(m))), Level::Critical),
        Some(m) if m < 0.1 => (format!("{} ▲ close", pct(Some(m))), Level::Warning),
        Some(m) => (format!("{} ✔", pct(Some(m))), Level::Ok),
    };
    rows.push((
        if narrow { "margin" } else { "stability margin" },
        margin,
        m_lvl,
    ));
    let lines: Vec<Line> = rows
        .into_iter()
        .map(|(label, value, lvl)| {
            Line::from(vec![
                Span::styled(format!("{label:<label_w$}"), t.dim()),
                Span::styled(value, t.level(lvl)),
            ])
        })
        .collect();
    let block = Block::default()
        .borders(Borders::ALL)
        .border_style(t.border())
        .title(Span::styled(" growth ", t.title()));
    f.render_widget(Paragraph::new(lines).block(block), area);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn growth_within_a_thousandth_of_one_reads_about_one() {
        assert_eq!(growth_words(Some(1.0004), true), "≈ 1");
        assert_eq!(growth_level(Some(1.0004)), Level::Ok);
        assert_eq!(growth_words(Some(0.9995), false), "≈ 1: no clear growth");
        assert_eq!(growth_words(Some(1.0011), true), "▲ above 1");
        assert_eq!(growth_level(Some(1.0011)), Level::Warning);
        assert_eq!(growth_words(Some(0.99), true), "✔ ≤ 1");
    }

    #[test]
    fn a_real_mode_reads_monotone() {
        assert_eq!(mode_words(Some(0.0), None, false), "0 Hz (monotone)");
        assert_eq!(mode_words(Some(0.0), Some(0.01), true), "monotone");
        assert_eq!(mode_words(Some(34.12), None, true), "34.12 Hz");
        assert_eq!(mode_words(None, Some(0.01), false), "—");
    }

    #[test]
    fn a_mode_at_the_rows_nyquist_frequency_reads_as_flipping() {
        // Rows 5 steps of 2.93 ms apart: Nyquist 1 / (2 · 0.01466 s) = 34.1 Hz.
        let d = 5.0 * 2.932e-3;
        assert_eq!(
            mode_words(Some(34.12), Some(d), false),
            "34.12 Hz (sign flips every row)"
        );
        assert_eq!(mode_words(Some(34.12), Some(d), true), "34.12 Hz (flips)");
        assert_eq!(mode_words(Some(22.53), Some(d), false), "22.53 Hz");
    }
}
