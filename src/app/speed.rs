//! Pace of the run measured from when its rows arrived: solver steps (or rows,
//! when the file has no step column) per wall-clock second, and simulated
//! seconds per wall-clock second, over the last couple of minutes.

use std::collections::VecDeque;

/// Wall-clock span of the pace window (seconds).
const WINDOW_S: f64 = 120.0;
/// Samples kept at most.
const MAX_SAMPLES: usize = 256;
/// Shortest wall-clock span that gives a pace (seconds).
const MIN_SPAN_S: f64 = 1.0;

/// One arrival: wall instant, step count (or rows) and simulated time.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Mark {
    wall_s: f64,
    steps: f64,
    time_s: Option<f64>,
}

/// Recent arrivals of the run.
#[derive(Debug, Clone, Default)]
pub struct Speed {
    marks: VecDeque<Mark>,
    /// Counting rows, not solver steps (no step column).
    pub rows_not_steps: bool,
}

impl Speed {
    /// Note that at `wall_s` the run had reached `steps` and simulated `time_s`.
    pub fn mark(&mut self, wall_s: f64, steps: f64, time_s: Option<f64>, rows_not_steps: bool) {
        if self.rows_not_steps != rows_not_steps {
            self.marks.clear();
            self.rows_not_steps = rows_not_steps;
        }
        if let Some(last) = self.marks.back()
            && (steps < last.steps || wall_s < last.wall_s)
        {
            // A restart rewound the count: start over.
            self.marks.clear();
        }
        self.marks.push_back(Mark {
            wall_s,
            steps,
            time_s,
        });
        while self.marks.len() > MAX_SAMPLES
            || self
                .marks
                .front()
                .is_some_and(|m| wall_s - m.wall_s > WINDOW_S && self.marks.len() > 2)
        {
            self.marks.pop_front();
        }
    }

    fn span(&self) -> Option<(Mark, Mark)> {
        let a = *self.marks.front()?;
        let b = *self.marks.back()?;
        (b.wall_s - a.wall_s >= MIN_SPAN_S).then_some((a, b))
    }

    /// Steps (or rows) per wall-clock second.
    pub fn steps_per_s(&self) -> Option<f64> {
        let (a, b) = self.span()?;
        Some((b.steps - a.steps) / (b.wall_s - a.wall_s))
    }

    /// Simulated seconds per wall-clock second.
    pub fn sim_per_wall_s(&self) -> Option<f64> {
        let (a, b) = self.span()?;
        Some((b.time_s? - a.time_s?) / (b.wall_s - a.wall_s))
    }

    /// Forget all marks.
    pub fn clear(&mut self) {
        self.marks.clear();
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    // Tolerance: a few roundings of decimal inputs.
    const TOL: f64 = 1e-9;

    #[test]
    fn pace_over_the_window() {
        let mut s = Speed::default();
        assert!(s.steps_per_s().is_none());
        for k in 0..10 {
            let w = f64::from(k);
            s.mark(w, 50.0 * w, Some(1e-3 * w), false);
        }
        assert!((s.steps_per_s().unwrap() - 50.0).abs() < TOL);
        assert!((s.sim_per_wall_s().unwrap() - 1e-3).abs() < TOL);
    }

    #[test]
    fn a_rewound_count_starts_over() {
        let mut s = Speed::default();
        s.mark(0.0, 100.0, None, false);
        s.mark(5.0, 200.0, None, false);
        s.mark(6.0, 10.0, None, false);
        assert!(s.steps_per_s().is_none());
        assert!(s.sim_per_wall_s().is_none());
    }
}
