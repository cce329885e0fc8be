//! Stability of time-integration schemes on the damped oscillator
//! ü + 2ζωu̇ + ω²u = 0, with Ω = ω·Δt.
//!
//! One step of a linear one-step scheme maps the state to the next state,
//! x(n+1) = A·x(n); [`amplification_matrix`] builds A for each [`Scheme`],
//! [`spectral_radius`] reads ρ(A) through a capped Schur decomposition, and
//! [`critical_omega`] finds the stability limit by a bracketing root search on
//! ρ(Ω) − 1. [`courant`] turns an element size and material into the highest
//! element frequency and the Courant step. Pure nalgebra: no I/O, no terminal.
//!
//! Sign convention for HHT-α: α ∈ [−⅓, 0], as in Hilber, Hughes & Taylor
//! (1977); α = 0 is the average-acceleration Newmark rule. Codes that write
//! α ≥ 0 mean −α here.

pub mod amplification;
pub mod courant;
pub mod fit;
pub mod inverse;
pub mod limit;
pub mod names;
pub mod remedy;
pub mod spectrum;

use std::fmt;
use std::str::FromStr;

pub use amplification::{AlphaParams, amplification_limit, amplification_matrix};
pub use inverse::{omega_at_phase, omega_at_radius};
pub use limit::{critical_omega, rho_curve, rho_inf};
pub use spectrum::{
    damping_ratio_at, eigenvalues, period_error_at, principal_eigenvalue, scheme_radius,
    spectral_radius,
};

/// A one-step time-integration scheme.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scheme {
    /// Explicit Euler on the first-order form.
    ForwardEuler,
    /// Implicit Euler on the first-order form.
    BackwardEuler,
    /// Trapezoidal rule on the first-order form (Crank–Nicolson).
    Trapezoidal,
    /// Classical fourth-order Runge–Kutta on the first-order form.
    Rk4,
    /// Explicit central difference with the damping force taken from the
    /// half-step velocity v(n−½), as explicit structural codes do.
    CentralDifference,
    /// Newmark β–γ family, damping force implicit (evaluated at n+1).
    Newmark {
        /// β, weight of the new acceleration in the displacement update.
        beta: f64,
        /// γ, weight of the new acceleration in the velocity update.
        gamma: f64,
    },
    /// HHT-α with β = (1−α)²/4, γ = (1−2α)/2; α ∈ [−⅓, 0].
    Hht {
        /// α ∈ [−⅓, 0] (negative adds high-frequency dissipation).
        alpha: f64,
    },
    /// Generalized-α (Chung & Hulbert 1993) from the spectral radius at infinity.
    GeneralizedAlpha {
        /// ρ∞ ∈ [0, 1].
        rho_inf: f64,
    },
}

/// Optional scheme parameters, as given on the command line.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct SchemeParams {
    /// Newmark β.
    pub beta: Option<f64>,
    /// Newmark γ.
    pub gamma: Option<f64>,
    /// HHT α (≤ 0).
    pub alpha: Option<f64>,
    /// Generalized-α ρ∞.
    pub rho_inf: Option<f64>,
}

/// Errors of this module.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SchemeError {
    /// The scheme name is not one of the known names.
    #[error(
        "unknown scheme '{0}' (known: forward-euler, backward-euler, trapezoidal, rk4, \
         central-difference, newmark, hht, generalized-alpha)"
    )]
    UnknownScheme(String),
    /// A parameter the scheme needs was not given.
    #[error("scheme '{scheme}' needs --{param}")]
    MissingParam {
        /// Scheme name.
        scheme: &'static str,
        /// Parameter name as on the command line.
        param: &'static str,
    },
    /// A parameter was given that the scheme does not take.
    #[error("scheme '{scheme}' takes no --{param}")]
    UnexpectedParam {
        /// Scheme name.
        scheme: &'static str,
        /// Parameter name as on the command line.
        param: &'static str,
    },
    /// A parameter is outside its admissible range.
    #[error("--{param} '{value}' is out of range: {why}")]
    OutOfRange {
        /// Parameter name as on the command line.
        param: &'static str,
        /// The offending value.
        value: f64,
        /// What the range is.
        why: &'static str,
    },
    /// The text form `name:key=value,...` could not be read.
    #[error("cannot read scheme '{0}': expected NAME or NAME:key=value,key=value")]
    BadSyntax(String),
    /// The capped Schur iteration did not converge.
    #[error("eigenvalue iteration did not converge for a {0}x{0} amplification matrix")]
    NoConvergence(usize),
}

