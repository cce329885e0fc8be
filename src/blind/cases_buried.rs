//! Cases of the `buried-mode` class (a small high mode growing slowly under
//! a large physical response, and healthy companions just below the limits)
//! and of the `headerless` class (numeric rows without names, output every
//! k-th step, fixed-width Fortran fields).

use super::chain::{Chain, Law, Shape};
use super::explicit::{FirstOrder, Method};
use super::kit::{dt_for_radius, omega_max, record, rest_tangent, zeros};
use super::sim::{Plan, Q};
use super::stab::{self, Explicit};
use super::structural::{Cd, Implicit};
use super::trace::Trace;
use super::write::{Delim, HeaderStyle, Layout, NonFinite, Num};
use super::{Class, Spec, Verdict};

pub(super) fn specs() -> Vec<Spec> {
    let s = |name, class, intent, build| Spec {
        name,
        class,
        intent,
        build,
    };
    use Class::{BuriedMode as B, Headerless as H};
    use Verdict::{Critical as C, Ok};
    vec![
        s("fe-slow-high-mode", B, C, fe_slow),
        s("rk4-hair-past-every100", B, C, rk4_hair_past),
        s("cd-hair-past-every10", B, C, cd_hair_past),
        s("linacc-past-every3", B, C, linacc_past),
        s("rk4-below-every100", B, Ok, rk4_below),
        s("cd-below-every10", B, Ok, cd_below),
        s("fe-damped-stable", B, Ok, fe_damped),
        s("headerless-every3-blowup", H, C, headerless_every3_blowup),
        s(
            "headerless-every3-healthy",
            H,
            Ok,
            headerless_every3_healthy,
        ),
        s("headerless-every10-recorder", H, Ok, headerless_recorder),
        s("headerless-every100-rk4", H, C, headerless_rk4),
        s("headerless-fortran-d", H, C, headerless_fortran),
        s("headerless-fixed-asterisks", H, C, headerless_asterisks),
    ]
}

const ENERGY_COLS: [(&str, Q); 7] = [
    ("time", Q::Time),
    ("x1", Q::Disp(0)),
    ("x2", Q::Disp(1)),
    ("KE", Q::Kinetic),
    ("SE", Q::Strain),
    ("Edamp", Q::Damping),
    ("Wext", Q::External),
];

/// A slow mass (ω ≈ 10) carrying a light stiff one (ω ≈ 1000), with
/// mass-proportional dashpots (c = a·m) and a harmonic load on the slow one.
fn fe_chain(a: f64) -> Chain {
    let mut c = Chain {
        mass: vec![1.0, 1e-3],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 100.0 });
    c.add(Some(0), 1, Law::Linear { k: 1e3 });
    c.add(None, 0, Law::Dashpot { c: a });
    c.add(None, 1, Law::Dashpot { c: a * 1e-3 });
    c.load(0, 100.0, Shape::Sine { w: 5.0 });
    c
}

