//! The blind catalogue's own integrators, model laws and writers against
//! closed forms and reference values (src/blind/). Each check names its
//! source.

use nalgebra::DMatrix;
use rhoscope::blind::chain::{Chain, Law, Shape};
use rhoscope::blind::explicit::{FirstOrder, Method};
use rhoscope::blind::particles::{self, Langevin, Particles};
use rhoscope::blind::sim::Stepper;
use rhoscope::blind::stab::{self, Explicit};
use rhoscope::blind::structural::{Cd, Implicit};
use rhoscope::blind::write::{c_general, c_sci, fortran_exp, py_repr};

/// One undamped mass on a spring with ω = 1, so Ω = Δt.
fn oscillator() -> Chain {
    let mut c = Chain {
        mass: vec![1.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1.0 });
    c
}

/// ½v² + ½ω²u² of the single mass (ω = 1).
fn energy(s: &dyn Stepper) -> f64 {
    let p = s.snap();
    0.5 * (p.v[0] * p.v[0] + p.u[0] * p.u[0])
}

#[test]
fn central_difference_grows_by_the_closed_form_factor_past_its_limit() {
    // Central difference past Ω = 2: ρ = a + √(a² − 1), a = (Ω² − 2)/2,
    // negative real eigenvalue; ρ(2.1) = 1.877328 (Belytschko, Liu & Moran,
    // Nonlinear Finite Elements, 2000, §6.3, from memory; reproduced from the
    // amplification matrix in shared/FIELD-NOTES.md §2).
    let mut s = Cd::new(oscillator(), vec![1.0], vec![0.0], 2.1);
    let mut prev = 0.0;
    let mut ratio = 0.0;
    for _ in 0..80 {
        s.step();
        let u = s.snap().u[0];
        if prev != 0.0 {
            ratio = -u / prev;
        }
        prev = u;
    }
    assert!((ratio - 1.877328).abs() < 1e-6, "measured {ratio}");
    let k = DMatrix::from_element(1, 1, 2.1f64 * 2.1);
    let c = DMatrix::zeros(1, 1);
    let r = stab::cd_radius(&[1.0], &k, &c, 1.0);
    assert!((r - 1.877328).abs() < 1e-6, "matrix {r}");
    // At the limit itself the radius is 1 (same source): Ω = 1.99 is stable.
    let k = DMatrix::from_element(1, 1, 1.99f64 * 1.99);
    assert!(stab::cd_radius(&[1.0], &k, &c, 1.0) <= 1.0 + 1e-9);
}

#[test]
fn forward_and_backward_euler_scale_the_energy_by_one_plus_omega_squared() {
    // On u″ + u = 0 forward Euler multiplies ½(v² + u²) by exactly 1 + Ω²
    // each step and backward Euler divides it by 1 + Ω², i.e.
    // |G| = √(1 + Ω²) and 1/√(1 + Ω²) (shared/FIELD-NOTES.md §2:
    // Ω = 0.1 → 1.0049876; derived from the update in two lines).
    for (method, expect) in [
        (Method::ForwardEuler, 1.01),
        (Method::BackwardEuler, 1.0 / 1.01),
    ] {
        let mut s = FirstOrder::new(oscillator(), method, vec![1.0], vec![0.0], 0.1);
        let e0 = energy(&s);
        for _ in 0..50 {
            s.step();
        }
        let per_step = (energy(&s) / e0).powf(1.0 / 50.0);
        assert!((per_step - expect).abs() < 1e-12, "{method:?}: {per_step}");
    }
    let k = DMatrix::from_element(1, 1, 0.01);
    let c = DMatrix::zeros(1, 1);
    let g = stab::explicit_radius(Explicit::ForwardEuler, &[1.0], &k, &c, 1.0);
    assert!((g - 1.0049876).abs() < 1e-7, "{g}");
}

#[test]
fn rk4_amplitude_factor_matches_its_stability_function() {
    // |R(iΩ)|² = 1 − Ω⁶/72 + Ω⁸/576; |R(2.9i)| = 1.193063, |R(i)| = 0.9939050
    // (Hairer & Wanner, Solving ODEs II, 1996, §IV.2, from memory; values in
    // shared/FIELD-NOTES.md §2).
    for (omega, expect) in [(2.9, 1.193063), (1.0, 0.9939050)] {
        let mut s = FirstOrder::new(oscillator(), Method::Rk4, vec![1.0], vec![0.0], omega);
        let e0 = energy(&s);
        for _ in 0..20 {
            s.step();
        }
        let per_step = (energy(&s) / e0).powf(1.0 / 40.0);
        assert!((per_step - expect).abs() < 1e-6, "Ω = {omega}: {per_step}");
    }
    // The imaginary-axis limit 2√2 (same source).
    let c = DMatrix::zeros(1, 1);
    let r = |w: f64| {
        let k = DMatrix::from_element(1, 1, w * w);
        stab::explicit_radius(Explicit::Rk4, &[1.0], &k, &c, 1.0)
    };
    assert!(r(8f64.sqrt() * 0.999) < 1.0 && r(8f64.sqrt() * 1.001) > 1.0);
}

