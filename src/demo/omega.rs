//! The highest natural frequency ω_max of a model's tangent at a displacement,
//! as a run asks for it every step (to label the stability onset and to size
//! an adaptive step): recent eigen-solutions are kept by a fingerprint of the
//! tangent and reused, refined by a Rayleigh quotient, or recomputed.

use nalgebra::DVector;

use super::model::Model;

/// Tangent fingerprints that differ by less than this fraction of the largest
/// member stiffness reuse the last ω_max outright (geometric stiffness drifts a
/// little every step; ω then moves by a similar fraction, far inside any margin
/// used by the cases); up to [`RAYLEIGH_REL`] the Rayleigh quotient of the last
/// top eigenvector is used, whose error is second order in the change (Parlett,
/// *The Symmetric Eigenvalue Problem*, 1980, ch. 4, from memory); beyond it a new
/// eigen-solution is made.
const REUSE_REL: f64 = 1e-5;
const RAYLEIGH_REL: f64 = 2e-2;
/// Eigen-solutions kept (contacts that open and close revisit a few tangents).
const OMEGA_CACHE_LEN: usize = 8;

/// One eigen-solution of the tangent.
#[derive(Debug, Clone)]
struct Solved {
    fingerprint: Vec<f64>,
    omega: f64,
    mode: DVector<f64>,
}

fn fp_change(a: &[f64], b: &[f64]) -> f64 {
    if a.len() != b.len() {
        return f64::INFINITY;
    }
    let scale = a.iter().fold(0.0_f64, |m, x| m.max(x.abs())).max(1e-300);
    let d = a
        .iter()
        .zip(b)
        .fold(0.0_f64, |m, (x, y)| m.max((x - y).abs()));
    if d.is_nan() { f64::INFINITY } else { d / scale }
}

/// ω_max of one model's tangent, with its recent eigen-solutions.
#[derive(Debug, Clone)]
pub struct OmegaMax {
    solved: Vec<Solved>,
    fingerprint: Vec<f64>,
    inv_sqrt_mass: DVector<f64>,
}

impl OmegaMax {
    /// For a model with these lumped masses.
    pub fn new(model: &Model) -> Self {
        Self {
            solved: Vec::new(),
            fingerprint: Vec::new(),
            inv_sqrt_mass: DVector::from_iterator(
                model.n(),
                model.mass_kg.iter().map(|m| 1.0 / m.sqrt()),
            ),
        }
    }

    /// ω_max of the tangent of `model` at `u` (NaN when the eigen-solution fails).
    pub fn at(&mut self, model: &Model, u: &DVector<f64>) -> f64 {
        let mut fp = std::mem::take(&mut self.fingerprint);
        model.fingerprint(u, &mut fp);
        let best = self
            .solved
            .iter()
            .map(|c| fp_change(&c.fingerprint, &fp))
            .enumerate()
            .min_by(|a, b| a.1.total_cmp(&b.1));
        let w = match best {
            Some((i, d)) if d <= REUSE_REL => self.solved[i].omega,
            Some((i, d)) if d <= RAYLEIGH_REL => {
                let y = self.solved[i].mode.component_mul(&self.inv_sqrt_mass);
                model.tangent_form(u, &y).max(0.0).sqrt()
            }
            _ => match model.top_mode(&model.tangent(u)) {
                Some((w, x)) => {
                    if self.solved.len() >= OMEGA_CACHE_LEN {
                        self.solved.remove(0);
                    }
                    self.solved.push(Solved {
                        fingerprint: fp.clone(),
                        omega: w,
                        mode: x,
                    });
                    w
                }
                None => f64::NAN,
            },
        };
        self.fingerprint = fp;
        w
    }
}
