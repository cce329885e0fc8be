//! Run header: state of the run in a word and a symbol, the file, rows read,
//! simulated time and progress toward the end time, pace, time to finish and
//! whether the run will finish inside its wall-clock limit; the stop actions
//! armed; pause and zoom.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;

use crate::app::{AppState, StopState};
use crate::finding::Level;

use super::format::{count, duration, num, sim_time};
use super::theme::{Theme, symbol};

/// Width of the text progress bar (cells).
const BAR: usize = 12;

fn bar(frac: f64) -> String {
    let full = ((frac * BAR as f64).round() as usize).min(BAR);
    format!("[{}{}]", "#".repeat(full), "·".repeat(BAR - full))
}

/// `path` cut to at most `max` characters, keeping its end (`…n-0/history.csv`).
fn shorten(path: &str, max: usize) -> String {
    let n = path.chars().count();
    if n <= max {
        return path.to_string();
    }
    let tail: String = path.chars().skip(n + 1 - max).collect();
    format!("…{tail}")
}

/// Two lines: who and what state; where the run is and whether it will finish.
pub fn render(f: &mut Frame, area: Rect, s: &AppState, t: &Theme) {
    let wide = area.width >= 110;
    let mut l1 = vec![
        Span::styled(
            format!(" {} {} ", symbol(s.level), s.level.word()),
            t.badge(s.level),
        ),
        Span::raw(" "),
        Span::styled(
            shorten(
                &s.config.file,
                usize::from(area.width).saturating_sub(50).max(12),
            ),
            t.title(),
        ),
        Span::styled(format!("  rows {}", count(s.rows)), t.text()),
    ];
    if s.skipped > 0 {
        l1.push(Span::styled(
            format!("  skipped {}", count(s.skipped)),
            t.dim(),
        ));
    }
    if s.segments > 0 {
        l1.push(Span::styled(format!("  restarts {}", s.segments), t.dim()));
    }
    let stop = match &s.stop {
        StopState::Idle if s.config.actions.is_empty() => {
            ("stop: not armed".to_string(), Level::Ok)
        }
        StopState::Idle => (
            format!(
                "stop: armed ({}{})",
                s.config.actions.len(),
                if s.config.auto_stop {
                    ", on alarm"
                } else {
                    ", by key"
                }
            ),
            Level::Ok,
        ),
        StopState::Requested { .. } => ("stop: in progress".to_string(), Level::Warning),
        StopState::Done { ok: true, .. } => ("stop: actions taken".to_string(), Level::Warning),
        StopState::Done { ok: false, .. } => {
            ("stop: FAILED, see events".to_string(), Level::Critical)
        }
    };
    l1.push(Span::styled(format!("  {}", stop.0), t.level(stop.1)));
    if s.view.paused_at.is_some() {
        l1.push(Span::styled(
            "  ‖ PAUSED (data still read)",
            t.badge(Level::Warning),
        ));
    }
    if s.view.zoom > 0 {
        l1.push(Span::styled(
            format!("  zoom ×{}", 4u32.pow(u32::from(s.view.zoom))),
            t.dim(),
        ));
    }

    let mut l2 = Vec::new();
    match s.time_now() {
        Some(tm) => match (s.config.end_time_s, s.progress()) {
            (Some(end), Some(p)) if wide => {
                l2.push(Span::raw(format!(
                    " {} of {} s {:5.1} % ",
                    sim_time(tm),
                    num(Some(end), 4),
                    100.0 * p
                )));
                l2.push(Span::styled(bar(p), t.dim()));
            }
            (Some(end), Some(p)) => l2.push(Span::raw(format!(
                " {} of {} s {:.0} %",
                sim_time(tm),
                num(Some(end), 4),
                100.0 * p
            ))),
            _ => l2.push(Span::raw(format!(" {}", sim_time(tm)))),
        },
        None if s.rows > 0 => l2.push(Span::raw(format!(" line {}", count(s.last_line)))),
        None => l2.push(Span::styled(" waiting for the first rows", t.dim())),
    }
    // Once the file has stopped growing, pace and time to finish are stale.
    let flowing = s.quiet_for_s().is_none();
    if flowing && let Some(r) = s.speed.steps_per_s() {
        let unit = if s.speed.rows_not_steps {
            "rows/s"
        } else {
            "steps/s"
        };
        l2.push(Span::raw(format!("  {} {unit}", num(Some(r), 3))));
    }
    if flowing && let Some(ttf) = s.time_to_finish_s() {
        let w = if wide { "finish in" } else { "finish" };
        l2.push(Span::raw(format!("  {w} {}", duration(Some(ttf)))));
    }
    if let Some(left) = s.wall_left_s() {
        let w = if wide { "wall left" } else { "wall" };
        l2.push(Span::raw(format!("  {w} {}", duration(Some(left)))));
    }
    match s.finishes_in_time().filter(|_| flowing) {
        Some(true) => l2.push(Span::styled(
            if wide {
                "  ✔ finishes in time"
            } else {
                " ✔ in time"
            },
            t.level(Level::Ok),
        )),
        Some(false) => l2.push(Span::styled(
            if wide {
                "  ✖ will NOT finish before the wall limit"
            } else {
                " ✖ NOT in time"
            },
            t.level(Level::Critical),
        )),
        None => {}
    }
    match (s.quiet_for_s(), &s.stop) {
        (Some(q), StopState::Done { ok: true, .. }) => l2.push(Span::styled(
            format!(
                "  the run stopped after the stop action (last row line {}, {} ago)",
                count(s.last_line),
                duration(Some(q))
            ),
            t.level(Level::Warning),
        )),
        (Some(q), _) => l2.push(Span::styled(
            format!("  no new rows for {}", duration(Some(q))),
            t.level(Level::Warning),
        )),
        (None, _) => {}
    }
    if let Some(note) = &s.note {
        l2.push(Span::styled(format!("  {note}"), t.dim()));
    }
    f.render_widget(Paragraph::new(vec![Line::from(l1), Line::from(l2)]), area);
}

#[cfg(test)]
mod tests {
    use super::shorten;

    #[test]
    fn long_paths_keep_their_end() {
        assert_eq!(shorten("a/b.csv", 12), "a/b.csv");
        let s = shorten("/tmp/rhoscope-demo-19084-0/history.csv", 20);
        assert_eq!(s.chars().count(), 20);
        assert!(s.starts_with('…') && s.ends_with("/history.csv"));
    }
}
