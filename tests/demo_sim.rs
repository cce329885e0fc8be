//! The invented simulations: integrators against closed-form results, energy
//! books, the labelled catalogue's honesty, determinism and the demo CLI.
#![allow(clippy::unwrap_used)]

use std::f64::consts::PI;

use nalgebra::DVector;
use rhoscope::demo::integrate::{Dynamics, Scheme};
use rhoscope::demo::model::{Conn, Dashpot, Element, Law, Model};
use rhoscope::demo::{Run, catalogue};
use rhoscope::finding::Level;

/// One mass m on a spring k to ground, optional dashpot c.
fn sdof(m: f64, k: f64, c: f64) -> Model {
    Model {
        mass_kg: vec![m],
        elements: vec![Element {
            conn: Conn::Axial {
                i: None,
                j: Some(0),
            },
            law: Law::Linear { k },
            recorded: true,
        }],
        dashpots: if c > 0.0 {
            vec![Dashpot {
                i: None,
                j: Some(0),
                c,
                recorded: true,
            }]
        } else {
            vec![]
        },
        mass_damping_per_s: 0.0,
        loads: vec![],
    }
}

/// Per-step growth of |z| with z = ωu − iv, over `steps` steps from u = 1.
fn growth_per_step(scheme: Scheme, omega_dt: f64, steps: usize) -> f64 {
    let d = Dynamics::new(sdof(1.0, 1.0, 0.0));
    let mut s = d.start(DVector::from_vec(vec![1.0]), DVector::from_vec(vec![0.0]));
    let norm = |s: &rhoscope::demo::integrate::State| s.u[0].hypot(s.v[0]);
    // Let a spurious root (Newmark/HHT) die out first.
    for _ in 0..50 {
        s = d.step(scheme, &s, omega_dt);
    }
    let z0 = norm(&s);
    for _ in 0..steps {
        s = d.step(scheme, &s, omega_dt);
    }
    (norm(&s) / z0).powf(1.0 / steps as f64)
}

