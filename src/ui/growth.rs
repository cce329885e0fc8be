//! Growth panels: the growth per step (spectral radius of the fitted one-step
//! map) over time with the stability line ρ = 1, and the readouts a
//! practitioner asks for first — growth rate, dominant mode, onset, the
//! overflow countdown and the stability margin of the declared scheme.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph};

use ratatui::style::Style;

use crate::app::AppState;
use crate::app::state::{D_BALANCE, D_GROWTH, D_GROWTH_APPROX};
use crate::finding::Level;
use crate::parse::roles::Role;
use crate::readout::{Readouts, Standing};
use crate::schemes::remedy::at_nyquist;

use super::chart::{self, Series, Spec};
use super::energy::balance_words;
use super::format::{count, duration, hz, num, pct, sim_time};
use super::theme::{Theme, symbol};

/// Below this a fitted frequency is a real, non-oscillating mode (Hz).
const MONOTONE_HZ: f64 = 1e-9;

/// The growth reading in words, the level it is drawn at, and whether it is
/// only approximate (drawn dimmed): the standing decided in [`crate::readout`].
pub fn growth_words(r: &Readouts, narrow: bool) -> (String, Level, bool) {
    let rho = r.growth_per_step();
    match r.growth {
        Standing::NoEstimate => (
            if narrow { "—" } else { "— no estimate yet" }.into(),
            Level::Ok,
            true,
        ),
        Standing::NotConfirmed => (
            if narrow {
                "— none confirmed"
            } else {
                "— no growing mode confirmed"
            }
            .into(),
            Level::Ok,
            true,
        ),
        Standing::Approximate => (
            if narrow {
                format!("ρ ≈ {}", num(rho, 4))
            } else {
                format!("ρ ≈ {} latest fit, no growing mode", num(rho, 5))
            },
            Level::Ok,
            true,
        ),
        Standing::Confirmed if r.growth_level == Level::Ok => (
            if narrow {
                format!("ρ {} no alarm", num(rho, 5))
            } else {
                format!("ρ {} growing mode, no alarm", num(rho, 5))
            },
            Level::Ok,
            false,
        ),
        Standing::Confirmed => (
            format!("ρ {} {} growing", num(rho, 5), symbol(r.growth_level)),
            r.growth_level,
            false,
        ),
    }
}

/// Style of a reading: its level's, dimmed when only approximate.
fn reading_style(t: &Theme, level: Level, approximate: bool) -> Style {
    if approximate { t.dim() } else { t.level(level) }
}

/// Chart of the growth per step against the shared x window: a confirmed
/// mode's estimate, and the latest fit's where it is only approximate.
pub fn chart(f: &mut Frame, area: Rect, s: &AppState, t: &Theme, x_labels: bool) {
    let Some(x) = s.x_window() else {
        chart::draw(
            f,
            area,
            Spec::empty(" growth per step ", "waiting for rows"),
            t,
        );
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    let (words, lvl, approx) = growth_words(&s.readouts, area.width < 60);
    let title = Line::from(vec![
        Span::styled(" growth per step ", t.title()),
        Span::styled(format!("{words} "), reading_style(t, lvl, approx)),
    ]);
    let wide = area.width >= 90;
    let spec = Spec {
        title,
        series: vec![
            Series {
                name: if wide {
                    "ρ of a confirmed growing mode"
                } else {
                    "confirmed"
                }
                .into(),
                points: s.derived.points(D_GROWTH, x.0, x.1, width),
                style: t.series(0),
            },
            Series {
                name: if wide {
                    "≈ latest fit, no growing mode"
                } else {
                    "≈ latest fit"
                }
                .into(),
                points: s.derived.points(D_GROWTH_APPROX, x.0, x.1, width),
                style: t.dim(),
            },
        ],
        x,
        x_time: s.x_is_time(),
        x_labels,
        reference: Some((
            1.0,
            if wide {
                "ρ = 1 stability limit"
            } else {
                "ρ = 1"
            },
        )),
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
            Spec::empty(" energy balance error ", "waiting for rows"),
            t,
        );
        return;
    };
    let width = usize::from(area.width.saturating_sub(10)).max(1);
    // Percent, as the title and the readouts give it.
    let points: Vec<(f64, f64)> = s
        .derived
        .points(D_BALANCE, x.0, x.1, width)
        .into_iter()
        .map(|(x, y)| (x, 100.0 * y))
        .collect();
    let spec = Spec {
        title: Line::from(vec![
            Span::styled(" energy balance error [%] ", t.title()),
            Span::styled(
                format!("{} ", balance_words(s, area.width < 70)),
                t.level(s.readouts.balance_level),
            ),
        ]),
        series: vec![Series {
            name: "(created − lost) / energy scale, %".into(),
            points,
            style: t.series(1),
        }],
        x,
        x_time: s.x_is_time(),
        x_labels,
        reference: Some((0.0, "balanced")),
        empty: "no energy columns recognised",
    };
    chart::draw(f, area, spec, t);
}

