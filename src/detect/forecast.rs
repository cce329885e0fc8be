//! Overflow forecast: with a quantity of present magnitude x growing by a
//! factor ρ per solver step, the bound X is reached after
//! n = ln(X/x)/ln ρ steps (geometric growth, xₙ = x·ρⁿ). Converted to
//! simulated time with the present step size and to wall-clock seconds with
//! the measured wall time per step when following live. Natural logarithms
//! keep the arithmetic finite even for X = f64::MAX (ln X ≈ 709.78).

use super::clock::Clock;
use crate::finding::Evidence;

/// Solver steps until |x| reaches `bound` when growing by `rho_step` per step.
/// `None` when there is no growth or the inputs are unusable.
pub fn steps_to_bound(magnitude: f64, rho_step: f64, bound: f64) -> Option<f64> {
    let usable = magnitude > 0.0 && magnitude.is_finite() && rho_step > 1.0 && bound > 0.0;
    if !usable {
        return None;
    }
    let n = (bound.ln() - magnitude.ln()) / rho_step.ln();
    Some(n.max(0.0))
}

/// Fill the forecast fields of `ev` from the growth per step and the clock.
pub fn fill(ev: &mut Evidence, magnitude: f64, rho_step: f64, bound: f64, clock: &Clock) {
    let Some(n) = steps_to_bound(magnitude, rho_step, bound) else {
        return;
    };
    ev.forecast_steps = Some(n);
    let k = clock.steps_per_output();
    if let (Some(t), Some(tpr)) = (clock.time, clock.time_per_row) {
        ev.forecast_time = Some(t + n / k * tpr);
    }
    if let Some(w) = clock.wall_per_row {
        ev.forecast_wall_s = Some(n / k * w);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ten_decades_at_known_factors() {
        // Ten decades take ln(1e10)/ln ρ steps: 2,314 at 1.01, 115 at 1.221301
        // (FIELD-NOTES §3, reproduced numerically; here checked against the closed form).
        let n = steps_to_bound(1.0, 1.01, 1e10).unwrap_or(0.0);
        assert!((n - 2314.0).abs() < 1.0, "{n}");
        let n = steps_to_bound(1.0, 1.221301, 1e10).unwrap_or(0.0);
        assert!((n - 115.0).abs() < 1.0, "{n}");
        assert!(steps_to_bound(1.0, 0.99, 1e10).is_none());
        let n = steps_to_bound(1.0, 2.0, f64::MAX).unwrap_or(0.0);
        assert!((n - 1024.0).abs() < 0.01, "{n}");
    }
}
