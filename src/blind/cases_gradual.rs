//! Cases of the `gradual-onset` class (a stiffening structure marginally
//! past its limit, then firmly past it), the `drift` class (stable runs
//! whose written balance drifts) and the structural `finite-runaway` case
//! stopped by the solver's own energy check.

use super::chain::{Chain, Law, Shape};
use super::explicit::{FirstOrder, Method};
use super::kit::{omega_max, record, zeros};
use super::sim::{Plan, Q};
use super::structural::{Cd, Implicit};
use super::trace::Trace;
use super::write::{Delim, HeaderStyle, Layout, Num};
use super::{Class, Spec, Verdict};

pub(super) fn specs() -> Vec<Spec> {
    let s = |name, class, intent, build| Spec {
        name,
        class,
        intent,
        build,
    };
    use Class::{Drift as D, FiniteRunaway as F, GradualOnset as G};
    use Verdict::{Critical as C, Warning as W};
    vec![
        s("stiffening-cd", G, C, stiffening_cd),
        s("stiffening-linacc", G, C, stiffening_linacc),
        s("stiffening-rk4-every10", G, C, stiffening_rk4),
        s("drift-unwritten-damper", D, W, unwritten_damper),
        s("drift-backward-euler", D, W, backward_euler),
        s("drift-hht-high-modes", D, W, hht_high_modes),
        s("drift-rk4-high-mode", D, W, rk4_high_mode),
        s("drift-fe-gain", D, W, fe_gain),
        s("cd-energy-check-stop", F, C, energy_check_stop),
    ]
}

/// A light mass on a hardening spring carrying a heavier one on a linear
/// spring; the load on the heavy one grows slowly with a ripple, so the
/// hardening spring's tangent frequency first touches the limit at the
/// ripple's peaks, then stays past it.
fn stiffening() -> Chain {
    let mut c = Chain {
        mass: vec![1.0, 5.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Hardening { k: 1e3, d0: 0.05 });
    c.add(Some(0), 1, Law::Linear { k: 200.0 });
    c.add(None, 1, Law::Dashpot { c: 2.0 });
    c.load(1, -1.0, Shape::Rate { rate: 3.0 });
    c.load(1, 15.0, Shape::Sine { w: 2.0 });
    c
}

const STIFF_COLS: [(&str, Q); 7] = [
    ("time", Q::Time),
    ("u_a", Q::Disp(0)),
    ("u_b", Q::Disp(1)),
    ("kinetic", Q::Kinetic),
    ("strain", Q::Strain),
    ("damping", Q::Damping),
    ("external", Q::External),
];

fn stiff_dt(omega0: f64) -> f64 {
    omega0 / omega_max(&stiffening())
}

/// Central difference at Ω₀ = 0.8, crossing 2.
fn stiffening_cd() -> (Trace, Layout) {
    let mut s = Cd::new(stiffening(), zeros(2), zeros(2), stiff_dt(0.8));
    let t = record(&mut s, &STIFF_COLS, &Plan::new(5, 1e9), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}

/// Newmark linear acceleration at Ω₀ = 1.4, crossing 2√3.
fn stiffening_linacc() -> (Trace, Layout) {
    let dt = stiff_dt(1.4);
    let mut s = Implicit::newmark(stiffening(), zeros(2), zeros(2), dt, 1.0 / 6.0, 0.5);
    let t = record(&mut s, &STIFF_COLS, &Plan::new(1, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Short),
    )
}

/// RK4 at Ω₀ = 1.1, crossing 2√2; a row every 10 steps.
fn stiffening_rk4() -> (Trace, Layout) {
    let dt = stiff_dt(1.1);
    let mut s = FirstOrder::new(stiffening(), Method::Rk4, zeros(2), zeros(2), dt);
    let t = record(&mut s, &STIFF_COLS, &Plan::new(10, 1e9), &[]);
    (t, Layout::new(Delim::Tab, HeaderStyle::Plain))
}

/// A 4-mass chain under a harmonic load with a dashpot whose dissipation
/// the file does not write; central difference.
fn unwritten_damper() -> (Trace, Layout) {
    let mut c = Chain::springs(4, 1.0, 1e4);
    c.add(None, 0, Law::Dashpot { c: 3.0 });
    c.load(3, 50.0, Shape::Sine { w: 30.0 });
    let dt = 0.9 / omega_max(&c);
    let mut s = Cd::new(c, zeros(4), zeros(4), dt);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("external", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(5, 1500.0 * 5.0 * dt), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain))
}

/// Two masses in free vibration; backward Euler at Ω₁ = 0.05 dissipates
/// their energy numerically.
fn backward_euler() -> (Trace, Layout) {
    let c = Chain::springs(2, 1.0, 1e4);
    let w1 = 100.0 * ((3.0 - 5f64.sqrt()) / 2.0).sqrt();
    let dt = 0.05 / w1;
    let mut s = FirstOrder::new(c, Method::BackwardEuler, vec![0.01, 0.016], zeros(2), dt);
    let cols = [
        ("time", Q::Time),
        ("x1", Q::Disp(0)),
        ("x2", Q::Disp(1)),
        ("kinetic", Q::Kinetic),
        ("potential", Q::Strain),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 3000.0 * dt), &[]);
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Short),
    )
}

