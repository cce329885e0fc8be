//! Cases of the `energy-names` class: energy terms written under plain,
//! short, prefixed, CamelCase, dotted and particle names, the balance closed
//! once every term is read; one blow-up written with plain words.

use super::chain::{Chain, Law, Shape};
use super::explicit::{FirstOrder, Method};
use super::kit::{omega_max, record, zeros};
use super::particles::{self, Particles, Pq};
use super::sim::{Plan, Q};
use super::structural::{Cd, Implicit};
use super::trace::Trace;
use super::write::{Delim, HeaderStyle, Layout, NonFinite, Num};
use super::{Class, Spec, Verdict};

pub(super) fn specs() -> Vec<Spec> {
    let s = |name, intent, build| Spec {
        name,
        class: Class::EnergyNames,
        intent,
        build,
    };
    vec![
        s("names-plain-words", Verdict::Ok, plain_words),
        s("names-upper-short", Verdict::Ok, upper_short),
        s("names-prefixed", Verdict::Ok, prefixed),
        s("names-multibody-jsonl", Verdict::Ok, multibody),
        s("names-particle-log", Verdict::Ok, particle_log),
        s("names-fast-mode", Verdict::Ok, fast_mode),
        s("names-camel-tab", Verdict::Ok, camel_tab),
        s("names-dotted-units", Verdict::Ok, dotted_units),
        s(
            "names-plain-contact-blowup",
            Verdict::Critical,
            contact_blowup,
        ),
    ]
}

/// 4-mass chain with dashpots under a harmonic load; central difference.
fn plain_words() -> (Trace, Layout) {
    let mut c = Chain::springs(4, 1.0, 1e4);
    c.add(None, 0, Law::Dashpot { c: 2.0 });
    c.add(Some(2), 3, Law::Dashpot { c: 2.0 });
    c.load(3, 50.0, Shape::Sine { w: 30.0 });
    let dt = 1.0 / omega_max(&c);
    let mut s = Cd::new(c, zeros(4), zeros(4), dt);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("damping", Q::Damping),
        ("external", Q::External),
        ("total", Q::Total),
    ];
    let t = record(&mut s, &cols, &Plan::new(5, 2000.0 * 5.0 * dt), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}

/// 3 masses, a dashpot, a ramp-and-hold load; Newmark average acceleration.
fn upper_short() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![2.0, 1.0, 1.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 5e3 });
    c.add(Some(0), 1, Law::Linear { k: 5e3 });
    c.add(Some(1), 2, Law::Linear { k: 5e3 });
    c.add(Some(1), 2, Law::Dashpot { c: 3.0 });
    c.load(2, 200.0, Shape::Ramp { t1: 0.5 });
    let mut s = Implicit::newmark(c, zeros(3), zeros(3), 4e-3, 0.25, 0.5);
    let cols = [
        ("T", Q::Time),
        ("KE", Q::Kinetic),
        ("SE", Q::Strain),
        ("DAMP", Q::Damping),
        ("WEXT", Q::External),
        ("TE", Q::Total),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 6.0), &[]);
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Short),
    )
}

/// 3-mass chain, dashpots, harmonic load; HHT-α with α = −0.05.
fn prefixed() -> (Trace, Layout) {
    let mut c = Chain::springs(3, 1.0, 2e3);
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.add(Some(1), 2, Law::Dashpot { c: 0.5 });
    c.load(2, 30.0, Shape::Sine { w: 12.0 });
    let mut s = Implicit::hht(c, zeros(3), zeros(3), 2e-3, -0.05);
    let cols = [
        ("t", Q::Time),
        ("E_kin", Q::Kinetic),
        ("E_int", Q::Strain),
        ("D_damp", Q::Damping),
        ("W_ext", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(2, 4.0), &[]);
    (
        t,
        Layout::new(Delim::Semicolon, HeaderStyle::Plain).num(Num::General(8)),
    )
}

/// A body with a sprung mass on top bouncing on a damped contact under
/// gravity; Newmark average acceleration; JSON Lines.
fn multibody() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![2.0, 0.5],
        ..Chain::default()
    };
    c.add(None, 0, Law::Contact { k: 2e5, gap: 0.5 });
    c.add(None, 0, Law::GapDashpot { c: 60.0, gap: 0.5 });
    c.add(Some(0), 1, Law::Linear { k: 2e3 });
    c.gravity(-9.81);
    let mut s = Implicit::newmark(c, zeros(2), zeros(2), 1e-3, 0.25, 0.5).controlled(1e-12);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("potential", Q::Potential),
        ("contact_dissipation", Q::Damping),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 3.0), &[]);
    (
        t,
        Layout::new(Delim::Jsonl, HeaderStyle::None).num(Num::Short),
    )
}