/// Forward Euler with the step that makes its radius 1.0001 per step (the
/// fast mode); the slow mode is damped enough to stay stable.
fn fe_slow() -> (Trace, Layout) {
    let c = fe_chain(10.0);
    let (k, d) = rest_tangent(&c);
    let m = c.mass.clone();
    let dt = dt_for_radius(1e-6, 1e-4, 1.0001, |dt| {
        stab::explicit_radius(Explicit::ForwardEuler, &m, &k, &d, dt)
    });
    let mut s = FirstOrder::new(c, Method::ForwardEuler, vec![0.0, 1e-9], zeros(2), dt);
    let t = record(&mut s, &ENERGY_COLS, &Plan::new(2500, 1e9), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// Forward Euler with dashpots heavy enough for every mode: healthy.
fn fe_damped() -> (Trace, Layout) {
    let c = fe_chain(10.0);
    let mut s = FirstOrder::new(c, Method::ForwardEuler, vec![0.0, 1e-9], zeros(2), 8e-6);
    let t = record(&mut s, &ENERGY_COLS, &Plan::new(1000, 3.0), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// Two slow masses and a light stiff one; a harmonic load on the first.
fn three_mass() -> Chain {
    let mut c = Chain {
        mass: vec![1.0, 1.0, 0.01],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e3 });
    c.add(Some(0), 1, Law::Linear { k: 1e3 });
    c.add(Some(1), 2, Law::Linear { k: 1e3 });
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.load(0, 50.0, Shape::Sine { w: 3.0 });
    c
}

const RK4_COLS: [(&str, Q); 8] = [
    ("step", Q::Step),
    ("time", Q::Time),
    ("u_top", Q::Disp(2)),
    ("u_mid", Q::Disp(1)),
    ("kinetic", Q::Kinetic),
    ("elastic", Q::Strain),
    ("viscous", Q::Damping),
    ("work", Q::External),
];

fn rk4_run(dt: f64, t_end: f64) -> Trace {
    let c = three_mass();
    let mut s = FirstOrder::new(c, Method::Rk4, vec![0.0, 0.0, 1e-9], zeros(3), dt);
    record(&mut s, &RK4_COLS, &Plan::new(100, t_end), &[])
}

/// RK4 with the step that makes its radius 1.0012 per step: a hair past
/// the imaginary-axis limit 2√2 for the light mass.
fn rk4_hair_past() -> (Trace, Layout) {
    let c = three_mass();
    let (k, d) = rest_tangent(&c);
    let m = c.mass.clone();
    let w = omega_max(&c);
    let dt = dt_for_radius(2.5 / w, 3.0 / w, 1.0012, |dt| {
        stab::explicit_radius(Explicit::Rk4, &m, &k, &d, dt)
    });
    (
        rk4_run(dt, 1e9),
        Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14),
    )
}

/// RK4 at Ω = 0.98·2√2: healthy.
fn rk4_below() -> (Trace, Layout) {
    let dt = 0.98 * 8f64.sqrt() / omega_max(&three_mass());
    (
        rk4_run(dt, 200_000.0 * dt),
        Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14),
    )
}

/// A slow mass and a light stiff one, harmonic load on the slow one.
fn two_mass() -> Chain {
    let mut c = Chain {
        mass: vec![1.0, 0.01],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e3 });
    c.add(Some(0), 1, Law::Linear { k: 1e3 });
    c.add(None, 0, Law::Dashpot { c: 0.5 });
    c.load(0, 30.0, Shape::Sine { w: 4.0 });
    c
}

fn cd_run(omega: f64, t_end_steps: f64) -> Trace {
    let c = two_mass();
    let dt = omega / omega_max(&c);
    let mut s = Cd::new(c, vec![0.0, 1e-9], zeros(2), dt);
    record(&mut s, &ENERGY_COLS, &Plan::new(10, t_end_steps * dt), &[])
}

/// Central difference at Ω = 2.0002 for the light mass (≈ 1.029 per step).
fn cd_hair_past() -> (Trace, Layout) {
    (
        cd_run(2.0002, 1e9),
        Layout::new(Delim::Comma, HeaderStyle::Plain),
    )
}

/// Central difference at Ω = 1.98: healthy.
fn cd_below() -> (Trace, Layout) {
    (
        cd_run(1.98, 20_000.0),
        Layout::new(Delim::Comma, HeaderStyle::Plain),
    )
}

/// Newmark linear acceleration (β = ⅙) at Ω = 3.47029, just past 2√3
/// (≈ 1.05 per step); a row every 3 steps.
fn linacc_past() -> (Trace, Layout) {
    let c = two_mass();
    let dt = 3.47029 / omega_max(&c);
    let mut s = Implicit::newmark(c, vec![0.0, 1e-9], zeros(2), dt, 1.0 / 6.0, 0.5);
    let t = record(&mut s, &ENERGY_COLS, &Plan::new(3, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Tab, HeaderStyle::Plain).num(Num::Sci {
            prec: 10,
            upper: false,
        }),
    )
}

