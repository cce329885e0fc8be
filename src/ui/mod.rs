//! The dashboard's drawing: [`render`] reads an [`AppState`] and draws one
//! frame; it never changes state. Layout here, one file per panel. At 80×24 the
//! charts stack on the left and the readouts and events sit on the right; at
//! 200×60 the energy balance error and a probe signal get charts of their own;
//! below about 24×8 only the state of the run is shown.

pub mod chart;
pub mod energy;
pub mod events;
pub mod fleet;
pub mod format;
pub mod growth;
pub mod header;
pub mod overlay;
pub mod step;
pub mod theme;

use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;

use crate::app::{AppState, Dialog};

use theme::{Theme, symbol};

/// Smallest area that gets the full dashboard.
const MIN_W: u16 = 24;
const MIN_H: u16 = 8;
/// Height of the readouts block.
const READOUTS_H: u16 = 9;

/// Draw the whole dashboard.
pub fn render(s: &AppState, f: &mut Frame) {
    let area = f.area();
    let t = Theme {
        color: s.config.color,
    };
    if area.width == 0 || area.height == 0 {
        return;
    }
    if area.width < MIN_W || area.height < MIN_H {
        let text = format!(
            "{} {} — enlarge the terminal",
            symbol(s.level),
            s.level.word()
        );
        f.render_widget(Paragraph::new(Span::styled(text, t.badge(s.level))), area);
        return;
    }
    let banner_h = events::banner_rows(s, area.width).min(area.height.saturating_sub(MIN_H));
    let [head, banner, body, foot] = Layout::vertical([
        Constraint::Length(2),
        Constraint::Length(banner_h),
        Constraint::Fill(1),
        Constraint::Length(1),
    ])
    .areas(area);
    header::render(f, head, s, &t);
    events::banner(f, banner, s, &t);
    if body.width >= 70 {
        let share = if body.width >= 140 { 66 } else { 56 };
        let [left, right] =
            Layout::horizontal([Constraint::Percentage(share), Constraint::Fill(1)]).areas(body);
        charts(f, left, s, &t);
        let [ro, ev] =
            Layout::vertical([Constraint::Length(READOUTS_H), Constraint::Fill(1)]).areas(right);
        growth::readouts(f, ro, s, &t);
        events::list(f, ev, s, &t);
    } else {
        let [ro, ch, ev] = Layout::vertical([
            Constraint::Length(READOUTS_H),
            Constraint::Fill(2),
            Constraint::Fill(1),
        ])
        .areas(body);
        growth::readouts(f, ro, s, &t);
        growth::chart(f, ch, s, &t, true);
        events::list(f, ev, s, &t);
    }
    footer(f, foot, s, &t);
    match s.dialog {
        Some(Dialog::Help) => overlay::help(f, area, &t),
        Some(Dialog::ConfirmStop) => overlay::confirm_stop(f, area, s, &t),
        None => {}
    }
}

type Panel = fn(&mut Frame, Rect, &AppState, &Theme, bool);

/// The chart column: growth, energy, (balance error), time step, (probe).
fn charts(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let mut panels: Vec<(Panel, u16)> = vec![(growth::chart, 2)];
    if area.height >= 12 {
        panels.push((energy::chart, 1));
    }
    if area.height >= 40 {
        panels.push((growth::balance_chart, 1));
    }
    if area.height >= 16 {
        panels.push((step::chart, 1));
    }
    if area.height >= 30 {
        panels.push((step::probe_chart, 1));
    }
    let rects = Layout::vertical(panels.iter().map(|(_, w)| Constraint::Fill(*w))).split(area);
    let last = panels.len() - 1;
    for (i, ((draw, _), r)) in panels.iter().zip(rects.iter()).enumerate() {
        draw(f, *r, s, t, i == last);
    }
}

/// One line of key hints.
fn footer(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let keys: &[(&str, &str)] = &[
        ("q", "quit"),
        (
            "space",
            if s.view.paused_at.is_some() {
                "resume"
            } else {
                "pause"
            },
        ),
        ("+/-", "zoom"),
        ("Tab", "probe"),
        ("a", "acknowledge"),
        ("X", "stop run…"),
        ("?", "help"),
    ];
    let mut spans = Vec::new();
    for (k, what) in keys {
        spans.push(Span::styled(format!(" {k}"), t.key()));
        spans.push(Span::styled(format!(" {what} "), t.dim()));
    }
    f.render_widget(Paragraph::new(Line::from(spans)), area);
}
