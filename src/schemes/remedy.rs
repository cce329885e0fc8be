//! What to do about a mode that grows past a known scheme's limit: the
//! largest stable step for it, with a safety factor. The mode's Ω = ω·Δt is
//! read back from its growth per step through the scheme's amplification
//! ([`omega_at_radius`]), not from its frequency in the rows, which is aliased
//! when several steps pass between rows or the mode flips sign every row; then
//! ω = Ω/Δt and the limit step is Ω_crit/ω. The undamped mode is assumed:
//! damping lowers both the limit and the step, so the step given is an upper
//! bound of what is stable. Pure: no I/O.

use super::courant::DEFAULT_SAFETY;
use super::{Scheme, omega_at_radius};

/// Within this fraction of π of phase per row, a mode sits at the rows'
/// Nyquist frequency: it flips sign from row to row (sampling tolerance,
/// common practice, no source).
pub const NYQUIST_FRAC: f64 = 0.02;

/// True when a mode turning by `phase_per_row` radians from row to row sits
/// at the rows' Nyquist frequency (an alias, whatever its true frequency).
pub fn at_nyquist(phase_per_row: f64) -> bool {
    (phase_per_row.abs() - std::f64::consts::PI).abs() <= NYQUIST_FRAC * std::f64::consts::PI
}

/// The largest step at which a mode of angular frequency `omega_rad_s` is
/// stable under a scheme with limit `omega_crit`: the limit Ω = ω·Δt ≤ Ω_crit
/// solved for Δt, Δt_crit = Ω_crit/ω (for central difference Ω_crit = 2 and
/// Δt_crit = 2/ω_max; T. J. R. Hughes, The Finite Element Method, 1987, §9.1,
/// from memory). 0 for a scheme unstable at every step (Ω_crit = 0); `None`
/// unless ω is positive and finite and Ω_crit finite and not negative.
pub fn limit_step_s(omega_crit: f64, omega_rad_s: f64) -> Option<f64> {
    let ok =
        omega_crit.is_finite() && omega_crit >= 0.0 && omega_rad_s.is_finite() && omega_rad_s > 0.0;
    ok.then(|| omega_crit / omega_rad_s)
}

/// A suggested step for a mode that grows past the limit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StableStep {
    /// The step the run used (s).
    pub dt_s: f64,
    /// Ω = ω·Δt of the growing mode at that step, read from its growth.
    pub omega_dt: f64,
    /// The scheme's limit Ω_crit (undamped).
    pub omega_crit: f64,
    /// The mode's angular frequency ω = Ω/Δt (rad/s).
    pub omega_rad_s: f64,
    /// The largest stable step for the mode, Ω_crit/ω (s).
    pub limit_s: f64,
    /// Safety factor applied.
    pub safety: f64,
    /// The step suggested: safety × the limit (s).
    pub suggested_s: f64,
}

/// The stable step for a mode growing by `rho_step` per solver step at step
/// `dt_s` under `scheme` (limit `omega_crit`), with the default safety factor
/// ([`DEFAULT_SAFETY`]). `None` when the growth is not past the limit, the
/// scheme never reaches it, or the step is unknown.
pub fn from_growth(
    scheme: &Scheme,
    omega_crit: f64,
    rho_step: f64,
    dt_s: f64,
) -> Option<StableStep> {
    if !(dt_s.is_finite() && dt_s > 0.0) {
        return None;
    }
    let omega_dt = omega_at_radius(scheme, rho_step, 0.0, omega_crit)
        .ok()
        .flatten()
        .filter(|w| *w > 0.0)?;
    let omega_rad_s = omega_dt / dt_s;
    let limit_s = limit_step_s(omega_crit, omega_rad_s)?;
    Some(StableStep {
        dt_s,
        omega_dt,
        omega_crit,
        omega_rad_s,
        limit_s,
        safety: DEFAULT_SAFETY,
        suggested_s: DEFAULT_SAFETY * limit_s,
    })
}

/// The `rhoscope limits` options that check `scheme` at `omega_rad_s` and
/// `dt_s`, as typed on the command line.
pub fn limits_options(scheme: &Scheme, omega_rad_s: f64, dt_s: f64) -> String {
    let params = match *scheme {
        Scheme::Newmark { beta, gamma } => format!(" --beta {beta} --gamma {gamma}"),
        Scheme::Hht { alpha } => format!(" --alpha {alpha}"),
        Scheme::GeneralizedAlpha { rho_inf } => format!(" --rho-inf {rho_inf}"),
        _ => String::new(),
    };
    format!(
        "--scheme {}{params} --omega {} --dt {}",
        scheme.name(),
        short(omega_rad_s),
        short(dt_s)
    )
}

/// Four significant digits, as typed.
fn short(v: f64) -> String {
    let s = format!("{v:.3e}");
    // `1.000e-3` → `1e-3`: trailing zeros of the mantissa add nothing.
    match s.split_once('e') {
        Some((m, e)) => {
            let m = m.trim_end_matches('0').trim_end_matches('.');
            format!("{m}e{e}")
        }
        None => s,
    }
}

