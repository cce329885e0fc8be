//! Where a row sits in the run: simulated time, solver step, step size and
//! arrival instant, with smoothed rates per row (steps per output, simulated
//! time per output, wall seconds per output). Shared by the detectors so that
//! growth per output can be turned into growth per solver step and forecasts
//! into steps, simulated time and wall-clock time.

use crate::parse::roles::{Role, RoleMap};

/// Weight of the newest row in the smoothed rates.
const RATE_WEIGHT: f64 = 0.05;

/// Weight of the newest group of rows that arrived together in the smoothed
/// wall time per row: each group measures the mean over one read exactly, so
/// a few groups suffice and a change of pace shows within about four reads.
const WALL_WEIGHT: f64 = 0.25;

/// Rows that arrived together, at one instant: the solver wrote them after
/// the instant before.
#[derive(Debug, Clone, Copy)]
struct Arrivals {
    at_s: f64,
    rows: u64,
}

/// Per-segment clock.
#[derive(Debug, Clone, Default)]
pub struct Clock {
    time_col: Option<usize>,
    step_col: Option<usize>,
    dt_col: Option<usize>,
    /// Simulated time per solver step known without a column (declared by the
    /// file, `timestep 0.005`, or given by the user): with a step counter and no
    /// time column, time = step × this; with a time column and no step counter,
    /// steps per row = time per row ÷ this.
    declared_step: Option<f64>,
    /// Latest finite values.
    pub time: Option<f64>,
    pub step: Option<f64>,
    pub dt: Option<f64>,
    pub arrival_s: Option<f64>,
    /// Smoothed solver steps per row (from the step counter, or Δtime/Δt).
    pub steps_per_row: Option<f64>,
    /// Smoothed simulated time per row.
    pub time_per_row: Option<f64>,
    /// Smoothed wall seconds per row, measured only on rows seen arriving
    /// (live); `None` while unknown (a plain file, a backlog, the first reads).
    pub wall_per_row: Option<f64>,
    /// The rows arriving at the latest instant, and the instant before them.
    arriving: Option<Arrivals>,
    before_s: Option<f64>,
}

fn smooth(old: Option<f64>, new: f64) -> Option<f64> {
    if !new.is_finite() {
        return old;
    }
    Some(match old {
        Some(o) => o + RATE_WEIGHT * (new - o),
        None => new,
    })
}

impl Clock {
    /// A clock reading the time, step-number and step-size columns of `roles`.
    pub fn new(roles: &RoleMap) -> Self {
        Self {
            time_col: roles.find(Role::Time),
            step_col: roles.find(Role::StepNumber),
            dt_col: roles.find(Role::StepSize),
            ..Self::default()
        }
    }

    /// A step size known without a column: time is step × `dt` when a step
    /// counter but no time column is written (particle-code logs), and the
    /// stride is the time per row ÷ `dt` when a time column but neither a step
    /// counter nor a step-size column is (structural recorders).
    pub fn set_declared_step(&mut self, dt: Option<f64>) {
        self.declared_step = dt.filter(|h| h.is_finite() && *h > 0.0 && self.dt_col.is_none());
    }

    /// Column of the simulated time, if any.
    pub fn time_col(&self) -> Option<usize> {
        self.time_col
    }

    /// Column of the step size, if any.
    pub fn dt_col(&self) -> Option<usize> {
        self.dt_col
    }

    /// Advance by one row.
    pub fn tick(&mut self, values: &[f64], arrival_s: Option<f64>) {
        let read = |c: Option<usize>| super::finite_at(values, c);
        let step = read(self.step_col);
        let time = match self.time_col {
            Some(_) => read(self.time_col),
            None => step.zip(self.declared_step).map(|(s, h)| s * h),
        };
        let dt = read(self.dt_col);
        if let (Some(t), Some(t0)) = (time, self.time) {
            self.time_per_row = smooth(self.time_per_row, t - t0);
        }
        match (step, self.step) {
            (Some(s), Some(s0)) => self.steps_per_row = smooth(self.steps_per_row, s - s0),
            _ => {
                if let (Some(t), Some(t0), Some(h)) = (time, self.time, dt.or(self.declared_step))
                    && h > 0.0
                {
                    self.steps_per_row = smooth(self.steps_per_row, ((t - t0) / h).max(1.0));
                }
            }
        }
        if let Some(a) = arrival_s {
            self.arrive(a);
        }
        self.time = time.or(self.time);
        self.step = step.or(self.step);
        self.dt = dt.or(self.dt);
        self.arrival_s = arrival_s.or(self.arrival_s);
    }