#[test]
fn one_step_schemes_match_their_amplification_moduli() {
    // |R(iΩ)| of each one-step scheme on the undamped oscillator, z = ωu − iv.
    // Forward Euler √(1+Ω²), backward Euler 1/√(1+Ω²): Hairer & Wanner, Solving ODEs II,
    // 1996, §IV.2 (from memory). RK4 |R(iΩ)|² = 1 − Ω⁶/72 + Ω⁸/576: same source.
    // Tolerance: these maps are exact on z, so only rounding over 200 steps remains.
    let tol = 1e-9;
    let fe = growth_per_step(Scheme::ForwardEuler, 0.1, 200);
    assert!((fe - 1.0049876).abs() < 1e-7 + tol, "forward Euler {fe}");
    let be = growth_per_step(Scheme::BackwardEuler, 1.0, 200);
    // 1/√2 = 0.7071068 at Ω = 1.
    assert!(
        (be - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-7 + tol,
        "backward Euler {be}"
    );
    for (w, want) in [(1.0, 0.9939050), (2.0, 0.7453560), (2.9, 1.193063)] {
        let r = growth_per_step(Scheme::Rk4, w, 200);
        assert!((r - want).abs() < 1e-6, "RK4 at {w}: {r} vs {want}");
    }
}

#[test]
fn central_difference_beyond_its_limit_grows_by_the_closed_form_factor() {
    // ρ = (Ω²−2)/2 + √(((Ω²−2)/2)² − 1) for Ω > 2 (root of λ² + (Ω²−2)λ + 1 = 0;
    // Hughes, The Finite Element Method, 1987, §9.1, from memory): 1.221301 at 2.01,
    // 1.877328 at 2.1. The growing root dominates after 50 steps; measured over 100
    // steps the other root (1/ρ) leaves an error far below 1e-6.
    for (w, want) in [(2.01, 1.221301), (2.1, 1.877328)] {
        let r = growth_per_step(Scheme::CentralDifference, w, 100);
        assert!((r - want).abs() < 1e-5, "CD at {w}: {r} vs {want}");
    }
    // At Ω = 1.99 it stays bounded (|λ| = 1).
    let r = growth_per_step(Scheme::CentralDifference, 1.99, 2000);
    assert!(r < 1.0 + 1e-3, "CD at 1.99 grew {r}");
}

/// Period of free vibration measured from up-crossings of u, in steps.
fn measured_period_steps(scheme: Scheme, omega_dt: f64, steps: usize) -> f64 {
    let d = Dynamics::new(sdof(1.0, 1.0, 0.0));
    let mut s = d.start(DVector::from_vec(vec![1.0]), DVector::from_vec(vec![0.0]));
    let mut crossings = Vec::new();
    for n in 0..steps {
        let next = d.step(scheme, &s, omega_dt);
        if s.u[0] < 0.0 && next.u[0] >= 0.0 {
            let frac = s.u[0] / (s.u[0] - next.u[0]);
            crossings.push(n as f64 + frac);
        }
        s = next;
    }
    let (a, b) = (crossings[0], crossings[crossings.len() - 1]);
    (b - a) / (crossings.len() - 1) as f64
}

#[test]
fn period_errors_match_the_published_ratios() {
    // Average acceleration: T̄/T = Ω/(2·atan(Ω/2)); central difference: Ω/(2·asin(Ω/2))
    // (Hughes 1987, ch. 9, from memory): 1.0784052 and 0.9549297 at Ω = 1.
    // Linear interpolation of crossings over ~1,000 periods: error well under 1e-5.
    let exact_steps = 2.0 * PI; // T/dt at Ω = 1
    let avg = measured_period_steps(Scheme::AVERAGE_ACCELERATION, 1.0, 7000) / exact_steps;
    assert!((avg - 1.0784052).abs() < 2e-5, "average acceleration {avg}");
    let cd = measured_period_steps(Scheme::CentralDifference, 1.0, 7000) / exact_steps;
    assert!((cd - 0.9549297).abs() < 2e-5, "central difference {cd}");
}

#[test]
fn average_acceleration_conserves_energy_and_hht_damps_high_frequencies() {
    // Trapezoidal rule conserves the oscillator's energy exactly (Hughes 1987 §9.1).
    let d = Dynamics::new(sdof(2.0, 50.0, 0.0));
    let mut s = d.start(DVector::from_vec(vec![0.3]), DVector::from_vec(vec![-1.0]));
    let energy = |s: &rhoscope::demo::integrate::State| {
        0.5 * 2.0 * s.v[0] * s.v[0] + 0.5 * 50.0 * s.u[0] * s.u[0]
    };
    let e0 = energy(&s);
    for _ in 0..5000 {
        s = d.step(Scheme::AVERAGE_ACCELERATION, &s, 0.37);
        // Newton stops at a residual of 1e-11; energy holds to that order.
        assert!((energy(&s) - e0).abs() < 1e-9 * e0);
    }
    // HHT-α spectral radius at infinity (1+α)/(1−α) (Hilber, Hughes & Taylor 1977):
    // 0.818182 for α = −0.1. The step is linear here, so its amplification matrix
    // on (u, v·dt, a·dt²) is built column by column from the integrator itself;
    // at Ω = 1e6 its spectral radius is within 1e-10 of the limit.
    let dt = 1e6;
    let d = Dynamics::new(sdof(1.0, 1.0, 0.0));
    let start = d.start(DVector::from_vec(vec![0.0]), DVector::from_vec(vec![0.0]));
    let mut a = nalgebra::Matrix3::<f64>::zeros();
    for j in 0..3 {
        let mut s0 = start.clone();
        s0.u[0] = if j == 0 { 1.0 } else { 0.0 };
        s0.v[0] = if j == 1 { 1.0 / dt } else { 0.0 };
        s0.a[0] = if j == 2 { 1.0 / (dt * dt) } else { 0.0 };
        let s1 = d.step(Scheme::Hht { alpha: -0.1 }, &s0, dt);
        a[(0, j)] = s1.u[0];
        a[(1, j)] = s1.v[0] * dt;
        a[(2, j)] = s1.a[0] * dt * dt;
    }
    let schur = nalgebra::Schur::try_new(a, 1e-15, 1000).unwrap();
    let rho = schur
        .complex_eigenvalues()
        .iter()
        .fold(0.0_f64, |m, z| m.max(z.norm()));
    assert!((rho - 0.818182).abs() < 1e-6, "HHT rho_inf {rho}");
}

#[test]
fn damped_free_vibration_matches_the_closed_form() {
    // u(t) = e^{−ξωt}(u0 cos ω_D t + (v0 + ξω u0)/ω_D sin ω_D t), ω_D = ω√(1−ξ²):
    // Chopra, Dynamics of Structures, 4th ed. 2012, §2.2 (from memory).
    let (m, k, xi) = (1.0, (2.0 * PI).powi(2), 0.05);
    let w = (k / m).sqrt();
    let c = 2.0 * xi * w * m;
    let wd = w * (1.0 - xi * xi).sqrt();
    let exact = |t: f64| (-xi * w * t).exp() * ((wd * t).cos() + xi * w / wd * (wd * t).sin());
    let exact_v = |t: f64| {
        let h = 1e-6;
        (exact(t + h) - exact(t - h)) / (2.0 * h)
    };
    let mut setup = rhoscope::demo::build::setup(
        "closed-form check",
        sdof(m, k, c),
        Scheme::AVERAGE_ACCELERATION,
        rhoscope::demo::run::StepRule::Fixed { dt_s: 1.0 / 400.0 },
        3.0,
    );
    setup.u0 = vec![1.0];
    setup.probes = vec![rhoscope::demo::build::disp(0, "u", "displacement")];
    let mut out = Vec::new();
    Run::new(setup).write_all(&mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    let rows: Vec<Vec<f64>> = text
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("time"))
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect();
    let e0 = 0.5 * k;
    for r in rows.iter().step_by(40) {
        let (t, u, kin, int, wext, damp) = (r[0], r[3], r[4], r[5], r[6], r[7]);
        // Second-order scheme at T/400: displacement error below 1e-3 of the amplitude.
        assert!((u - exact(t)).abs() < 1e-3, "u at {t}: {u} vs {}", exact(t));
        let stored = 0.5 * m * exact_v(t).powi(2) + 0.5 * k * exact(t).powi(2);
        // Dissipated energy = initial − stored (no external work).
        assert!(
            (damp - (e0 - stored)).abs() < 2e-3 * e0,
            "damping energy at {t}"
        );
        // The run's own balance closes: kinetic + internal + dissipated − work = E0.
        assert!(
            (kin + int + damp - wext - e0).abs() < 1e-3 * e0,
            "balance at {t}"
        );
    }
}

#[test]
fn chain_frequencies_match_the_closed_form() {
    // Fixed–free chain of n equal masses and springs: ω_j = 2√(k/m)·sin((2j−1)π/(2(2n+1)))
    // (standard result for a lumped chain, from memory).
    let (n, m, k) = (6, 2.0, 8.0e4);
    let model = rhoscope::demo::build::chain(n, m, k);
    let modes = rhoscope::demo::build::modes(&model, &DVector::zeros(n));
    for (j, (w, _)) in modes.iter().enumerate() {
        let want =
            2.0 * (k / m).sqrt() * (((2 * j + 1) as f64) * PI / (2.0 * (2 * n + 1) as f64)).sin();
        // Symmetric eigen-solver accuracy: relative 1e-10.
        assert!((w - want).abs() < 1e-10 * want, "mode {j}: {w} vs {want}");
    }
}

#[test]
fn catalogue_is_large_varied_and_honestly_labelled() {
    let cases = catalogue();
    assert!(cases.len() >= 24, "{} cases", cases.len());
    let mut names: Vec<&str> = cases.iter().map(|c| c.name).collect();
    names.sort_unstable();
    names.dedup();
    assert_eq!(names.len(), cases.len(), "case names must be unique");
    let count = |l: Level| cases.iter().filter(|c| c.expected.level == l).count();
    assert!(count(Level::Ok) >= 8 && count(Level::Warning) >= 3 && count(Level::Critical) >= 10);
    for c in &cases {
        let s = c.summarize();
        let e = c.expected;
        match e.level {
            Level::Critical => {
                // A blow-up: non-finite or overflowed output, or a step that collapsed
                // until the solver gave up.
                assert!(
                    e.crash_line.is_some() || s.collapse_line.is_some(),
                    "{}",
                    c.name
                );
                let onset = e.onset_line.unwrap();
                assert!(onset <= e.crash_line.unwrap_or(u64::MAX), "{}", c.name);
            }
            Level::Warning => {
                // Stable (no crash, never past the limit) but the written balance drifts > 5 %.
                assert!(
                    e.crash_line.is_none() && s.unstable_line.is_none(),
                    "{}",
                    c.name
                );
                assert!(
                    s.final_balance_rel.abs() > 0.05,
                    "{}: {}",
                    c.name,
                    s.final_balance_rel
                );
                assert!(e.onset_line.is_some(), "{}", c.name);
            }
            Level::Ok => {
                // Healthy: no crash, never past the limit, no collapse, and the books
                // close to 2 % (below the 5 % a monitor would warn at).
                assert!(
                    e.crash_line.is_none() && e.onset_line.is_none(),
                    "{}",
                    c.name
                );
                assert!(
                    s.unstable_line.is_none() && s.collapse_line.is_none(),
                    "{}",
                    c.name
                );
                assert!(
                    s.max_balance_rel < 0.02,
                    "{}: {}",
                    c.name,
                    s.max_balance_rel
                );
            }
        }
    }
}

#[test]
fn written_files_are_deterministic_and_crash_where_labelled() {
    for c in catalogue() {
        // Written once here, once when the catalogue labelled it: same bytes.
        let mut a = Vec::new();
        c.write(&mut a).unwrap();
        let h = rhoscope::demo::run::fnv1a(rhoscope::demo::run::FNV_OFFSET, &a);
        assert_eq!(
            h,
            c.summarize().bytes_hash,
            "{} is not deterministic",
            c.name
        );
        // A few hundred KB at most.
        assert!(a.len() < 600_000, "{}: {} bytes", c.name, a.len());
        let text = String::from_utf8(a).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        if let Some(cl) = c.expected.crash_line {
            let line = lines[(cl - 1) as usize].to_ascii_lowercase();
            assert!(
                line.contains("nan") || line.contains("inf") || line.contains('*'),
                "{}: line {cl} is not a crash row: {line}",
                c.name
            );
            let before = lines[..(cl - 1) as usize].join("\n").to_ascii_lowercase();
            let data_before = before
                .lines()
                .filter(|l| !l.starts_with('#') && !l.starts_with('!'));
            for l in data_before {
                assert!(
                    !l.contains("nan") && !l.contains('*'),
                    "{}: early non-finite: {l}",
                    c.name
                );
            }
        }
        if let Some(on) = c.expected.onset_line {
            assert!((on as usize) <= lines.len(), "{}", c.name);
        }
    }
}

#[test]
fn restarts_rewind_time() {
    let c = rhoscope::demo::find("restart-new-header").unwrap();
    let mut out = Vec::new();
    c.write(&mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    let headers = text.lines().filter(|l| l.starts_with("time")).count();
    assert_eq!(headers, 2);
    let times: Vec<f64> = text
        .lines()
        .filter(|l| l.starts_with(|ch: char| ch.is_ascii_digit()))
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert!(
        times.windows(2).any(|w| w[1] < w[0]),
        "time never went back"
    );
}

mod cli {
    use std::time::{Duration, Instant};

    use assert_cmd::Command;
    use assert_cmd::cargo::cargo_bin;

    #[test]
    fn list_write_and_errors() {
        let out = Command::new(cargo_bin("rhoscope"))
            .args(["demo", "--list"])
            .output()
            .unwrap();
        assert!(out.status.success());
        let text = String::from_utf8(out.stdout).unwrap();
        for c in rhoscope::demo::catalogue() {
            assert!(text.contains(c.name), "{} missing from the list", c.name);
        }
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("c.csv");
        Command::new(cargo_bin("rhoscope"))
            .args(["demo", "--write", "chain-stop-cd"])
            .arg(&file)
            .assert()
            .success();
        let mut want = Vec::new();
        rhoscope::demo::find("chain-stop-cd")
            .unwrap()
            .write(&mut want)
            .unwrap();
        assert_eq!(std::fs::read(&file).unwrap(), want);
        // Unknown case: a clear message and the usage/unknown exit code 3.
        let out = Command::new(cargo_bin("rhoscope"))
            .args(["demo", "--write", "no-such-case"])
            .arg(&file)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(3));
        assert!(String::from_utf8_lossy(&out.stderr).contains("no-such-case"));
    }

    #[test]
    fn live_writer_honours_the_stop_file() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("live.csv");
        let stop = dir.path().join("run.stop");
        let mut child = std::process::Command::new(cargo_bin("rhoscope"))
            .args(["demo", "--live"])
            .arg(&file)
            .args([
                "--scenario",
                "chain-ramp-ok",
                "--rate",
                "200",
                "--stop-file",
            ])
            .arg(&stop)
            .spawn()
            .unwrap();
        // Wait until some rows are there, then ask the run to stop.
        let t0 = Instant::now();
        while std::fs::read_to_string(&file).map_or(0, |t| t.lines().count()) < 20 {
            assert!(t0.elapsed() < Duration::from_secs(60), "no rows written");
            std::thread::sleep(Duration::from_millis(20));
        }
        std::fs::write(&stop, b"").unwrap();
        let status = child.wait().unwrap();
        assert!(status.success());
        let text = std::fs::read_to_string(&file).unwrap();
        let last = text.lines().last().unwrap();
        assert!(
            last.starts_with('#') && last.contains("stop file"),
            "{last}"
        );
        // Stopped long before the full history (868 lines) was written.
        assert!(text.lines().count() < 800);
    }
}

#[test]
fn sample_logs_regenerate_byte_for_byte() {
    // Every file in sample-logs/ (but its README) is a catalogue case named by its stem.
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-logs");
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "md") {
            continue;
        }
        let stem = path.file_stem().unwrap().to_string_lossy().to_string();
        let case = rhoscope::demo::find(&stem)
            .unwrap_or_else(|| panic!("{} is not a catalogue case", path.display()));
        let mut want = Vec::new();
        case.write(&mut want).unwrap();
        assert!(
            std::fs::read(&path).unwrap() == want,
            "{} differs from 'rhoscope demo --write {stem}'",
            path.display()
        );
        seen += 1;
    }
    assert!(seen >= 3, "only {seen} sample logs");
}
