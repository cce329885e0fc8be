//! Amplification matrices of one step of each [`Scheme`] on the damped
//! oscillator ü + 2ζωu̇ + ω²u = 0, written in scaled variables so that the
//! matrix depends on Ω = ω·Δt and ζ only.
//!
//! First-order schemes act on y = (u, Δt·v) with Δt·L = Z = [[0, 1], [−Ω², −2ζΩ]].
//! Central difference acts on (u(n), Δt·v(n−½)). The Newmark family (Newmark,
//! HHT-α, generalized-α) acts on (u, Δt·v, Δt²·a) and has one extra root.

use nalgebra::{DMatrix, Matrix2};

use super::Scheme;

/// Parameters of the α-family written as generalized-α: the balance equation
/// is taken at (1−α_m)·a(n+1) + α_m·a(n) and (1−α_f)·x(n+1) + α_f·x(n) for
/// velocity and displacement (Chung & Hulbert, J. Appl. Mech. 60, 1993, eq. 3).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlphaParams {
    /// Weight α_m of the old acceleration.
    pub alpha_m: f64,
    /// Weight α_f of the old velocity and displacement.
    pub alpha_f: f64,
    /// Newmark β.
    pub beta: f64,
    /// Newmark γ.
    pub gamma: f64,
}

impl AlphaParams {
    /// Parameters of the Newmark-family schemes; `None` for the others.
    ///
    /// - Newmark: α_m = α_f = 0.
    /// - HHT-α (Hilber, Hughes & Taylor, Earthquake Eng. Struct. Dyn. 5, 1977):
    ///   α_m = 0, α_f = −α, β = (1−α)²/4, γ = (1−2α)/2.
    /// - Generalized-α (Chung & Hulbert 1993, eqs. 25 and 17–19):
    ///   α_m = (2ρ∞−1)/(ρ∞+1), α_f = ρ∞/(ρ∞+1), γ = ½ − α_m + α_f,
    ///   β = ¼(1 − α_m + α_f)².
    pub fn of(scheme: &Scheme) -> Option<AlphaParams> {
        match *scheme {
            Scheme::Newmark { beta, gamma } => Some(AlphaParams {
                alpha_m: 0.0,
                alpha_f: 0.0,
                beta,
                gamma,
            }),
            Scheme::Hht { alpha } => Some(AlphaParams {
                alpha_m: 0.0,
                alpha_f: -alpha,
                beta: (1.0 - alpha).powi(2) / 4.0,
                gamma: (1.0 - 2.0 * alpha) / 2.0,
            }),
            Scheme::GeneralizedAlpha { rho_inf } => {
                let alpha_m = (2.0 * rho_inf - 1.0) / (rho_inf + 1.0);
                let alpha_f = rho_inf / (rho_inf + 1.0);
                let s = 1.0 - alpha_m + alpha_f;
                Some(AlphaParams {
                    alpha_m,
                    alpha_f,
                    beta: 0.25 * s * s,
                    gamma: 0.5 - alpha_m + alpha_f,
                })
            }
            _ => None,
        }
    }
}

/// Amplification matrix of one step of `scheme` at Ω = ω·Δt with damping ratio ζ.
///
/// 2×2 for the first-order schemes and central difference, 3×3 for the
/// Newmark family. Ω and ζ are expected finite and ≥ 0.
pub fn amplification_matrix(scheme: &Scheme, omega: f64, zeta: f64) -> DMatrix<f64> {
    let z = Matrix2::new(0.0, 1.0, -omega * omega, -2.0 * zeta * omega);
    let id = Matrix2::identity();
    let m2 = match scheme {
        // y(n+1) = (I + Z) y(n).
        Scheme::ForwardEuler => id + z,
        // (I − Z) y(n+1) = y(n); det(I − Z) = 1 + 2ζΩ + Ω² > 0.
        Scheme::BackwardEuler => solve(id - z, id),
        // (I − Z/2) y(n+1) = (I + Z/2) y(n).
        Scheme::Trapezoidal => solve(id - z * 0.5, id + z * 0.5),
        // Stability function R(z) = 1 + z + z²/2 + z³/6 + z⁴/24 of classical RK4
        // (Hairer & Wanner, Solving ODEs II, 1996, §IV.2), applied to Z.
        Scheme::Rk4 => {
            let z2 = z * z;
            let z3 = z2 * z;
            id + z + z2 * 0.5 + z3 * (1.0 / 6.0) + z2 * z2 * (1.0 / 24.0)
        }
        // v(n+½) = v(n−½) + Δt·a(n), a(n) = −ω²u(n) − 2ζω·v(n−½), u(n+1) = u(n) + Δt·v(n+½).
        // State (u(n), Δt·v(n−½)); characteristic λ² − (2 − Ω² − 2ζΩ)λ + (1 − 2ζΩ) = 0.
        Scheme::CentralDifference => {
            let k = omega * omega;
            let c = 2.0 * zeta * omega;
            Matrix2::new(1.0 - k, 1.0 - c, -k, 1.0 - c)
        }
        Scheme::Newmark { .. } | Scheme::Hht { .. } | Scheme::GeneralizedAlpha { .. } => {
            return match AlphaParams::of(scheme) {
                Some(p) => alpha_family(&p, omega, zeta),
                None => DMatrix::from_element(3, 3, f64::NAN),
            };
        }
    };
    DMatrix::from_column_slice(2, 2, m2.as_slice())
}

