//! One fit of the growth detector: columns of a window of recent outputs are
//! centred and scaled (so one huge probe does not hide another), mixed into a
//! few channels by fixed weights (a linear combination of a linear system's
//! outputs keeps its eigenvalues), delay-embedded, and fitted by DMD. Each
//! growing eigenvalue is then checked against its own amplitude history:
//! it must rise clearly above the fit's noise and by a real factor within the
//! window, or it is discarded as a fitting artefact.

use nalgebra::{Complex, DMatrix};

use crate::schemes::fit;

/// Target dimension of the delay-embedded snapshot (channels × delays).
pub const EMBED_DIM: usize = 12;
/// Fewest rows a fit accepts (a short window right after a restart or a
/// step change; it is fitted with fewer channels and delays).
pub const MIN_FIT_ROWS: usize = 8;
/// Snapshots per dimension of the embedding a fit keeps at least.
const SNAPSHOTS_PER_DIM: usize = 3;
/// At most this many channels; more columns are mixed down.
pub const MAX_CHANNELS: usize = 3;
/// A growing mode must grow at least this much over the window.
pub const MIN_WINDOW_GROWTH: f64 = 4.0;
/// Growth over the rows it is seen above its misfit that makes two or three
/// rows enough to judge a mode.
const VIOLENT_GROWTH: f64 = 1e6;
/// Its latest amplitude must stand this far above its one-step misfit.
pub const MIN_SNR: f64 = 20.0;

/// Fixed channel weight for column `j` in channel `c`: a ±1 pattern with
/// irregular signs, so that no mode can cancel in every channel.
fn weight(c: usize, j: usize) -> f64 {
    let h = (j as u64 + 1)
        .wrapping_mul(0x9E37_79B9_7F4A_7C15)
        .wrapping_add((c as u64 + 1).wrapping_mul(0xBF58_476D_1CE4_E5B9));
    let h = (h ^ (h >> 31)).wrapping_mul(0x94D0_49BB_1331_11EB);
    if (h >> 40) & 1 == 1 { 1.0 } else { -1.0 }
}

/// The linear channel map fixed by a fit: y_c = Σ_j w_cj (x_j − mean_j)/scale_j.
#[derive(Debug, Clone)]
pub struct ChannelMap {
    /// (column index within the window, mean, 1/scale) of active columns.
    pub cols: Vec<(usize, f64, f64)>,
    /// Number of channels.
    pub q: usize,
    /// Delays.
    pub d: usize,
    /// Weights w_cj/scale_j, column-major (q per active column); empty when
    /// each active column is its own channel.
    gains: Vec<f64>,
}

impl ChannelMap {
    /// The map for these active columns, `q` channels and `d` delays.
    pub fn new(cols: Vec<(usize, f64, f64)>, q: usize, d: usize) -> Self {
        debug_assert!((1..=cols.len().min(MAX_CHANNELS)).contains(&q));
        let gains = if cols.len() == q {
            Vec::new()
        } else {
            cols.iter()
                .flat_map(|&(j, _, inv)| (0..q).map(move |c| weight(c, j) * inv))
                .collect()
        };
        Self { cols, q, d, gains }
    }

    /// Channel values of one row (`row` holds all window columns).
    pub fn channels(&self, row: &[f64], out: &mut [f64]) {
        if self.gains.is_empty() {
            for (o, &(j, mean, inv)) in out.iter_mut().zip(&self.cols) {
                *o = (row[j] - mean) * inv;
            }
            return;
        }
        // Mixed down to q ≤ MAX_CHANNELS channels: sums kept in registers.
        let q = self.q;
        let mut acc = [0.0; MAX_CHANNELS];
        for (g, &(j, mean, _)) in self.gains.chunks_exact(q).zip(&self.cols) {
            let x = row[j] - mean;
            for (a, w) in acc.iter_mut().zip(g) {
                *a += w * x;
            }
        }
        out[..q].copy_from_slice(&acc[..q]);
    }
}

/// A growing mode that passed its checks.
#[derive(Debug, Clone, Copy)]
pub struct GrowingMode {
    /// Eigenvalue per output interval.
    pub mu: Complex<f64>,
    /// Latest amplitude over its one-step misfit.
    pub snr: f64,
    /// Share of the latest snapshot carried by the mode (0..1, roughly).
    pub share: f64,
}

/// Result of one fit.
#[derive(Debug, Clone)]
pub struct Analysis {
    pub map: ChannelMap,
    /// Rows q × (q·d): predicts the newest channel values from the previous snapshot.
    pub predictor: DMatrix<f64>,
    /// RMS one-step misfit of the channels in the window.
    pub misfit_rms: f64,
    /// RMS of the channels in the window.
    pub signal_rms: f64,
    /// Largest eigenvalue modulus of the fit (any mode, checked or not).
    pub spectral_radius: f64,
    /// The eigenvalue of largest modulus (upper half plane).
    pub dominant: Complex<f64>,
    /// The strongest growing mode that passed its checks.
    pub growing: Option<GrowingMode>,
    pub rank: usize,
    /// Growth per row of the channels as a whole: ln of the RMS of the
    /// window's last quarter over its first quarter, per row between them.
    pub signal_growth_ln: f64,
}