impl StableStep {
    /// How the step was reached, in one sentence (the `basis` of the
    /// report's `suggested_dt`). `aliased`: the mode sits at the rows'
    /// Nyquist frequency, so its frequency in the rows says nothing of ω.
    pub fn basis(&self, scheme: &Scheme, rho_step: f64, aliased: bool) -> String {
        let mut s = format!(
            "{scheme}: limit ω·Δt = {:.4}; the mode grows ×{rho_step:.4} per step, which this scheme \
             gives at ω·Δt = {:.4}, so at Δt = {} s it has ω = {} rad/s and is stable up to \
             Δt = {} s; × safety {} = {} s. An undamped mode is assumed: damping lowers the limit, \
             so this step is an upper bound",
            self.omega_crit,
            self.omega_dt,
            short(self.dt_s),
            short(self.omega_rad_s),
            short(self.limit_s),
            self.safety,
            short(self.suggested_s),
        );
        if aliased {
            s.push_str(
                ". Its frequency in the rows is their Nyquist frequency, an alias: ω comes from \
                 the growth, and the step is at least this far past the limit",
            );
        }
        s
    }

    /// The remedy in one sentence for an alarm message.
    pub fn sentence(&self, scheme: &Scheme) -> String {
        if self.limit_s <= 0.0 {
            return format!(
                "Remedy: no step keeps an undamped mode stable under {scheme}; a scheme with a \
                 stability limit is needed (see `rhoscope limits --scheme NAME`)"
            );
        }
        format!(
            "Remedy ({}): a step of at most {} s ({} of this mode's limit {} s; the run uses {} s) \
             keeps it stable; check with `rhoscope limits {}`",
            scheme,
            short(self.suggested_s),
            self.safety,
            short(self.limit_s),
            short(self.dt_s),
            limits_options(scheme, self.omega_rad_s, self.dt_s)
        )
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    /// Spectral radius of undamped central difference past its limit, from
    /// the characteristic equation λ² − (2 − Ω²)λ + 1 = 0 of its one-step map:
    /// ρ = (Ω²−2)/2 + √(((Ω²−2)/2)² − 1) for Ω > 2 (Hughes, The Finite Element
    /// Method, 1987, §9.1, from memory; ρ(2.01) = 1.221301 reproduced from
    /// the amplification matrix).
    fn cd_radius(omega: f64) -> f64 {
        let b = (omega * omega - 2.0) / 2.0;
        b + (b * b - 1.0).sqrt()
    }

    #[test]
    fn the_limit_step_is_the_limit_over_the_frequency() {
        // Central difference, ω = 1000 rad/s: Δt_crit = 2/ω = 2 ms.
        assert!((limit_step_s(2.0, 1000.0).unwrap() - 2e-3).abs() < 1e-15);
        assert_eq!(limit_step_s(2.0, 0.0), None);
        assert_eq!(limit_step_s(0.0, 5.0), Some(0.0));
        assert_eq!(limit_step_s(f64::NAN, 1.0), None);
    }

    #[test]
    fn a_mode_flipping_sign_every_row_is_at_the_nyquist_frequency() {
        use std::f64::consts::PI;
        assert!(at_nyquist(PI) && at_nyquist(-0.99 * PI));
        assert!(!at_nyquist(0.9 * PI) && !at_nyquist(0.0));
    }

    #[test]
    fn a_central_difference_mode_past_its_limit_gives_back_its_frequency_and_step() {
        // A mode at ω = 2010 rad/s run at Δt = 1 ms (Ω = 2.01) grows by
        // ρ(2.01) per step; its limit step is 2/2010 s.
        let dt = 1e-3;
        let rho = cd_radius(2.01);
        assert!((rho - 1.221301).abs() < 1e-6, "{rho}");
        let s = from_growth(&Scheme::CentralDifference, 2.0, rho, dt).unwrap();
        // Tolerance: the bisection on Ω converges to f64 resolution; the
        // limit found by the grid scan and bisection is 2 within 1e-9.
        assert!((s.omega_dt - 2.01).abs() < 1e-9, "{s:?}");
        assert!((s.omega_rad_s - 2010.0).abs() < 1e-5, "{s:?}");
        assert!((s.limit_s - 2.0 / 2010.0).abs() < 1e-12, "{s:?}");
        assert!((s.suggested_s - 0.9 * 2.0 / 2010.0).abs() < 1e-12, "{s:?}");
        // Not past the limit, or no step: nothing to suggest.
        assert_eq!(
            from_growth(&Scheme::CentralDifference, 2.0, 0.999, dt),
            None
        );
        assert_eq!(from_growth(&Scheme::CentralDifference, 2.0, rho, 0.0), None);
    }

    #[test]
    fn the_limits_command_names_the_scheme_and_its_parameters() {
        assert_eq!(
            limits_options(&Scheme::CentralDifference, 2010.0, 1e-3),
            "--scheme central-difference --omega 2.01e3 --dt 1e-3"
        );
        assert_eq!(
            limits_options(&Scheme::Hht { alpha: -0.1 }, 50.0, 0.02),
            "--scheme hht --alpha -0.1 --omega 5e1 --dt 2e-2"
        );
        let s = from_growth(&Scheme::CentralDifference, 2.0, cd_radius(2.01), 1e-3).unwrap();
        let text = s.sentence(&Scheme::CentralDifference);
        assert!(text.contains("at most 8.955e-4 s"), "{text}");
        assert!(
            text.contains("rhoscope limits --scheme central-difference"),
            "{text}"
        );
        assert!(
            s.basis(&Scheme::CentralDifference, 1.2213, true)
                .contains("Nyquist")
        );
    }
}
