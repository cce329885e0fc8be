//! Nonlinear-solver detector, for implicit runs: iterations per step climbing
//! well above their early average, the residual diverging, and repeated step
//! cutbacks, each a warning that the Newton iterations are struggling
//! (typically ahead of a step collapse, which the step detector watches).

use super::{Detector, Sample, Shared};
use crate::finding::{Evidence, Finding, Level};
use crate::parse::roles::{Role, RoleMap};

/// Rows of recent history kept for trends.
const TREND_ROWS: usize = 16;
/// Residual growth over the trend window that reads as divergence.
const RESIDUAL_DIVERGING: f64 = 1e3;
/// Cutbacks among the last `TREND_ROWS` rows that read as repeated.
const REPEATED_CUTBACKS: usize = 4;
/// Iterations per step, as a multiple of the early average, that read as climbing.
const ITERATIONS_CLIMB: f64 = 3.0;

/// The nonlinear-solver detector.
pub struct Solver {
    iter_col: Option<usize>,
    res_col: Option<usize>,
    cut_col: Option<usize>,
    res: [f64; TREND_ROWS],
    cuts: [bool; TREND_ROWS],
    rows: usize,
    iter_early: (f64, u32),
    iter_recent: f64,
    prev_cut: Option<f64>,
    cut_decreased: bool,
    level: Level,
}

impl Solver {
    /// Detector for a segment with these roles.
    pub fn new(roles: &RoleMap) -> Self {
        Self {
            iter_col: roles.find(Role::Iterations),
            res_col: roles.find(Role::Residual),
            cut_col: roles.find(Role::Cutbacks),
            res: [f64::NAN; TREND_ROWS],
            cuts: [false; TREND_ROWS],
            rows: 0,
            iter_early: (0.0, 0),
            iter_recent: 0.0,
            prev_cut: None,
            cut_decreased: false,
            level: Level::Ok,
        }
    }

    /// The worst sign of struggle on this row, if any.
    fn struggle(&mut self, values: &[f64], slot: usize) -> Option<(Level, String)> {
        let get = |c: Option<usize>| super::finite_at(values, c);
        let mut worst: Option<(Level, String)> = None;
        if let Some(it) = get(self.iter_col) {
            if self.iter_early.1 < 32 {
                self.iter_early.0 += it;
                self.iter_early.1 += 1;
            }
            self.iter_recent += 0.1 * (it - self.iter_recent);
            let early = self.iter_early.0 / f64::from(self.iter_early.1.max(1));
            if self.iter_early.1 >= 32 && early > 0.0 && self.iter_recent > ITERATIONS_CLIMB * early
            {
                worst = Some((
                    Level::Warning,
                    format!(
                        "Nonlinear iterations per step climbing: {:.1} now against {:.1} early in the run.",
                        self.iter_recent, early
                    ),
                ));
            }
        }
        if let Some(r) = get(self.res_col) {
            self.res[slot] = r.abs();
            let old = self.res[(slot + 1) % TREND_ROWS];
            if self.rows >= TREND_ROWS && old > 0.0 && r.abs() > RESIDUAL_DIVERGING * old {
                worst = Some((
                    Level::Warning,
                    format!(
                        "Residual diverging: ×{:.0} over the last {TREND_ROWS} outputs.",
                        r.abs() / old
                    ),
                ));
            }
        }
        if let Some(c) = get(self.cut_col) {
            if let Some(p) = self.prev_cut
                && c < p
            {
                self.cut_decreased = true;
            }
            let event = if self.cut_decreased {
                c > 0.0
            } else {
                self.prev_cut.is_some_and(|p| c > p)
            };
            self.prev_cut = Some(c);
            self.cuts[slot] = event;
            let n = self.cuts.iter().filter(|b| **b).count();
            if n >= REPEATED_CUTBACKS {
                worst = Some((
                    Level::Warning,
                    format!("Repeated step cutbacks: {n} of the last {TREND_ROWS} outputs."),
                ));
            }
        }
        worst
    }
}

impl Detector for Solver {
    fn name(&self) -> &'static str {
        "solver"
    }

    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>) {
        let slot = self.rows % TREND_ROWS;
        let implicit = self.struggle(sample.values, slot);
        self.rows += 1;
        let time = shared.clock.time;
        if let Some((lvl, msg)) = &implicit {
            if *lvl > self.level {
                self.level = *lvl;
                out.push(Finding {
                    level: *lvl,
                    line: sample.line,
                    time,
                    message: msg.clone(),
                    evidence: Evidence::default(),
                });
            }
        } else if self.level > Level::Ok && self.rows.is_multiple_of(TREND_ROWS) {
            self.level = Level::Ok;
            out.push(Finding {
                level: Level::Ok,
                line: sample.line,
                time,
                message: "Nonlinear solver back to normal.".into(),
                evidence: Evidence::default(),
            });
        }
    }
}
