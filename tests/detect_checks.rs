//! The detectors against closed forms: growth per step of a scheme's exact
//! amplification sequence, sampled oscillators with a known exponent, and the
//! energy balance of the free damped oscillator.

use rhoscope::alarm::Alarm;
use rhoscope::detect::{DetectSettings, Status, replay};
use rhoscope::finding::Level;
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};

/// Schema and roles from (name, role) pairs.
fn layout(cols: &[(&str, Role)]) -> (Schema, RoleMap) {
    let schema = Schema {
        columns: cols
            .iter()
            .map(|(n, _)| Column {
                name: (*n).to_string(),
                unit: None,
            })
            .collect(),
        ..Schema::default()
    };
    let roles = RoleMap {
        roles: cols.iter().map(|(_, r)| *r).collect(),
        reasons: cols.iter().map(|_| "test".to_string()).collect(),
        signs: vec![1.0; cols.len()],
    };
    (schema, roles)
}

/// Round to `digits` significant digits, as a solver printing `%.{digits-1}e` would.
fn printed(v: f64, digits: usize) -> f64 {
    format!("{:.*e}", digits - 1, v).parse().unwrap_or(f64::NAN)
}

/// Deterministic uniform noise in [−1, 1] (a 64-bit LCG; constants of Knuth's MMIX).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    }
}

fn run(schema: &Schema, roles: &RoleMap, rows: &[Vec<f64>]) -> (Vec<Alarm>, Status) {
    replay(
        schema,
        roles,
        &DetectSettings::default(),
        rows.iter()
            .enumerate()
            .map(|(i, r)| (i as u64 + 2, r.as_slice())),
    )
}

/// Spectral radius of the undamped central-difference scheme past its limit:
/// ρ = (Ω²−2)/2 + √(((Ω²−2)/2)² − 1), Ω > 2 (characteristic equation
/// λ² − (2−Ω²)λ + 1 = 0; Hughes, The Finite Element Method, 1987, §9.1,
/// from memory). Check value ρ(2.01) = 1.221301 (FIELD-NOTES §2, reproduced
/// from the amplification matrix).
fn rho_central_difference(omega: f64) -> f64 {
    let b = (omega * omega - 2.0) / 2.0;
    b + (b * b - 1.0).sqrt()
}

/// Two modes integrated by central difference, x_{n+1} = (2−Ω²)x_n − x_{n−1}:
/// a stable one (Ω = 0.05, amplitude 1) and one past the limit starting at
/// `seed`. Probes mix them; every `k`-th step is written, to 6 digits.
fn buried_mode_rows(omega: f64, seed: f64, k: usize, steps: usize) -> Vec<Vec<f64>> {
    let dt = 1e-3;
    let (w1, w2) = (0.05_f64, omega);
    let (mut a0, mut a1) = (1.0, (w1).cos());
    let (mut b0, mut b1) = (seed, -seed);
    let mut rows = Vec::new();
    for n in 1..steps {
        let a2 = (2.0 - w1 * w1) * a1 - a0;
        let b2 = (2.0 - w2 * w2) * b1 - b0;
        (a0, a1, b0, b1) = (a1, a2, b1, b2);
        if n % k == 0 {
            let t = n as f64 * dt;
            rows.push(vec![
                printed(t, 9),
                n as f64,
                printed(a1 + b1, 6),
                printed(0.7 * a1 - 0.5 * b1, 6),
            ]);
        }
        if b1.abs() > 1e9 {
            break;
        }
    }
    rows
}

fn cd_layout() -> (Schema, RoleMap) {
    layout(&[
        ("time", Role::Time),
        ("step", Role::StepNumber),
        ("u1", Role::Probe),
        ("u2", Role::Probe),
    ])
}

