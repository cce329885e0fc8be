//! Step-size detector. Explicit step sizes follow the smallest element
//! (Δt ≤ L/c, Courant), so a step that falls by orders of magnitude while
//! simulated time stalls means elements are distorting towards inversion.
//! A dip that recovers (contact, an adaptive controller) is normal. The
//! signs of a struggling implicit solver are the solver detector's.

use super::clock::Clock;
use super::{Detector, Sample, Shared};
use crate::finding::{Evidence, Finding, Level};
use crate::parse::roles::{Role, RoleMap};

/// Rows of recent history kept for trends.
const TREND_ROWS: usize = 16;
/// Step below this fraction of its running peak (two orders of magnitude): warning.
const WARN_DROP: f64 = 1e-2;
/// Step below this fraction of its running peak, and still falling: critical
/// (three orders of magnitude: the run is grinding to a halt).
const CRITICAL_DROP: f64 = 1e-3;
/// "Still falling": the step is below this fraction of its value `TREND_ROWS` ago.
const FALLING: f64 = 0.5;
/// Rows over which a steady decline of the step is judged.
const DECLINE_ROWS: usize = 64;
/// "Still falling" within a decline: under this fraction of the step
/// `TREND_ROWS` earlier (and at mid-span, of the step at its start).
const STILL_FALLING: f64 = 0.9;
/// A steady decline counts once the step is under this fraction of its peak
/// (one order of magnitude).
const DECLINE_DROP: f64 = 0.1;
/// Rows the step must stay under `WARN_DROP` of its peak before a warning.
const PERSIST_ROWS: usize = 3;
/// Rows under `WARN_DROP` of the peak, without recovering, that mean the run
/// has stalled: critical.
const STALL_ROWS: usize = TREND_ROWS;
/// A raised step alarm clears once the step is back above this fraction of its peak.
const RECOVERED: f64 = 0.1;

/// The step-size detector.
pub struct StepSize {
    step_col: Option<usize>,
    time_col: Option<usize>,
    prev_time: Option<f64>,
    prev_step: Option<f64>,
    peak: f64,
    dts: [f64; DECLINE_ROWS],
    rows: usize,
    level: Level,
    below: usize,
}

impl StepSize {
    /// Detector for a segment with these roles.
    pub fn new(roles: &RoleMap) -> Self {
        Self {
            step_col: roles.find(Role::StepNumber),
            time_col: roles.find(Role::Time),
            prev_time: None,
            prev_step: None,
            peak: 0.0,
            dts: [f64::NAN; DECLINE_ROWS],
            rows: 0,
            level: Level::Ok,
            below: 0,
        }
    }

    /// The step size of this row: the step-size column, or Δtime/Δstep.
    fn dt(&mut self, values: &[f64], clock: &Clock) -> Option<f64> {
        let get = |c: Option<usize>| super::finite_at(values, c);
        let t = get(self.time_col);
        let s = get(self.step_col);
        let from_col = get(clock.dt_col());
        let derived = match (t, self.prev_time, s, self.prev_step) {
            (Some(t), Some(t0), Some(s), Some(s0)) if s > s0 => Some((t - t0) / (s - s0)),
            _ => None,
        };
        self.prev_time = t.or(self.prev_time);
        self.prev_step = s.or(self.prev_step);
        from_col.or(derived).filter(|v| *v > 0.0)
    }
}

impl Detector for StepSize {
    fn name(&self) -> &'static str {
        "step"
    }

    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>) {
        let clock = &shared.clock;
        let dt = self.dt(sample.values, clock);
        self.rows += 1;
        let time = clock.time;
        let Some(dt) = dt else {
            return;
        };
        let long_slot = (self.rows - 1) % DECLINE_ROWS;
        let long_ago = self.dts[long_slot];
        let old = self.dts[(self.rows - 1 + DECLINE_ROWS - TREND_ROWS) % DECLINE_ROWS];
        self.dts[long_slot] = dt;
        // A sustained decline: an order of magnitude under the peak, the
        // newest step the smallest of the last DECLINE_ROWS, half of what it
        // was DECLINE_ROWS ago, and falling in both halves of that span (a
        // sudden drop or a dip that holds or recovers does not qualify).
        let mid = self.dts[(self.rows - 1 + DECLINE_ROWS / 2) % DECLINE_ROWS];
        // Cheap tests first: the scan of the whole span runs only when the
        // step is already falling.
        let declining = long_ago.is_finite()
            && dt < FALLING * long_ago
            && mid < STILL_FALLING * long_ago
            && old.is_finite()
            && dt < STILL_FALLING * old
            && dt < DECLINE_DROP * self.peak.max(dt)
            && self.dts.iter().all(|v| !v.is_finite() || *v >= dt);
        self.peak = self.peak.max(dt);
        let ratio = dt / self.peak;
        self.below = if ratio < WARN_DROP { self.below + 1 } else { 0 };
        let recovering = old.is_finite() && dt > old;
        let halving = old.is_finite() && dt < FALLING * old;
        let stalled = self.below >= STALL_ROWS && !recovering;
        let level = if (ratio < CRITICAL_DROP && halving) || stalled || declining {
            Level::Critical
        } else if self.below >= PERSIST_ROWS {
            Level::Warning
        } else if ratio > RECOVERED {
            Level::Ok
        } else {
            self.level
        };
        if level != self.level && (level > self.level || level == Level::Ok) {
            let message = match level {
                Level::Ok => format!(
                    "Time step recovered to {:.3e} ({:.0} % of its peak).",
                    dt,
                    ratio * 100.0
                ),
                _ => {
                    let mut m = format!(
                        "Time step collapsing: {:.3e}, {:.1e} of its peak {:.3e} and still falling — elements are distorting; expect the run to stall or stop.",
                        dt, ratio, self.peak
                    );
                    // Geometric decline by r per output: the simulated time still
                    // reachable is bounded by the sum Δt_row·(1 + r + r² + …).
                    if long_ago.is_finite() && dt < long_ago {
                        let r = (dt / long_ago).powf(1.0 / DECLINE_ROWS as f64);
                        if let (Some(t), Some(tpr)) = (time, clock.time_per_row) {
                            m += &format!(
                                " At this rate of decline the run cannot get past t = {:.6e}.",
                                t + tpr / (1.0 - r)
                            );
                        }
                    }
                    m
                }
            };
            self.level = level;
            out.push(Finding {
                level,
                line: sample.line,
                time,
                message,
                evidence: Evidence::default(),
            });
        }
    }
}
