//! Least-squares and eigenvalue fits shared with the detectors: dynamic mode
//! decomposition of delay-embedded snapshots (the linear one-step map that best
//! carries each snapshot to the next), with the rank chosen by a gap in the
//! singular values or a noise threshold — never by an energy fraction, which
//! throws away a growing mode while it is still small — plus the mode's own
//! amplitude history, and a straight-line fit. Pure nalgebra; every
//! decomposition has an iteration cap.
//!
//! Sources: Schmid, "Dynamic mode decomposition of numerical and experimental
//! data", J. Fluid Mech. 656, 2010 (reduced operator Ã = Uᵀ Y V Σ⁻¹);
//! Tu et al., "On dynamic mode decomposition: theory and applications",
//! J. Comput. Dyn. 1, 2014; Gavish & Donoho, "The optimal hard threshold for
//! singular values is 4/√3", IEEE Trans. Inf. Theory 60, 2014 (threshold
//! ω(β)·median(s) for unknown noise, eq. (5) approximation).

use nalgebra::{Complex, DMatrix, DVector, SVD, Schur};

/// Iteration cap of the singular value decomposition.
const SVD_MAX_ITER: usize = 400;
/// Iteration cap of the Schur decomposition, per unit of dimension.
const SCHUR_ITER_PER_DIM: usize = 60;
/// Two consecutive singular values further apart than this ratio mark the
/// edge between signal and noise. The noise bulk of a matrix with aspect
/// ratio β ≤ 0.15 spans at most ((1+√β)/(1−√β))² ≈ 5 (Marchenko–Pastur edges).
pub const RANK_GAP: f64 = 10.0;
/// Singular values below this fraction of the largest are rounding (f64 has
/// about 16 digits; keep a margin of four).
pub const ROUNDING_FLOOR: f64 = 1e-12;

/// A complex sequence: a mode's amplitude history or an eigenvector.
pub type ModeSeries = Vec<Complex<f64>>;

/// Result of one DMD fit.
#[derive(Debug, Clone)]
pub struct DmdFit {
    /// Eigenvalues of the reduced one-step operator (per snapshot interval).
    pub eigenvalues: Vec<Complex<f64>>,
    /// Rank kept.
    pub rank: usize,
    /// All singular values of the snapshot matrix, descending.
    pub singular_values: Vec<f64>,
    /// Reduced operator Ã (rank × rank).
    pub reduced: DMatrix<f64>,
    /// Basis U_r of the kept subspace (dimension × rank).
    pub basis: DMatrix<f64>,
}

/// Gavish–Donoho ω(β) ≈ 0.56β³ − 0.95β² + 1.82β + 1.43 for unknown noise
/// (Gavish & Donoho 2014, eq. (5) fit), β = short side / long side.
pub fn gavish_donoho_omega(beta: f64) -> f64 {
    0.56 * beta.powi(3) - 0.95 * beta.powi(2) + 1.82 * beta + 1.43
}

/// Number of singular values to keep: the largest count that ends at a gap of
/// at least [`RANK_GAP`] (so that a small but clean mode above the noise bulk
/// is kept), or, when there is no such gap, the Gavish–Donoho hard threshold.
/// Values under [`ROUNDING_FLOOR`] × s₀ are never kept.
pub fn select_rank(s: &[f64], rows: usize, cols: usize) -> usize {
    let Some(&s0) = s.first() else {
        return 0;
    };
    if s0.is_nan() || s0 <= 0.0 || !s0.is_finite() {
        return 0;
    }
    let floor = s0 * ROUNDING_FLOOR;
    let usable = s.iter().take_while(|&&v| v > floor).count();
    let mut gap_rank = 0;
    for r in 1..=usable.min(s.len() - 1) {
        let next = s[r];
        if next <= floor || s[r - 1] >= RANK_GAP * next {
            gap_rank = r;
        }
    }
    // Without any gap, fall back to the hard threshold on the median.
    let (short, long) = if rows < cols {
        (rows, cols)
    } else {
        (cols, rows)
    };
    let beta = short.max(1) as f64 / long.max(1) as f64;
    let mut sorted: Vec<f64> = s.to_vec();
    sorted.sort_by(|a, b| a.total_cmp(b));
    let median = sorted.get(sorted.len() / 2).copied().unwrap_or(0.0);
    let tau = gavish_donoho_omega(beta) * median;
    let gd_rank = s.iter().filter(|&&v| v > tau && v > floor).count();
    gap_rank.max(gd_rank).min(usable)
}

