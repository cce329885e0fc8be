//! Setups shared by several cases: the chain pushed onto a clearance stop, the
//! ramp-loaded chain, modal initial displacements, the bridge meeting its
//! guide, the chain thrown against a contact with an adaptive step, and the
//! struck chain.

use nalgebra::DVector;

use crate::demo::build::{
    bridge, chain, disp, modes, omega_max0, omega_with_spring, setup, solve_increasing, stiffness0,
    to_ground, vel,
};
use crate::demo::integrate::Scheme;
use crate::demo::model::{Law, Load, Model, Shape};
use crate::demo::run::{Setup, StepRule};
/// Six-mass chain, free-limit step ×0.9, a two-sided stop at the tip whose
/// stiffness makes ω_max·dt = `omega_closed` once closed.
pub(crate) fn chain_stop(omega_closed: f64) -> Setup {
    let mut m = chain(6, 2.0, 8.0e4);
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let tip = 5;
    let k = solve_increasing(
        |k| omega_with_spring(&m, tip, k) * dt,
        omega_closed,
        1.0,
        1e12,
    );
    m.elements
        .push(to_ground(tip, Law::Stop { gap: 0.03, k }, true));
    m.loads.push(Load {
        dof: tip,
        amp_n: 900.0,
        shape: Shape::Ramp { rise_s: 4.0 },
    });
    let mut s = setup(
        "invented case: six-mass spring chain pushed by a ramp onto a clearance stop",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        20.0,
    );
    s.probes = vec![
        disp(2, "u3", "displacement mass 3"),
        disp(5, "u6", "displacement mass 6"),
        vel(5, "v6", "velocity mass 6"),
    ];
    s
}

/// Six-mass chain under a slow ramp, lightly damped, central difference at 0.9
/// of its limit, rows every 2 steps.
pub(crate) fn chain_ramp(t_end_s: f64) -> Setup {
    let mut m = chain(6, 2.0, 8.0e4);
    m.mass_damping_per_s = 0.5;
    let dt = 0.9 * 2.0 / omega_max0(&m);
    m.loads.push(Load {
        dof: 5,
        amp_n: 900.0,
        shape: Shape::Ramp { rise_s: 4.0 },
    });
    let mut s = setup(
        "invented case: six-mass spring chain under a slow ramp, lightly damped",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        t_end_s,
    );
    s.every = 2;
    s.probes = vec![disp(5, "u6", "displacement mass 6")];
    s
}

/// Initial displacement: `a1` times the first mode plus `ah` times the highest.
pub(crate) fn modal_start(m: &Model, a1: f64, ah: f64) -> Vec<f64> {
    let ms = modes(m, &DVector::zeros(m.n()));
    let (first, last) = (&ms[0].1, &ms[ms.len() - 1].1);
    first
        .iter()
        .zip(last)
        .map(|(p, q)| a1 * p + ah * q)
        .collect()
}

/// Six-panel bridge with a two-sided guide under the mid-span node, closing at
/// half the static deflection; guide stiffness gives ω_max·dt = `omega_closed`.
pub(crate) fn bridge_guide(omega_closed: f64) -> Setup {
    let mut t = bridge(6, 2.0, 2.0, 2.0e7, 50.0);
    let dy = t.dof(3, 1);
    let w0 = omega_max0(&t.model);
    let dt = 0.9 * 2.0 / w0;
    let load = -2.0e5;
    // Static deflection of the mid-span node under the full load (linear).
    let k0 = stiffness0(&t.model);
    let mut f = DVector::zeros(t.model.n());
    f[dy] = load;
    let static_dy = k0.lu().solve(&f).map_or(-0.01, |x| x[dy]);
    let k = solve_increasing(
        |k| omega_with_spring(&t.model, dy, k) * dt,
        omega_closed,
        1.0,
        1e13,
    );
    t.model.elements.push(to_ground(
        dy,
        Law::Stop {
            gap: 0.5 * static_dy.abs(),
            k,
        },
        true,
    ));
    t.model.loads.push(Load {
        dof: dy,
        amp_n: load,
        shape: Shape::Ramp { rise_s: 0.8 },
    });
    t.model.mass_damping_per_s = 0.2;
    let mut s = setup(
        "invented case: six-panel bridge truss, mid-span ramp load, clearance guide below mid-span",
        t.model.clone(),
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        10.0,
    );
    s.probes = vec![
        disp(dy, "uy_mid", "mid-span deflection"),
        disp(t.dof(8, 1), "uy_top", "top chord deflection"),
        disp(t.dof(6, 0), "ux_end", "roller displacement"),
    ];
    s.every = 2;
    s
}

/// The contact-dip chain with a given step safety factor, contact stiffness,
/// clearance and damping.
pub(crate) fn adaptive_dip_with(safety: f64, k_c: f64, gap: f64, damping: f64) -> Setup {
    let mut m = chain(3, 1.0, 1.0e4);
    m.elements
        .push(to_ground(2, Law::Contact { gap, k: k_c }, true));
    m.mass_damping_per_s = damping;
    let mut s = setup(
        "invented case: chain thrown against a stiff one-sided contact",
        m,
        Scheme::CentralDifference,
        StepRule::Adaptive {
            safety,
            dt_max_s: 1.0,
            max_growth: f64::INFINITY,
        },
        3.0,
    );
    s.v0 = vec![-1.0, -2.0, -3.0];
    s.probes = vec![
        disp(2, "u3", "tip displacement"),
        vel(2, "v3", "tip velocity"),
    ];
    s
}

pub(crate) fn impact() -> Setup {
    let mut m = chain(8, 1.0, 1.0e4);
    m.mass_damping_per_s = 0.3;
    m.loads.push(Load {
        dof: 7,
        amp_n: 800.0,
        shape: Shape::HalfSine {
            start_s: 0.3,
            duration_s: 0.12,
        },
    });
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let mut s = setup(
        "invented case: eight-mass chain struck at the tip",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        6.0,
    );
    s.every = 2;
    s.probes = vec![
        disp(0, "u1", "displacement mass 1"),
        disp(7, "u8", "tip displacement"),
    ];
    s
}
