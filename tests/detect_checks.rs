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
    // Onset: the mode grows from the first step, and crossed print
    // resolution (~1e-5) near `visible`; the estimate lies between (an
    // earlier fit that already followed the mode may pull it back).
    let visible = (1e-5_f64 / seed).ln() / rho.ln();
    let onset = crit.evidence.onset_line.unwrap_or(0) as f64 - 1.0;
    assert!(
        onset >= 1.0 && onset < visible + 20.0,
        "onset {onset} vs {visible}"
    );
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
        // k = 3: the sign still flips every row. k = 2: the aliased mode
        // looks monotone, and is called once it has outgrown the stable
        // response by six decades (the stable mode's amplitude is 1).
        let crit = alarms
            .iter()
            .find(|a| a.level == Level::Critical)
            .unwrap_or_else(|| panic!("k={k}: {alarms:?}"));
        if k == 2 {
            assert!(
                crit.message.contains("times the largest response"),
                "{}",
                crit.message
            );
            let mode_at_alarm = 1e-15 * rho.powf(crit.line as f64 * k as f64);
            assert!(
                (1e6..1e9).contains(&mode_at_alarm),
                "k=2: mode {mode_at_alarm:e} at the alarm"
            );
        } else {
            assert!(
                crit.message.contains("sign-alternating"),
                "{}",
                crit.message
            );
        }
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

/// A growing oscillation at 2 rad per row: x(n) = e^{σn} cos(2n) under a
/// slow unit response, 6 digits.
fn fast_growing_rows(with_step: bool) -> (Schema, RoleMap, Vec<Vec<f64>>) {
    let rows: Vec<Vec<f64>> = (0..1200)
        .map(|n| {
            let n = n as f64;
            let x = (0.05 * n).cos() + 1e-3 * (0.01 * n).exp() * (2.0 * n).cos();
            vec![n * 1e-3, n, printed(x, 6)]
        })
        .collect();
    let step_role = if with_step {
        Role::StepNumber
    } else {
        Role::Probe
    };
    let (schema, roles) = layout(&[("time", Role::Time), ("n", step_role), ("x", Role::Probe)]);
    let rows = if with_step {
        rows
    } else {
        rows.into_iter().map(|r| vec![r[0], 0.0, r[2]]).collect()
    };
    (schema, roles, rows)
}

/// Above a quarter cycle per row is a numerical signature only when every
/// step is written: with a step counter rising by one per row the mode is
/// called; with no way to know the stride (time only) the same rows may be
/// a slow physical mode written every few steps, and they are not (the mode
/// grows e^12 from a thousandth of the response here, far from outgrowing it
/// by six decades).
#[test]
fn a_fast_phase_is_numerical_only_when_every_step_is_written() {
    let (schema, roles, rows) = fast_growing_rows(true);
    let (alarms, _) = run(&schema, &roles, &rows);
    assert!(
        alarms.iter().any(|a| a.level == Level::Critical),
        "every step written: {alarms:?}"
    );
    let (schema, roles, rows) = fast_growing_rows(false);
    let (alarms, _) = run(&schema, &roles, &rows);
    assert!(
        alarms.iter().all(|a| a.level < Level::Critical),
        "stride unknown: {alarms:?}"
    );
}

/// An exact, undamped oscillator written every step whose step is halved
/// half-way: the sampled sequence changes its one-step map, not its energy.
/// A window spanning the change is no linear map; the window restarts there.
#[test]
fn a_step_change_in_a_healthy_run_raises_nothing() {
    let (w, mut t, mut dt) = (2.0 * std::f64::consts::PI * 3.0, 0.0, 0.02);
    let mut rows = Vec::new();
    for n in 0..3000 {
        if n == 1500 {
            dt /= 2.0;
        }
        rows.push(vec![
            printed(t, 9),
            dt,
            printed((w * t).cos() + 0.3 * (2.7 * w * t).sin(), 6),
            printed(0.5 * (w * t).sin() - 0.2 * (2.7 * w * t).cos(), 6),
        ]);
        t += dt;
    }
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("dt", Role::StepSize),
        ("u1", Role::Probe),
        ("u2", Role::Probe),
    ]);
    let (alarms, _) = run(&schema, &roles, &rows);
    assert!(alarms.is_empty(), "{alarms:?}");
}

/// A contact spike: a force that rises by decades in two rows and is gone
/// two rows later, on top of a smooth response. A single fit through it may
/// show a growing eigenvalue; the mode is not at its largest when the next
/// fit looks, so nothing is called.
#[test]
fn a_contact_spike_is_not_a_growing_mode() {
    let rows: Vec<Vec<f64>> = (0..600)
        .map(|n| {
            let nf = n as f64;
            let spike = match n {
                300 => 2.0,
                301 => 65.0,
                302 => 67.0,
                303 => 3.0,
                _ => 0.0,
            };
            vec![nf * 1e-4, nf, printed((0.03 * nf).sin(), 6), spike]
        })
        .collect();
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("step", Role::StepNumber),
        ("u", Role::Probe),
        ("contact", Role::Probe),
    ]);
    let (alarms, _) = run(&schema, &roles, &rows);
    assert!(
        alarms.iter().all(|a| a.level < Level::Critical),
        "{alarms:?}"
    );
}

