//! From what a history shows back to Ω = ω·Δt: the Ω at which a scheme's
//! amplification has a given spectral radius (a mode growing by ρ per step
//! sits past the limit, where ρ rises with Ω), or a given phase per step (a
//! resolved mode below the limit, where the phase rises with Ω). With the
//! scheme's limit Ω_crit this gives the stability margin Ω_crit/Ω − 1 of what
//! was observed. Bisection with a fixed number of halvings; every
//! eigenvalue call is the capped one of [`super::spectrum`].

use super::limit::OMEGA_MAX;
use super::{Scheme, SchemeError, principal_eigenvalue, scheme_radius};

/// Halvings of the bracket: 2⁻⁶⁰ of its width, below f64 resolution of Ω.
const HALVINGS: u32 = 60;

/// Ω in [`omega_crit`, OMEGA_MAX] where the spectral radius of `scheme` equals
/// `rho` (> 1): the first crossing above the limit. `None` when ρ is not
/// reached there or `rho` ≤ 1.
pub fn omega_at_radius(
    scheme: &Scheme,
    rho: f64,
    zeta: f64,
    omega_crit: f64,
) -> Result<Option<f64>, SchemeError> {
    if rho.is_nan() || rho <= 1.0 || omega_crit.is_nan() || omega_crit < 0.0 {
        return Ok(None);
    }
    // Walk up by doublings to bracket the crossing, then halve.
    let mut lo = omega_crit;
    let mut hi = omega_crit.max(1e-3);
    loop {
        if scheme_radius(scheme, hi, zeta)? >= rho {
            break;
        }
        lo = hi;
        hi *= 2.0;
        if hi > OMEGA_MAX {
            return Ok(None);
        }
    }
    for _ in 0..HALVINGS {
        let mid = 0.5 * (lo + hi);
        if scheme_radius(scheme, mid, zeta)? >= rho {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Ok(Some(0.5 * (lo + hi)))
}

/// Ω in (0, `omega_hi`] where the principal (oscillating) eigenvalue of
/// `scheme` turns by `theta` radians per step. `None` when `theta` is not in
/// (0, π) or the phase is not reached below `omega_hi`.
pub fn omega_at_phase(
    scheme: &Scheme,
    theta: f64,
    zeta: f64,
    omega_hi: f64,
) -> Result<Option<f64>, SchemeError> {
    if !(theta > 0.0 && theta < std::f64::consts::PI) || omega_hi.is_nan() || omega_hi <= 0.0 {
        return Ok(None);
    }
    let phase = |omega: f64| -> Result<f64, SchemeError> {
        Ok(principal_eigenvalue(scheme, omega, zeta)?.map_or(std::f64::consts::PI, |l| l.arg()))
    };
    if phase(omega_hi)? < theta {
        return Ok(None);
    }
    let (mut lo, mut hi) = (0.0, omega_hi);
    for _ in 0..HALVINGS {
        let mid = 0.5 * (lo + hi);
        if phase(mid)? >= theta {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Ok(Some(0.5 * (lo + hi)))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    /// Bisection to 2⁻⁶⁰ of the bracket; the eigenvalues carry rounding of
    /// about 1e-13 near the limit, so Ω is good to about 1e-9.
    const TOL: f64 = 1e-9;

    #[test]
    fn central_difference_radius_inverts_to_omega() {
        // Characteristic equation λ² − (2 − Ω²)λ + 1 = 0 of undamped central
        // difference: beyond Ω = 2, ρ = a + √(a² − 1) with a = (Ω² − 2)/2
        // (Belytschko, Liu & Moran, Nonlinear Finite Elements for Continua and
        // Structures, 2000, §6.3, from memory). ρ(2.01) = 1.221301, ρ(2.5) = 4.
        for (omega, rho) in [(2.01_f64, 1.221301_f64), (2.5, 4.0)] {
            let a = (omega * omega - 2.0) / 2.0;
            let exact = a + (a * a - 1.0).sqrt();
            let got = omega_at_radius(&Scheme::CentralDifference, exact, 0.0, 2.0)
                .unwrap()
                .unwrap();
            assert!((got - omega).abs() < TOL, "{got} vs {omega}");
            // The 7-digit check value lands within its own rounding.
            let got = omega_at_radius(&Scheme::CentralDifference, rho, 0.0, 2.0)
                .unwrap()
                .unwrap();
            assert!((got - omega).abs() < 1e-5, "{got} vs {omega}");
        }
        assert!(
            omega_at_radius(&Scheme::CentralDifference, 0.99, 0.0, 2.0)
                .unwrap()
                .is_none()
        );
    }

    #[test]
    fn forward_euler_radius_inverts_to_omega() {
        // ρ = √(1 + Ω²) for undamped forward Euler (closed form of 1 + iΩ).
        let got = omega_at_radius(&Scheme::ForwardEuler, 2f64.sqrt(), 0.0, 0.0)
            .unwrap()
            .unwrap();
        assert!((got - 1.0).abs() < TOL, "{got}");
    }

    #[test]
    fn central_difference_phase_inverts_to_omega() {
        // Below the limit cos θ = 1 − Ω²/2 (same characteristic equation).
        for omega in [0.1, 1.0, 1.9] {
            let theta = (1.0 - omega * omega / 2.0_f64).acos();
            let got = omega_at_phase(&Scheme::CentralDifference, theta, 0.0, 2.0)
                .unwrap()
                .unwrap();
            assert!((got - omega).abs() < TOL, "{got} vs {omega}");
        }
    }
}
