//! Cases of the `step-cut` class (adaptive steps cut deeply at contact or a
//! snap that recover; one step collapse that does not) and of the
//! `short-span` class (a restart or a step change that makes the run
//! unstable and crashes within tens of rows; healthy restarts and changes).

use super::chain::{Chain, Law, Shape};
use super::explicit::{FirstOrder, Method};
use super::kit::{omega_max, record, zeros};
use super::sim::{Plan, Q, Recorder, Stepper, drive};
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
    use Class::{ShortSpan, StepCut};
    vec![
        s(
            "cut-contact-rk-adaptive",
            StepCut,
            Verdict::Ok,
            cut_contact_rk,
        ),
        s("cut-snap-implicit", StepCut, Verdict::Ok, cut_snap_implicit),
        s(
            "cut-contact-implicit",
            StepCut,
            Verdict::Ok,
            cut_contact_implicit,
        ),
        s("collapse-crushed-bar", StepCut, Verdict::Critical, collapse),
        s(
            "restart-larger-step",
            ShortSpan,
            Verdict::Critical,
            restart_larger,
        ),
        s(
            "step-change-crash",
            ShortSpan,
            Verdict::Critical,
            step_change_crash,
        ),
        s("restart-same-step", ShortSpan, Verdict::Ok, restart_same),
        s(
            "step-change-healthy",
            ShortSpan,
            Verdict::Ok,
            step_change_healthy,
        ),
    ]
}