/// Entry-wise limit Ω → ∞ of the Newmark-family matrix (any ζ: the damping
/// terms are O(Ω) against O(Ω²)); `None` for other schemes and for β = 0,
/// where the entries grow without bound. With k = Ω² dominant, the row of A'
/// tends to (−1/((1−α_f)β), −1/β, −(½−β)/β).
pub fn amplification_limit(scheme: &Scheme) -> Option<DMatrix<f64>> {
    let p = AlphaParams::of(scheme)?;
    if p.beta <= 0.0 || p.alpha_f >= 1.0 {
        return None;
    }
    let (beta, gamma) = (p.beta, p.gamma);
    let a_row = [
        -1.0 / ((1.0 - p.alpha_f) * beta),
        -1.0 / beta,
        -(0.5 - beta) / beta,
    ];
    Some(newmark_rows(beta, gamma, a_row))
}

/// X = A⁻¹·B for a 2×2 A; NaN entries when A is singular (never for Ω, ζ ≥ 0).
fn solve(a: Matrix2<f64>, b: Matrix2<f64>) -> Matrix2<f64> {
    match a.try_inverse() {
        Some(inv) => inv * b,
        None => Matrix2::from_element(f64::NAN),
    }
}

/// One step of the α-family on (U, V, A) = (u, Δt·v, Δt²·a):
///   U' = U + V + (½−β)A + βA',  V' = V + (1−γ)A + γA',
///   (1−α_m)A' + α_m·A + (1−α_f)(cV' + kU') + α_f(cV + kU) = 0,
/// with c = 2ζΩ and k = Ω² (Newmark's update formulas, Hughes, The Finite
/// Element Method, 1987, §9.1; balance equation of Chung & Hulbert 1993).
fn alpha_family(p: &AlphaParams, omega: f64, zeta: f64) -> DMatrix<f64> {
    let (am, af, beta, gamma) = (p.alpha_m, p.alpha_f, p.beta, p.gamma);
    let k = omega * omega;
    let c = 2.0 * zeta * omega;
    let d = (1.0 - am) + (1.0 - af) * (gamma * c + beta * k);
    // Row giving A' from (U, V, A).
    let a_row = [
        -k / d,
        -(c + (1.0 - af) * k) / d,
        -(am + (1.0 - af) * (c * (1.0 - gamma) + k * (0.5 - beta))) / d,
    ];
    newmark_rows(beta, gamma, a_row)
}

/// The 3×3 matrix from the row giving A' and Newmark's updates of U and V.
fn newmark_rows(beta: f64, gamma: f64, a_row: [f64; 3]) -> DMatrix<f64> {
    let u_base = [1.0, 1.0, 0.5 - beta];
    let v_base = [0.0, 1.0, 1.0 - gamma];
    DMatrix::from_fn(3, 3, |i, j| match i {
        0 => u_base[j] + beta * a_row[j],
        1 => v_base[j] + gamma * a_row[j],
        _ => a_row[j],
    })
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    /// Entry-wise agreement; round-off of a handful of O(1) operations.
    const TOL_ROUNDOFF: f64 = 1e-12;

    #[test]
    fn generalized_alpha_parameters() {
        // Chung & Hulbert 1993, eqs. 25 and 17–19: ρ∞ = 0.8 gives α_m = 1/3,
        // α_f = 4/9, γ = 0.611111, β = 0.308642.
        let p = AlphaParams::of(&Scheme::GeneralizedAlpha { rho_inf: 0.8 }).unwrap();
        assert!((p.alpha_m - 0.333333).abs() < 1e-6);
        assert!((p.alpha_f - 0.444444).abs() < 1e-6);
        assert!((p.gamma - 0.611111).abs() < 1e-6);
        assert!((p.beta - 0.308642).abs() < 1e-6);
    }

    #[test]
    fn hht_with_zero_alpha_is_average_acceleration() {
        // Hilber, Hughes & Taylor 1977: α = 0 recovers Newmark β = ¼, γ = ½.
        let a = amplification_matrix(&Scheme::Hht { alpha: 0.0 }, 1.3, 0.05);
        let b = amplification_matrix(
            &Scheme::Newmark {
                beta: 0.25,
                gamma: 0.5,
            },
            1.3,
            0.05,
        );
        assert!((a - b).abs().max() < TOL_ROUNDOFF);
    }

    #[test]
    fn newmark_step_satisfies_its_own_equations() {
        // Apply the 3×3 map and check the balance equation at n+1 holds.
        let (beta, gamma, omega, zeta) = (0.3, 0.6, 0.7, 0.1);
        let m = amplification_matrix(&Scheme::Newmark { beta, gamma }, omega, zeta);
        let x = nalgebra::DVector::from_vec(vec![0.4, -0.2, 0.1]);
        let y = &m * &x;
        let residual = y[2] + 2.0 * zeta * omega * y[1] + omega * omega * y[0];
        assert!(residual.abs() < TOL_ROUNDOFF);
        let u_pred = x[0] + x[1] + (0.5 - beta) * x[2] + beta * y[2];
        assert!((y[0] - u_pred).abs() < TOL_ROUNDOFF);
    }
}
