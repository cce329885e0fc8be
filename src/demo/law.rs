//! Force laws of the demo's members as functions of the extension: linear,
//! one-sided contact with a gap, a two-sided stop, a latching stop, a
//! saturating softening spring, a log-strain member whose stiffness grows
//! without bound as it is crushed, and a tabulated curve. Each law gives its
//! force, tangent stiffness and stored energy (the energy's derivative is the
//! force, checked in the tests). Pure arithmetic.

/// Force law of one member as a function of its extension `e` (length change, m).
#[derive(Debug, Clone, PartialEq)]
pub enum Law {
    /// N = k·e.
    Linear { k: f64 },
    /// One-sided penalty contact: closes when the extension falls below −gap,
    /// then N = k·(e + gap) (compressive); open otherwise.
    Contact { gap: f64, k: f64 },
    /// Two-sided stop (clearance ±gap): N = k·(e − gap) beyond +gap, k·(e + gap) beyond −gap.
    Stop { gap: f64, k: f64 },
    /// A latching stop: while `held_at` is None it is the two-sided stop of
    /// clearance ±gap; once the extension has passed ±gap ([`Model::engage_latches`])
    /// it holds for good as a linear spring about that edge, N = k·(e − held_at).
    Latch {
        gap: f64,
        k: f64,
        held_at: Option<f64>,
    },
    /// Saturating softening spring N = f_max·tanh(k·e/f_max).
    Softening { k: f64, f_max: f64 },
    /// Log-strain member of axial rigidity `ea` and rest length `l0`:
    /// N = ea·ln(L/l0) with L = l0 + e; tangent ea/L grows without bound as L → 0
    /// and the law has no meaning once the member is crushed through (L ≤ 0).
    LogCrush { ea: f64, l0: f64 },
    /// Piecewise-linear curve through (e, N) points, e ascending and bracketing 0
    /// with N(0) = 0; outside the tabulated range it yields NaN.
    Table { e: Vec<f64>, n: Vec<f64> },
}

impl Law {
    /// Axial force N(e) (tension positive).
    pub fn force(&self, e: f64) -> f64 {
        match self {
            Law::Linear { k } => k * e,
            Law::Contact { gap, k } => {
                if e < -gap {
                    k * (e + gap)
                } else {
                    0.0
                }
            }
            Law::Stop { gap, k } => {
                if e > *gap {
                    k * (e - gap)
                } else if e < -gap {
                    k * (e + gap)
                } else {
                    0.0
                }
            }
            Law::Latch {
                k,
                held_at: Some(e0),
                ..
            } => k * (e - e0),
            Law::Latch { gap, k, .. } => Law::Stop { gap: *gap, k: *k }.force(e),
            Law::Softening { k, f_max } => f_max * (k * e / f_max).tanh(),
            Law::LogCrush { ea, l0 } => ea * ((l0 + e) / l0).ln(),
            Law::Table { e: xs, n } => match segment(xs, e) {
                Some(i) => {
                    let s = (e - xs[i]) / (xs[i + 1] - xs[i]);
                    n[i] + s * (n[i + 1] - n[i])
                }
                None => f64::NAN,
            },
        }
    }

    /// Tangent stiffness dN/de.
    pub fn stiffness(&self, e: f64) -> f64 {
        match self {
            Law::Linear { k } => *k,
            Law::Contact { gap, k } => {
                if e < -gap {
                    *k
                } else {
                    0.0
                }
            }
            Law::Stop { gap, k } => {
                if e.abs() > *gap {
                    *k
                } else {
                    0.0
                }
            }
            Law::Latch {
                k,
                held_at: Some(_),
                ..
            } => *k,
            Law::Latch { gap, k, .. } => Law::Stop { gap: *gap, k: *k }.stiffness(e),
            Law::Softening { k, f_max } => {
                let c = (k * e / f_max).cosh();
                k / (c * c)
            }
            Law::LogCrush { ea, l0 } => ea / (l0 + e),
            Law::Table { e: xs, n } => match segment(xs, e) {
                Some(i) => (n[i + 1] - n[i]) / (xs[i + 1] - xs[i]),
                None => f64::NAN,
            },
        }
    }

