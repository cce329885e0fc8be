//! State of the fleet view: the latest rows of every followed run in
//! worst-first order, which run is selected, and what a key asks for — move,
//! open the selected run's dashboard, quit. Until a key moves it the selection
//! stays on the top row, so the worst runs stay in sight however the order
//! changes; once moved it is kept on the same run (g puts it back on top).
//! No terminal, no clock, no files.

use std::path::PathBuf;

use crate::fleet::{RunRow, RunState, worst_first};

use super::update::Key;

/// What the fleet loop must do after a key.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FleetEffect {
    /// Nothing beyond a redraw.
    None,
    /// Open the dashboard of this run's history; come back on Esc.
    Open(PathBuf),
    /// Leave the fleet view.
    Quit,
}

/// The fleet view's state.
#[derive(Debug, Clone)]
pub struct FleetView {
    /// Rows, worst first.
    pub rows: Vec<RunRow>,
    /// Index of the selected row in `rows`.
    pub selected: usize,
    /// Path of the selected run, to keep the selection through re-sorting.
    selected_path: Option<PathBuf>,
    /// The selection stays on the top row (nothing moved it yet, or g).
    on_top: bool,
    /// Monotonic seconds of the latest snapshot.
    pub now_s: f64,
    /// Seconds without output after which a run is stalled.
    pub stall_after_s: f64,
    /// Simulated end time, for progress.
    pub end_time_s: Option<f64>,
    /// Draw with colours.
    pub color: bool,
    /// The patterns followed, for the header.
    pub patterns: String,
    /// A line for the foot (e.g. what happened when a dashboard closed).
    pub note: Option<String>,
    /// Something changed since the last frame.
    pub dirty: bool,
}

impl FleetView {
    /// An empty view.
    pub fn new(patterns: String, stall_after_s: f64, end_time_s: Option<f64>, color: bool) -> Self {
        Self {
            rows: Vec::new(),
            selected: 0,
            selected_path: None,
            on_top: true,
            now_s: 0.0,
            stall_after_s,
            end_time_s,
            color,
            patterns,
            note: None,
            dirty: true,
        }
    }

    /// Take a new snapshot of the rows at monotonic `now_s` and sort it.
    pub fn set_rows(&mut self, rows: Vec<RunRow>, now_s: f64) {
        let mut refs: Vec<&RunRow> = rows.iter().collect();
        worst_first(&mut refs, now_s, self.stall_after_s);
        let order: Vec<usize> = refs
            .iter()
            .map(|r| rows.iter().position(|x| std::ptr::eq(x, *r)).unwrap_or(0))
            .collect();
        let mut slots: Vec<Option<RunRow>> = rows.into_iter().map(Some).collect();
        self.rows = order.into_iter().filter_map(|i| slots[i].take()).collect();
        self.now_s = now_s;
        self.selected = if self.on_top {
            0
        } else {
            self.selected_path
                .as_ref()
                .and_then(|p| self.rows.iter().position(|r| &r.path == p))
                .unwrap_or(self.selected.min(self.rows.len().saturating_sub(1)))
        };
        self.remember();
        self.dirty = true;
    }

    fn remember(&mut self) {
        self.selected_path = self.rows.get(self.selected).map(|r| r.path.clone());
    }

    /// Count of runs in each state, worst first (only states present).
    pub fn tally(&self) -> Vec<(RunState, usize)> {
        let mut out: Vec<(RunState, usize)> = Vec::new();
        for r in &self.rows {
            let s = r.state(self.now_s, self.stall_after_s);
            match out.iter_mut().find(|(k, _)| *k == s) {
                Some((_, n)) => *n += 1,
                None => out.push((s, 1)),
            }
        }
        out.sort();
        out
    }

