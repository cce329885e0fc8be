//! Courant condition for explicit steps: the wave speed of an element kind from
//! its material, the Courant step L/c, and the highest element frequency.
//!
//! Wave speeds of linear elasticity: bar √(E/ϱ), plate/shell in plane stress
//! √(E/(ϱ(1−ν²))), dilatational wave in a solid √(E(1−ν)/(ϱ(1+ν)(1−2ν)))
//! (Belytschko, Liu & Moran, Nonlinear Finite Elements for Continua and
//! Structures, 2000, §6.3, from memory). The two-node lumped-mass bar has
//! ω_max = 2c/L, so central difference (Ω_crit = 2) gives Δt = L/c.

use std::fmt;
use std::str::FromStr;

/// Safety factor on the Courant step when none is given (0.9; common practice, no source).
pub const DEFAULT_SAFETY: f64 = 0.9;

/// Which wave speed governs the element.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ElementKind {
    /// Rod or truss: √(E/ϱ).
    Bar,
    /// Shell or membrane in plane stress: √(E/(ϱ(1−ν²))).
    Shell,
    /// Continuum solid, dilatational wave: √(E(1−ν)/(ϱ(1+ν)(1−2ν))).
    Solid,
}

impl ElementKind {
    /// Name as on the command line.
    pub fn name(&self) -> &'static str {
        match self {
            ElementKind::Bar => "bar",
            ElementKind::Shell => "shell",
            ElementKind::Solid => "solid",
        }
    }

    /// The formula of the wave speed, for display.
    pub fn formula(&self) -> &'static str {
        match self {
            ElementKind::Bar => "c = √(E/ϱ)",
            ElementKind::Shell => "c = √(E/(ϱ(1−ν²)))",
            ElementKind::Solid => "c = √(E(1−ν)/(ϱ(1+ν)(1−2ν)))",
        }
    }
}

impl fmt::Display for ElementKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for ElementKind {
    type Err = CourantError;
    fn from_str(s: &str) -> Result<Self, CourantError> {
        match s.trim().to_ascii_lowercase().as_str() {
            "bar" => Ok(ElementKind::Bar),
            "shell" => Ok(ElementKind::Shell),
            "solid" => Ok(ElementKind::Solid),
            _ => Err(CourantError::UnknownKind(s.to_string())),
        }
    }
}

/// Elastic material constants in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Material {
    /// Young's modulus E (Pa).
    pub youngs_pa: f64,
    /// Mass density ϱ (kg/m³).
    pub density_kg_m3: f64,
    /// Poisson's ratio ν (unused for bars).
    pub poisson: f64,
}

/// Bad material or element input.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CourantError {
    /// Unknown element kind.
    #[error("unknown element kind '{0}' (known: bar, shell, solid)")]
    UnknownKind(String),
    /// A value outside its physical range.
    #[error("--{param} '{value}' is out of range: {why}")]
    OutOfRange {
        /// Parameter name as on the command line.
        param: &'static str,
        /// The offending value.
        value: f64,
        /// What the range is.
        why: &'static str,
    },
}

fn check(param: &'static str, value: f64, ok: bool, why: &'static str) -> Result<(), CourantError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(CourantError::OutOfRange { param, value, why })
    }
}

/// Wave speed c (m/s) of `kind` in `material`.
pub fn wave_speed_m_s(kind: ElementKind, material: &Material) -> Result<f64, CourantError> {
    let (e, rho, nu) = (material.youngs_pa, material.density_kg_m3, material.poisson);
    check("youngs", e, e > 0.0, "Young's modulus must be > 0 (Pa)")?;
    check("density", rho, rho > 0.0, "density must be > 0 (kg/m³)")?;
    let modulus = match kind {
        ElementKind::Bar => e,
        ElementKind::Shell => {
            check(
                "poisson",
                nu,
                nu > -1.0 && nu < 1.0,
                "ν must lie in (−1, 1) for a shell",
            )?;
            e / (1.0 - nu * nu)
        }
        ElementKind::Solid => {
            check(
                "poisson",
                nu,
                nu > -1.0 && nu < 0.5,
                "ν must lie in (−1, 0.5) for a solid",
            )?;
            e * (1.0 - nu) / ((1.0 + nu) * (1.0 - 2.0 * nu))
        }
    };
    Ok((modulus / rho).sqrt())
}

/// Courant step L/c (s) of an element of characteristic length `length_m`.
pub fn courant_step_s(length_m: f64, wave_speed_m_s: f64) -> Result<f64, CourantError> {
    check(
        "length",
        length_m,
        length_m > 0.0,
        "element length must be > 0 (m)",
    )?;
    Ok(length_m / wave_speed_m_s)
}

/// Highest element frequency ω_max = 2c/L (rad/s) of the lumped two-node bar,
/// used as the element's ω in the amplification analysis.
pub fn highest_frequency_rad_s(length_m: f64, wave_speed_m_s: f64) -> Result<f64, CourantError> {
    Ok(2.0 / courant_step_s(length_m, wave_speed_m_s)?)
}

/// Check a safety factor: in (0, 1].
pub fn check_safety(safety: f64) -> Result<(), CourantError> {
    check(
        "safety",
        safety,
        safety > 0.0 && safety <= 1.0,
        "the safety factor must lie in (0, 1]",
    )
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn kinds_parse_and_bad_input_is_refused() {
        assert_eq!("Solid".parse::<ElementKind>(), Ok(ElementKind::Solid));
        assert!("beam".parse::<ElementKind>().is_err());
        let m = Material {
            youngs_pa: 1e9,
            density_kg_m3: 1000.0,
            poisson: 0.5,
        };
        assert!(wave_speed_m_s(ElementKind::Solid, &m).is_err());
        assert!(wave_speed_m_s(ElementKind::Shell, &m).is_ok());
        assert!(courant_step_s(0.0, 1000.0).is_err());
        assert!(check_safety(1.2).is_err());
    }

    #[test]
    fn bar_speed_closed_form() {
        // c = √(E/ϱ): E = 1e9 Pa, ϱ = 1000 kg/m³ → 1000 m/s exactly.
        let m = Material {
            youngs_pa: 1e9,
            density_kg_m3: 1000.0,
            poisson: 0.3,
        };
        let c = wave_speed_m_s(ElementKind::Bar, &m).unwrap();
        assert!((c - 1000.0).abs() < 1e-9);
    }
}
