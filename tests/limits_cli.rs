//! `rhoscope limits` against published stability results, closed forms and
//! hand-computed Courant steps. Values from books are marked "from memory"
//! where recalled rather than read; each was also reproduced from the closed
//! form written beside it.

use assert_cmd::cargo::cargo_bin_cmd;
use nalgebra::DVector;
use rhoscope::schemes::{Scheme, amplification_matrix};
use serde_json::Value;

/// The published check values are given to 6–7 significant digits.
const TOL_PUBLISHED: f64 = 1e-5;
/// Closed forms evaluated here in f64: the limit search bisects to round-off.
const TOL_CLOSED_FORM: f64 = 1e-7;

fn limits_json(args: &[&str]) -> Value {
    let out = cargo_bin_cmd!("rhoscope")
        .arg("limits")
        .args(args)
        .arg("--json")
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn field(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is {:?} in {v}", v[key]))
}

fn assert_near(got: f64, want: f64, tol: f64, what: &str) {
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} ± {tol}"
    );
}

fn usage_error(args: &[&str]) {
    let out = cargo_bin_cmd!("rhoscope")
        .arg("limits")
        .args(args)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3), "args {args:?}");
    assert!(!out.stderr.is_empty(), "args {args:?} gave no message");
}

/// Central difference beyond Ω = 2: ρ = (Ω²−2)/2 + √(((Ω²−2)/2)² − 1), from the
/// characteristic equation λ² − (2 − Ω²)λ + 1 = 0.
fn cd_radius(omega: f64) -> f64 {
    let a = (omega * omega - 2.0) / 2.0;
    a + (a * a - 1.0).sqrt()
}

#[test]
fn central_difference_undamped() {
    // Belytschko, Liu & Moran, Nonlinear Finite Elements for Continua and
    // Structures, 2000, §6.3 (from memory): stable up to Ω = 2.
    let v = limits_json(&["--scheme", "central-difference"]);
    assert_near(field(&v, "omega_crit"), 2.0, TOL_PUBLISHED, "Ω_crit");
    assert!(v["rho_inf"].is_null(), "conditionally stable: no ρ∞");
    // Same source, closed form above: ρ(2.01) = 1.221301, ρ(2.5) = 4.
    for (omega, want) in [(2.01, 1.221301), (2.5, 4.0)] {
        let w = omega.to_string();
        let v = limits_json(&["--scheme", "central-difference", "--omega", &w, "--dt", "1"]);
        let rho = field(&v, "rho_at_dt");
        assert_near(rho, want, TOL_PUBLISHED, "ρ beyond the limit");
        assert_near(rho, cd_radius(omega), TOL_CLOSED_FORM, "closed form");
        assert!(
            v["period_error_at_dt"].is_null(),
            "negative real root: no period"
        );
    }
}

#[test]
fn central_difference_with_half_step_damping() {
    // Damping force from v(n−½): λ² + (Ω² + 2ζΩ − 2)λ + (1 − 2ζΩ) = 0 gives
    // Ω_crit = 2(√(1+ζ²) − ζ) (Belytschko, Liu & Moran 2000, §6.3, from memory);
    // ζ = 0.05 → 1.902498.
    let v = limits_json(&["--scheme", "central-difference", "--zeta", "0.05"]);
    assert_near(
        field(&v, "omega_crit"),
        1.902498,
        TOL_PUBLISHED,
        "Ω_crit ζ=0.05",
    );
    for zeta in [0.1f64, 0.5, 1.0] {
        let z = zeta.to_string();
        let v = limits_json(&["--scheme", "central-difference", "--zeta", &z]);
        let want = 2.0 * ((1.0 + zeta * zeta).sqrt() - zeta);
        assert_near(
            field(&v, "omega_crit"),
            want,
            TOL_CLOSED_FORM,
            "Ω_crit closed form",
        );
    }
}

