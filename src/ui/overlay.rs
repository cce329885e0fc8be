//! Overlays drawn over the dashboard: the help listing every key, and the
//! stop-the-run confirmation naming exactly what will be done, with the
//! cautions that go with stopping someone's run.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Clear, Paragraph, Wrap};

use crate::app::update::KEYS;
use crate::app::{AppState, StopState};
use crate::finding::Level;

use super::theme::Theme;

/// The cautions shown wherever stopping a run is offered.
pub const CAUTIONS: [&str; 3] = [
    "An alarm is advice, not proof: look at the run before you stop it.",
    "Stopping discards the work done since the last checkpoint (restart file).",
    "Your site's rules and licensed engineering practice decide, not this tool.",
];

/// A rectangle of at most `w`×`h` centred in `area`.
fn centred(area: Rect, w: u16, h: u16) -> Rect {
    let w = w.min(area.width);
    let h = h.min(area.height);
    Rect {
        x: area.x + (area.width - w) / 2,
        y: area.y + (area.height - h) / 2,
        width: w,
        height: h,
    }
}

fn panel<'a>(title: &'a str, t: &Theme, level: Level) -> Block<'a> {
    Block::default()
        .borders(Borders::ALL)
        .border_style(t.level(level))
        .title(Span::styled(title, t.title()))
}

/// What the help says about reading the panels, one paragraph each.
const READING: [&str; 4] = [
    "growth per step: spectral radius ρ of the one-step map fitted to recent rows; ρ > 1 means errors grow every step, and the line ρ = 1 is the stability limit. A confirmed growing mode is drawn bright; the latest fit alone, dimmed with ≈; a fit that claims growth the checks did not confirm is not shown.",
    "energy balance error: energy created (+) or lost (−) relative to the energy scale; numerical instability creates energy, physical growth does not.",
    "time step: a collapsing step usually means distorting elements.",
    "✔ OK   ▲ WARNING   ✖ CRITICAL (words and symbols, not colour alone)",
];

/// Rows `lines` take inside a bordered box `w` wide once wrapped.
fn wrapped_rows(lines: &[Line], w: u16) -> u16 {
    let p = Paragraph::new(lines.to_vec()).wrap(Wrap { trim: false });
    u16::try_from(p.line_count(w.saturating_sub(2))).unwrap_or(u16::MAX)
}

/// The help overlay: the keys, the cautions, and how to read the panels when
/// there is room for all of it (the keys and the cautions always come first).
pub fn help(f: &mut Frame, area: Rect, t: &Theme) {
    let mut keys: Vec<Line> = vec![Line::styled("Keys", t.title())];
    for (k, what) in KEYS {
        keys.push(Line::from(vec![
            Span::styled(format!("  {k:<22}"), t.key()),
            Span::raw(*what),
        ]));
    }
    let mut cautions = vec![
        Line::raw(""),
        Line::styled("Before you stop a run", t.title()),
    ];
    for c in CAUTIONS {
        cautions.push(Line::styled(format!("  {c}"), t.dim()));
    }
    let mut reading = vec![Line::raw(""), Line::styled("Reading the panels", t.title())];
    for r in READING {
        reading.push(Line::raw(format!("  {r}")));
    }
    let w = area.width.min(100);
    let mut lines = keys;
    lines.extend(cautions);
    let with_reading: Vec<Line> = lines.iter().cloned().chain(reading).collect();
    if wrapped_rows(&with_reading, w) + 2 <= area.height {
        lines = with_reading;
    }
    let h = wrapped_rows(&lines, w) + 2;
    let r = centred(area, w, h);
    f.render_widget(Clear, r);
    f.render_widget(
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .block(panel(" help — any key closes ", t, Level::Ok)),
        r,
    );
}

/// The stop-the-run confirmation.
pub fn confirm_stop(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let mut lines: Vec<Line> = Vec::new();
    if s.config.actions.is_empty() {
        lines.push(Line::styled("No stop action is armed.", t.title()));
        lines.push(Line::raw(
            "Start watch with the same action flags as guard (see rhoscope watch --help) to arm one.",
        ));
        lines.push(Line::raw(""));
        lines.push(Line::styled("Any key closes this.", t.dim()));
    } else if s.stop != StopState::Idle {
        lines.push(Line::styled(
            "The stop actions were already taken once.",
            t.title(),
        ));
        lines.push(Line::raw(
            "They are not repeated from here. See the events list.",
        ));
        lines.push(Line::raw(""));
        lines.push(Line::styled("Any key closes this.", t.dim()));
    } else {
        lines.push(Line::styled(
            "Stop the run? This will, in order:",
            t.title(),
        ));
        for (i, a) in s.config.actions.iter().enumerate() {
            lines.push(Line::raw(format!("  {}. {a}", i + 1)));
        }
        lines.push(Line::raw(""));
        for c in CAUTIONS {
            lines.push(Line::styled(c, t.level(Level::Warning)));
        }
        lines.push(Line::raw(""));
        lines.push(Line::from(vec![
            Span::styled("y", t.key()),
            Span::raw(" take these actions now   "),
            Span::styled("N", t.key()),
            Span::raw(" or any other key: cancel, nothing is done"),
        ]));
    }
    let w = area.width.min(120);
    let r = centred(area, w, wrapped_rows(&lines, w) + 2);
    f.render_widget(Clear, r);
    f.render_widget(
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .block(panel(" stop the run ", t, Level::Critical)),
        r,
    );
}
