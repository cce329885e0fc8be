//! Eigenvalues of amplification matrices and what they mean for the motion:
//! spectral radius, algorithmic damping and period elongation.
//!
//! Eigenvalues come from nalgebra's real Schur decomposition with an iteration
//! cap (`Schur::try_new`), so a matrix that does not converge gives an error
//! instead of a hang.

use nalgebra::linalg::balancing::balance_parlett_reinsch;
use nalgebra::{Complex, DMatrix, Schur};

use super::{Scheme, SchemeError, amplification_matrix};

/// Iteration cap of the Schur decomposition; 2×2 and 3×3 matrices converge in
/// a handful of sweeps, so hitting it means the matrix is not usable.
const SCHUR_MAX_ITER: usize = 10_000;

/// Imaginary parts below this (relative to the modulus) count as a real
/// eigenvalue: the discrete motion does not oscillate.
const REAL_EIGENVALUE_TOL: f64 = 1e-12;

/// Eigenvalues of a square matrix (capped real Schur decomposition).
pub fn eigenvalues(m: &DMatrix<f64>) -> Result<Vec<Complex<f64>>, SchemeError> {
    if !m.is_square() || m.iter().any(|v| !v.is_finite()) {
        return Err(SchemeError::NoConvergence(m.nrows()));
    }
    // Parlett–Reinsch balancing (a diagonal similarity) first: the Newmark-family
    // states (u, Δt·v, Δt²·a) differ by Ω² in scale, which costs accuracy at large Ω.
    let mut balanced = m.clone();
    balance_parlett_reinsch(&mut balanced);
    let schur = Schur::try_new(balanced, f64::EPSILON, SCHUR_MAX_ITER)
        .ok_or(SchemeError::NoConvergence(m.nrows()))?;
    Ok(schur.complex_eigenvalues().iter().copied().collect())
}

/// Spectral radius ρ = max |λᵢ| of a square matrix.
pub fn spectral_radius(m: &DMatrix<f64>) -> Result<f64, SchemeError> {
    Ok(eigenvalues(m)?.iter().map(|l| l.norm()).fold(0.0, f64::max))
}

/// Spectral radius of one step of `scheme` at Ω = ω·Δt and damping ratio ζ.
pub fn scheme_radius(scheme: &Scheme, omega: f64, zeta: f64) -> Result<f64, SchemeError> {
    spectral_radius(&amplification_matrix(scheme, omega, zeta))
}

/// The principal root: the eigenvalue with positive imaginary part (the
/// oscillating pair), or `None` when every eigenvalue is real.
pub fn principal_eigenvalue(
    scheme: &Scheme,
    omega: f64,
    zeta: f64,
) -> Result<Option<Complex<f64>>, SchemeError> {
    let eig = eigenvalues(&amplification_matrix(scheme, omega, zeta))?;
    Ok(eig
        .into_iter()
        .filter(|l| l.im > REAL_EIGENVALUE_TOL * l.norm().max(f64::MIN_POSITIVE))
        .max_by(|a, b| a.norm().total_cmp(&b.norm())))
}

/// Algorithmic damping ratio at Ω: the damping ratio of the discrete motion
/// minus the physical ζ.
///
/// The discrete motion λⁿ is read as a continuous one, s = ln(λ)/Δt, whose
/// damping ratio is −Re s/|s| = −ln|λ| / √(ln²|λ| + arg²λ). For ζ = 0 and small
/// damping this is Hughes' ξ̄ = −ln(A² + B²)/(2Ω̄) (The Finite Element Method,
/// 1987, §9.1). `None` when the discrete motion does not oscillate.
pub fn damping_ratio_at(
    scheme: &Scheme,
    omega: f64,
    zeta: f64,
) -> Result<Option<f64>, SchemeError> {
    Ok(principal_eigenvalue(scheme, omega, zeta)?.map(|l| {
        let ln_r = l.norm().ln();
        let arg = l.arg();
        -ln_r / (ln_r * ln_r + arg * arg).sqrt() - zeta
    }))
}

/// Relative period error (T̄ − T)/T at Ω: positive is period elongation.
///
/// T = 2π/(ω√(1−ζ²)) is the exact damped period and T̄ = 2πΔt/arg λ that of
/// the discrete motion (Hughes 1987, §9.1, for ζ = 0). `None` when ζ ≥ 1 or
/// the discrete motion does not oscillate.
pub fn period_error_at(scheme: &Scheme, omega: f64, zeta: f64) -> Result<Option<f64>, SchemeError> {
    if zeta >= 1.0 {
        return Ok(None);
    }
    Ok(principal_eigenvalue(scheme, omega, zeta)?
        .map(|l| omega * (1.0 - zeta * zeta).sqrt() / l.arg() - 1.0))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    /// Schur eigenvalues of 2×2 and 3×3 matrices with O(1) entries.
    const TOL_EIG: f64 = 1e-10;

    #[test]
    #[allow(clippy::approx_constant)] // the 7-digit values are the check, as printed
    fn forward_and_backward_euler_moduli() {
        // Closed forms |1 ± iΩ| = √(1+Ω²) and 1/√(1+Ω²): forward Euler Ω = 1 →
        // 1.4142136, backward Euler → 0.7071068 (common practice, no source).
        let fe = scheme_radius(&Scheme::ForwardEuler, 1.0, 0.0).unwrap();
        let be = scheme_radius(&Scheme::BackwardEuler, 1.0, 0.0).unwrap();
        assert!((fe - 1.4142136).abs() < 1e-7);
        assert!((be - 0.7071068).abs() < 1e-7);
    }

    #[test]
    fn trapezoidal_equals_average_acceleration() {
        // Trapezoidal rule on the first-order form and Newmark β = ¼, γ = ½ give
        // the same spectrum (Hughes, The Finite Element Method, 1987, §9.1).
        let nm = Scheme::Newmark {
            beta: 0.25,
            gamma: 0.5,
        };
        for omega in [0.1, 1.0, 3.0, 30.0] {
            let a = principal_eigenvalue(&Scheme::Trapezoidal, omega, 0.05)
                .unwrap()
                .unwrap();
            let b = principal_eigenvalue(&nm, omega, 0.05).unwrap().unwrap();
            assert!((a - b).norm() < TOL_EIG, "Ω = {omega}: {a} vs {b}");
        }
    }

    #[test]
    fn exact_integration_would_report_no_error() {
        // Sanity of the definitions: build λ = exp(Ω(−ζ + i√(1−ζ²))) by hand and
        // read it back as the damping ratio and period of the exact motion.
        let (omega, zeta): (f64, f64) = (0.7, 0.1);
        let wd = (1.0 - zeta * zeta).sqrt();
        let l = Complex::new(-zeta * omega, omega * wd).exp();
        let ln_r = l.norm().ln();
        let xi = -ln_r / (ln_r * ln_r + l.arg() * l.arg()).sqrt();
        assert!((xi - zeta).abs() < 1e-12);
        assert!((omega * wd / l.arg() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn nan_matrix_is_an_error_not_a_hang() {
        let m = DMatrix::from_element(3, 3, f64::NAN);
        assert!(spectral_radius(&m).is_err());
    }
}
