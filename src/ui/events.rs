//! Alarm banner (the newest unacknowledged alarm, with what to do) and the list
//! of events, newest first.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph, Wrap};

use crate::app::{AppState, Event};
use crate::finding::Level;

use super::format::{count, sim_time};
use super::theme::{Theme, symbol};

/// Most rows the banner takes; a longer alarm is cut there (the events list
/// has it whole).
pub const BANNER_MAX_ROWS: u16 = 3;

/// Rows the banner needs at `width` (0 without an alarm to show).
pub fn banner_rows(s: &AppState, width: u16) -> u16 {
    let Some(ev) = &s.banner else { return 0 };
    let p = Paragraph::new(banner_line(ev, &Theme { color: false })).wrap(Wrap { trim: false });
    u16::try_from(p.line_count(width))
        .unwrap_or(u16::MAX)
        .clamp(1, BANNER_MAX_ROWS)
}

/// The unacknowledged alarm across the screen, wrapped over at most
/// [`BANNER_MAX_ROWS`] rows: level, the keys (first, so a long message
/// never hides them), where, source and message.
pub fn banner(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let Some(ev) = &s.banner else { return };
    f.render_widget(
        Paragraph::new(banner_line(ev, t)).wrap(Wrap { trim: false }),
        area,
    );
}

fn banner_line<'a>(ev: &Event, t: &Theme) -> Line<'a> {
    let at = match (ev.line, ev.time) {
        (Some(l), Some(tm)) => format!("line {}, {}, ", count(l), sim_time(tm)),
        (Some(l), None) => format!("line {}, ", count(l)),
        _ => String::new(),
    };
    Line::from(vec![
        Span::styled(
            format!(" {} {} ", symbol(ev.level), ev.level.word()),
            t.badge(ev.level),
        ),
        Span::raw(" ("),
        Span::styled("a", t.key()),
        Span::raw(" acknowledge, "),
        Span::styled("X", t.key()),
        Span::raw(" stop the run…) "),
        Span::styled(format!("{at}{}: {}", ev.source, ev.text), t.level(ev.level)),
    ])
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
        spans.push(Span::styled(format!("{} ", sim_time(tm)), t.dim()));
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