#[test]
fn central_difference_period() {
    // T̄/T = Ω/(2·asin(Ω/2)) (Hughes, The Finite Element Method, 1987, ch. 9,
    // from memory): Ω = 1 → 0.9549297.
    let v = limits_json(&[
        "--scheme",
        "central-difference",
        "--omega",
        "1",
        "--dt",
        "1",
    ]);
    assert_near(
        field(&v, "period_error_at_dt"),
        0.9549297 - 1.0,
        TOL_PUBLISHED,
        "T̄/T − 1",
    );
    assert_near(
        field(&v, "rho_at_dt"),
        1.0,
        TOL_CLOSED_FORM,
        "|λ| = 1 below the limit",
    );
}

#[test]
#[allow(clippy::approx_constant)] // the 7-digit values are the check, as printed
fn euler_moduli() {
    // |1 + iΩ| = √(1+Ω²) and |1/(1 − iΩ)| = 1/√(1+Ω²) at Ω = 1 (closed forms of
    // the Euler amplification factors; common practice, no source).
    let v = limits_json(&["--scheme", "forward-euler", "--omega", "1", "--dt", "1"]);
    assert_near(
        field(&v, "rho_at_dt"),
        1.4142136,
        TOL_PUBLISHED,
        "forward Euler",
    );
    assert_near(
        field(&v, "omega_crit"),
        0.0,
        TOL_CLOSED_FORM,
        "unstable at any step",
    );
    let v = limits_json(&["--scheme", "backward-euler", "--omega", "1", "--dt", "1"]);
    assert_near(
        field(&v, "rho_at_dt"),
        0.7071068,
        TOL_PUBLISHED,
        "backward Euler",
    );
    assert!(
        v["omega_crit"].is_null(),
        "backward Euler is unconditionally stable"
    );
    assert_near(
        field(&v, "rho_inf"),
        0.0,
        TOL_PUBLISHED,
        "backward Euler ρ∞",
    );
}

#[test]
fn rk4_stability_interval() {
    // R(z) = 1 + z + z²/2 + z³/6 + z⁴/24 (Hairer & Wanner, Solving Ordinary
    // Differential Equations II, 1996, §IV.2, from memory): imaginary-axis limit
    // 2√2 = 2.828427, |R(2i)| = 0.7453560.
    let v = limits_json(&["--scheme", "rk4"]);
    assert_near(
        field(&v, "omega_crit"),
        2.828427,
        TOL_PUBLISHED,
        "imaginary-axis limit",
    );
    let v = limits_json(&["--scheme", "rk4", "--omega", "2", "--dt", "1"]);
    assert_near(field(&v, "rho_at_dt"), 0.7453560, TOL_PUBLISHED, "|R(2i)|");
    // Same source: real-axis limit −2.785294. With ζ = 1 the oscillator's two
    // roots sit at −Ω, so the limit on Ω is that real-axis limit.
    let v = limits_json(&["--scheme", "rk4", "--zeta", "1"]);
    assert_near(
        field(&v, "omega_crit"),
        2.785294,
        TOL_PUBLISHED,
        "real-axis limit",
    );
    // |R(iΩ)|² = 1 − Ω⁶/72 + Ω⁸/576 (expanding R(iΩ) by hand): Ω = 2.9.
    let w: f64 = 2.9;
    let want = (1.0 - w.powi(6) / 72.0 + w.powi(8) / 576.0).sqrt();
    let v = limits_json(&["--scheme", "rk4", "--omega", "2.9", "--dt", "1"]);
    assert_near(field(&v, "rho_at_dt"), want, TOL_CLOSED_FORM, "|R(2.9i)|");
    assert_near(want, 1.193063, TOL_PUBLISHED, "|R(2.9i)| from memory");
}

