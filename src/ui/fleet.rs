//! The fleet view: one line per run, worst first — state in a word and a
//! symbol, run name, progress, simulated time, growth per step, time to
//! overflow, how long since the last output, and the alarm or note — under a
//! header that counts the runs in each state. The selected line is marked
//! with `>` as well as highlighted, so it reads without colour.

use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Modifier, Style};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Cell, Paragraph, Row, Table, TableState};

use crate::app::fleet::FleetView;
use crate::finding::Level;
use crate::fleet::{RunRow, RunState};
use crate::readout::Standing;

use super::format;
use super::theme::{Theme, symbol};

/// The alarm level a state is drawn with.
fn level_of(s: RunState) -> Level {
    match s {
        RunState::Critical => Level::Critical,
        RunState::Warning | RunState::Stalled => Level::Warning,
        RunState::Waiting | RunState::Healthy => Level::Ok,
    }
}

fn state_symbol(s: RunState) -> &'static str {
    match s {
        RunState::Stalled => "⏸",
        RunState::Waiting => "…",
        other => symbol(level_of(other)),
    }
}

/// The table's cells for one run, worded once for the fleet view and the
/// headless table: state word, done, simulated time, growth per step (`≈`
/// before a latest fit's, nothing for a growth the checks did not confirm),
/// time to overflow (steps while the pace is unknown, or that the run already
/// blew up), time since output.
pub struct Cells {
    pub state: String,
    pub done: String,
    pub sim_time: String,
    pub growth: String,
    pub overflow: String,
    pub quiet: String,
}

impl Cells {
    /// The cells of `r` at monotonic `now_s`.
    pub fn of(r: &RunRow, now_s: f64, stall_after_s: f64, end_time_s: Option<f64>) -> Self {
        let g = &r.readouts;
        let growth = match g.growth {
            Standing::Approximate => format!("≈{}", format::num(g.growth_per_step(), 6)),
            Standing::Confirmed => format::num(g.growth_per_step(), 6),
            Standing::NoEstimate | Standing::NotConfirmed => "—".into(),
        };
        // Wall time left, else the steps left while the run's pace is unknown
        // (a growth read from a backlog): wall seconds are never made up.
        let overflow = match (
            g.blow_up,
            r.forecast_left_s(now_s),
            g.evidence.forecast_steps,
        ) {
            (Some(_), _, _) => "blew up".into(),
            (None, Some(w), _) => format::duration(Some(w)),
            (None, None, Some(n)) => {
                let n = n.max(0.0).round() as u64;
                format!(
                    "{} {}",
                    format::count(n),
                    if n == 1 { "step" } else { "steps" }
                )
            }
            (None, None, None) => format::duration(None),
        };
        Self {
            state: r.state(now_s, stall_after_s).word().into(),
            done: r
                .progress(end_time_s)
                .map_or_else(|| "—".to_string(), |p| format!("{:.0} %", p * 100.0)),
            sim_time: format::num(r.sim_time_s, 4),
            growth,
            overflow,
            quiet: format::duration(r.age_s(now_s)),
        }
    }
}

/// Draw the fleet view on the whole frame.
pub fn render(v: &FleetView, f: &mut Frame) {
    let area = f.area();
    if area.width == 0 || area.height == 0 {
        return;
    }
    let t = Theme { color: v.color };
    let [head, body, foot] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Fill(1),
        Constraint::Length(1),
    ])
    .areas(area);
    header(f, head, v, &t);
    table(f, body, v, &t);
    let keys = v.note.clone().unwrap_or_else(|| {
        "j/k move  Enter open the run's dashboard (Esc back)  g/G top/bottom  q quit".into()
    });
    f.render_widget(Paragraph::new(Span::styled(keys, t.dim())), foot);
}

fn header(f: &mut Frame, area: Rect, v: &FleetView, t: &Theme) {
    let mut spans = vec![Span::styled(format!("{} runs ", v.rows.len()), t.title())];
    for (s, n) in v.tally() {
        spans.push(Span::styled(
            format!("{} {n} {} ", state_symbol(s), s.word()),
            t.level(level_of(s)),
        ));
    }
    spans.push(Span::styled(format!(" {}", v.patterns), t.dim()));
    f.render_widget(Paragraph::new(Line::from(spans)), area);
}

