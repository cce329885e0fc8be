//! Which unassigned column would close an energy balance that is off: a
//! least-squares fit, through the origin, of the balance error e(n) on each
//! probe column's change x(n) = X(n) − X(first row), over the whole segment.
//! A column the balance misses enters the error with coefficient −1 (a
//! stored or dissipated term the sum leaves out: e = −x) or +1 (external
//! work left out: e = +x). The detectors only say so — a column is never
//! given a role silently — and a balance such a column closes is no
//! evidence of energy created.

/// Columns watched at most (the first probes of the file).
const MAX_COLUMNS: usize = 32;
/// The fit must explain this share of the error's variance (R², through
/// the origin).
const MIN_R2: f64 = 0.9;
/// |coefficient| within this factor of 1.
const COEFFICIENT_TOLERANCE: f64 = 1.25;

/// What a closing column would be in the balance.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ClosingKind {
    /// Non-negative and never decreasing: energy lost (damping, friction,
    /// plasticity, a thermostat's take).
    Dissipated,
    /// Rises and falls: a stored term (a potential, contact or spring energy).
    Stored,
    /// Enters with the sign of work done on the model.
    ExternalWork,
}

impl ClosingKind {
    /// The words used in messages.
    pub fn words(self) -> &'static str {
        match self {
            ClosingKind::Dissipated => "dissipated energy",
            ClosingKind::Stored => "a stored energy term",
            ClosingKind::ExternalWork => "external work",
        }
    }
}

/// A column that closes the balance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Closing {
    /// Column index in the schema.
    pub col: usize,
    pub kind: ClosingKind,
    /// Share of the error's variance it explains.
    pub r2: f64,
}

#[derive(Debug, Clone)]
struct Candidate {
    col: usize,
    first: Option<f64>,
    last: f64,
    /// Σ e·x, Σ x².
    ex: f64,
    xx: f64,
    non_negative: bool,
    never_decreasing: bool,
}

/// Running fits of the balance error on the unassigned columns.
#[derive(Debug, Clone, Default)]
pub struct Closure {
    candidates: Vec<Candidate>,
    /// Σ e².
    ee: f64,
}

impl Closure {
    /// Fits on these columns (the first `MAX_COLUMNS` are kept).
    pub fn new(cols: impl IntoIterator<Item = usize>) -> Self {
        Self {
            candidates: cols
                .into_iter()
                .take(MAX_COLUMNS)
                .map(|col| Candidate {
                    col,
                    first: None,
                    last: 0.0,
                    ex: 0.0,
                    xx: 0.0,
                    non_negative: true,
                    never_decreasing: true,
                })
                .collect(),
            ee: 0.0,
        }
    }

    /// Add one row: the balance error and the row's values.
    pub fn update(&mut self, error: f64, values: &[f64]) {
        if !error.is_finite() {
            return;
        }
        self.ee += error * error;
        for c in &mut self.candidates {
            let Some(&v) = values.get(c.col).filter(|v| v.is_finite()) else {
                continue;
            };
            let first = *c.first.get_or_insert(v);
            // A decrease beyond the printed rounding of the value.
            if v < c.last - 1e-9 * c.last.abs().max(v.abs()) {
                c.never_decreasing = false;
            }
            c.non_negative &= v >= 0.0;
            c.last = v;
            let x = v - first;
            c.ex += error * x;
            c.xx += x * x;
        }
    }

    /// The column that best closes the balance, if one does.
    pub fn best(&self) -> Option<Closing> {
        if self.ee <= 0.0 {
            return None;
        }
        self.candidates
            .iter()
            .filter(|c| c.xx > 0.0)
            .filter_map(|c| {
                let coef = c.ex / c.xx;
                let r2 = c.ex * c.ex / (c.xx * self.ee);
                let near_one = coef.abs() <= COEFFICIENT_TOLERANCE
                    && coef.abs() >= 1.0 / COEFFICIENT_TOLERANCE;
                (near_one && r2 >= MIN_R2).then(|| {
                    let kind = if coef > 0.0 {
                        ClosingKind::ExternalWork
                    } else if c.non_negative && c.never_decreasing {
                        ClosingKind::Dissipated
                    } else {
                        ClosingKind::Stored
                    };
                    Closing {
                        col: c.col,
                        kind,
                        r2,
                    }
                })
            })
            .max_by(|a, b| a.r2.total_cmp(&b.r2))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A run whose damper is written but not named: kinetic + strain lose
    /// what the damper column gains, so the balance error is −damper.
    #[test]
    fn an_unnamed_damper_closes_the_balance_as_dissipated_energy() {
        let mut c = Closure::new([2, 3]);
        for i in 0..200 {
            let t = i as f64 * 0.01;
            let damper = 1.0 - (-t).exp();
            let probe = (7.0 * t).sin();
            c.update(-damper, &[t, 0.0, probe, damper]);
        }
        let best = c.best().expect("the damper closes it");
        assert_eq!((best.col, best.kind), (3, ClosingKind::Dissipated));
        assert!(best.r2 > 0.99);
    }

    /// A gravity potential written under a name the reader does not know:
    /// it falls as the kinetic energy rises, a stored term.
    #[test]
    fn a_potential_closes_it_as_a_stored_term_and_a_probe_does_not() {
        let mut c = Closure::new([1, 2]);
        for i in 0..100 {
            let t = i as f64 * 0.01;
            let ke = 0.5 * (9.81 * t) * (9.81 * t);
            let displacement = -0.5 * 9.81 * t * t;
            c.update(ke, &[t, -ke, displacement]);
        }
        let best = c.best().expect("the potential closes it");
        assert_eq!((best.col, best.kind), (1, ClosingKind::Stored));
        // The displacement correlates, but with the wrong size.
        let mut d = Closure::new([1]);
        for i in 0..100 {
            let t = i as f64 * 0.01;
            d.update(0.5 * (9.81 * t).powi(2), &[t, -0.5 * 9.81 * t * t]);
        }
        assert!(d.best().is_none());
    }
}
