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

/// The help overlay.
pub fn help(f: &mut Frame, area: Rect, t: &Theme) {
    let mut lines: Vec<Line> = vec![Line::styled("Keys", t.title())];
    for (k, what) in KEYS {
        lines.push(Line::from(vec![
            Span::styled(format!("  {k:<22}"), t.key()),
            Span::raw(*what),
        ]));
    }
    lines.push(Line::raw(""));
    lines.push(Line::styled("Reading the panels", t.title()));
    for s in [
        "  growth per step: spectral radius ρ of the one-step map fitted to recent rows;",
        "    ρ > 1 means errors grow every step. The line ρ = 1 is the stability limit.",
        "  energy balance error: energy created (+) or lost (−) relative to the energy",
        "    scale; numerical instability creates energy, physical growth does not.",
        "  time step: a collapsing step usually means distorting elements.",
        "  ✔ healthy   ▲ warning   ✖ critical (words and symbols, not colour alone)",
    ] {
        lines.push(Line::raw(s));
    }
    lines.push(Line::raw(""));
    for c in CAUTIONS {
        lines.push(Line::styled(format!("  {c}"), t.dim()));
    }
    let h = lines.len() as u16 + 2;
    let r = centred(area, 88, h);
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
    let h = lines.len() as u16 + 2;
    let r = centred(area, 120, h + 2);
    f.render_widget(Clear, r);
    f.render_widget(
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .block(panel(" stop the run ", t, Level::Critical)),
        r,
    );
}