/// Fit a window: `rows` is row-major, `n` rows of `m` values, oldest first.
pub fn analyse(rows: &[f64], n: usize, m: usize) -> Option<Analysis> {
    if n < MIN_FIT_ROWS || m == 0 || rows.len() < n * m {
        return None;
    }
    // Column means and standard deviations, row by row (two passes).
    let rows = &rows[..n * m];
    let mut mean = vec![0.0; m];
    for row in rows.chunks_exact(m) {
        mean.iter_mut().zip(row).for_each(|(a, v)| *a += v);
    }
    mean.iter_mut().for_each(|a| *a /= n as f64);
    let mut var = vec![0.0; m];
    for row in rows.chunks_exact(m) {
        for ((a, v), mu) in var.iter_mut().zip(row).zip(&mean) {
            *a += (v - mu) * (v - mu);
        }
    }
    let mut cols = Vec::new();
    for (j, (&mu, &ss)) in mean.iter().zip(&var).enumerate() {
        let sd = (ss / n as f64).sqrt();
        // Constant (or rounding-only) columns carry no dynamics.
        if sd.is_finite() && sd > 0.0 && sd > 1e-13 * mu.abs() {
            cols.push((j, mu, 1.0 / sd));
        }
    }
    if cols.is_empty() {
        return None;
    }
    // Short windows get fewer channels and delays, so that the fit keeps at
    // least three snapshots per dimension of the embedding (two delays at
    // least: one channel then still holds an oscillating pair).
    let q = cols
        .len()
        .min(MAX_CHANNELS)
        .min(n / (SNAPSHOTS_PER_DIM * 2 + 2))
        .max(1);
    let d = EMBED_DIM
        .div_ceil(q)
        .min(n / (SNAPSHOTS_PER_DIM * q + 1))
        .max(2);
    let map = ChannelMap::new(cols, q, d);
    let mut y = vec![0.0; n * q];
    for i in 0..n {
        map.channels(&rows[i * m..(i + 1) * m], &mut y[i * q..(i + 1) * q]);
    }
    let dim = q * d;
    let snaps = n - d + 1;
    // Snapshot t holds [y_t; y_{t−1}; …; y_{t−d+1}] (one column, contiguous).
    let mut hv = Vec::with_capacity(dim * snaps);
    for t in d - 1..n {
        for lag in 0..d {
            hv.extend_from_slice(&y[(t - lag) * q..(t - lag + 1) * q]);
        }
    }
    let h = DMatrix::from_vec(dim, snaps, hv);
    let f = fit::dmd(&h)?;
    let u_top = f.basis.rows(0, q);
    let predictor = u_top * &f.reduced * f.basis.transpose();
    let signal_rms = (y.iter().map(|v| v * v).sum::<f64>() / y.len() as f64).sqrt();
    // One-step misfit of the newest channel values over the window.
    let predicted = &predictor * h.columns(0, snaps - 1);
    let misfit = (h.view((0, 1), (q, snaps - 1)) - predicted).norm_squared();
    let misfit_rms = (misfit / ((snaps - 1) * q) as f64).sqrt();
    let dominant = f
        .eigenvalues
        .iter()
        .copied()
        .max_by(|a, b| a.norm().total_cmp(&b.norm()))
        .map(|e| Complex::new(e.re, e.im.abs()))
        .unwrap_or_default();
    let spectral_radius = dominant.norm();
    let growing = strongest_growing(&f, &h);
    let quarter = (n / 4).max(1);
    let rms = |rows: &[f64]| (rows.iter().map(|v| v * v).sum::<f64>() / rows.len() as f64).sqrt();
    let (early, late) = (rms(&y[..quarter * q]), rms(&y[(n - quarter) * q..]));
    let signal_growth_ln = if early > 0.0 && late > 0.0 {
        (late / early).ln() / (n - quarter) as f64
    } else {
        0.0
    };
    Some(Analysis {
        map,
        predictor,
        misfit_rms,
        signal_rms,
        spectral_radius,
        dominant,
        growing,
        rank: f.rank,
        signal_growth_ln,
    })
}

