//! Spectral radius of a scheme's one-step map, linearised about the current
//! state (mass, tangent stiffness K, tangent damping C, step Δt). Used by
//! the label rule's onset: the first step where it passes 1 + 1e-9.
//!
//! - Central difference with damping from v(n−½), state (u_n, v_{n−½}):
//!   A = [[I − Δt²M⁻¹K, Δt(I − ΔtM⁻¹C)], [−ΔtM⁻¹K, I − ΔtM⁻¹C]]
//!   (derived from the update; undamped 1-DOF: trace 2 − Ω², det 1).
//! - Newmark β–γ: the map on (u, v) built column by column from one step of
//!   the linear system with consistent accelerations.
//! - Forward Euler and RK4: ρ = max |R(Δt·λ)| over the eigenvalues λ of the
//!   first-order matrix [[0, I], [−M⁻¹K, −M⁻¹C]].

use nalgebra::{Complex, DMatrix, DVector, Schur};

/// Growth past this counts as past the limit.
pub const LIMIT_TOL: f64 = 1e-9;

/// Largest modulus of the eigenvalues of a square matrix: infinite when an
/// entry is not finite; through the Schur form with a capped iteration, and
/// by Gelfand's formula ‖A⁶⁴‖^{1/64} if that does not converge.
pub fn spectral_radius(a: &DMatrix<f64>) -> f64 {
    if a.iter().any(|x| !x.is_finite()) {
        return f64::INFINITY;
    }
    match Schur::try_new(a.clone(), f64::EPSILON, 100_000) {
        Some(s) => s
            .complex_eigenvalues()
            .iter()
            .map(|z| z.norm())
            .fold(0.0, f64::max),
        None => {
            // A^(2^k) = e^L · P with ‖P‖ = 1.
            let first = a.norm();
            if first == 0.0 {
                return 0.0;
            }
            let mut p = a / first;
            let mut log_scale = first.ln();
            for _ in 0..6 {
                p = &p * &p;
                let norm = p.norm();
                if norm == 0.0 {
                    return 0.0;
                }
                p /= norm;
                log_scale = 2.0 * log_scale + norm.ln();
            }
            (log_scale / 64.0).exp()
        }
    }
}

/// A scaled Gershgorin bound on ω_max (√ of the largest row sum of
/// |M^{-½}KM^{-½}|) and on the largest damping rate (row sums of
/// |M^{-½}CM^{-½}|).
pub fn bounds(mass: &[f64], k: &DMatrix<f64>, c: &DMatrix<f64>) -> (f64, f64) {
    let n = mass.len();
    let (mut wk, mut wc) = (0.0f64, 0.0f64);
    for i in 0..n {
        let (mut sk, mut sc) = (0.0, 0.0);
        for j in 0..n {
            let s = 1.0 / (mass[i] * mass[j]).sqrt();
            sk += (k[(i, j)] * s).abs();
            sc += (c[(i, j)] * s).abs();
        }
        wk = wk.max(sk);
        wc = wc.max(sc);
    }
    (wk.sqrt(), wc)
}

/// Spectral radius of central difference (damping from v(n−½)).
pub fn cd_radius(mass: &[f64], k: &DMatrix<f64>, c: &DMatrix<f64>, dt: f64) -> f64 {
    let n = mass.len();
    let mut a = DMatrix::zeros(2 * n, 2 * n);
    for i in 0..n {
        for j in 0..n {
            let mk = k[(i, j)] / mass[i];
            let mc = c[(i, j)] / mass[i];
            let id = if i == j { 1.0 } else { 0.0 };
            a[(i, j)] = id - dt * dt * mk;
            a[(i, n + j)] = dt * (id - dt * mc);
            a[(n + i, j)] = -dt * mk;
            a[(n + i, n + j)] = id - dt * mc;
        }
    }
    spectral_radius(&a)
}