    /// Strain energy ∫₀ᵉ N de.
    pub fn energy(&self, e: f64) -> f64 {
        match self {
            Law::Linear { k } => 0.5 * k * e * e,
            Law::Contact { gap, k } => {
                if e < -gap {
                    0.5 * k * (e + gap) * (e + gap)
                } else {
                    0.0
                }
            }
            Law::Stop { gap, k } => {
                let p = (e.abs() - gap).max(0.0);
                0.5 * k * p * p
            }
            Law::Latch {
                k,
                held_at: Some(e0),
                ..
            } => 0.5 * k * (e - e0) * (e - e0),
            Law::Latch { gap, k, .. } => Law::Stop { gap: *gap, k: *k }.energy(e),
            Law::Softening { k, f_max } => {
                // ∫ f tanh(k e / f) de = f²/k · ln cosh(k e / f), evaluated without overflow:
                // ln cosh x = |x| + ln(1 + e^{−2|x|}) − ln 2.
                let x = (k * e / f_max).abs();
                f_max * f_max / k * (x + (-2.0 * x).exp().ln_1p() - std::f64::consts::LN_2)
            }
            Law::LogCrush { ea, l0 } => {
                let l = l0 + e;
                ea * (l * (l / l0).ln() - l + l0)
            }
            Law::Table { e: xs, n } => table_energy(xs, n, e),
        }
    }
}

/// Index i with xs[i] ≤ e ≤ xs[i+1], or None outside the table.
fn segment(xs: &[f64], e: f64) -> Option<usize> {
    if xs.len() < 2 || !(e >= xs[0] && e <= xs[xs.len() - 1]) {
        return None;
    }
    let i = xs.partition_point(|x| *x <= e).saturating_sub(1);
    Some(i.min(xs.len() - 2))
}

/// Integral of a piecewise-linear curve from 0 to e (trapezoids are exact here).
fn table_energy(xs: &[f64], n: &[f64], e: f64) -> f64 {
    if segment(xs, e).is_none() || segment(xs, 0.0).is_none() {
        return f64::NAN;
    }
    let curve = |x: f64| {
        let i = segment(xs, x).unwrap_or(0);
        let s = (x - xs[i]) / (xs[i + 1] - xs[i]);
        n[i] + s * (n[i + 1] - n[i])
    };
    let (lo, hi, sign) = if e >= 0.0 {
        (0.0, e, 1.0)
    } else {
        (e, 0.0, -1.0)
    };
    let mut pts = vec![lo];
    pts.extend(xs.iter().copied().filter(|x| *x > lo && *x < hi));
    pts.push(hi);
    let area: f64 = pts
        .windows(2)
        .map(|w| 0.5 * (w[1] - w[0]) * (curve(w[0]) + curve(w[1])))
        .sum();
    sign * area
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Central-difference derivative check of force against energy and of
    /// stiffness against force: each law must be its own potential's gradient.
    #[test]
    fn laws_are_consistent_derivatives() {
        let laws = [
            Law::Linear { k: 3.0 },
            Law::Contact { gap: 0.1, k: 50.0 },
            Law::Stop { gap: 0.05, k: 20.0 },
            Law::Latch {
                gap: 0.05,
                k: 20.0,
                held_at: None,
            },
            Law::Latch {
                gap: 0.05,
                k: 20.0,
                held_at: Some(-0.05),
            },
            Law::Softening { k: 4.0, f_max: 2.0 },
            Law::LogCrush { ea: 5.0, l0: 1.0 },
            Law::Table {
                e: vec![-1.0, 0.0, 0.5, 1.0],
                n: vec![-2.0, 0.0, 1.5, 1.0],
            },
        ];
        let h = 1e-6;
        for law in &laws {
            for &e in &[-0.43, -0.12, 0.02, 0.31, 0.77] {
                let de = (law.energy(e + h) - law.energy(e - h)) / (2.0 * h);
                let dn = (law.force(e + h) - law.force(e - h)) / (2.0 * h);
                // Finite-difference truncation and rounding at h = 1e-6: about 1e-6 relative.
                assert!(
                    (de - law.force(e)).abs() < 1e-5 * (1.0 + de.abs()),
                    "{law:?} e={e}"
                );
                assert!(
                    (dn - law.stiffness(e)).abs() < 1e-4 * (1.0 + dn.abs()),
                    "{law:?} e={e}"
                );
            }
        }
    }

    #[test]
    fn table_and_crush_fail_outside_their_range() {
        let t = Law::Table {
            e: vec![-1.0, 0.0, 1.0],
            n: vec![-1.0, 0.0, 1.0],
        };
        assert!(t.force(1.5).is_nan());
        let c = Law::LogCrush { ea: 1.0, l0: 1.0 };
        assert!(c.force(-1.2).is_nan());
        assert!(c.energy(-1.2).is_nan());
        // Finite energy barrier of the log-strain member: ea·l0 at full crush (L → 0).
        assert!((c.energy(-1.0 + 1e-12) - 1.0).abs() < 1e-9);
    }
}