#[test]
fn newmark_limits() {
    // γ = ½: Ω_crit = 1/√(γ/2 − β) (Hughes, The Finite Element Method, 1987,
    // ch. 9, from memory). Linear acceleration β = 1/6 → 2√3 = 3.464102.
    let six = (1.0f64 / 6.0).to_string();
    let v = limits_json(&["--scheme", "newmark", "--beta", &six, "--gamma", "0.5"]);
    assert_near(
        field(&v, "omega_crit"),
        3.464102,
        TOL_PUBLISHED,
        "linear acceleration",
    );
    let twelve = (1.0f64 / 12.0).to_string();
    let v = limits_json(&["--scheme", "newmark", "--beta", &twelve, "--gamma", "0.5"]);
    assert_near(
        field(&v, "omega_crit"),
        6f64.sqrt(),
        TOL_CLOSED_FORM,
        "β = 1/12: √6",
    );
    // Same source: with damping implicit, Ω_crit = [ξ(γ−½) + √(γ/2 − β + ξ²(γ−½)²)]/(γ/2 − β).
    for (beta, gamma, xi) in [
        (0.0f64, 0.6f64, 0.1f64),
        (1.0 / 6.0, 0.6, 0.05),
        (0.0, 0.5, 0.3),
    ] {
        let d = gamma / 2.0 - beta;
        let g = gamma - 0.5;
        let want = (xi * g + (d + xi * xi * g * g).sqrt()) / d;
        let (b, gm, z) = (beta.to_string(), gamma.to_string(), xi.to_string());
        let v = limits_json(&[
            "--scheme", "newmark", "--beta", &b, "--gamma", &gm, "--zeta", &z,
        ]);
        assert_near(
            field(&v, "omega_crit"),
            want,
            TOL_CLOSED_FORM,
            "damped Newmark",
        );
    }
    let v = limits_json(&[
        "--scheme", "newmark", "--beta", "0", "--gamma", "0.6", "--zeta", "0.1",
    ]);
    assert_near(
        field(&v, "omega_crit"),
        1.859379,
        TOL_PUBLISHED,
        "β=0, γ=0.6, ξ=0.1",
    );
}

#[test]
fn average_acceleration() {
    // β = ¼, γ = ½: unconditionally stable, ρ = 1, T̄/T = Ω/(2·atan(Ω/2)),
    // Ω = 1 → 1.0784052 (Hughes 1987, ch. 9, from memory).
    let args = ["--scheme", "newmark", "--beta", "0.25", "--gamma", "0.5"];
    let v = limits_json(&[&args[..], &["--omega", "1", "--dt", "1"]].concat());
    assert!(v["omega_crit"].is_null(), "unconditionally stable");
    assert_near(field(&v, "rho_at_dt"), 1.0, TOL_CLOSED_FORM, "ρ = 1");
    assert_near(field(&v, "rho_inf"), 1.0, TOL_PUBLISHED, "ρ∞ = 1");
    assert_near(
        field(&v, "period_error_at_dt"),
        0.0784052,
        TOL_PUBLISHED,
        "period",
    );
    assert_near(
        field(&v, "damping_ratio_at_dt"),
        0.0,
        TOL_CLOSED_FORM,
        "no damping",
    );
    // Trapezoidal rule on the first-order form: the same spectrum (Hughes 1987, §9.1).
    let v = limits_json(&["--scheme", "trapezoidal", "--omega", "1", "--dt", "1"]);
    assert_near(
        field(&v, "period_error_at_dt"),
        0.0784052,
        TOL_PUBLISHED,
        "trapezoidal",
    );
    // Period error ≈ (β/2 − 1/24)Ω² for γ = ½ (series of the expression above):
    // Ω = 0.1 → 8.33e-4; the series drops O(Ω⁴) terms.
    let v = limits_json(&[&args[..], &["--omega", "0.1", "--dt", "1"]].concat());
    assert_near(
        field(&v, "period_error_at_dt"),
        8.33e-4,
        1e-6,
        "small-Ω period error",
    );
}

#[test]
fn newmark_dissipation_with_gamma_above_half() {
    // ξ̄ ≈ (γ − ½)Ω/2 for small Ω (Hughes 1987, §9.1, from memory): β = 0.3025,
    // γ = 0.6, Ω = 0.1 → 4.99e-3 (first-order formula, 3 digits given).
    let v = limits_json(&[
        "--scheme", "newmark", "--beta", "0.3025", "--gamma", "0.6", "--omega", "0.1", "--dt", "1",
    ]);
    assert_near(field(&v, "damping_ratio_at_dt"), 4.99e-3, 1e-5, "ξ̄");
    assert!(
        v["omega_crit"].is_null(),
        "2β ≥ γ ≥ ½: unconditionally stable"
    );
}