/// A body on a soft suspension striking a penalty wall through a second
/// mass, again and again; Bogacki–Shampine 3(2) with error control.
fn cut_contact_rk() -> (Trace, Layout) {
    let mut c = Chain::springs(2, 1.0, 1e4);
    c.elems[0].law = Law::Linear { k: 50.0 };
    c.add(None, 0, Law::Contact { k: 5e8, gap: 0.3 });
    let method = Method::Adaptive {
        rtol: 1e-7,
        atol_u: 1e-9,
        atol_v: 1e-7,
        dt_max: 4e-3,
    };
    let mut s = FirstOrder::new(c, method, vec![0.5, 0.5], vec![0.0, 0.0], 1e-4);
    let cols = [
        ("time", Q::Time),
        ("dt", Q::Dt),
        ("u_body", Q::Disp(1)),
        ("u_contact", Q::Disp(0)),
        ("kinetic", Q::Kinetic),
        ("internal", Q::Strain),
        ("contact", Q::Contact),
    ];
    let t = record(&mut s, &cols, &Plan::new(20, 2.5), &[]);
    (t, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// A shallow arch under a growing load snaps onto a stiff stop; Newmark
/// average acceleration with a Newton step controller.
fn cut_snap_implicit() -> (Trace, Layout) {
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
    c.add(None, 0, Law::Contact { k: 1e9, gap: 0.25 });
    c.add(None, 0, Law::Dashpot { c: 0.3 });
    c.load(0, -1.0, Shape::Rate { rate: 2.0 });
    let mut s = Implicit::newmark(c, zeros(1), zeros(1), 0.01, 0.25, 0.5).controlled(1e-9);
    let cols = [
        ("time", Q::Time),
        ("dt", Q::Dt),
        ("iters", Q::Iters),
        ("disp", Q::Disp(0)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("contact", Q::Contact),
        ("damping", Q::Damping),
        ("external", Q::External),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 6.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}

/// A 3-mass chain thrown against a penalty stop; Newmark average
/// acceleration with a Newton step controller; no step column.
fn cut_contact_implicit() -> (Trace, Layout) {
    let mut c = Chain::springs(3, 1.0, 1e3);
    c.elems[0].law = Law::Contact { k: 1e9, gap: 0.1 };
    let v0 = vec![-1.0; 3];
    let mut s = Implicit::newmark(c, zeros(3), v0, 5e-3, 0.25, 0.5).controlled(1e-10);
    let cols = [
        ("Time", Q::Time),
        ("Disp1", Q::Disp(0)),
        ("Disp3", Q::Disp(2)),
        ("EKin", Q::Kinetic),
        ("EStrain", Q::Strain),
        ("EContact", Q::Contact),
    ];
    let t = record(&mut s, &cols, &Plan::new(1, 1.5), &[]);
    (
        t,
        Layout::new(Delim::Tab, HeaderStyle::Plain).num(Num::General(10)),
    )
}

/// A heavy body strikes the end of a crushable bar; central difference
/// with the bar's Courant step. The bar crushes towards zero length, the
/// step collapses and time stalls until the solver's minimum step stops it.
fn collapse() -> (Trace, Layout) {
    let mut c = Chain {
        mass: vec![0.5, 50.0],
        ..Chain::default()
    };
    c.add(
        None,
        0,
        Law::Bar {
            k: 1e6,
            fy: 1e4,
            l0: 0.1,
            wave_speed: 5000.0,
        },
    );
    c.add(Some(0), 1, Law::Contact { k: 1e7, gap: 0.3 });
    let dt0 = 0.9 * 0.1 / 5000.0;
    let mut s = Cd::new(c, zeros(2), vec![0.0, -30.0], dt0).courant(0.9, 1e-6 * dt0);
    let cols = [
        ("time", Q::Time),
        ("dt", Q::Dt),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("plastic", Q::Plastic),
        ("contact", Q::Contact),
    ];
    let t = record(&mut s, &cols, &Plan::new(10, 1.0), &[]);
    (t, Layout::new(Delim::Spaces, HeaderStyle::Plain).width(14))
}

fn restart_chain() -> Chain {
    let mut c = Chain::springs(4, 1.0, 1e4);
    c.add(None, 0, Law::Dashpot { c: 0.5 });
    c.load(3, 200.0, Shape::Pulse { t1: 0.004 });
    c.load(3, 20.0, Shape::Sine { w: 25.0 });
    c
}

const RESTART_COLS: [(&str, Q); 6] = [
    ("time", Q::Time),
    ("u4", Q::Disp(3)),
    ("kinetic", Q::Kinetic),
    ("strain", Q::Strain),
    ("damping", Q::Damping),
    ("external", Q::External),
];

/// Run 1750 steps at Ω = 1.6 with a row every 5 steps up to step 2000, then
/// restart from the checkpoint at step 1750 with the step giving `omega2`.
fn restart(omega2: f64) -> Trace {
    let c = restart_chain();
    let w = omega_max(&c);
    let dt = 1.6 / w;
    let mut s = Cd::new(c.clone(), zeros(4), zeros(4), dt);
    let mut rec = Recorder::new(&RESTART_COLS);
    rec.trace.text("# explicit run, central difference");
    rec.trace.header();
    let mut checkpoint = None;
    for n in 0..=2000u64 {
        if n % 5 == 0 {
            let flag = s.take_flag();
            rec.row(&s.snap(), flag);
        }
        if n == 1750 {
            checkpoint = Some(s.snap());
        }
        s.step();
    }
    let cp = checkpoint.unwrap_or_default();
    rec.trace.text(format!(
        "# restart from checkpoint at step 1750, t = {:.6e}, dt = {:.6e}",
        cp.t,
        omega2 / w
    ));
    rec.trace.header();
    let mut r = Cd::resume(c, cp.u, cp.v, cp.t, cp.step, cp.books, omega2 / w);
    let plan = Plan::new(5, cp.t + 400.0 * 5.0 * omega2 / w);
    drive(&mut r, &mut rec, &plan);
    rec.trace
}

/// Restart with a larger step (Ω ≈ 3.5): crashes within tens of rows.
fn restart_larger() -> (Trace, Layout) {
    (restart(3.5), Layout::new(Delim::Spaces, HeaderStyle::Plain))
}

/// Restart with the same step: healthy.
fn restart_same() -> (Trace, Layout) {
    (restart(1.6), Layout::new(Delim::Spaces, HeaderStyle::Plain))
}

/// Step raised mid-run from Ω = 1.2 to Ω = 4 (no restart); central
/// difference; a row every 3 steps with the step written.
fn step_change_crash() -> (Trace, Layout) {
    let c = restart_chain();
    let w = omega_max(&c);
    let mut s = Cd::new(c, zeros(4), zeros(4), 1.2 / w);
    let cols = [
        ("time", Q::Time),
        ("dt", Q::Dt),
        ("u4", Q::Disp(3)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("damping", Q::Damping),
        ("external", Q::External),
    ];
    let mut rec = Recorder::new(&cols);
    rec.trace.header();
    let mut n = 0u64;
    let mut tail = None;
    while n <= 6000 {
        if n == 3000 {
            s.set_dt(4.0 / w);
        }
        if n.is_multiple_of(3) {
            let flag = s.take_flag();
            let snap = s.snap();
            if rec.row(&snap, flag) && tail.is_none() {
                tail = Some(1);
            }
            match tail {
                Some(0) => break,
                Some(k) => tail = Some(k - 1),
                None => {}
            }
        }
        s.step();
        n += 1;
    }
    (rec.trace, Layout::new(Delim::Comma, HeaderStyle::Plain))
}

/// Step halved mid-run; Newmark average acceleration.
fn step_change_healthy() -> (Trace, Layout) {
    let c = restart_chain();
    let w = omega_max(&c);
    let mut s = Implicit::newmark(c, zeros(4), zeros(4), 1.5 / w, 0.25, 0.5);
    let cols = [
        ("time", Q::Time),
        ("dt", Q::Dt),
        ("u4", Q::Disp(3)),
        ("kinetic", Q::Kinetic),
        ("strain", Q::Strain),
        ("damping", Q::Damping),
        ("external", Q::External),
    ];
    let mut rec = Recorder::new(&cols);
    rec.trace.header();
    for n in 0..=1500u64 {
        if n == 700 {
            s.set_dt(0.75 / w);
        }
        let flag = s.take_flag();
        rec.row(&s.snap(), flag);
        s.step();
    }
    (
        rec.trace,
        Layout::new(Delim::Comma, HeaderStyle::Plain).num(Num::Sci {
            prec: 8,
            upper: true,
        }),
    )
}