#[test]
fn newmark_average_acceleration_conserves_energy_and_linear_acceleration_stops_at_two_root_three() {
    // The trapezoidal rule (β = ¼, γ = ½) keeps ½v² + ½ω²u² exactly on a
    // linear undamped system; Newmark with γ = ½ is stable to
    // Ω = 1/√(γ/2 − β), 2√3 = 3.464102 for β = ⅙ (Hughes, The Finite Element
    // Method, 1987, §9.1, from memory).
    let mut s = Implicit::newmark(oscillator(), vec![1.0], vec![0.0], 1.5, 0.25, 0.5);
    let e0 = energy(&s);
    for _ in 0..500 {
        s.step();
    }
    assert!((energy(&s) / e0 - 1.0).abs() < 1e-10);
    let c = DMatrix::zeros(1, 1);
    let r = |w: f64| {
        let k = DMatrix::from_element(1, 1, w * w);
        stab::newmark_radius(&[1.0], &k, &c, 1.0, 1.0 / 6.0, 0.5)
    };
    let limit = 2.0 * 3f64.sqrt();
    assert!(r(limit * 0.999) <= 1.0 + 1e-9 && r(limit * 1.001) > 1.0 + 1e-6);
}

#[test]
fn hht_damps_the_highest_frequencies_to_its_rho_infinity() {
    // HHT-α: ρ∞ = (1 + α)/(1 − α), 0.818182 at α = −0.1 (Hilber, Hughes &
    // Taylor, Earthquake Eng. Struct. Dyn. 5:283–292, 1977).
    let mut s = Implicit::hht(oscillator(), vec![1.0], vec![0.0], 1e4, -0.1);
    // The root at Ω → ∞ is double, so the amplitude goes as n·ρ∞ⁿ: over
    // steps 1000 to 2000 the factor n adds at most 2^(1/1000) − 1 = 7e-4
    // (hypot: the squares would underflow near 1e-160).
    let mut mags = Vec::new();
    for _ in 0..2000 {
        s.step();
        let p = s.snap();
        mags.push(p.u[0].hypot(p.v[0] * 1e4));
    }
    let per_step = (mags[1999] / mags[999]).powf(1.0 / 1000.0);
    assert!((per_step - 0.818182).abs() < 1e-3, "{per_step}");
}

#[test]
fn the_adaptive_pair_follows_the_exact_oscillation() {
    // u = cos t solves u″ + u = 0 from (1, 0); the Bogacki–Shampine pair
    // with error control keeps it to its tolerance (Bogacki & Shampine,
    // Appl. Math. Lett. 2:321–325, 1989).
    let method = Method::Adaptive {
        rtol: 1e-8,
        atol_u: 1e-10,
        atol_v: 1e-10,
        dt_max: 0.1,
    };
    let mut s = FirstOrder::new(oscillator(), method, vec![1.0], vec![0.0], 1e-3);
    while s.snap().t < 10.0 {
        s.step();
    }
    let p = s.snap();
    assert!((p.u[0] - p.t.cos()).abs() < 1e-5, "u({}) = {}", p.t, p.u[0]);
}

#[test]
fn laws_match_their_potentials() {
    // Each law's force is the derivative of its stored energy, and its
    // tangent the derivative of its force (central differences, h = 1e-6).
    let laws = [
        Law::Linear { k: 3.0 },
        Law::Hardening { k: 2.0, d0: 0.1 },
        Law::Arch {
            k: 1e3,
            a: 1.0,
            h: 0.1,
        },
        Law::Contact { k: 50.0, gap: 0.1 },
    ];
    for law in laws {
        for d in [-0.23, -0.05, 0.07] {
            let h = 1e-6;
            let f = law.eval(d, 0.0, 0.0).f;
            let df = (law.stored(d + h, 0.0) - law.stored(d - h, 0.0)) / (2.0 * h);
            let kt = law.eval(d, 0.0, 0.0).kt;
            let dk = (law.eval(d + h, 0.0, 0.0).f - law.eval(d - h, 0.0, 0.0).f) / (2.0 * h);
            assert!((f - df).abs() < 1e-5 * (1.0 + f.abs()), "{law:?} d={d}");
            assert!((kt - dk).abs() < 1e-4 * (1.0 + kt.abs()), "{law:?} d={d}");
        }
    }
    // The crushable block yields at fy and keeps its plastic compression.
    let crush = Law::Crush {
        k: 100.0,
        fy: 5.0,
        gap: 0.0,
    };
    let e = crush.eval(-0.2, 0.0, 0.0);
    assert_eq!(e.f, -5.0);
    assert!((e.p - 0.15).abs() < 1e-12);
}

