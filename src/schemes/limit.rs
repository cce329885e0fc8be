//! Stability limit of a scheme: the smallest Ω = ω·Δt at which the spectral
//! radius first exceeds 1, found by scanning a geometric grid of Ω for a sign
//! change of ρ(Ω) − 1 and bisecting the bracket; and the spectral radius in the
//! limit Ω → ∞ for unconditionally stable schemes.
//!
//! Two tolerances: the scan looks for clear growth (ρ > 1 + [`SCAN_TOL`]), so the
//! √ε-to-∛ε spread of the clustered roots some schemes have at large Ω is not
//! taken for instability; the bracket is then widened backwards and bisected on
//! ρ > 1 + [`EDGE_TOL`], which puts the limit where ρ actually crosses 1.

use super::amplification::amplification_limit;
use nalgebra::Complex;

use super::spectrum::{eigenvalues, scheme_radius};
use super::{Scheme, SchemeError};

/// Growth the scan must see: above the worst round-off of the clustered roots
/// of generalized-α with ρ∞ = 1 at Ω → ∞ (measured ≈ 1e-5).
pub const SCAN_TOL: f64 = 1e-4;

/// Growth that counts at the edge: above the Schur round-off of balanced
/// 2×2/3×3 matrices with distinct roots (≈ 1e-15).
pub const EDGE_TOL: f64 = 1e-10;

/// Smallest Ω scanned. A scheme that grows already here (about 6,000 steps per
/// period) is reported with limit 0: unstable at every practical step.
pub const OMEGA_MIN: f64 = 1e-3;

/// Largest Ω scanned; no growth up to here means unconditionally stable.
pub const OMEGA_MAX: f64 = 1e8;

/// Grid points per decade of the scan.
const POINTS_PER_DECADE: i32 = 40;

/// Ω at which ρ∞ is read for the 2×2 schemes.
const OMEGA_INF: f64 = 1e8;

fn grid(k: i32) -> f64 {
    OMEGA_MIN * 10f64.powf(f64::from(k) / f64::from(POINTS_PER_DECADE))
}

fn grows(scheme: &Scheme, omega: f64, zeta: f64, tol: f64) -> Result<bool, SchemeError> {
    Ok(scheme_radius(scheme, omega, zeta)? > 1.0 + tol)
}

/// Stability limit Ω_crit of `scheme` at damping ratio ζ: ρ ≤ 1 just below it
/// and ρ > 1 just above it.
///
/// `Ok(None)` means no growth anywhere in [`OMEGA_MIN`, `OMEGA_MAX`]:
/// unconditionally stable. `Ok(Some(0.0))` means growth already at
/// [`OMEGA_MIN`]. A stable window beyond the first limit is not reported.
pub fn critical_omega(scheme: &Scheme, zeta: f64) -> Result<Option<f64>, SchemeError> {
    let n = (OMEGA_MAX / OMEGA_MIN).log10().round() as i32 * POINTS_PER_DECADE;
    for k in 0..=n {
        if !grows(scheme, grid(k), zeta, SCAN_TOL)? {
            continue;
        }
        // Walk back to the last grid point without any growth.
        let mut j = k;
        loop {
            if j == 0 {
                return Ok(Some(0.0));
            }
            j -= 1;
            if !grows(scheme, grid(j), zeta, EDGE_TOL)? {
                break;
            }
        }
        return bisect(scheme, zeta, grid(j), grid(j + 1)).map(Some);
    }
    Ok(None)
}