impl Scheme {
    /// The command-line name of the scheme, without parameters.
    pub fn name(&self) -> &'static str {
        match self {
            Scheme::ForwardEuler => "forward-euler",
            Scheme::BackwardEuler => "backward-euler",
            Scheme::Trapezoidal => "trapezoidal",
            Scheme::Rk4 => "rk4",
            Scheme::CentralDifference => "central-difference",
            Scheme::Newmark { .. } => "newmark",
            Scheme::Hht { .. } => "hht",
            Scheme::GeneralizedAlpha { .. } => "generalized-alpha",
        }
    }

    /// Build a scheme from its command-line name and parameters, checking that
    /// exactly the parameters it needs are given and lie in range.
    pub fn parse(name: &str, params: &SchemeParams) -> Result<Scheme, SchemeError> {
        let scheme = match name.trim().to_ascii_lowercase().as_str() {
            "forward-euler" => Scheme::ForwardEuler,
            "backward-euler" => Scheme::BackwardEuler,
            "trapezoidal" => Scheme::Trapezoidal,
            "rk4" => Scheme::Rk4,
            "central-difference" => Scheme::CentralDifference,
            "newmark" => Scheme::Newmark {
                beta: need("newmark", "beta", params.beta)?,
                gamma: need("newmark", "gamma", params.gamma)?,
            },
            "hht" => Scheme::Hht {
                alpha: need("hht", "alpha", params.alpha)?,
            },
            "generalized-alpha" => Scheme::GeneralizedAlpha {
                rho_inf: need("generalized-alpha", "rho-inf", params.rho_inf)?,
            },
            other => return Err(SchemeError::UnknownScheme(other.to_string())),
        };
        let name = scheme.name();
        let given = [
            ("beta", params.beta.is_some()),
            ("gamma", params.gamma.is_some()),
            ("alpha", params.alpha.is_some()),
            ("rho-inf", params.rho_inf.is_some()),
        ];
        let takes: &[&str] = match scheme {
            Scheme::Newmark { .. } => &["beta", "gamma"],
            Scheme::Hht { .. } => &["alpha"],
            Scheme::GeneralizedAlpha { .. } => &["rho-inf"],
            _ => &[],
        };
        if let Some((param, _)) = given.iter().find(|(p, g)| *g && !takes.contains(p)) {
            return Err(SchemeError::UnexpectedParam {
                scheme: name,
                param,
            });
        }
        scheme.validate()?;
        Ok(scheme)
    }

    /// Check that the parameters lie in their admissible ranges.
    pub fn validate(&self) -> Result<(), SchemeError> {
        let range = |param, value: f64, ok: bool, why| {
            if ok && value.is_finite() {
                Ok(())
            } else {
                Err(SchemeError::OutOfRange { param, value, why })
            }
        };
        match *self {
            Scheme::Newmark { beta, gamma } => {
                range("beta", beta, beta >= 0.0, "β must be ≥ 0")?;
                range("gamma", gamma, gamma >= 0.0, "γ must be ≥ 0")
            }
            Scheme::Hht { alpha } => range(
                "alpha",
                alpha,
                (-1.0 / 3.0..=0.0).contains(&alpha),
                "α must lie in [−1/3, 0] (this program's sign: negative adds dissipation)",
            ),
            Scheme::GeneralizedAlpha { rho_inf } => range(
                "rho-inf",
                rho_inf,
                (0.0..=1.0).contains(&rho_inf),
                "ρ∞ must lie in [0, 1]",
            ),
            _ => Ok(()),
        }
    }
}

fn need(scheme: &'static str, param: &'static str, v: Option<f64>) -> Result<f64, SchemeError> {
    v.ok_or(SchemeError::MissingParam { scheme, param })
}

/// Text form: `NAME` or `NAME:key=value,key=value`, e.g. `hht:alpha=-0.1`.
impl fmt::Display for Scheme {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Scheme::Newmark { beta, gamma } => write!(f, "newmark:beta={beta},gamma={gamma}"),
            Scheme::Hht { alpha } => write!(f, "hht:alpha={alpha}"),
            Scheme::GeneralizedAlpha { rho_inf } => {
                write!(f, "generalized-alpha:rho-inf={rho_inf}")
            }
            _ => f.write_str(self.name()),
        }
    }
}

/// Reads the text form written by `Display` (for settings files).
impl FromStr for Scheme {
    type Err = SchemeError;

    fn from_str(s: &str) -> Result<Scheme, SchemeError> {
        let bad = || SchemeError::BadSyntax(s.to_string());
        let (name, rest) = match s.split_once(':') {
            Some((n, r)) => (n, Some(r)),
            None => (s, None),
        };
        let mut params = SchemeParams::default();
        for pair in rest.into_iter().flat_map(|r| r.split(',')) {
            let (key, value) = pair.split_once('=').ok_or_else(bad)?;
            let value: f64 = value.trim().parse().map_err(|_| bad())?;
            let slot = match key.trim() {
                "beta" => &mut params.beta,
                "gamma" => &mut params.gamma,
                "alpha" => &mut params.alpha,
                "rho-inf" | "rho_inf" => &mut params.rho_inf,
                _ => return Err(bad()),
            };
            *slot = Some(value);
        }
        Scheme::parse(name, &params)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn text_form_round_trips() {
        for s in [
            Scheme::ForwardEuler,
            Scheme::CentralDifference,
            Scheme::Newmark {
                beta: 0.25,
                gamma: 0.5,
            },
            Scheme::Hht { alpha: -0.1 },
            Scheme::GeneralizedAlpha { rho_inf: 0.8 },
        ] {
            assert_eq!(s.to_string().parse::<Scheme>(), Ok(s));
        }
    }

    #[test]
    fn parameters_are_checked() {
        let p = SchemeParams::default();
        assert!(matches!(
            Scheme::parse("newmark", &p),
            Err(SchemeError::MissingParam { .. })
        ));
        let p = SchemeParams {
            alpha: Some(0.1),
            ..Default::default()
        };
        assert!(matches!(
            Scheme::parse("hht", &p),
            Err(SchemeError::OutOfRange { .. })
        ));
        assert!(matches!(
            Scheme::parse("rk4", &p),
            Err(SchemeError::UnexpectedParam { .. })
        ));
        assert!(matches!(
            Scheme::parse("leapfrog-ish", &SchemeParams::default()),
            Err(SchemeError::UnknownScheme(_))
        ));
    }
}