#[test]
fn the_chain_balance_closes_under_load_damping_and_contact() {
    // A sanity check of the books: with a small step, kinetic + stored +
    // dissipated − external work stays constant (energy conservation of the
    // continuous system, common practice, no source).
    let mut c = Chain::springs(3, 1.0, 1e3);
    c.add(None, 0, Law::Dashpot { c: 0.5 });
    c.add(None, 2, Law::Contact { k: 1e5, gap: 0.02 });
    c.load(2, -20.0, Shape::Ramp { t1: 0.5 });
    let mut s = Cd::new(c, vec![0.0; 3], vec![0.0; 3], 2e-4);
    let mut worst: f64 = 0.0;
    let mut scale: f64 = 0.0;
    for _ in 0..10_000 {
        s.step();
        let b = s.books();
        worst = worst.max(b.balance().abs());
        scale = scale.max(b.external.abs());
    }
    assert!(scale > 0.1 && worst < 2e-3 * scale, "{worst} of {scale}");
}

#[test]
fn lennard_jones_pair_stiffness_and_verlet_frequency() {
    // V″(2^{1/6}σ) = 72ε/(2^{1/3}σ²) = 57.146 (derived from
    // V = 4ε[(σ/r)¹² − (σ/r)⁶]); two unit masses (reduced mass ½) oscillate
    // at ω = √(2V″), period 0.58776.
    let r0 = 2f64.powf(1.0 / 6.0);
    assert!((particles::d2v_lj(r0) - 57.146).abs() < 1e-3);
    // The force-shifted pair has its minimum where V′(r) = V′(r_c).
    let mut lo = 1.0;
    let mut hi = 1.3;
    for _ in 0..80 {
        let m = 0.5 * (lo + hi);
        if particles::pair(m, 0.0).1 < 0.0 {
            lo = m;
        } else {
            hi = m;
        }
    }
    let rmin = 0.5 * (lo + hi);
    let x = vec![[0.0, 0.0], [rmin + 0.002, 0.0]];
    let mut p = Particles::new(x, 0.0, 1e-4, 1);
    let mut crossings = Vec::new();
    let mut last = p.x[1][0] - p.x[0][0] - rmin;
    while crossings.len() < 5 {
        p.step();
        let now = p.x[1][0] - p.x[0][0] - rmin;
        if last > 0.0 && now <= 0.0 {
            crossings.push(p.t);
        }
        last = now;
    }
    let period = (crossings[4] - crossings[0]) / 4.0;
    let expect = std::f64::consts::TAU / (2.0 * particles::d2v_lj(rmin)).sqrt();
    assert!((period / expect - 1.0).abs() < 2e-3, "{period} vs {expect}");
}

#[test]
fn the_langevin_thermostat_holds_its_target_temperature() {
    // In equilibrium ⟨KE⟩ = (dof/2)·k_B·T (equipartition); the thermostat
    // does not conserve momentum, so dof = 2N and ⟨KE⟩/N = T. BAOAB samples
    // it closely at moderate steps (Leimkuhler & Matthews, Molecular
    // Dynamics, 2015, from memory). Tolerance: a statistical band for 25
    // particles.
    let mut p = Particles::new(particles::grid(5, 1.1), 0.4, 0.005, 4).in_box(5.5);
    p.thermostat = Some(Langevin {
        gamma: 2.0,
        t_start: 0.8,
        t_end: 0.8,
        ramp: 1.0,
    });
    let mut sum = 0.0;
    let mut n = 0.0;
    for k in 0..12_000 {
        p.step();
        if k >= 2000 {
            sum += p.kinetic() / 25.0;
            n += 1.0;
        }
    }
    let mean = sum / n;
    assert!(
        (mean / 0.8 - 1.0).abs() < 0.04,
        "mean kinetic energy per particle {mean}"
    );
}

#[test]
fn writers_spell_numbers_as_c_fortran_and_python_do() {
    // C printf %.6e and %g (C99 7.19.6.1, from memory), Fortran Dw.d with
    // the letter dropped past exponent 99 (Fortran 2003 §10.6.1.2; Intel
    // Fortran "E and D editing"), Python repr (shortest round trip, exponent
    // from 1e16).
    assert_eq!(c_sci(1234.5, 6, false), "1.234500e+03");
    assert_eq!(c_sci(-2.5e-7, 3, true), "-2.500E-07");
    assert_eq!(c_general(0.0001234, 6), "0.0001234");
    assert_eq!(c_general(1234567.0, 6), "1.23457e+06");
    assert_eq!(c_general(100.0, 6), "100");
    assert_eq!(fortran_exp(1234.5678, 8, 'D'), "0.12345678D+04");
    assert_eq!(fortran_exp(-1.5e105, 4, 'D'), "-0.1500+106");
    assert_eq!(fortran_exp(2.5e-3, 3, 'E'), "0.250E-02");
    assert_eq!(py_repr(1e300), "1e+300");
    assert_eq!(py_repr(1.5e-7), "1.5e-07");
    assert_eq!(py_repr(0.1), "0.1");
    assert_eq!(py_repr(3.0), "3.0");
}