/// Bisect [lo, hi] (lo without growth, hi growing) down to round-off.
fn bisect(scheme: &Scheme, zeta: f64, mut lo: f64, mut hi: f64) -> Result<f64, SchemeError> {
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if grows(scheme, mid, zeta, EDGE_TOL)? {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Ok(0.5 * (lo + hi))
}

/// Spectral radius in the limit Ω → ∞ for unconditionally stable schemes;
/// `None` for schemes with a stability limit, where ρ grows without bound.
///
/// The Newmark family uses the entry-wise limit matrix (independent of ζ).
/// Its roots coincide there by design (a double or triple root at −ρ∞), and
/// a defective multiple root is computed only to ∛ε ≈ 6e-6; the mean of a
/// cluster is well conditioned, so each cluster counts by the modulus of its
/// mean. The first-order schemes are read at Ω = 1e8.
pub fn rho_inf(scheme: &Scheme, zeta: f64) -> Result<Option<f64>, SchemeError> {
    if critical_omega(scheme, zeta)?.is_some() {
        return Ok(None);
    }
    match amplification_limit(scheme) {
        Some(m) => Ok(Some(clustered_radius(&eigenvalues(&m)?))),
        None => scheme_radius(scheme, OMEGA_INF, zeta).map(Some),
    }
}

/// Eigenvalues closer than this count as one multiple root.
const CLUSTER_TOL: f64 = 1e-4;

/// Largest modulus of the cluster means of `eig`.
fn clustered_radius(eig: &[Complex<f64>]) -> f64 {
    let mut clusters: Vec<(Complex<f64>, f64)> = Vec::new();
    for &l in eig {
        match clusters
            .iter_mut()
            .find(|(sum, n)| (sum / *n - l).norm() < CLUSTER_TOL)
        {
            Some((sum, n)) => {
                *sum += l;
                *n += 1.0;
            }
            None => clusters.push((l, 1.0)),
        }
    }
    clusters
        .iter()
        .map(|(sum, n)| (sum / *n).norm())
        .fold(0.0, f64::max)
}

/// Spectral radius at `count` values of Ω spaced geometrically over
/// [omega_lo, omega_hi], as (Ω, ρ) pairs; for tables and charts.
pub fn rho_curve(
    scheme: &Scheme,
    zeta: f64,
    omega_lo: f64,
    omega_hi: f64,
    count: usize,
) -> Result<Vec<(f64, f64)>, SchemeError> {
    let count = count.max(2);
    let step = (omega_hi / omega_lo).ln() / (count - 1) as f64;
    (0..count)
        .map(|i| {
            let omega = omega_lo * (step * i as f64).exp();
            scheme_radius(scheme, omega, zeta).map(|rho| (omega, rho))
        })
        .collect()
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn forward_euler_limit_is_twice_zeta() {
        // |1 + Ω(−ζ ± i√(1−ζ²))|² = 1 − 2ζΩ + Ω² ≤ 1 iff Ω ≤ 2ζ (closed form of
        // the amplification factor; common practice, no source).
        let w = critical_omega(&Scheme::ForwardEuler, 0.05)
            .unwrap()
            .unwrap();
        assert!((w - 0.1).abs() < 1e-5);
        assert_eq!(
            critical_omega(&Scheme::ForwardEuler, 0.0).unwrap(),
            Some(0.0)
        );
    }

    #[test]
    fn implicit_schemes_have_no_limit() {
        for s in [
            Scheme::BackwardEuler,
            Scheme::Trapezoidal,
            Scheme::Hht { alpha: -1.0 / 3.0 },
            Scheme::GeneralizedAlpha { rho_inf: 1.0 },
            Scheme::GeneralizedAlpha { rho_inf: 0.0 },
            Scheme::Newmark {
                beta: 0.3025,
                gamma: 0.6,
            },
        ] {
            for zeta in [0.0, 0.05, 1.0, 5.0] {
                assert_eq!(critical_omega(&s, zeta).unwrap(), None, "{s} ζ = {zeta}");
            }
        }
    }

    #[test]
    fn rho_inf_of_generalized_alpha_is_exact_at_the_triple_root() {
        // The parameters are built so that ρ∞ is the given value (Chung &
        // Hulbert, J. Appl. Mech. 60, 1993, eq. 25); all three roots meet there.
        for r in [0.0, 0.3, 0.8, 1.0] {
            let s = Scheme::GeneralizedAlpha { rho_inf: r };
            let got = rho_inf(&s, 0.0).unwrap().unwrap();
            assert!((got - r).abs() < 1e-9, "ρ∞ = {r}: got {got}");
        }
    }
}
