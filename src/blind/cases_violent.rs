//! Cases of the `violent-physical` class: large, fast, physical changes with
//! a closed balance — impact on a crushable block, a drop onto a floor, a
//! load ramp, snap-through buckling, resonance, thermostat heating and a
//! collision of particle clusters.

use super::chain::{Chain, Law, Shape};
use super::explicit::{FirstOrder, Method};
use super::kit::{omega_max, record, zeros};
use super::particles::{self, Langevin, Particles, Pq};
use super::sim::{Plan, Q};
use super::structural::{Cd, Implicit};
use super::trace::Trace;
use super::write::{Delim, HeaderStyle, Layout, Num};
use super::{Class, Spec, Verdict};

pub(super) fn specs() -> Vec<Spec> {
    let s = |name, build| Spec {
        name,
        class: Class::ViolentPhysical,
        intent: Verdict::Ok,
        build,
    };
    vec![
        s("impact-crush-block", impact_crush),
        s("drop-floor-hht", drop_floor),
        s("load-ramp-cd", load_ramp),
        s("buckling-snap", buckling),
        s("resonance-rk4", resonance),
        s("thermostat-heating", heating),
        s("particle-collision", collision),
    ]
}

/// A 5 kg body at 20 m/s strikes a crushable block on a 3-mass base; the
/// block locks up once crushed through; central difference, Ω ≤ 0.9 with
/// the lock-up engaged.
fn impact_crush() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![10.0, 10.0, 10.0, 5.0],
        ..Chain::default()
    };
    c.add(None, 0, Law::Linear { k: 1e6 });
    c.add(Some(0), 1, Law::Linear { k: 1e6 });
    c.add(Some(1), 2, Law::Linear { k: 1e6 });
    c.add(Some(0), 1, Law::Dashpot { c: 50.0 });
    c.add(
        Some(2),
        3,
        Law::Crush {
            k: 5e6,
            fy: 5e3,
            gap: 0.1,
        },
    );
    c.add(Some(2), 3, Law::Contact { k: 5e8, gap: 0.25 });
    let locked = {
        let mut l = c.clone();
        l.elems[4].law = Law::Linear { k: 5e6 };
        l.elems[5].law = Law::Linear { k: 5e8 };
        omega_max(&l)
    };
    let dt = 0.9 / locked;
    let mut s = Cd::new(c, zeros(4), vec![0.0, 0.0, 0.0, -20.0], dt);
    let cols = [
        ("time", Q::Time),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("plastic", Q::Plastic),
        ("contact", Q::Contact),
        ("damping", Q::Damping),
        ("impactor_v", Q::Vel(3)),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 1200.0 * dt), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// A 3-mass chain dropped under gravity onto a penalty floor; HHT-α.
fn drop_floor() -> (Trace, Layout) {
    let mut c = Chain::springs(3, 1.0, 1e4);
    c.elems[0].law = Law::Contact { k: 1e7, gap: 0.5 };
    c.add(None, 0, Law::GapDashpot { c: 200.0, gap: 0.5 });
    c.gravity(-9.81);
    let mut s = Implicit::hht(c, zeros(3), zeros(3), 5e-4, -0.05).controlled(1e-12);
    let cols = [
        ("time", Q::Time),
        ("kinetic_energy", Q::Kinetic),
        ("internal_energy", Q::Strain),
        ("gravity_potential", Q::Gravity),
        ("contact_energy", Q::Contact),
        ("contact_damping", Q::Damping),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 2.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Hash).width(16))
}

/// A 5-mass chain, load ramped to a large static value and held; central
/// difference.
fn load_ramp() -> (Trace, Layout) {
    let mut c = Chain::springs(5, 1.0, 1e4);
    c.add(None, 0, Law::Dashpot { c: 2.0 });
    c.load(4, 5e3, Shape::Ramp { t1: 2.0 });
    let dt = 0.8 / omega_max(&c);
    let mut s = Cd::new(c, zeros(5), zeros(5), dt);
    let cols = [
        ("time", Q::Time),
        ("u_tip", Q::Disp(4)),
        ("kinetic", Q::Kinetic),
        ("internal", Q::Strain),
        ("damping", Q::Damping),
        ("external_work", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(5, 20.0), &[]);
    (
        t,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Short),
    )
}