/// Right after a restart with a step far past the limit the sign-alternating
/// mode grows by about 10^5 per row (central difference at Ω = 316:
/// ρ = Ω² − 2 − 1/ρ ≈ 10^5, Hughes 1987, §9.1, from memory). The first fits
/// on short windows (8 rows, confirmed a few rows later) call it before a
/// 16-row window could even be fitted.
#[test]
fn a_violent_mode_right_after_a_restart_is_called_within_a_dozen_rows() {
    let omega: f64 = 316.0;
    let rho = rho_central_difference(omega);
    assert!((rho - 99_854.0).abs() < 1.0, "{rho}");
    let mut rows = Vec::new();
    let (mut a0, mut a1) = (1.0_f64, 1.0_f64);
    let mut b1 = 1e-9_f64;
    for n in 0..40 {
        let a2 = (2.0 - 0.01 * 0.01) * a1 - a0;
        (a0, a1) = (a1, a2);
        b1 *= -rho;
        if b1.abs() > 1e200 {
            break;
        }
        rows.push(vec![n as f64 * 1e-3, n as f64, printed(a1 + b1, 6)]);
    }
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("step", Role::StepNumber),
        ("u", Role::Probe),
    ]);
    let (alarms, _) = run(&schema, &roles, &rows);
    let crit = alarms
        .iter()
        .find(|a| a.level == Level::Critical)
        .unwrap_or_else(|| panic!("{alarms:?}"));
    let rows_in = crit.line - 2 + 1;
    assert!(rows_in < 16, "called after {rows_in} rows");
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
    // The error is judged against the energy that moves: the largest of the
    // peak kinetic energy and the range of each term, up to that row.
    let upto = &rows[..=(warn.line - 2) as usize];
    let row = &upto[upto.len() - 1];
    let e0 = rows[0][1] + rows[0][2];
    let peak = |j: usize| upto.iter().map(|r| r[j]).fold(f64::MIN, f64::max);
    let low = |j: usize| upto.iter().map(|r| r[j]).fold(f64::MAX, f64::min);
    let scale = peak(1).max(peak(1) - low(1)).max(peak(2) - low(2));
    let expected = (row[1] + row[2] - e0) / scale;
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

/// A particle run: kinetic energy near 12 J exchanged with a pair energy near
/// −4,000 J (an arbitrary zero), the total conserved to print precision.
/// `extra(n)` is energy added to the kinetic term at row n.
fn particle_rows(rows: usize, extra: impl Fn(usize) -> f64) -> Vec<Vec<f64>> {
    let mut noise = Lcg(7);
    (0..rows)
        .map(|n| {
            let t = n as f64 * 0.01;
            let kin = 12.0 + 1.5 * (3.0 * t).sin() + 0.2 * noise.next();
            let pot = -4000.0 - (kin - 12.0);
            let kin = kin + extra(n);
            vec![t, printed(kin, 7), printed(pot, 7), printed(kin + pot, 7)]
        })
        .collect()
}

/// Class 6: energy created faster and faster that never prints a NaN is a
/// runaway, judged against the energy that moves (the kinetic energy, not
/// |total| ≈ 4,000 J, against which even 100 J created is 2.5 %); energy
/// added at a steady pace that slows (a thermostat heating the system
/// toward its target, 1 − e^(−t/τ)) is at most a warning.
#[test]
fn a_finite_runaway_is_critical_and_steady_heating_is_not() {
    let (schema, roles) = layout(&[
        ("time", Role::Time),
        ("kinetic", Role::Energy(EnergyTerm::Kinetic)),
        ("pair", Role::Energy(EnergyTerm::Internal)),
        ("total", Role::Energy(EnergyTerm::Total)),
    ]);
    // From row 400 the created energy grows as exp(0.004·(n − 400)^1.6):
    // each doubling shorter than the last; 12 J (one scale) near row 470,
    // 100 J near row 500 — finite throughout.
    let runaway = |n: usize| {
        let s = n.saturating_sub(400) as f64;
        if n < 400 {
            0.0
        } else {
            0.01 * ((0.004 * s.powf(1.6)).exp() - 1.0)
        }
    };
    let rows = particle_rows(520, runaway);
    let (alarms, _) = run(&schema, &roles, &rows);
    let crit = alarms
        .iter()
        .find(|a| a.level == Level::Critical)
        .unwrap_or_else(|| panic!("runaway not called: {alarms:?}"));
    assert_eq!(crit.detector, "energy", "{}", crit.message);
    assert!(crit.message.contains("created"), "{}", crit.message);
    // Judged against the kinetic energy: about 1 J created is several per
    // cent of it (of |total| it would be 0.03 %).
    let rel = crit.evidence.balance_error.unwrap_or(0.0);
    assert!(rel > 0.03, "balance error {rel}");
    // Before the created energy reaches 100 J, and not before row 400.
    let line = crit.line as usize - 2;
    assert!((420..500).contains(&line), "called at row {line}");
    // Heating: 30 J added over the run as 1 − e^(−t/τ), τ = 150 rows.
    let heating = particle_rows(1200, |n| 30.0 * (1.0 - (-(n as f64) / 150.0).exp()));
    let (alarms, _) = run(&schema, &roles, &heating);
    assert!(
        alarms.iter().all(|a| a.level < Level::Critical),
        "{alarms:?}"
    );
}