/// 16 particles, velocity Verlet (NVE), a log with a banner.
fn particle_log() -> (Trace, Layout) {
    let x = particles::lattice(4, 4, 1.12, 0.0, 0.0);
    let mut p = Particles::new(x, 0.15, 0.002, 11);
    let mut t = Trace::default();
    t.text("particle dynamics, 2-D, 16 particles, reduced units");
    t.text("  integrator  velocity Verlet   dt 0.002");
    t.text("  ensemble    NVE");
    t.text("  pair        Lennard-Jones, force-shifted at 2.5");
    t.text("");
    let cols = [
        ("Step", Pq::Step),
        ("Temp", Pq::Temp),
        ("E_pair", Pq::Pair),
        ("KinEng", Pq::Kinetic),
        ("PotEng", Pq::Potential),
        ("TotEng", Pq::Total),
    ];
    let mut t = particles::record(&mut p, &cols, 10, 6000, t);
    t.text("run finished: 6000 steps, 1.93 s wall");
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::Plain)
            .num(Num::General(8))
            .width(12),
    )
}

/// A slow mass with a light stiff one vibrating fast (Ω = 0.5) on it; a
/// dashpot on the slow one; central difference.
fn fast_mode() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![1.0, 0.01],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e3 });
    c.add(Some(0), 1, Law::Linear { k: 1e3 });
    c.add(None, 0, Law::Dashpot { c: 0.5 });
    let dt = 0.5 / omega_max(&c);
    let mut s = Cd::new(c, vec![0.05, 0.05], vec![0.0, 4.0], dt);
    let cols = [
        ("time", Q::Time),
        ("KE", Q::Kinetic),
        ("PE", Q::Strain),
        ("damping_dissipation", Q::Damping),
        ("Etot", Q::Total),
    ];
    let t = record(&mut s, &cols, &Plan::new(2, 1.5), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// 3 masses with mass-proportional and one parallel dashpot under a
/// harmonic load; RK4 at Ω = 1.5.
fn camel_tab() -> (Trace, Layout) {
    let mut c = Chain::springs(3, 1.0, 4e3);
    for j in 0..3 {
        c.add(None, j, Law::Dashpot { c: 0.4 });
    }
    c.add(Some(0), 1, Law::Dashpot { c: 0.3 });
    c.load(0, 40.0, Shape::RampSine { t1: 1.0, w: 20.0 });
    let dt = 1.5 / omega_max(&c);
    let mut s = FirstOrder::new(c, Method::Rk4, zeros(3), zeros(3), dt);
    let cols = [
        ("Time", Q::Time),
        ("KineticEnergy", Q::Kinetic),
        ("InternalEnergy", Q::Strain),
        ("ViscousDissipation", Q::Damping),
        ("ExternalWork", Q::External),
        ("TotalEnergy", Q::Total),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 12_000.0 * dt), &[]);
    (
        t,
        Layout::new(Delim::Tab, HeaderStyle::Plain).num(Num::Sci {
            prec: 9,
            upper: true,
        }),
    )
}

/// Two masses, a friction slider, a harmonic load; Newmark average
/// acceleration; names with units.
fn dotted_units() -> (Trace, Layout) {
    let mut c = Chain::springs(2, 1.0, 2e3);
    c.add(
        None,
        0,
        Law::Friction {
            f0: 5.0,
            v_eps: 1e-3,
        },
    );
    c.load(1, 20.0, Shape::Sine { w: 8.0 });
    let mut s = Implicit::newmark(c, zeros(2), zeros(2), 1e-3, 0.25, 0.5);
    let cols = [
        ("time[s]", Q::Time),
        ("energy.kinetic[J]", Q::Kinetic),
        ("energy.elastic[J]", Q::Strain),
        ("energy.friction[J]", Q::Friction),
        ("work.ext[J]", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(3, 4.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Hash))
}

/// A mass pushed by a ramp into a stiff stop; central difference with
/// Ω = 2.3 once in contact.
fn contact_blowup() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![1.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e3 });
    c.add(None, 0, Law::Contact { k: 1e6, gap: 0.05 });
    c.add(None, 0, Law::Dashpot { c: 1.0 });
    c.load(0, -50.0, Shape::Rate { rate: 1.0 });
    let dt = 2.3 / (1e3f64 + 1e6).sqrt();
    let mut s = Cd::new(c, zeros(1), zeros(1), dt);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("contact", Q::Contact),
        ("damping", Q::Damping),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 1e9), &[]);
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::Plain)
            .width(15)
            .nonfinite(NonFinite::C),
    )
}
