//! The per-row predictor of the last fit: it predicts each new row from the
//! rows before it, and asks for a refit when its one-step misfit rises well
//! above the misfit the fit itself had (something new is in the data).

use crate::detect::modes::{self, Analysis};

/// Refit when the RMS one-step misfit exceeds this multiple of the fit's own.
const TRIGGER_RATIO: f64 = 4.0;
/// Weight of the newest row in the misfit average.
const MISFIT_WEIGHT: f64 = 0.125;

/// Per-row predictor of the last fit, for the refit trigger.
pub struct Model {
    analysis: Analysis,
    /// The last `d` channel vectors, a ring of `d` slots of `q` values.
    snap: Vec<f64>,
    /// Slot of the newest channel vector.
    head: usize,
    misfit2: f64,
    base2: f64,
    y: Vec<f64>,
}

impl Model {
    /// The predictor of `analysis`, seeded with the newest rows of the window
    /// it was fitted on (`n` rows of `m` values, row-major).
    pub fn seed(analysis: Analysis, rows: &[f64], n: usize, m: usize) -> Self {
        let (q, d) = (analysis.map.q, analysis.map.d);
        // Newest in slot 0, the one before in slot d − 1, and so on.
        let mut snap = vec![0.0; q * d];
        let mut y = vec![0.0; q];
        for lag in 0..d.min(n) {
            let r = n - 1 - lag;
            analysis.map.channels(&rows[r * m..(r + 1) * m], &mut y);
            let slot = (d - lag) % d;
            snap[slot * q..(slot + 1) * q].copy_from_slice(&y);
        }
        let floor = 1e-9 * analysis.signal_rms;
        let base = analysis.misfit_rms.max(floor);
        Self {
            snap,
            head: 0,
            misfit2: base * base,
            base2: base * base,
            y,
            analysis,
        }
    }

    /// Update the per-row predictor; returns true when the misfit calls for a refit.
    pub fn track(&mut self, row: &[f64]) -> bool {
        let (q, d) = (self.analysis.map.q, self.analysis.map.d);
        let mut y = std::mem::take(&mut self.y);
        self.analysis.map.channels(row, &mut y);
        // The predictor is column-major: columns lag·q .. lag·q + q hold the
        // gains of the channel vector `lag` rows back. The prediction error
        // is accumulated in place.
        let p = self.analysis.predictor.as_slice();
        let mut err = [0.0; modes::MAX_CHANNELS];
        err[..q].copy_from_slice(&y);
        let mut slot = self.head;
        for gains in p.chunks_exact(q * q) {
            let s = &self.snap[slot * q..(slot + 1) * q];
            for (g, sv) in gains.chunks_exact(q).zip(s) {
                for (e, gv) in err.iter_mut().zip(g) {
                    *e -= gv * sv;
                }
            }
            slot = if slot == 0 { d - 1 } else { slot - 1 };
        }
        let e2: f64 = err[..q].iter().map(|e| e * e).sum();
        self.misfit2 += MISFIT_WEIGHT * (e2 / q as f64 - self.misfit2);
        self.head = if self.head + 1 == d { 0 } else { self.head + 1 };
        self.snap[self.head * q..(self.head + 1) * q].copy_from_slice(&y);
        self.y = y;
        self.misfit2 > TRIGGER_RATIO * TRIGGER_RATIO * self.base2
    }
}