/// The fitted frequency; a real eigenvalue has none to speak of, and a mode at
/// the Nyquist frequency of the rows (`row_interval_s` apart) flips sign every
/// row — an alias of the step-to-step flip of an explicit scheme past its limit,
/// not a physical frequency.
fn mode_words(f_hz: Option<f64>, row_interval_s: Option<f64>, narrow: bool) -> String {
    let row_s = row_interval_s.filter(|d| *d > 0.0 && d.is_finite());
    match (f_hz, row_s) {
        (Some(f), _) if f.abs() < MONOTONE_HZ && narrow => "monotone".into(),
        (Some(f), _) if f.abs() < MONOTONE_HZ => "0 Hz (monotone)".into(),
        (Some(f), Some(d)) if at_nyquist(2.0 * std::f64::consts::PI * f * d) => {
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

/// The remedy readout: the largest step suggested for the growing mode (with
/// the step the run uses), or what is missing to give one.
fn remedy_words(s: &AppState, narrow: bool) -> String {
    let r = &s.readouts;
    let now = s
        .col(Role::StepSize)
        .and_then(|c| s.table.last(c))
        .filter(|v| v.is_finite() && *v > 0.0);
    match (&r.evidence.suggested_dt, now) {
        (Some(d), _) if narrow => format!("Δt ≤ {} s", num(Some(d.seconds), 3)),
        (Some(d), Some(now)) => format!(
            "Δt ≤ {} s (now {} s) · rhoscope limits",
            num(Some(d.seconds), 3),
            num(Some(now), 3)
        ),
        (Some(d), None) => format!("Δt ≤ {} s · rhoscope limits", num(Some(d.seconds), 3)),
        (None, _) if r.growth == Standing::Confirmed && s.scheme.is_none() => if narrow {
            "— give --scheme"
        } else {
            "— declare the scheme (--scheme or # scheme:)"
        }
        .into(),
        (None, _) => "—".into(),
    }
}

/// The readouts block: one fact per line, label then value. Values come from
/// [`AppState::readouts`]; an approximate reading is dimmed.
pub fn readouts(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let r = &s.readouts;
    let e = &r.evidence;
    let inner_w = usize::from(area.width.saturating_sub(2));
    let label_w = if inner_w >= 44 { 18 } else { 12 };
    let narrow = inner_w < 44;
    let approx = r.growth == Standing::Approximate;
    let plain = |lvl: Level| reading_style(t, lvl, false);
    let fit = |lvl: Level| reading_style(t, lvl, approx);

    let mut rows: Vec<(&str, String, Style)> = Vec::new();
    let (words, lvl, dim) = growth_words(r, narrow);
    rows.push((
        if narrow {
            "growth/step"
        } else {
            "growth per step"
        },
        words,
        reading_style(t, lvl, dim),
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
        fit(Level::Ok),
    ));
    rows.push((
        if narrow { "mode" } else { "dominant mode" },
        mode_words(e.frequency_hz, row_interval_s(s), narrow),
        fit(Level::Ok),
    ));
    let onset = match (e.onset_line, e.onset_time) {
        (Some(l), Some(tm)) if !narrow => format!("line {} · {}", count(l), sim_time(tm)),
        (Some(l), _) => format!("line {}", count(l)),
        (None, Some(tm)) => sim_time(tm),
        (None, None) => "—".into(),
    };
    rows.push(("onset", onset, plain(Level::Ok)));
    let (forecast, f_lvl) = match (r.blow_up, e.forecast_steps) {
        (Some(b), _) => (
            match b.time {
                Some(tm) if !narrow => {
                    format!(
                        "already: non-finite at line {} · {}",
                        count(b.line),
                        sim_time(tm)
                    )
                }
                _ => format!("already, line {}", count(b.line)),
            },
            Level::Critical,
        ),
        (None, None) => ("—".into(), Level::Ok),
        (None, Some(n)) => {
            let steps = format!("{} steps", count(n.max(0.0).round() as u64));
            // Wall-clock seconds only while rows flow: a quiet run is not counting down.
            let quiet = s.quiet_for_s().is_some();
            let wall = e.forecast_wall_s.filter(|_| !quiet);
            let mut v = match wall {
                Some(w) if narrow => duration(Some(w)),
                Some(w) => format!("{steps} · {}", duration(Some(w))),
                None => steps,
            };
            if quiet && !narrow {
                v.push_str(" at the last row");
            }
            if !narrow && let Some(tm) = e.forecast_time {
                v.push_str(&format!(" · {}", sim_time(tm)));
            }
            (v, r.growth_level.max(Level::Warning))
        }
    };
    rows.push(("overflow in", forecast, plain(f_lvl)));
    let past = if narrow {
        "✖ past limit"
    } else {
        "✖ past the limit"
    };
    let (margin, m_lvl) = match e.stability_margin {
        None if s.scheme.is_some() => ("—".to_string(), Level::Ok),
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
        fit(m_lvl),
    ));
    rows.push((
        "stable step",
        remedy_words(s, narrow),
        plain(r.growth_level),
    ));
    let lines: Vec<Line> = rows
        .into_iter()
        .map(|(label, value, style)| {
            Line::from(vec![
                Span::styled(format!("{label:<label_w$}"), t.dim()),
                Span::styled(value, style),
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
    fn each_standing_is_worded_as_such() {
        use crate::readout::Readouts;
        let mut r = Readouts::default();
        assert_eq!(growth_words(&r, false).0, "— no estimate yet");
        r.growth = Standing::NotConfirmed;
        assert_eq!(growth_words(&r, true).0, "— none confirmed");
        r.growth = Standing::Approximate;
        r.evidence.growth_per_step = Some(0.99860);
        let (w, _, dim) = growth_words(&r, false);
        assert!(w.starts_with("ρ ≈ 0.99860") && dim, "{w}");
        r.growth = Standing::Confirmed;
        r.evidence.growth_per_step = Some(1.2213);
        assert_eq!(growth_words(&r, true).0, "ρ 1.2213 no alarm");
        r.growth_level = Level::Critical;
        assert_eq!(
            growth_words(&r, true),
            ("ρ 1.2213 ✖ growing".to_string(), Level::Critical, false)
        );
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