#[test]
fn buried_central_difference_mode_found_at_print_precision() {
    let omega = 2.01;
    let rho = rho_central_difference(omega);
    // Closed form against the tabulated check value (tolerance: 7 digits printed).
    assert!((rho - 1.221301).abs() < 1e-6, "{rho}");
    let seed = 1e-12;
    let rows = buried_mode_rows(omega, seed, 1, 20_000);
    let (schema, roles) = cd_layout();
    let (alarms, status) = run(&schema, &roles, &rows);
    let crit = alarms
        .iter()
        .find(|a| a.level == Level::Critical)
        .expect("critical alarm");
    assert_eq!(crit.detector, "growth");
    // Once the mode stands well above the print floor the estimate is sharp
    // (tolerance: 6-digit data, 200-row fit).
    let g = status.evidence.growth_per_step.unwrap_or(0.0);
    assert!((g - rho).abs() < 1e-4, "final growth per step {g} vs {rho}");
    let step = (crit.line - 1) as f64;
    let mode = seed * rho.powf(step);
    // Printed to 6 digits the mode becomes readable near 1e-5; the alarm must
    // come before it has grown two decades past that.
    assert!(mode < 1e-3, "alarm at step {step}, mode amplitude {mode:e}");
    let g = crit.evidence.growth_per_step.unwrap_or(0.0);
    // Tolerance: at the first alarm the mode is within two decades of the
    // print floor, so its estimate carries that noise.
    assert!((g - rho).abs() < 5e-3, "growth per step {g} vs {rho}");
    // Onset: the mode crossed print resolution (~1e-5) near this step.
    let visible = (1e-5_f64 / seed).ln() / rho.ln();
    let onset = crit.evidence.onset_line.unwrap_or(0) as f64 - 1.0;
    assert!((onset - visible).abs() < 20.0, "onset {onset} vs {visible}");
    assert!(crit.message.contains("carry the growing mode"));
}

#[test]
fn declared_scheme_gives_the_stability_margin_of_the_growing_mode() {
    // Central difference run at Ω = 2.01 against its limit Ω_crit = 2
    // (Belytschko, Liu & Moran 2000, §6.3, from memory): the margin
    // Ω_crit/Ω − 1 = 2/2.01 − 1 = −0.4975 %, recovered by inverting the
    // scheme's spectral radius at the observed growth per step.
    let omega = 2.01;
    let rows = buried_mode_rows(omega, 1e-12, 1, 20_000);
    let (schema, roles) = cd_layout();
    let settings = DetectSettings {
        scheme: Some(rhoscope::schemes::Scheme::CentralDifference),
        ..DetectSettings::default()
    };
    let (alarms, status) = replay(
        &schema,
        &roles,
        &settings,
        rows.iter()
            .enumerate()
            .map(|(i, r)| (i as u64 + 2, r.as_slice())),
    );
    let exact = 2.0 / omega - 1.0;
    let crit = alarms
        .iter()
        .find(|a| a.detector == "growth" && a.level == Level::Critical)
        .expect("critical growth alarm");
    let m = crit.evidence.stability_margin.unwrap_or(f64::NAN);
    // Tolerance: the growth per step at the first alarm is good to 5e-3
    // (see above) and dρ/dΩ ≈ 10.5 there, so Ω is good to about 5e-4.
    assert!(
        (m - exact).abs() < 5e-4,
        "margin at the alarm {m} vs {exact}"
    );
    assert!(
        crit.message.contains("stability margin"),
        "{}",
        crit.message
    );
    // The sharper final fit (growth good to 1e-4) pins it to about 1e-5.
    let m = status.evidence.stability_margin.unwrap_or(f64::NAN);
    assert!((m - exact).abs() < 2e-5, "final margin {m} vs {exact}");
    // Without a declared scheme there is no margin.
    let (alarms, _) = run(&schema, &roles, &rows);
    assert!(alarms.iter().all(|a| a.evidence.stability_margin.is_none()));
}

