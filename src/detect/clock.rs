//! Where a row sits in the run: simulated time, solver step, step size and
//! arrival instant, with smoothed rates per row (steps per output, simulated
//! time per output, wall seconds per output). Shared by the detectors so that
//! growth per output can be turned into growth per solver step and forecasts
//! into steps, simulated time and wall-clock time.

use crate::parse::roles::{Role, RoleMap};

/// Weight of the newest row in the smoothed rates.
const RATE_WEIGHT: f64 = 0.05;

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
    /// Smoothed wall seconds per row (live only).
    pub wall_per_row: Option<f64>,
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
        if let (Some(a), Some(a0)) = (arrival_s, self.arrival_s) {
            self.wall_per_row = smooth(self.wall_per_row, a - a0);
        }
        self.time = time.or(self.time);
        self.step = step.or(self.step);
        self.dt = dt.or(self.dt);
        self.arrival_s = arrival_s.or(self.arrival_s);
    }

    /// Solver steps per output: known from the file, or 1 when it cannot tell.
    pub fn steps_per_output(&self) -> f64 {
        self.steps_per_row.filter(|k| *k >= 1.0).unwrap_or(1.0)
    }
}
