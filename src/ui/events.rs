//! Alarm banner (the newest unacknowledged alarm, with what to do) and the list
//! of events, newest first.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph, Wrap};

use crate::app::{AppState, Event};
use crate::finding::Level;

use super::format::{count, num};
use super::theme::{Theme, state_word, symbol};

/// One line across the screen for an unacknowledged alarm.
pub fn banner(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let Some(ev) = &s.banner else { return };
    let at = match (ev.line, ev.time) {
        (Some(l), Some(tm)) => format!(" at line {} (t {})", count(l), num(Some(tm), 4)),
        (Some(l), None) => format!(" at line {}", count(l)),
        _ => String::new(),
    };
    let line = Line::from(vec![
        Span::styled(
            format!(" {} {} ", symbol(ev.level), state_word(ev.level)),
            t.badge(ev.level),
        ),
        Span::styled(
            format!(" {}: {}{at} ", ev.source, ev.text),
            t.level(ev.level),
        ),
        Span::styled(" a", t.key()),
        Span::raw(" acknowledge  "),
        Span::styled("X", t.key()),
        Span::raw(" stop the run…"),
    ]);
    f.render_widget(Paragraph::new(line), area);
}

fn event_line<'a>(ev: &'a Event, t: &Theme, wide: bool) -> Line<'a> {
    let mut spans = vec![Span::styled(
        format!("{} ", symbol(ev.level)),
        t.level(ev.level),
    )];
    if let Some(l) = ev.line {
        spans.push(Span::styled(format!("L{} ", count(l)), t.dim()));
    }
    if wide && let Some(tm) = ev.time {
        spans.push(Span::styled(format!("t {} ", num(Some(tm), 4)), t.dim()));
    }
    spans.push(Span::styled(format!("{}: ", ev.source), t.dim()));
    let style = if ev.level == Level::Ok {
        t.text()
    } else {
        t.level(ev.level)
    };
    spans.push(Span::styled(ev.text.as_str(), style));
    Line::from(spans)
}

/// The events list in a bordered panel, newest first.
pub fn list(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let wide = area.width >= 60;
    let rows = usize::from(area.height.saturating_sub(2));
    let lines: Vec<Line> = if s.events.is_empty() {
        vec![Line::styled("no events yet", t.dim())]
    } else {
        s.events
            .iter()
            .rev()
            .take(rows)
            .map(|e| event_line(e, t, wide))
            .collect()
    };
    let block = Block::default()
        .borders(Borders::ALL)
        .border_style(t.border())
        .title(Span::styled(
            format!(" events ({}) ", s.events.len()),
            t.title(),
        ));
    f.render_widget(
        Paragraph::new(lines)
            .wrap(Wrap { trim: false })
            .block(block),
        area,
    );
}
