//! The answer to "is this step stable for my scheme?": a [`Query`] (scheme,
//! mode frequency or element, damping, step, safety factor) → the stability
//! limit, the limit step, the spectral radius, damping and period error at
//! the step ([`LimitsOutput`], also the JSON object of `rhoscope limits`),
//! from [`crate::schemes`]; `text.rs` writes it as text, a table or a chart.
//! Pure: no terminal, no files.

mod text;

use anyhow::{Context, bail};
use serde::Serialize;

use crate::schemes::courant::{self, ElementKind, Material};
use crate::schemes::{self, AlphaParams, Scheme, SchemeParams};

pub use text::{render_chart, render_table, render_text};

/// What is asked, as the flags of `rhoscope limits` give it.
#[derive(Debug, Clone)]
pub struct Query {
    /// Scheme name (or `NAME:key=value,...`).
    pub scheme: String,
    /// Parameters given beside the name.
    pub params: SchemeParams,
    /// Angular frequency of the mode (rad/s).
    pub omega: Option<f64>,
    /// Damping ratio of the mode.
    pub zeta: f64,
    /// The time step (s).
    pub dt: Option<f64>,
    /// Element length (m), for the Courant mode.
    pub length: Option<f64>,
    /// Young's modulus (Pa).
    pub youngs: Option<f64>,
    /// Density (kg/m³).
    pub density: Option<f64>,
    /// Poisson's ratio.
    pub poisson: Option<f64>,
    /// Element kind (bar, shell, solid).
    pub kind: Option<String>,
    /// Safety factor on the limit step.
    pub safety: f64,
}

/// The JSON object printed by `rhoscope limits --json`. `null` where a value
/// does not apply or was not asked for.
#[derive(Debug, Clone, Serialize)]
pub struct LimitsOutput {
    /// Scheme in text form, e.g. `hht:alpha=-0.1`.
    pub scheme: String,
    /// Stability limit Ω_crit = ω·Δt_crit; `null` = unconditionally stable.
    pub omega_crit: Option<f64>,
    /// Limit time step Ω_crit/ω (s), when ω is known.
    pub dt_crit: Option<f64>,
    /// Spectral radius of one step at the given Δt.
    pub rho_at_dt: Option<f64>,
    /// Spectral radius as Ω → ∞ (unconditionally stable schemes only).
    pub rho_inf: Option<f64>,
    /// Damping ratio the scheme adds at the given Δt.
    pub damping_ratio_at_dt: Option<f64>,
    /// Relative period error (T̄ − T)/T at the given Δt; positive = elongation.
    pub period_error_at_dt: Option<f64>,
    /// Damping ratio ζ of the mode.
    pub zeta: f64,
    /// Angular frequency ω (rad/s): given, or 2c/L in Courant mode.
    pub omega: Option<f64>,
    /// Ω = ω·Δt at the given Δt.
    pub omega_at_dt: Option<f64>,
    /// Wave speed c (m/s) in Courant mode.
    pub wave_speed: Option<f64>,
    /// Safety factor applied to the limit time step.
    pub safety: f64,
    /// safety × dt_crit (s).
    pub dt_safe: Option<f64>,
    /// α_m, α_f, β, γ of the Newmark-family schemes.
    pub parameters: Option<ParamsOutput>,
}

/// The α-family parameters in the JSON object.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct ParamsOutput {
    /// Weight of the old acceleration.
    pub alpha_m: f64,
    /// Weight of the old velocity and displacement.
    pub alpha_f: f64,
    /// Newmark β.
    pub beta: f64,
    /// Newmark γ.
    pub gamma: f64,
}

/// Courant-mode inputs kept for the text output.
pub struct Element {
    pub kind: ElementKind,
    pub length_m: f64,
}

fn positive(flag: &str, v: Option<f64>) -> anyhow::Result<Option<f64>> {
    match v {
        Some(x) if !(x.is_finite() && x > 0.0) => {
            bail!("--{flag} '{x}' must be a positive finite number")
        }
        other => Ok(other),
    }
}

/// Answer `args`: the limit, the spectral radius at the step, and what the
/// element gives, or an error naming the flag that is wrong.
pub fn answer(args: &Query) -> anyhow::Result<(LimitsOutput, Option<Element>)> {
    let scheme = Scheme::parse(&args.scheme, &args.params)?;
    let zeta = args.zeta;
    if !(zeta.is_finite() && zeta >= 0.0) {
        bail!("--zeta '{zeta}' must be a finite damping ratio ≥ 0");
    }
    courant::check_safety(args.safety)?;
    let dt = positive("dt", args.dt)?;
    let mut omega = positive("omega", args.omega)?;
    let mut wave_speed = None;
    let mut element = None;
    if let Some(length_m) = positive("length", args.length)? {
        let kind: ElementKind = args.kind.as_deref().unwrap_or("").parse()?;
        if kind != ElementKind::Bar && args.poisson.is_none() {
            bail!("--kind {kind} needs --poisson");
        }
        let material = Material {
            youngs_pa: args.youngs.unwrap_or(f64::NAN),
            density_kg_m3: args.density.unwrap_or(f64::NAN),
            poisson: args.poisson.unwrap_or(0.0),
        };
        let c = courant::wave_speed_m_s(kind, &material)?;
        wave_speed = Some(c);
        omega = Some(courant::highest_frequency_rad_s(length_m, c)?);
        element = Some(Element { kind, length_m });
    }
    if dt.is_some() && omega.is_none() {
        bail!("--dt needs --omega, or an element (--length, --youngs, --density, --kind)");
    }
    let ctx = || format!("scheme '{scheme}'");
    let omega_crit = schemes::critical_omega(&scheme, zeta).with_context(ctx)?;
    let rho_inf = schemes::rho_inf(&scheme, zeta).with_context(ctx)?;
    let dt_crit = match (omega_crit, omega) {
        (Some(wc), Some(w)) => schemes::remedy::limit_step_s(wc, w),
        _ => None,
    };
    let omega_at_dt = match (omega, dt) {
        (Some(w), Some(dt)) => Some(w * dt),
        _ => None,
    };
    let (mut rho_at_dt, mut damping, mut period) = (None, None, None);
    if let Some(big) = omega_at_dt {
        rho_at_dt = Some(schemes::scheme_radius(&scheme, big, zeta).with_context(ctx)?);
        damping = schemes::damping_ratio_at(&scheme, big, zeta).with_context(ctx)?;
        period = schemes::period_error_at(&scheme, big, zeta).with_context(ctx)?;
    }
    let parameters = AlphaParams::of(&scheme).map(|p| ParamsOutput {
        alpha_m: p.alpha_m,
        alpha_f: p.alpha_f,
        beta: p.beta,
        gamma: p.gamma,
    });
    let out = LimitsOutput {
        scheme: scheme.to_string(),
        omega_crit,
        dt_crit,
        rho_at_dt,
        rho_inf,
        damping_ratio_at_dt: damping,
        period_error_at_dt: period,
        zeta,
        omega,
        omega_at_dt,
        wave_speed,
        safety: args.safety,
        dt_safe: dt_crit.map(|d| d * args.safety),
        parameters,
    };
    Ok((out, element))
}