/// A 6-mass chain in its first mode plus a zig-zag velocity that puts
/// energy in the high modes; HHT-α with α = −⅓ at Ω_max ≈ 9.7 absorbs it.
fn hht_high_modes() -> (Trace, Layout) {
    let c = Chain::springs(6, 1.0, 1e4);
    let n = 6.0;
    let u0: Vec<f64> = (0..6)
        .map(|j| 0.05 * ((j as f64 + 1.0) * std::f64::consts::PI / (2.0 * n + 1.0)).sin())
        .collect();
    let v0: Vec<f64> = (0..6)
        .map(|j| if j % 2 == 0 { 0.6 } else { -0.6 })
        .collect();
    let mut s = Implicit::hht(c, u0, v0, 0.05, -1.0 / 3.0);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 20.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}

/// A slow mass and a light stiff one; a small load near the light one's
/// frequency keeps feeding its mode, which RK4 at Ω = 2.0 (|R| = 0.745)
/// absorbs numerically.
fn rk4_high_mode() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![1.0, 0.01],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e3 });
    c.add(Some(0), 1, Law::Linear { k: 1e3 });
    let w = omega_max(&c);
    c.load(1, 2.0, Shape::Sine { w: 0.9 * w });
    c.load(0, 20.0, Shape::Sine { w: 5.0 });
    let dt = 2.0 / w;
    let mut s = FirstOrder::new(c, Method::Rk4, zeros(2), zeros(2), dt);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("work", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 8000.0 * dt), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// One mass with a mass-proportional dashpot driven at resonance; forward
/// Euler's numerical gain Ω² is half the damping's a·Δt: stable, but energy
/// appears that the written damping does not account for.
fn fe_gain() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![1.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 100.0 });
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.load(0, 10.0, Shape::Sine { w: 10.0 });
    let mut s = FirstOrder::new(c, Method::ForwardEuler, zeros(1), zeros(1), 5e-3);
    let cols = [
        ("time", Q::Time),
        ("x", Q::Disp(0)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("damping", Q::Damping),
        ("external", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 30.0), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// A 3-mass chain with a hardening link, harmonic load growing slowly;
/// central difference crossing 2; the solver stops itself when its energy
/// ratio (kinetic + stored over external work) passes 10.
fn energy_check_stop() -> (Trace, Layout) {
    let mut c = Chain::springs(3, 1.0, 2e3);
    c.elems[2].law = Law::Hardening { k: 2e3, d0: 0.02 };
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.load(2, 1.0, Shape::Rate { rate: 8.0 });
    c.load(2, 20.0, Shape::RampSine { t1: 5.0, w: 6.0 });
    let dt = 0.9 / omega_max(&c);
    let mut s = Cd::new(c, zeros(3), zeros(3), dt).energy_stop(10.0);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("internal", Q::Strain),
        ("damping", Q::Damping),
        ("external", Q::External),
        ("total", Q::Total),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::General(9)),
    )
}