#[test]
fn output_every_k_steps_gives_per_step_factor() {
    // μ = λ^k: |λ| = |μ|^(1/k) is exact (the phase aliases). k = 3 keeps the
    // sign alternation (odd k); k = 2 turns it monotone.
    let omega = 2.01;
    let rho = rho_central_difference(omega);
    for k in [2, 3] {
        let rows = buried_mode_rows(omega, 1e-15, k, 40_000);
        let (schema, roles) = cd_layout();
        let mut status = Status::default();
        // Replay up to each row so that the status of the last fit is read
        // while the mode is still growing cleanly.
        let cut = rows.len() - 5;
        let (alarms, s) = run(&schema, &roles, &rows[..cut]);
        status.evidence = s.evidence;
        let g = status.evidence.growth_per_step.unwrap_or(0.0);
        assert!(
            (g - rho).abs() < 3e-3,
            "k={k}: growth per step {g} vs {rho}"
        );
        let crit = alarms.iter().any(|a| a.level == Level::Critical);
        assert_eq!(crit, k == 3, "k={k}: {alarms:?}");
    }
}

#[test]
fn sampled_growing_oscillator_rate_and_frequency() {
    // x(t) = e^{σt} cos(2πft): growth rate σ and frequency f in closed form.
    let (sigma, f, dt) = (2.0, 1.0, 0.01);
    let mut noise = Lcg(7);
    let rows: Vec<Vec<f64>> = (0..600)
        .map(|n| {
            let t = n as f64 * dt;
            let x = (sigma * t).exp() * (2.0 * std::f64::consts::PI * f * t).cos();
            vec![t, printed(x * (1.0 + 1e-4 * noise.next()), 6)]
        })
        .collect();
    let (schema, roles) = layout(&[("time", Role::Time), ("x", Role::Probe)]);
    let (alarms, status) = run(&schema, &roles, &rows);
    let e = &status.evidence;
    let rate = e.growth_rate_per_s.unwrap_or(0.0);
    let freq = e.frequency_hz.unwrap_or(0.0);
    // Tolerances: 2 % on rate and 1 % on frequency for 6-digit data with 1e-4 noise.
    assert!((rate - sigma).abs() < 0.02 * sigma, "rate {rate}");
    assert!((freq - f).abs() < 0.01 * f, "frequency {freq}");
    // Resolved, low-frequency growth without an energy column is not called numerical.
    assert!(
        alarms.iter().all(|a| a.level < Level::Critical),
        "{alarms:?}"
    );
}

#[test]
fn noisy_stable_probes_read_as_no_growth() {
    let mut noise = Lcg(11);
    let rows: Vec<Vec<f64>> = (0..5000)
        .map(|n| {
            let t = n as f64 * 1e-3;
            let mut r = vec![t];
            for j in 0..6 {
                let w = 3.0 + 7.0 * j as f64;
                let x = (w * t + j as f64).sin() * (-0.01 * t).exp() + 0.05 * noise.next();
                r.push(printed(x, 6));
            }
            r
        })
        .collect();
    let mut cols = vec![("time", Role::Time)];
    for name in ["a", "b", "c", "d", "e", "f"] {
        cols.push((name, Role::Probe));
    }
    let (schema, roles) = layout(&cols);
    let (alarms, status) = run(&schema, &roles, &rows);
    assert!(alarms.is_empty(), "{alarms:?}");
    // The latest fit's estimate is shown, but it must not claim growth: over
    // a 200-row window it stays under the fourfold rise the detector needs.
    let g = status.evidence.growth_per_step.unwrap_or(f64::NAN);
    assert!(g < 4f64.powf(1.0 / 200.0), "{status:?}");
    assert!(status.evidence.forecast_steps.is_none(), "{status:?}");
}