/// The slow and light masses of [`two_mass`] at a fixed step giving
/// Ω = `omega` for the light one; no header, a row every 3 steps: time,
/// both displacements and the stiff spring's force.
fn every3(omega: f64, t_end_steps: f64) -> Trace {
    let c = two_mass();
    let dt = omega / omega_max(&c);
    let mut s = Cd::new(c, vec![0.0, 1e-9], zeros(2), dt);
    let cols = [
        ("t", Q::Time),
        ("u1", Q::Disp(0)),
        ("u2", Q::Disp(1)),
        ("f12", Q::Force(1)),
    ];
    record(&mut s, &cols, &Plan::new(3, t_end_steps * dt), &[])
}

fn plain_numbers() -> Layout {
    Layout::new(Delim::Spaces, HeaderStyle::None).width(15)
}

/// Ω = 2.1 (1.877 per step, ×6.6 per row).
fn headerless_every3_blowup() -> (Trace, Layout) {
    (every3(2.1, 1e12), plain_numbers())
}

/// Ω = 1.8: healthy.
fn headerless_every3_healthy() -> (Trace, Layout) {
    (every3(1.8, 6000.0), plain_numbers())
}

/// A 4-mass chain under a half-sine pulse; Newmark average acceleration;
/// time then node displacements, a row every 10 steps.
fn headerless_recorder() -> (Trace, Layout) {
    let mut c = Chain::springs(4, 1.0, 1e4);
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.load(3, 1e3, Shape::Pulse { t1: 0.05 });
    let mut s = Implicit::newmark(c, zeros(4), zeros(4), 1e-3, 0.25, 0.5);
    let cols = [
        ("t", Q::Time),
        ("u1", Q::Disp(0)),
        ("u2", Q::Disp(1)),
        ("u3", Q::Disp(2)),
        ("u4", Q::Disp(3)),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 3.0), &[]);
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::None).num(Num::Short),
    )
}

/// A mass on a hardening spring under a slowly growing load with a small
/// ripple: its tangent frequency rises through the scheme's limit.
fn hardening(rate: f64) -> Chain {
    let mut c = Chain {
        mass: vec![1.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Hardening { k: 1e3, d0: 0.05 });
    c.add(None, 0, Law::Dashpot { c: 0.05 });
    c.load(0, -1.0, Shape::Rate { rate });
    c.load(0, 2.0, Shape::Sine { w: 3.0 });
    c
}

const PROBE_COLS: [(&str, Q); 4] = [
    ("t", Q::Time),
    ("u", Q::Disp(0)),
    ("v", Q::Vel(0)),
    ("f", Q::Force(0)),
];

/// RK4 at Ω₀ = 0.632 on the hardening spring, crossing 2√2; a row every
/// 100 steps, no header.
fn headerless_rk4() -> (Trace, Layout) {
    let mut s = FirstOrder::new(hardening(0.62), Method::Rk4, zeros(1), zeros(1), 0.02);
    let t = record(&mut s, &PROBE_COLS, &Plan::new(100, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::None).num(Num::Sci {
            prec: 8,
            upper: true,
        }),
    )
}

/// Central difference at Ω₀ = 0.6 on the hardening spring, crossing 2;
/// Fortran `D16.8` fields, no header, every step.
fn headerless_fortran() -> (Trace, Layout) {
    let dt = 0.6 / 1e3f64.sqrt();
    let mut s = Cd::new(hardening(16.0), zeros(1), zeros(1), dt);
    let t = record(&mut s, &PROBE_COLS, &Plan::new(1, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Fixed, HeaderStyle::None)
            .num(Num::FortranD(8))
            .width(16)
            .nonfinite(NonFinite::Fortran),
    )
}

/// RK4 at Ω₀ = 0.8 on the hardening spring, crossing 2√2; Fortran `F14.6`
/// fields that fill with asterisks once a value no longer fits.
fn headerless_asterisks() -> (Trace, Layout) {
    let dt = 0.8 / 1e3f64.sqrt();
    let mut s = FirstOrder::new(hardening(3.0), Method::Rk4, zeros(1), zeros(1), dt);
    let mut plan = Plan::new(10, 1e9);
    plan.bad_at = 1e7;
    let t = record(&mut s, &PROBE_COLS, &plan, &[]);
    (
        t,
        Layout::new(Delim::Fixed, HeaderStyle::None)
            .num(Num::FixedF(6))
            .width(14)
            .nonfinite(NonFinite::Fortran),
    )
}
