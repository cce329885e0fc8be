//! What a fit says in figures: the spectral radius per output and per
//! step, the growth rate and frequency, and — with a declared scheme — the
//! stability margin and the stable step.

use crate::detect::clock::Clock;
use crate::detect::modes::Analysis;
use crate::finding::{Evidence, SuggestedDt};
use crate::schemes::{Scheme, omega_at_phase, omega_at_radius, remedy};

/// A declared scheme and its stability limit Ω_crit (undamped).
pub type Declared = (Scheme, f64);

/// What the latest fit says whether or not a mode grows: the spectral
/// radius per output and per step, the frequency of the dominant
/// eigenvalue and, with a declared scheme and output every step, the
/// stability margin at that frequency (the phase per step is aliased
/// when several steps pass between outputs, so no margin is read then).
pub fn estimate(a: &Analysis, clock: &Clock, scheme: Option<&Declared>) -> Evidence {
    let k = clock.steps_per_output();
    let rho = a.spectral_radius;
    let mut ev = Evidence {
        growth_per_output: Some(rho),
        growth_per_step: Some(rho.powf(1.0 / k)),
        ..Evidence::default()
    };
    if let Some(tpr) = clock.time_per_row.filter(|v| *v > 0.0) {
        ev.growth_rate_per_s = Some(rho.ln() / tpr);
        ev.frequency_hz = Some(a.dominant.arg() / (2.0 * std::f64::consts::PI) / tpr);
    }
    if let Some((scheme, oc)) = scheme
        && k < 1.5
    {
        ev.stability_margin = omega_at_phase(scheme, a.dominant.arg(), 0.0, *oc)
            .ok()
            .flatten()
            .filter(|w| *w > 0.0)
            .map(|w| oc / w - 1.0);
    }
    ev
}

/// Stability margin of a mode growing by `rho_step` per step: where the
/// declared scheme has that spectral radius, past its limit (negative).
pub fn margin_of_growth(scheme: Option<&Declared>, rho_step: f64) -> Option<f64> {
    let (scheme, oc) = scheme?;
    let omega = omega_at_radius(scheme, rho_step, 0.0, *oc).ok().flatten()?;
    (omega > 0.0).then(|| oc / omega - 1.0)
}

/// With a known scheme and a readable step, the stable step for a mode
/// growing by `rho_step` per step (`phase` radians per row): put in
/// `ev.suggested_dt`, and the remedy sentence for the alarm returned.
pub fn remedy(
    scheme: Option<&Declared>,
    rho_step: f64,
    phase: f64,
    clock: &Clock,
    ev: &mut Evidence,
) -> Option<String> {
    let (scheme, oc) = scheme?;
    // The step: its column, else simulated time per row over steps per row.
    let dt = clock
        .dt
        .or_else(|| Some(clock.time_per_row? / clock.steps_per_row.filter(|k| *k >= 1.0)?))?;
    let step = remedy::from_growth(scheme, *oc, rho_step, dt)?;
    ev.suggested_dt = Some(SuggestedDt {
        seconds: step.suggested_s,
        basis: step.basis(scheme, rho_step, remedy::at_nyquist(phase)),
    });
    Some(step.sentence(scheme))
}