/// Free vibration of a viscously damped single-degree-of-freedom system:
/// u(t) = e^{−ζωt}[u₀ cos ω_D t + (v₀ + ζω u₀)/ω_D sin ω_D t], ω_D = ω√(1−ζ²)
/// (Chopra, Dynamics of Structures, 4th ed., 2012, §2.2, eq. 2.2.4, from memory).
/// Returns rows [t, kinetic, strain, dissipated (trapezoid of c·v²), total].
fn damped_oscillator_energies(zeta: f64, rows: usize, with_dissipation: bool) -> Vec<Vec<f64>> {
    let (m, k) = (2.0_f64, 800.0_f64);
    let w = (k / m).sqrt();
    let c = 2.0 * zeta * m * w;
    let wd = w * (1.0 - zeta * zeta).sqrt();
    let (u0, v0) = (0.01, 0.0);
    let b = (v0 + zeta * w * u0) / wd;
    let state = |t: f64| {
        let e = (-zeta * w * t).exp();
        let (s, co) = (wd * t).sin_cos();
        let u = e * (u0 * co + b * s);
        let v = e * (-zeta * w * (u0 * co + b * s) + wd * (-u0 * s + b * co));
        (u, v)
    };
    let dt = 1e-4;
    let out_every = 20;
    let mut dissipated = 0.0;
    let mut prev_v = v0;
    let mut out = Vec::new();
    for n in 0..rows * out_every {
        let t = n as f64 * dt;
        let (u, v) = state(t);
        if n > 0 {
            dissipated += 0.5 * dt * c * (prev_v * prev_v + v * v);
        }
        prev_v = v;
        if n % out_every == 0 {
            let kin = 0.5 * m * v * v;
            let strain = 0.5 * k * u * u;
            let mut r = vec![t, printed(kin, 6), printed(strain, 6)];
            if with_dissipation {
                r.push(printed(dissipated, 6));
            }
            out.push(r);
        }
    }
    out
}

#[test]
fn damped_oscillator_keeps_its_balance() {
    let rows = damped_oscillator_energies(0.05, 2000, true);
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("kinetic", Role::Energy(EnergyTerm::Kinetic)),
        ("internal", Role::Energy(EnergyTerm::Internal)),
        ("damping", Role::Energy(EnergyTerm::Dissipated)),
    ]);
    let (alarms, status) = run(&schema, &roles, &rows);
    assert!(alarms.is_empty(), "{alarms:?}");
    let e = status.evidence.balance_error.unwrap_or(f64::NAN);
    // Tolerance: trapezoid rule error (dt = 1e-4, ω·dt = 2e-3) and 6-digit printing.
    assert!(e.abs() < 1e-4, "balance error {e}");
}

#[test]
fn missing_dissipation_reads_as_absorbed_energy() {
    // Without the damping column the balance error is −(dissipated)/E₀, and the
    // closed form gives E(t)/E₀ = (kinetic + strain)/E₀ decaying as e^{−2ζωt}
    // on average; the detector must warn, say "absorbed", and report the
    // error of the row it warned at.
    let rows = damped_oscillator_energies(0.02, 2000, false);
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("kinetic", Role::Energy(EnergyTerm::Kinetic)),
        ("internal", Role::Energy(EnergyTerm::Internal)),
    ]);
    let (alarms, _) = run(&schema, &roles, &rows);
    let warn = alarms
        .iter()
        .find(|a| a.detector == "energy")
        .expect("energy warning");
    assert_eq!(warn.level, Level::Warning);
    assert!(warn.message.contains("absorbed"), "{}", warn.message);
    assert!(warn.message.contains("dissipated"), "{}", warn.message);
    let row = &rows[(warn.line - 2) as usize];
    let e0 = rows[0][1] + rows[0][2];
    let expected = (row[1] + row[2] - e0) / e0;
    let got = warn.evidence.balance_error.unwrap_or(f64::NAN);
    // Tolerance: 6-digit printing.
    assert!((got - expected).abs() < 1e-5, "{got} vs {expected}");
    assert!(got < -0.05);
}