#[test]
fn hht_spectral_radius_at_infinity() {
    // ρ∞ = (1+α)/(1−α) with α ∈ [−⅓, 0] (Hilber, Hughes & Taylor, "Improved
    // numerical dissipation for time integration algorithms in structural
    // dynamics", Earthquake Eng. Struct. Dyn. 5, 1977): α = −0.1 → 0.818182.
    let v = limits_json(&["--scheme", "hht", "--alpha", "-0.1"]);
    assert_near(field(&v, "rho_inf"), 0.818182, TOL_PUBLISHED, "ρ∞ α=−0.1");
    assert!(v["omega_crit"].is_null(), "unconditionally stable");
    for alpha in [-0.05, -1.0 / 3.0] {
        let a = alpha.to_string();
        let v = limits_json(&["--scheme", "hht", "--alpha", &a]);
        let want = (1.0 + alpha) / (1.0 - alpha);
        assert_near(field(&v, "rho_inf"), want, TOL_PUBLISHED, "ρ∞ closed form");
    }
    // This program's sign: a positive α is refused, not silently flipped.
    usage_error(&["--scheme", "hht", "--alpha", "0.1"]);
}

#[test]
fn generalized_alpha_parameters_and_rho_inf() {
    // α_m = (2ρ∞−1)/(ρ∞+1), α_f = ρ∞/(ρ∞+1) (Chung & Hulbert, "A time
    // integration algorithm for structural dynamics with improved numerical
    // dissipation: the generalized-α method", J. Appl. Mech. 60, 1993):
    // ρ∞ = 0.8 → α_m = 0.333333, α_f = 0.444444.
    let v = limits_json(&["--scheme", "generalized-alpha", "--rho-inf", "0.8"]);
    let p = &v["parameters"];
    assert_near(field(p, "alpha_m"), 0.333333, TOL_PUBLISHED, "α_m");
    assert_near(field(p, "alpha_f"), 0.444444, TOL_PUBLISHED, "α_f");
    assert!(v["omega_crit"].is_null(), "unconditionally stable");
    // The spectral radius at infinity is the ρ∞ the parameters were built from.
    assert_near(field(&v, "rho_inf"), 0.8, TOL_PUBLISHED, "ρ∞ round trip");
}

/// March the damped oscillator u'' + 2ζωu' + ω²u = 0, u(0) = 1, u'(0) = 0 to
/// t_end with N steps of the amplification matrix; error against the closed form
/// u(t) = e^(−ζωt)(cos ω_d t + ζω/ω_d sin ω_d t), ω_d = ω√(1−ζ²).
fn global_error(scheme: &Scheme, n: usize) -> f64 {
    let (omega, zeta, t_end) = (2.0 * std::f64::consts::PI, 0.1, 1.0);
    let dt = t_end / n as f64;
    let a = amplification_matrix(scheme, omega * dt, zeta);
    let mut x = DVector::from_vec(vec![1.0, 0.0]);
    for _ in 0..n {
        x = &a * x;
    }
    let wd = omega * (1.0 - zeta * zeta).sqrt();
    let exact = (-zeta * omega * t_end).exp()
        * ((wd * t_end).cos() + zeta * omega / wd * (wd * t_end).sin());
    (x[0] - exact).abs()
}

#[test]
fn convergence_orders() {
    // Halving the step halves forward Euler's global error and divides RK4's by
    // 16 (orders 1 and 4; common practice, no source). The ratio approaches
    // 2^p with a relative correction of order ω·Δt (measured: RK4 gives 14.9 at
    // 100/200 steps, 15.7 at 400/800); 3 % covers it at these step counts,
    // while errors stay far above round-off.
    let fe = global_error(&Scheme::ForwardEuler, 4000) / global_error(&Scheme::ForwardEuler, 8000);
    assert_near(fe, 2.0, 0.06, "forward Euler ratio");
    let rk = global_error(&Scheme::Rk4, 800) / global_error(&Scheme::Rk4, 1600);
    assert_near(rk, 16.0, 0.48, "RK4 ratio");
}

