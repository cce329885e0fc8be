//! Particle cases of the `finite-runaway` class: velocity Verlet with a
//! step far too large (stopped by the solver's lost-particle check, or
//! running on at absurd energies without a NaN), a healthy run with a large
//! negative potential energy, and a stable run whose energy drifts.

use super::particles::{self, Particles, Pq};
use super::trace::Trace;
use super::write::{Delim, HeaderStyle, Layout, Num};
use super::{Class, Spec, Verdict};

pub(super) fn specs() -> Vec<Spec> {
    let s = |name, intent, build| Spec {
        name,
        class: Class::FiniteRunaway,
        intent,
        build,
    };
    vec![
        s("md-step-too-large-stop", Verdict::Critical, too_large_stop),
        s("md-runaway-runs-on", Verdict::Critical, runs_on),
        s("md-healthy-deep-pe", Verdict::Ok, deep_pe),
        s("md-drift-nve", Verdict::Warning, drift),
    ]
}

/// 25 particles in a periodic box at density ≈ 0.83.
fn boxed(temp: f64, dt: f64, seed: u64) -> Particles {
    Particles::new(particles::grid(5, 1.1), temp, dt, seed).in_box(5.5)
}

fn banner(dt: f64) -> Trace {
    let mut t = Trace::default();
    t.text("particle dynamics, 2-D, 25 particles, periodic box 5.5");
    t.text(format!("  integrator  velocity Verlet   dt {dt}"));
    t.text("  ensemble    NVE");
    t
}

/// A step far too large: energy climbs until a particle jumps too far and
/// the solver stops.
fn too_large_stop() -> (Trace, Layout) {
    let dt = 0.031;
    let mut p = boxed(0.5, dt, 3);
    p.max_move = 0.5;
    let cols = [
        ("Step", Pq::Step),
        ("Temp", Pq::Temp),
        ("KinEng", Pq::Kinetic),
        ("PotEng", Pq::Potential),
        ("TotEng", Pq::Total),
    ];
    let t = particles::record(&mut p, &cols, 5, 50_000, banner(dt));
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::Plain)
            .num(Num::General(8))
            .width(12),
    )
}

/// Another seed, a tabulated pair energy that starts at r = 0.8 (the force
/// is capped inside) and no lost-particle check: the run goes on at absurd
/// energies without ever printing a NaN.
fn runs_on() -> (Trace, Layout) {
    let mut p = boxed(0.5, 0.031, 29).with_inner(0.8);
    p.max_move = f64::INFINITY;
    let cols = [
        ("step", Pq::Step),
        ("time", Pq::Time),
        ("ke", Pq::Kinetic),
        ("pe", Pq::Potential),
        ("etot", Pq::Total),
        ("temp", Pq::Temp),
    ];
    let t = particles::record(&mut p, &cols, 5, 7000, Trace::default());
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Short),
    )
}

/// A small step: healthy, with a potential energy far below zero.
fn deep_pe() -> (Trace, Layout) {
    let mut p = boxed(0.4, 0.002, 17);
    let cols = [
        ("step", Pq::Step),
        ("time", Pq::Time),
        ("ke", Pq::Kinetic),
        ("pe", Pq::Potential),
        ("etotal", Pq::Total),
        ("temp", Pq::Temp),
    ];
    let t = particles::record(&mut p, &cols, 10, 5000, Trace::default());
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain))
}

/// A step large but stable: the total energy drifts steadily.
fn drift() -> (Trace, Layout) {
    let mut p = boxed(0.5, 0.028, 3);
    let cols = [
        ("Step", Pq::Step),
        ("Time", Pq::Time),
        ("Kinetic", Pq::Kinetic),
        ("Potential", Pq::Potential),
        ("Total", Pq::Total),
        ("Temperature", Pq::Temp),
    ];
    let t = particles::record(&mut p, &cols, 20, 15_000, banner(0.028));
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}
