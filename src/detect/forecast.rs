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

/// The forecast of `ev` in words, for an alarm message: steps, the simulated
/// time they reach when the file has a time column, and the wall time when
/// the rows were seen arriving — else said to be unknown, never a made-up
/// zero (rows read from a backlog or a finished file carry no pace).
pub fn describe(ev: &Evidence) -> Option<String> {
    let n = ev.forecast_steps?;
    let mut s = format!("overflow in about {n:.0} steps");
    if let Some(t) = ev.forecast_time {
        s += &format!(", near t = {t:.4e}");
    }
    s += &match ev.forecast_wall_s {
        Some(w) => format!(" ({w:.0} s wall clock)"),
        None => " (wall time unknown: the rows were not seen arriving)".into(),
    };
    Some(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_words_never_make_up_a_wall_time() {
        let mut ev = Evidence {
            forecast_steps: Some(625.4),
            forecast_time: Some(3.13),
            ..Evidence::default()
        };
        assert_eq!(
            describe(&ev).unwrap_or_default(),
            "overflow in about 625 steps, near t = 3.1300e0 \
             (wall time unknown: the rows were not seen arriving)"
        );
        ev.forecast_wall_s = Some(41.6);
        ev.forecast_time = None;
        assert_eq!(
            describe(&ev).unwrap_or_default(),
            "overflow in about 625 steps (42 s wall clock)"
        );
        assert_eq!(describe(&Evidence::default()), None);
    }

    #[test]
    fn the_clock_fills_time_and_wall_only_when_it_knows_them() {
        // Growth ×2 per step from 1 reaches 2^10 in 10 steps; 2 steps per row,
        // 0.5 time units and 3 wall seconds per row.
        let mut ev = Evidence::default();
        let mut clock = Clock::default();
        clock.time = Some(1.0);
        clock.steps_per_row = Some(2.0);
        clock.time_per_row = Some(0.5);
        fill(&mut ev, 1.0, 2.0, 1024.0, &clock);
        let close = |a: Option<f64>, b: f64| a.is_some_and(|a| (a - b).abs() < 1e-9);
        assert!(close(ev.forecast_steps, 10.0), "{ev:?}");
        // 10 steps = 5 rows = 2.5 time units after t = 1.
        assert!(close(ev.forecast_time, 3.5), "{ev:?}");
        assert_eq!(ev.forecast_wall_s, None);
        clock.wall_per_row = Some(3.0);
        fill(&mut ev, 1.0, 2.0, 1024.0, &clock);
        assert!(close(ev.forecast_wall_s, 15.0), "{ev:?}");
    }

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