/// Check the growing eigenvalues, strongest first; return the first that passes.
fn strongest_growing(f: &fit::DmdFit, h: &DMatrix<f64>) -> Option<GrowingMode> {
    let snaps = h.ncols();
    let min_ln = MIN_WINDOW_GROWTH.ln() / (snaps - 1) as f64;
    let mut cands: Vec<Complex<f64>> = f
        .eigenvalues
        .iter()
        .copied()
        .filter(|e| e.im >= 0.0 && e.norm().ln() > min_ln)
        .collect();
    cands.sort_by(|a, b| b.norm().total_cmp(&a.norm()));
    let last = h.column(snaps - 1).norm();
    for mu in cands.into_iter().take(3) {
        let Some((a, psi)) = fit::mode_amplitudes(f, mu, h) else {
            continue;
        };
        let n = a.len();
        let misfit = ((1..n)
            .map(|i| (a[i] - mu * a[i - 1]).norm_sqr())
            .sum::<f64>()
            / (n - 1) as f64)
            .sqrt();
        let end = a[n - 1].norm();
        // The noise floor is never below rounding: a mode that appears out of
        // exact zeros (a run at rest, then an impact) has no misfit to speak
        // of, and would otherwise be traced back to 1e-300.
        let floor = misfit.max(fit::ROUNDING_FLOOR * end);
        let snr = if floor > 0.0 {
            end / floor
        } else {
            f64::INFINITY
        };
        if snr.is_nan() || snr < MIN_SNR {
            continue;
        }
        // The amplitude itself must have grown, by the factor the eigenvalue claims
        // (at least half of it in log terms), over the part above the misfit.
        let start = a
            .iter()
            .position(|v| v.norm() > 3.0 * misfit)
            .unwrap_or(n - 1);
        let seen = n - 1 - start;
        let grew = (end / a[start].norm()).ln();
        // Four rows above the misfit, or fewer when they span decades (a
        // violent mode leaves the rounding of its own latest values behind
        // within a row or two).
        if seen < 4 && (seen < 2 || grew < VIOLENT_GROWTH.ln()) {
            continue;
        }
        if grew < 0.5 * mu.norm().ln() * seen as f64 || grew < MIN_WINDOW_GROWTH.ln() * 0.5 {
            continue;
        }
        // A growing mode is at its largest now: an amplitude that rose and
        // fell again within the window (a contact spike, a transient the
        // linear fit could only follow with a growing eigenvalue) is not one.
        let recent = (seen / 4).max(2);
        let peak = a[start..].iter().map(|v| v.norm()).fold(0.0, f64::max);
        let late = a[n - recent..].iter().map(|v| v.norm()).fold(0.0, f64::max);
        if late < 0.5 * peak {
            continue;
        }
        let share = mode_share(f, mu, &psi, a[n - 1], last);
        return Some(GrowingMode { mu, snr, share });
    }
    None
}

/// |a·φ| / ‖h_last‖: the mode's part of the latest snapshot, with φ = U w the
/// right eigenvector scaled so that ψᵀw = 1 (biorthogonal expansion).
fn mode_share(
    f: &fit::DmdFit,
    mu: Complex<f64>,
    psi: &[Complex<f64>],
    a_last: Complex<f64>,
    last_norm: f64,
) -> f64 {
    let Some(w) = fit::eigenvector(&f.reduced, mu) else {
        return 0.0;
    };
    let dot = psi
        .iter()
        .zip(&w)
        .fold(Complex::new(0.0, 0.0), |acc, (p, v)| acc + p * v);
    // ‖U w‖ = ‖w‖ = 1 (U has orthonormal columns, w unit length).
    if last_norm > 0.0 && dot.norm() > 0.0 {
        (a_last.norm() / dot.norm() / last_norm).min(1.0)
    } else {
        0.0
    }
}

/// Two growing eigenvalues closer than this fraction of their modulus are
/// taken for the same mode, followed from fit to fit.
const SAME_MODE: f64 = 0.1;
/// Or growth rates (ln |μ|) within this factor of each other: a violent
/// blow-up through contact or yielding is not one linear map, and its fitted
/// eigenvalue wanders from fit to fit while it keeps growing.
const SAME_RATE: f64 = 2.0;

/// Whether two growing eigenvalues of successive fits are taken for one mode.
pub fn same_mode(a: Complex<f64>, b: Complex<f64>) -> bool {
    let (ra, rb) = (a.norm().ln(), b.norm().ln());
    (a - b).norm() < SAME_MODE * b.norm()
        || (ra > 0.0 && rb > 0.0 && ra.max(rb) <= SAME_RATE * ra.min(rb))
}

/// Rows `n` × `m` (row-major) → their second differences, `n − 2` rows.
pub fn second_difference(rows: &[f64], n: usize, m: usize) -> Vec<f64> {
    (2..n)
        .flat_map(|i| {
            (0..m)
                .map(move |j| rows[i * m + j] - 2.0 * rows[(i - 1) * m + j] + rows[(i - 2) * m + j])
        })
        .collect()
}