/// Courant mode: expected step computed here from the wave-speed formulas
/// (Belytschko, Liu & Moran 2000, §6.3, from memory) with invented steel-like
/// constants E = 2.1e11 Pa, ϱ = 7850 kg/m³, ν = 0.3, L = 5 mm.
#[test]
fn courant_steel_like_bar_shell_solid() {
    let (e, rho, nu, l): (f64, f64, f64, f64) = (2.1e11, 7850.0, 0.3, 0.005);
    let cases = [
        ("bar", (e / rho).sqrt()),
        ("shell", (e / (rho * (1.0 - nu * nu))).sqrt()),
        (
            "solid",
            (e * (1.0 - nu) / (rho * (1.0 + nu) * (1.0 - 2.0 * nu))).sqrt(),
        ),
    ];
    for (kind, c) in cases {
        let v = limits_json(&[
            "--length",
            "0.005",
            "--youngs",
            "2.1e11",
            "--density",
            "7850",
            "--poisson",
            "0.3",
            "--kind",
            kind,
        ]);
        let dt = l / c;
        // Relative: the steps are ~1e-6 s.
        assert_near(field(&v, "wave_speed") / c, 1.0, 1e-9, kind);
        assert_near(field(&v, "dt_crit") / dt, 1.0, 1e-7, kind);
        assert_near(field(&v, "dt_safe") / (0.9 * dt), 1.0, 1e-7, kind);
    }
    // Bar: c = √(2.1e11/7850) = 5172.2 m/s, Δt = 0.005/5172.2 = 9.667e-7 s (by hand).
    let v = limits_json(&[
        "--length",
        "0.005",
        "--youngs",
        "2.1e11",
        "--density",
        "7850",
        "--kind",
        "bar",
        "--safety",
        "0.8",
    ]);
    assert_near(field(&v, "dt_crit"), 9.667e-7, 1e-10, "bar step by hand");
    assert_near(
        field(&v, "dt_safe"),
        0.8 * 9.667e-7,
        1e-10,
        "bar step × 0.8",
    );
}

#[test]
fn text_output_uses_the_trade_words() {
    let out = cargo_bin_cmd!("rhoscope")
        .args([
            "limits",
            "--scheme",
            "central-difference",
            "--omega",
            "6283",
            "--zeta",
            "0.02",
        ])
        .args(["--dt", "2e-4"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8(out.stdout).unwrap();
    for label in [
        "stability limit Ω",
        "limit time step",
        "spectral radius",
        "algorithmic damping",
        "period elongation",
    ] {
        assert!(text.contains(label), "missing '{label}' in\n{text}");
    }
    let out = cargo_bin_cmd!("rhoscope")
        .args(["limits", "--scheme", "rk4", "--plot"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains('*') && text.contains('|'),
        "no chart in\n{text}"
    );
}

#[test]
fn usage_errors_exit_3() {
    usage_error(&["--scheme", "newmark"]);
    usage_error(&["--scheme", "no-such-scheme"]);
    usage_error(&["--scheme", "rk4", "--beta", "0.25"]);
    usage_error(&["--dt", "1e-3"]);
    usage_error(&["--omega", "-5"]);
    usage_error(&["--zeta", "-0.1"]);
    usage_error(&[
        "--length",
        "0.01",
        "--youngs",
        "2e11",
        "--density",
        "7800",
        "--kind",
        "beam",
    ]);
    usage_error(&[
        "--length",
        "0.01",
        "--youngs",
        "2e11",
        "--density",
        "7800",
        "--kind",
        "solid",
    ]);
    usage_error(&["--omega", "10", "--length", "0.01"]);
    usage_error(&["--safety", "1.5"]);
}