fn table(f: &mut Frame, area: Rect, v: &FleetView, t: &Theme) {
    let wide = area.width >= 110;
    let mut head = vec![
        "",
        "state",
        "run",
        "done",
        "sim time",
        "growth/step",
        "overflow",
        "quiet",
    ];
    if wide {
        head.push("alarm or note");
    }
    let rows: Vec<Row> = v
        .rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let s = r.state(v.now_s, v.stall_after_s);
            let c = Cells::of(r, v.now_s, v.stall_after_s, v.end_time_s);
            let mark = if i == v.selected { ">" } else { " " };
            let growth_style = match r.readouts.growth {
                Standing::Confirmed => t.level(r.readouts.growth_level),
                _ => t.dim(),
            };
            let mut cells = vec![
                Cell::from(mark),
                Cell::from(format!("{} {}", state_symbol(s), c.state)).style(t.level(level_of(s))),
                Cell::from(r.name.clone()),
                Cell::from(c.done),
                Cell::from(c.sim_time),
                Cell::from(c.growth).style(growth_style),
                Cell::from(c.overflow),
                Cell::from(c.quiet),
            ];
            if wide {
                let note = r
                    .note
                    .clone()
                    .or_else(|| r.alarm_message.clone())
                    .unwrap_or_default();
                cells.push(Cell::from(note));
            }
            Row::new(cells)
        })
        .collect();
    let mut widths = vec![
        Constraint::Length(1),
        Constraint::Length(11),
        Constraint::Fill(1),
        Constraint::Length(6),
        Constraint::Length(9),
        Constraint::Length(11),
        Constraint::Length(9),
        Constraint::Length(7),
    ];
    if wide {
        widths[2] = Constraint::Length(24);
        widths.push(Constraint::Fill(1));
    }
    let table = Table::new(rows, widths)
        .header(Row::new(head).style(t.title()))
        .row_highlight_style(Style::default().add_modifier(Modifier::REVERSED));
    let mut state = TableState::default().with_selected(Some(v.selected));
    f.render_stateful_widget(table, area, &mut state);
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::pipeline::sink::Sink;
    use ratatui::Terminal;
    use ratatui::backend::TestBackend;
    use std::path::PathBuf;

    fn screen(v: &FleetView, w: u16, h: u16) -> String {
        let mut term = Terminal::new(TestBackend::new(w, h)).unwrap();
        term.draw(|f| render(v, f)).unwrap();
        let buf = term.backend().buffer().clone();
        let mut s = String::new();
        for y in 0..h {
            for x in 0..w {
                s.push_str(buf[(x, y)].symbol());
            }
            s.push('\n');
        }
        s
    }

    #[test]
    fn states_are_told_in_words_and_the_selection_by_a_mark() {
        let mut crit = RunRow::new("beam-07".into(), PathBuf::from("b/h.csv"));
        crit.arriving(0.0, 10);
        crit.alarm(&crate::alarm::Alarm {
            level: Level::Critical,
            detector: "growth",
            line: 5,
            time: None,
            message: "grows".into(),
            evidence: Default::default(),
        });
        let mut calm = RunRow::new("beam-01".into(), PathBuf::from("a/h.csv"));
        calm.arriving(0.0, 10);
        let mut v = FleetView::new("runs/*/h.csv".into(), 600.0, Some(1.0), false);
        v.set_rows(vec![calm, crit], 2.0);
        for (w, h) in [(80, 24), (200, 60)] {
            let s = screen(&v, w, h);
            let lines: Vec<&str> = s.lines().collect();
            assert!(lines[0].contains("2 runs"), "{s}");
            assert!(lines[0].contains("1 CRITICAL"), "{s}");
            assert!(
                lines[2].starts_with('>') && lines[2].contains("CRITICAL"),
                "{s}"
            );
            assert!(lines[2].contains("beam-07"), "{s}");
            assert!(
                lines[3].contains("OK") && lines[3].contains("beam-01"),
                "{s}"
            );
        }
        assert!(
            screen(&v, 200, 60).contains("grows"),
            "the alarm on wide screens"
        );
        let _ = screen(&v, 3, 2); // tiny: no panic
    }
}