/// Fit the one-step map of the snapshots (columns of `h`, in time order):
/// X = h[:, 0..n−1], Y = h[:, 1..n]. Returns `None` when the data are empty,
/// all zero, non-finite, or a decomposition does not converge.
pub fn dmd(h: &DMatrix<f64>) -> Option<DmdFit> {
    let (dim, n) = h.shape();
    if dim == 0 || n < 3 || h.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let x = h.columns(0, n - 1);
    let y = h.columns(1, n - 1);
    // With many more snapshots than dimensions, X = Rᵀ Qᵀ from a Householder
    // QR of Xᵀ, and the SVD is taken of the small Rᵀ = U Σ Wᵀ, so that
    // V = Q W and Y V = (Y Q) W. The long right factor never enters the
    // SVD's iterations (Golub & Van Loan, Matrix Computations, 4th ed., §8.6.3,
    // R-bidiagonalization), which is where a wide SVD spends its time.
    let (svd, yv) = if n - 1 > 2 * dim {
        let qr = x.transpose().qr();
        let q = qr.q();
        let svd = SVD::try_new(qr.r().transpose(), true, true, f64::EPSILON, SVD_MAX_ITER)?;
        let yv = (y * q) * svd.v_t.as_ref()?.transpose();
        (svd, yv)
    } else {
        let svd = SVD::try_new(x.into_owned(), true, true, f64::EPSILON, SVD_MAX_ITER)?;
        let yv = y * svd.v_t.as_ref()?.transpose();
        (svd, yv)
    };
    let s: Vec<f64> = svd.singular_values.iter().copied().collect();
    let r = select_rank(&s, dim, n - 1);
    if r == 0 {
        return None;
    }
    let u = svd.u.as_ref()?.columns(0, r).into_owned();
    let inv_s = DMatrix::from_diagonal(&DVector::from_iterator(r, s[..r].iter().map(|v| 1.0 / v)));
    // Ã = Uᵀ Y V Σ⁻¹  (Schmid 2010, eq. 2.10 form)
    let reduced = u.transpose() * yv.columns(0, r) * inv_s;
    let schur = Schur::try_new(reduced.clone(), f64::EPSILON, SCHUR_ITER_PER_DIM * r.max(4))?;
    let eigenvalues: Vec<Complex<f64>> = schur.complex_eigenvalues().iter().copied().collect();
    Some(DmdFit {
        eigenvalues,
        rank: r,
        singular_values: s,
        reduced,
        basis: u,
    })
}

/// Eigenvector of the real square matrix `a` for eigenvalue `mu`: the null
/// vector of (A − μI), from the smallest singular value (unit length).
pub fn eigenvector(a: &DMatrix<f64>, mu: Complex<f64>) -> Option<Vec<Complex<f64>>> {
    let r = a.nrows();
    let mut m: DMatrix<Complex<f64>> = a.map(|v| Complex::new(v, 0.0));
    for i in 0..r {
        m[(i, i)] -= mu;
    }
    let svd = SVD::try_new(m, false, true, f64::EPSILON, SVD_MAX_ITER)?;
    let v_t = svd.v_t?;
    let (imin, _) = svd
        .singular_values
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))?;
    // Rows of Vᴴ are conjugated right singular vectors.
    Some(v_t.row(imin).iter().map(|c| c.conj()).collect())
}

/// Amplitude history of one DMD mode: a_n = ψᵀ Uᵀ h_n where ψ is the left
/// eigenvector of Ã for `mu` (ψᵀ Ã = μ ψᵀ), so that the model gives
/// a_{n+1} = μ a_n exactly. Also returns ψ.
pub fn mode_amplitudes(
    fit: &DmdFit,
    mu: Complex<f64>,
    h: &DMatrix<f64>,
) -> Option<(ModeSeries, ModeSeries)> {
    let psi = eigenvector(&fit.reduced.transpose(), mu)?;
    let z = fit.basis.transpose() * h;
    let out = (0..z.ncols())
        .map(|j| {
            psi.iter()
                .enumerate()
                .fold(Complex::new(0.0, 0.0), |acc, (i, p)| acc + p * z[(i, j)])
        })
        .collect();
    Some((out, psi))
}

/// Ordinary least-squares line y = a + b·x.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    /// Intercept.
    pub a: f64,
    /// Slope.
    pub b: f64,
    /// Coefficient of determination R².
    pub r2: f64,
}

/// Fit y = a + b·x by least squares; `None` with fewer than 2 points or no spread in x.
pub fn line_fit(x: &[f64], y: &[f64]) -> Option<Line> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    let nf = n as f64;
    let mx = x[..n].iter().sum::<f64>() / nf;
    let my = y[..n].iter().sum::<f64>() / nf;
    let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let dx = x[i] - mx;
        let dy = y[i] - my;
        sxx += dx * dx;
        sxy += dx * dy;
        syy += dy * dy;
    }
    if sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    let b = sxy / sxx;
    let r2 = if syy > 0.0 {
        (sxy * sxy) / (sxx * syy)
    } else {
        1.0
    };
    Some(Line {
        a: my - b * mx,
        b,
        r2,
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Hankel matrix of one signal with `d` delays.
    fn hankel(x: &[f64], d: usize) -> DMatrix<f64> {
        let n = x.len() - d + 1;
        DMatrix::from_fn(d, n, |i, j| x[j + d - 1 - i])
    }

    #[test]
    fn damped_cosine_eigenvalues_are_exact() {
        // x_n = r^n cos(θ n): eigenvalues r·e^{±iθ} (closed form).
        let (r, th) = (0.99_f64, 0.3_f64);
        let x: Vec<f64> = (0..120)
            .map(|n| r.powi(n) * (th * n as f64).cos())
            .collect();
        let fit = dmd(&hankel(&x, 6)).unwrap();
        assert_eq!(fit.rank, 2);
        for e in &fit.eigenvalues {
            // Tolerance: exact data, limited only by rounding.
            assert!((e.norm() - r).abs() < 1e-9);
            assert!((e.arg().abs() - th).abs() < 1e-9);
        }
    }

    #[test]
    fn rank_keeps_small_clean_mode_above_noise() {
        let s = [1.0, 0.5, 7e-6, 1.2e-7, 1.0e-7, 0.9e-7, 0.7e-7];
        assert_eq!(select_rank(&s, 7, 200), 3);
    }

    #[test]
    fn line_fit_recovers_slope() {
        let x: Vec<f64> = (0..10).map(f64::from).collect();
        let y: Vec<f64> = x.iter().map(|v| 2.0 + 0.5 * v).collect();
        let l = line_fit(&x, &y).unwrap();
        assert!((l.b - 0.5).abs() < 1e-12 && (l.a - 2.0).abs() < 1e-12);
    }
}