    /// Count a row that arrived at `at_s`. A read hands over many rows at one
    /// instant; the wall time per row is the time between two reads over the
    /// rows the later one brought, taken when the next read closes the group.
    /// Rows without an arrival (a backlog, a plain file) say nothing of the
    /// solver's pace, however fast they were read.
    fn arrive(&mut self, at_s: f64) {
        let Some(g) = self.arriving else {
            self.arriving = Some(Arrivals { at_s, rows: 1 });
            return;
        };
        if at_s <= g.at_s {
            self.arriving = Some(Arrivals {
                rows: g.rows + 1,
                ..g
            });
            return;
        }
        if let Some(b) = self.before_s {
            let w = (g.at_s - b) / g.rows as f64;
            if w.is_finite() {
                self.wall_per_row = Some(match self.wall_per_row {
                    Some(o) => o + WALL_WEIGHT * (w - o),
                    None => w,
                });
            }
        }
        self.before_s = Some(g.at_s);
        self.arriving = Some(Arrivals { at_s, rows: 1 });
    }

    /// Whether the steps per output are known from the file (a step counter,
    /// or the time and a step size); when not, [`Self::steps_per_output`]
    /// assumes one.
    pub fn stride_known(&self) -> bool {
        self.steps_per_row.is_some()
    }

    /// Solver steps per output: known from the file, or 1 when it cannot tell.
    pub fn steps_per_output(&self) -> f64 {
        self.steps_per_row.filter(|k| *k >= 1.0).unwrap_or(1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative tolerance: the groups below are exact, so only rounding remains.
    const TOL: f64 = 1e-9;

    #[test]
    fn rows_read_in_groups_give_the_solver_pace_not_the_read_speed() {
        // A solver writing a row every 10 ms, read once a second: 100 rows
        // arrive at each read. Counted at any row of a group, the pace is
        // 10 ms per row (1 s over the 100 rows a read brings).
        let mut c = Clock::default();
        for read in 0..10 {
            for _ in 0..100 {
                c.tick(&[], Some(f64::from(read)));
            }
            if read < 2 {
                // Two reads are needed to time the rows of the second.
                assert_eq!(c.wall_per_row, None, "read {read}");
            }
        }
        let w = c.wall_per_row.unwrap_or(f64::NAN);
        assert!((w - 0.01).abs() < 0.01 * TOL, "{w}");
    }

    #[test]
    fn rows_without_an_arrival_leave_the_pace_unknown() {
        // A backlog or a plain file: rows come as fast as they are read.
        let mut c = Clock::default();
        for _ in 0..1000 {
            c.tick(&[], None);
        }
        assert_eq!(c.wall_per_row, None);
    }

    #[test]
    fn a_change_of_pace_shows_within_a_few_reads() {
        let mut c = Clock::default();
        let mut t = 0.0;
        for rows in [10, 10, 10, 10, 100, 100, 100, 100, 100, 100, 100, 100] {
            t += 1.0;
            for _ in 0..rows {
                c.tick(&[], Some(t));
            }
        }
        // 0.1 s per row at first, then 0.01 s; after seven groups at the new
        // pace the estimate is within (1 - 0.25)^7 ≈ 13 % of the gap.
        let w = c.wall_per_row.unwrap_or(f64::NAN);
        assert!(w > 0.01 && w < 0.01 + 0.14 * 0.09, "{w}");
    }
}