#[test]
fn exponential_energy_creation_is_critical_and_linear_drift_is_not() {
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("kinetic", Role::Energy(EnergyTerm::Kinetic)),
        ("internal", Role::Energy(EnergyTerm::Internal)),
    ]);
    let base = |n: usize| {
        let t = n as f64 * 1e-3;
        let kin = 50.0 * (1.0 + (20.0 * t).cos());
        (t, kin, 100.0 - kin)
    };
    // Energy created: 1e-6·1.05ⁿ on top of a conserved 100 J.
    let grow: Vec<Vec<f64>> = (0..1500)
        .map(|n| {
            let (t, k, u) = base(n);
            let extra = 1e-6 * 1.05_f64.powi(n as i32 - 200).min(1e12);
            vec![t, printed(k + extra, 7), printed(u, 7)]
        })
        .collect();
    let (alarms, _) = run(&schema, &roles, &grow);
    // Both the growth fit of the energy columns (energy created beyond 1 %)
    // and the balance itself (exponential error past 5 %) must call it.
    let crit = alarms
        .iter()
        .find(|a| a.level == Level::Critical && a.detector == "energy")
        .expect("critical from the balance");
    assert!(crit.evidence.balance_error.unwrap_or(0.0) > 0.05);
    assert!(
        alarms
            .iter()
            .any(|a| a.level == Level::Critical && a.detector == "growth")
    );
    // Linear drift: 10 % over the run.
    let drift: Vec<Vec<f64>> = (0..3000)
        .map(|n| {
            let (t, k, u) = base(n);
            vec![t, printed(k + 10.0 * n as f64 / 3000.0, 7), printed(u, 7)]
        })
        .collect();
    let (alarms, _) = run(&schema, &roles, &drift);
    assert!(
        alarms.iter().all(|a| a.level < Level::Critical),
        "{alarms:?}"
    );
    let w = alarms
        .iter()
        .find(|a| a.detector == "energy")
        .expect("warning");
    assert!(w.message.contains("created"), "{}", w.message);
}

#[test]
fn collapsing_step_is_critical_and_a_recovering_dip_is_not() {
    let (schema, roles) = layout(&[("time", Role::Time), ("dt", Role::StepSize)]);
    let mut t = 0.0;
    let collapse: Vec<Vec<f64>> = (0..400)
        .map(|n| {
            let dt = if n < 200 {
                1e-6
            } else {
                1e-6 * 0.95_f64.powi(n - 200)
            };
            t += dt;
            vec![t, dt]
        })
        .collect();
    let (alarms, _) = run(&schema, &roles, &collapse);
    let c = alarms
        .iter()
        .find(|a| a.level == Level::Critical)
        .expect("critical");
    assert_eq!(c.detector, "step");
    let mut t = 0.0;
    let dip: Vec<Vec<f64>> = (0..400)
        .map(|n| {
            let depth = if (200..240).contains(&n) { 0.05 } else { 1.0 };
            let dt = 1e-6 * depth;
            t += dt;
            vec![t, dt]
        })
        .collect();
    let (alarms, _) = run(&schema, &roles, &dip);
    assert!(alarms.is_empty(), "{alarms:?}");
    // An adaptive controller at a stiff contact: the step cut by 10^3.5 at
    // once, held for 300 rows while it drifts down by a further 30 %, then
    // grown back by 3 % a row. Not a collapse: it raises nothing.
    let mut t = 0.0;
    let mut dt = 1e-6;
    let cut: Vec<Vec<f64>> = (0..1200)
        .map(|n| {
            dt = match n {
                0..200 => 1e-6,
                200..500 => 10f64.powf(-9.5) * (1.0 - 0.3 * f64::from(n - 200) / 300.0),
                _ => (dt * 1.03).min(1e-6),
            };
            t += dt;
            vec![t, dt]
        })
        .collect();
    let (alarms, _) = run(&schema, &roles, &cut);
    assert!(alarms.is_empty(), "{alarms:?}");
}