/// A shallow arch under a slowly growing load snaps through (negative
/// tangent: physical exponential divergence during the snap); Newmark
/// average acceleration.
fn buckling() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![1.0],
        ..Chain::default()
    };
    c.add(
        None,
        0,
        Law::Arch {
            k: 1e4,
            a: 1.0,
            h: 0.1,
        },
    );
    c.add(None, 0, Law::Dashpot { c: 0.2 });
    c.load(0, -1.0, Shape::Rate { rate: 1.5 });
    let mut s = Implicit::newmark(c, zeros(1), zeros(1), 2e-3, 0.25, 0.5);
    let cols = [
        ("time", Q::Time),
        ("apex", Q::Disp(0)),
        ("velocity", Q::Vel(0)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("damping", Q::Damping),
        ("work", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(2, 8.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(15))
}

/// Two masses driven at the first natural frequency, ζ ≈ 0.002; RK4.
fn resonance() -> (Trace, Layout) {
    let mut c = Chain::springs(2, 1.0, 1e4);
    let w1 = 100.0 * ((3.0 - 5f64.sqrt()) / 2.0).sqrt();
    c.add(None, 0, Law::Dashpot { c: 0.25 });
    c.load(1, 10.0, Shape::Sine { w: w1 });
    let mut s = FirstOrder::new(c, Method::Rk4, zeros(2), zeros(2), 1e-3);
    let cols = [
        ("time", Q::Time),
        ("x1", Q::Disp(0)),
        ("x2", Q::Disp(1)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("dissipated", Q::Damping),
        ("work", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 20.0), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// 20 particles in a periodic box, Langevin thermostat with its target
/// ramped from 0.3 to 1.2; the banner declares the thermostat.
fn heating() -> (Trace, Layout) {
    let mut p = Particles::new(particles::grid(5, 1.1), 0.3, 0.004, 23).in_box(5.5);
    p.thermostat = Some(Langevin {
        gamma: 1.0,
        t_start: 0.3,
        t_end: 1.2,
        ramp: 30.0,
    });
    let mut t = Trace::default();
    t.text("# 25 particles, periodic box 5.5 x 5.5, reduced units");
    t.text("# ensemble: NVT, Langevin thermostat, friction 1.0");
    t.text("# target temperature ramps 0.3 -> 1.2 over t = 0..30");
    let cols = [
        ("step", Pq::Step),
        ("temp", Pq::Temp),
        ("pe", Pq::Potential),
        ("ke", Pq::Kinetic),
        ("etotal", Pq::Total),
    ];
    let t = particles::record(&mut p, &cols, 20, 10_000, t);
    (
        t,
        Layout::new(Delim::Spaces, HeaderStyle::Plain).num(Num::General(7)),
    )
}

/// Two 9-particle clusters collide head on (NVE), velocity Verlet.
fn collision() -> (Trace, Layout) {
    let mut x = particles::lattice(3, 3, 1.12, -4.0, 0.0);
    x.extend(particles::lattice(3, 3, 1.12, 4.0, 0.3));
    let mut p = Particles::new(x, 0.05, 0.001, 5);
    p.push(0, 9, [1.5, 0.0]);
    p.push(9, 18, [-1.5, 0.0]);
    let cols = [
        ("Step", Pq::Step),
        ("Time", Pq::Time),
        ("KE", Pq::Kinetic),
        ("PE", Pq::Potential),
        ("Etot", Pq::Total),
        ("T", Pq::Temp),
    ];
    let t = particles::record(&mut p, &cols, 10, 8000, Trace::default());
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(13))
}
