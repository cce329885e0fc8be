//! Small helpers the case files share: the highest natural frequency of a
//! chain at rest, and recording a stepper into a trace with lines of text
//! before the header.

use nalgebra::{DMatrix, DVector};

use super::chain::{Chain, Eval};
use super::sim::{Plan, Q, Recorder, Stepper, drive};
use super::trace::Trace;

/// ω_max of a chain's tangent at the state (u, v): √ of the largest
/// eigenvalue of M^{-½} K M^{-½}.
pub fn omega_max_at(chain: &Chain, u: &[f64]) -> f64 {
    let n = chain.n();
    let mut ev = vec![Eval::default(); chain.elems.len()];
    chain.evaluate(u, &vec![0.0; n], &vec![0.0; chain.elems.len()], &mut ev);
    let (k, _) = chain.tangent(&ev);
    let s = DVector::from_iterator(n, chain.mass.iter().map(|m| 1.0 / m.sqrt()));
    let ks = DMatrix::from_fn(n, n, |i, j| k[(i, j)] * s[i] * s[j]);
    ks.symmetric_eigenvalues()
        .iter()
        .cloned()
        .fold(0.0, f64::max)
        .sqrt()
}

/// ω_max of a chain at rest.
pub fn omega_max(chain: &Chain) -> f64 {
    omega_max_at(chain, &vec![0.0; chain.n()])
}

/// Record a run: `text` lines, the header, then rows per the plan.
pub fn record(s: &mut dyn Stepper, cols: &[(&str, Q)], plan: &Plan, text: &[&str]) -> Trace {
    let mut rec = Recorder::new(cols);
    for t in text {
        rec.trace.text(*t);
    }
    rec.trace.header();
    drive(s, &mut rec, plan);
    rec.trace
}

/// Zeros.
pub fn zeros(n: usize) -> Vec<f64> {
    vec![0.0; n]
}

/// The step at which `radius(dt)` reaches `target`, by bisection on
/// [lo, hi] (radius growing with dt there).
pub fn dt_for_radius(lo: f64, hi: f64, target: f64, radius: impl Fn(f64) -> f64) -> f64 {
    let (mut a, mut b) = (lo, hi);
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        if m <= a || m >= b {
            break;
        }
        if radius(m) > target {
            b = m;
        } else {
            a = m;
        }
    }
    0.5 * (a + b)
}

/// The chain's tangent matrices at rest: (K, C).
pub fn rest_tangent(chain: &Chain) -> (DMatrix<f64>, DMatrix<f64>) {
    let n = chain.n();
    let ne = chain.elems.len();
    let mut ev = vec![Eval::default(); ne];
    chain.evaluate(&vec![0.0; n], &vec![0.0; n], &vec![0.0; ne], &mut ev);
    chain.tangent(&ev)
}
