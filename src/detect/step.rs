//! Step-size detector. Explicit step sizes follow the smallest element
//! (Δt ≤ L/c, Courant), so a step that keeps falling, span after span, while
//! simulated time stalls means elements are distorting towards inversion.
//! A cut that holds or recovers is normal: an adaptive controller meeting a
//! stiff contact cuts its step by three or four orders of magnitude at once,
//! holds it for a few hundred rows and lets it grow back; such a cut raises
//! nothing. What counts is a steady decline: the step lower in each of
//! several consecutive blocks of rows, no single block carrying most of the
//! fall, and no recovery. The signs of a struggling implicit solver are the
//! solver detector's.

use super::clock::Clock;
use super::{Detector, Sample, Shared};
use crate::finding::{Evidence, Finding, Level};
use crate::parse::roles::{Role, RoleMap};

/// Rows per block of the step's history; each block keeps its largest step.
const BLOCK_ROWS: usize = 16;
/// Blocks kept (2,048 rows).
const BLOCKS: usize = 128;
/// "Lower": a block's largest step under this fraction of the block before's
/// (a plateau with jitter does not qualify).
const STILL_FALLING: f64 = 0.99;
/// Fewest consecutive falling blocks, counting the first, that make a decline.
const MIN_BLOCKS: usize = 4;
/// No single block may carry more than this share of the fall over the
/// decline in log terms: a sudden cut followed by a slow drift is not a
/// steady decline.
const MAX_BLOCK_SHARE: f64 = 0.6;
/// A steady decline warns once it has taken the step down by this factor
/// (one order of magnitude) ...
const WARN_FALL: f64 = 10.0;
/// ... and is critical past this factor (two orders of magnitude, still
/// falling block after block): simulated time has all but stalled.
const CRITICAL_FALL: f64 = 100.0;
/// A raised step alarm clears once the step is back above this fraction of its peak.
const RECOVERED: f64 = 0.1;
/// The fall of a steady decline ending at the newest block of `blocks`
/// (largest step of each block, oldest first): the ratio between the first
/// and the newest of the consecutive falling blocks, when there are at least
/// `MIN_BLOCKS` of them and no single block carries more than
/// `MAX_BLOCK_SHARE` of the fall; `None` otherwise.
pub fn steady_fall(blocks: &[f64]) -> Option<f64> {
    let n = blocks.len();
    let mut start = n.checked_sub(1)?;
    while start > 0 && blocks[start] < STILL_FALLING * blocks[start - 1] && blocks[start] > 0.0 {
        start -= 1;
    }
    let run = &blocks[start..];
    if run.len() < MIN_BLOCKS {
        return None;
    }
    let total = (run[0] / run[run.len() - 1]).ln();
    let largest = run
        .windows(2)
        .map(|w| (w[0] / w[1]).ln())
        .fold(0.0, f64::max);
    (total > 0.0 && largest <= MAX_BLOCK_SHARE * total).then(|| total.exp())
}

/// The step-size detector.
pub struct StepSize {
    step_col: Option<usize>,
    time_col: Option<usize>,
    prev_time: Option<f64>,
    prev_step: Option<f64>,
    peak: f64,
    /// Largest step of each of the last `BLOCKS` complete blocks, oldest first.
    blocks: std::collections::VecDeque<f64>,
    /// Largest step of the block being filled, and its rows.
    block_max: f64,
    block_rows: usize,
    level: Level,
    /// Fall of the steady decline judged at the last complete block.
    fall: Option<f64>,
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
            blocks: std::collections::VecDeque::with_capacity(BLOCKS),
            block_max: 0.0,
            block_rows: 0,
            level: Level::Ok,
            fall: None,
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
        let time = clock.time;
        let Some(dt) = dt else {
            return;
        };
        self.peak = self.peak.max(dt);
        let ratio = dt / self.peak;
        self.block_max = self.block_max.max(dt);
        self.block_rows += 1;
        if self.block_rows == BLOCK_ROWS {
            if self.blocks.len() == BLOCKS {
                self.blocks.pop_front();
            }
            self.blocks.push_back(self.block_max);
            self.block_max = 0.0;
            self.block_rows = 0;
            self.fall = steady_fall(self.blocks.make_contiguous());
        }
        // A decline ends as soon as the step grows back.
        if self.fall.is_some() && dt > self.blocks.back().copied().unwrap_or(f64::INFINITY) {
            self.fall = None;
        }
        let fall = self.fall.unwrap_or(1.0);
        let level = if fall >= CRITICAL_FALL {
            Level::Critical
        } else if fall >= WARN_FALL {
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
                Level::Warning => format!(
                    "Time step falling steadily: {dt:.3e} ({ratio:.1e} of its peak {:.3e}), down ×{fall:.0} and lower in every block of {BLOCK_ROWS} rows — elements may be distorting.",
                    self.peak
                ),
                Level::Critical => format!(
                    "Time step collapsing: {dt:.3e} ({ratio:.1e} of its peak {:.3e}), down ×{fall:.0} and still lower in every block of {BLOCK_ROWS} rows, with no recovery: simulated time has all but stalled — elements are distorting; expect the run to stall or stop.",
                    self.peak
                ),
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steady_fall_needs_every_block_lower_and_no_single_drop() {
        let geometric: Vec<f64> = (0..10).map(|i| 0.5f64.powi(i)).collect();
        let f = steady_fall(&geometric).unwrap_or(0.0);
        assert!((f - 512.0).abs() < 1e-9, "{f}");
        // A plateau, then a cut by 10^3 and a slow drift: the fall sits in one block.
        let cut = [1.0, 1.0, 1.0, 1e-3, 0.97e-3, 0.94e-3, 0.91e-3];
        assert_eq!(steady_fall(&cut), None);
        // A decline that has turned back up is not one any more.
        let mut back = geometric.clone();
        back.push(0.01);
        assert_eq!(steady_fall(&back), None);
        // Too short.
        assert_eq!(steady_fall(&[1.0, 0.1, 0.01]), None);
    }
}