/// Spectral radius of Newmark β–γ on the linear system M a + C v + K u = 0.
pub fn newmark_radius(
    mass: &[f64],
    k: &DMatrix<f64>,
    c: &DMatrix<f64>,
    dt: f64,
    beta: f64,
    gamma: f64,
) -> f64 {
    let n = mass.len();
    let m = DMatrix::from_diagonal(&DVector::from_column_slice(mass));
    let s = &m + c * (gamma * dt) + k * (beta * dt * dt);
    let Some(s_inv) = s.try_inverse() else {
        return f64::INFINITY;
    };
    let m_inv = DMatrix::from_diagonal(&DVector::from_iterator(n, mass.iter().map(|x| 1.0 / x)));
    let mut a = DMatrix::zeros(2 * n, 2 * n);
    for col in 0..2 * n {
        let mut u = DVector::zeros(n);
        let mut v = DVector::zeros(n);
        if col < n {
            u[col] = 1.0;
        } else {
            v[col - n] = 1.0;
        }
        let acc = -(&m_inv * (k * &u + c * &v));
        let ut = &u + &v * dt + &acc * ((0.5 - beta) * dt * dt);
        let vt = &v + &acc * ((1.0 - gamma) * dt);
        let a1 = -(&s_inv * (k * &ut + c * &vt));
        let u1 = ut + &a1 * (beta * dt * dt);
        let v1 = vt + &a1 * (gamma * dt);
        for r in 0..n {
            a[(r, col)] = u1[r];
            a[(n + r, col)] = v1[r];
        }
    }
    spectral_radius(&a)
}

/// Stability function of an explicit Runge–Kutta scheme.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Explicit {
    /// R(z) = 1 + z.
    ForwardEuler,
    /// R(z) = 1 + z + z²/2 + z³/6 + z⁴/24.
    Rk4,
}

impl Explicit {
    /// R(z).
    pub fn r(self, z: Complex<f64>) -> Complex<f64> {
        let one = Complex::new(1.0, 0.0);
        match self {
            Explicit::ForwardEuler => one + z,
            Explicit::Rk4 => one + z + z * z / 2.0 + z * z * z / 6.0 + z * z * z * z / 24.0,
        }
    }
}

/// max |R(Δt·λ)| over the eigenvalues λ of [[0, I], [−M⁻¹K, −M⁻¹C]].
pub fn explicit_radius(
    scheme: Explicit,
    mass: &[f64],
    k: &DMatrix<f64>,
    c: &DMatrix<f64>,
    dt: f64,
) -> f64 {
    let n = mass.len();
    let mut l = DMatrix::zeros(2 * n, 2 * n);
    for i in 0..n {
        l[(i, n + i)] = 1.0;
        for j in 0..n {
            l[(n + i, j)] = -k[(i, j)] / mass[i];
            l[(n + i, n + j)] = -c[(i, j)] / mass[i];
        }
    }
    if l.iter().any(|x| !x.is_finite()) {
        return f64::INFINITY;
    }
    match Schur::try_new(l, f64::EPSILON, 100_000) {
        Some(s) => s
            .complex_eigenvalues()
            .iter()
            .map(|lam| scheme.r(lam * dt).norm())
            .fold(0.0, f64::max),
        None => f64::INFINITY,
    }
}

/// Remembers the last tangent so a linear run computes its radius once.
#[derive(Debug, Clone, Default)]
pub struct Cache {
    last: Option<(DMatrix<f64>, DMatrix<f64>, f64, f64)>,
}

impl Cache {
    /// The radius for (K, C, Δt), computed by `f` unless unchanged.
    pub fn radius(
        &mut self,
        k: &DMatrix<f64>,
        c: &DMatrix<f64>,
        dt: f64,
        f: impl FnOnce() -> f64,
    ) -> f64 {
        if let Some((lk, lc, ldt, r)) = &self.last
            && lk == k
            && lc == c
            && *ldt == dt
        {
            return *r;
        }
        let r = f();
        self.last = Some((k.clone(), c.clone(), dt, r));
        r
    }
}

impl Cache {
    /// The last radius when it was computed for this step.
    pub fn last_for(&self, dt: f64) -> Option<f64> {
        match &self.last {
            Some((_, _, ldt, r)) if *ldt == dt => Some(*r),
            _ => None,
        }
    }
}