    /// Apply a key.
    pub fn key(&mut self, k: Key) -> FleetEffect {
        self.dirty = true;
        let last = self.rows.len().saturating_sub(1);
        if matches!(k, Key::Char('j' | 'k' | 'G') | Key::Tab | Key::BackTab) {
            self.on_top = false;
        }
        match k {
            Key::Char('q') | Key::Interrupt => return FleetEffect::Quit,
            Key::Char('j') | Key::Tab => self.selected = (self.selected + 1).min(last),
            Key::Char('k') | Key::BackTab => self.selected = self.selected.saturating_sub(1),
            Key::Char('g') => {
                self.selected = 0;
                self.on_top = true;
            }
            Key::Char('G') => self.selected = last,
            Key::Enter => {
                if let Some(r) = self.rows.get(self.selected) {
                    return FleetEffect::Open(r.path.clone());
                }
            }
            _ => self.dirty = false,
        }
        self.remember();
        FleetEffect::None
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::alarm::Alarm;
    use crate::finding::Level;
    use crate::pipeline::sink::Sink;

    fn row(name: &str, level: Level) -> RunRow {
        let mut r = RunRow::new(name.into(), PathBuf::from(format!("{name}/h.csv")));
        r.arriving(0.0, 1);
        if level != Level::Ok {
            r.alarm(&Alarm {
                level,
                detector: "growth",
                line: 1,
                time: None,
                message: "m".into(),
                evidence: Default::default(),
            });
        }
        r
    }

    #[test]
    fn selection_follows_its_run_through_a_new_order_and_enter_opens_it() {
        let mut v = FleetView::new("runs/*".into(), 600.0, None, false);
        v.set_rows(vec![row("a", Level::Ok), row("b", Level::Warning)], 1.0);
        assert_eq!(v.rows[0].name, "b");
        assert_eq!(v.key(Key::Char('j')), FleetEffect::None);
        assert_eq!(v.rows[v.selected].name, "a");
        // "a" turns critical and moves to the top: the selection moves with it.
        v.set_rows(
            vec![row("a", Level::Critical), row("b", Level::Warning)],
            2.0,
        );
        assert_eq!((v.selected, v.rows[0].name.as_str()), (0, "a"));
        assert_eq!(
            v.key(Key::Enter),
            FleetEffect::Open(PathBuf::from("a/h.csv"))
        );
        assert_eq!(v.key(Key::Char('G')), FleetEffect::None);
        assert_eq!(v.selected, 1);
        assert_eq!(v.key(Key::Char('j')), FleetEffect::None);
        assert_eq!(v.selected, 1, "stays on the last row");
        assert_eq!(v.key(Key::Char('q')), FleetEffect::Quit);
        assert_eq!(
            v.tally(),
            vec![(RunState::Critical, 1), (RunState::Warning, 1)]
        );
    }

    #[test]
    fn until_a_key_moves_it_the_selection_stays_on_the_worst_run() {
        let mut v = FleetView::new("runs/*".into(), 600.0, None, false);
        v.set_rows(vec![row("a", Level::Ok), row("b", Level::Ok)], 1.0);
        assert_eq!(v.rows[v.selected].name, "a");
        // "b" turns critical: the top row, and so the selection, is now "b".
        v.set_rows(vec![row("a", Level::Ok), row("b", Level::Critical)], 2.0);
        assert_eq!((v.selected, v.rows[0].name.as_str()), (0, "b"));
        assert_eq!(
            v.key(Key::Enter),
            FleetEffect::Open(PathBuf::from("b/h.csv"))
        );
        // Once moved, the selection stays with its run; g puts it back on top.
        v.key(Key::Char('j'));
        v.set_rows(
            vec![row("a", Level::Warning), row("b", Level::Critical)],
            3.0,
        );
        assert_eq!(v.rows[v.selected].name, "a");
        v.set_rows(
            vec![row("a", Level::Critical), row("b", Level::Warning)],
            4.0,
        );
        assert_eq!((v.selected, v.rows[v.selected].name.as_str()), (0, "a"));
        v.key(Key::Char('j'));
        v.key(Key::Char('g'));
        v.set_rows(
            vec![row("a", Level::Warning), row("b", Level::Critical)],
            5.0,
        );
        assert_eq!((v.selected, v.rows[0].name.as_str()), (0, "b"));
    }

    #[test]
    fn an_empty_fleet_opens_nothing() {
        let mut v = FleetView::new("x/*".into(), 600.0, None, false);
        v.set_rows(Vec::new(), 0.0);
        assert_eq!(v.key(Key::Enter), FleetEffect::None);
        assert_eq!(v.key(Key::Char('j')), FleetEffect::None);
    }
}
