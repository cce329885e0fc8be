//! Healthy traps (snap-through, impact, resonance, ramps, noise, an adaptive
//! step that dips at contact, restarts), stable runs whose written energy
//! balance drifts past 5 %, the default demo scenario and the violent stop.

use nalgebra::DVector;

use super::families::{adaptive_dip_with, chain_ramp, chain_stop, impact, modal_start};
use super::{Spec, spec};
use crate::demo::build::{
    Truss, bridge, chain, disp, mast, modes, omega_max0, omega_with_spring, setup,
    solve_increasing, stiffness0, to_ground, vel,
};
use crate::demo::integrate::Scheme;
use crate::demo::layout::Layout;
use crate::demo::model::{Conn, Dashpot, Element, Law, Load, Model, Shape};
use crate::demo::run::{Noise, Restart, Setup, StepRule};
use crate::finding::Level;

/// The healthy traps, the drifts, the demo scenario and the violent stop, in order.
pub fn specs() -> Vec<Spec> {
    use Level::{Critical, Ok, Warning};
    vec![
        spec(
            "snap-through-arch",
            Ok,
            "shallow two-bar arch loaded past its limit point snaps through and settles inverted; average-acceleration Newmark",
            snap_arch,
        ),
        spec(
            "softening-ramp",
            Ok,
            "four-mass chain on a saturating softening base spring loaded to 0.9 of its strength; displacement grows fast but physically",
            softening_ramp,
        ),
        spec(
            "impact-chain",
            Ok,
            "eight-mass chain struck at the tip by a short half-sine pulse; central difference at 0.9 of its limit",
            impact_chain,
        ),
        spec(
            "resonance",
            Ok,
            "undamped three-mass chain driven at its first natural frequency; amplitude grows linearly; average-acceleration Newmark, JSON Lines",
            resonance,
        ),
        spec(
            "bridge-ramp-hht",
            Ok,
            "bridge truss under a slow mid-span ramp load; HHT-alpha with alpha = -0.05",
            bridge_ramp_hht,
        ),
        spec(
            "noisy-probes",
            Ok,
            "damped five-mass chain in free vibration with gauge noise on the probe columns",
            noisy_probes,
        ),
        spec(
            "adaptive-contact-dip",
            Ok,
            "chain thrown against a stiff one-sided contact; adaptive central difference with step safety 0.2; the step dips while in contact and recovers after each rebound",
            adaptive_dip,
        ),
        spec(
            "under-resolved-contact",
            Warning,
            "the same chain and contact at step safety 0.9: each impact spans about two steps and the contact leaks energy (stable, but the balance drifts)",
            leaky_contact,
        ),
        spec(
            "restart-new-header",
            Ok,
            "ramp-loaded chain interrupted and resumed from an earlier checkpoint with a smaller step; the header is written again",
            restart_header,
        ),
        spec(
            "restart-time-rewinds",
            Ok,
            "struck chain resumed from an earlier checkpoint without a new header; time goes back",
            restart_rewind,
        ),
        spec(
            "mast-rk4-resolved",
            Ok,
            "braced mast swaying under a harmonic lateral load; RK4 at omega*dt = 0.3",
            mast_rk4,
        ),
        spec(
            "bridge-fixed-width-ok",
            Ok,
            "bridge truss under a ramp load written in fixed-width fields with D exponents; central difference well inside its limit",
            bridge_fixed_ok,
        ),
        spec(
            "hidden-damper",
            Warning,
            "four-mass chain in free vibration with a dashpot whose dissipation the history does not record; the written balance loses energy",
            hidden_damper,
        ),
        spec(
            "backward-euler-decay",
            Warning,
            "three-mass chain in free vibration under backward Euler; numerical damping removes energy that no column accounts for",
            backward_euler_decay,
        ),
        spec(
            "initial-penetration",
            Warning,
            "chain starting with its tip pushed into an unrecorded penalty contact; the contact's stored energy appears as motion from nowhere",
            initial_penetration,
        ),
        spec(
            crate::demo::DEMO_SCENARIO,
            Critical,
            "braced mast swaying in a gusting lateral load; central difference at a fixed step; midway its top reaches a clearance collar that latches, and the step exceeds the new limit",
            demo_tower,
        ),
        spec(
            "chain-stop-violent",
            Critical,
            "the clearance-stop chain with a stiff stop: the closed stop puts the step at 3 times its limit",
            chain_stop_violent,
        ),
        spec(
            "chain-stop-violent-nan",
            Critical,
            "the stiff-stop chain from a solver that checks only for NaN: values print as inf for a while, the run ends on a NaN row",
            chain_stop_violent_nan,
        ),
    ]
}

fn snap_arch() -> Setup {
    // Apex of a shallow two-bar arch (half span 1 m, rise 0.2 m), both DOFs free.
    let ea = 2.0e6;
    let h = 0.2;
    let mut t = Truss {
        model: Model {
            mass_kg: vec![10.0, 10.0],
            elements: vec![],
            dashpots: vec![],
            mass_damping_per_s: 3.0,
            loads: vec![],
        },
        dofs: vec![[None, None], [None, None], [Some(0), Some(1)]],
        xy: vec![[-1.0, 0.0], [1.0, 0.0], [0.0, h]],
    };
    t.bar(0, 2, ea);
    t.bar(1, 2, ea);
    // Limit load from the static curve F(w) = 2 N(w) (h − w)/L(w), scanned.
    let l0 = (1.0f64 + h * h).sqrt();
    let f_static = |w: f64| {
        let l = (1.0 + (h - w) * (h - w)).sqrt();
        2.0 * ea / l0 * (l0 - l) * (h - w) / l
    };
    let f_cr = (0..2000)
        .map(|i| f_static(h * i as f64 / 2000.0))
        .fold(0.0, f64::max);
    t.model.loads.push(Load {
        dof: 1,
        amp_n: -1.3 * f_cr,
        shape: Shape::Ramp { rise_s: 2.0 },
    });
    let w0 = omega_max0(&t.model).max(1.0);
    let mut s = setup(
        "invented case: shallow two-bar arch pushed through its limit point",
        t.model,
        Scheme::AVERAGE_ACCELERATION,
        StepRule::Fixed {
            dt_s: 2.0 * std::f64::consts::PI / w0 / 60.0,
        },
        5.0,
    );
    s.every = 10;
    s.probes = vec![
        disp(1, "w_apex", "apex deflection"),
        vel(1, "v_apex", "apex velocity"),
    ];
    s
}

fn softening_ramp() -> Setup {
    let mut m = chain(4, 1.0, 2.0e4);
    m.elements[0].law = Law::Softening {
        k: 2.0e4,
        f_max: 500.0,
    };
    m.mass_damping_per_s = 1.0;
    m.loads.push(Load {
        dof: 3,
        amp_n: 450.0,
        shape: Shape::Ramp { rise_s: 3.0 },
    });
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let mut s = setup(
        "invented case: chain on a saturating base spring under a ramp",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        5.0,
    );
    s.every = 2;
    s.layout = Layout::Spaced;
    s.probes = vec![
        disp(0, "u1", "base displacement"),
        disp(3, "u4", "tip displacement"),
    ];
    s
}

fn impact_chain() -> Setup {
    impact()
}

fn resonance() -> Setup {
    let mut m = chain(3, 1.0, 1.0e4);
    let ms = modes(&m, &DVector::zeros(3));
    let w1 = ms[0].0;
    m.loads.push(Load {
        dof: 2,
        amp_n: 5.0,
        shape: Shape::Harmonic { omega_rad_s: w1 },
    });
    let period = 2.0 * std::f64::consts::PI / w1;
    let mut s = setup(
        "invented case: three-mass chain driven at its first natural frequency",
        m,
        Scheme::AVERAGE_ACCELERATION,
        StepRule::Fixed {
            dt_s: period / 60.0,
        },
        40.0 * period,
    );
    s.layout = Layout::JsonLines;
    s.probes = vec![disp(2, "u_tip", "tip displacement")];
    s
}

fn bridge_ramp_hht() -> Setup {
    let mut t = bridge(6, 2.0, 2.0, 2.0e7, 50.0);
    let dy = t.dof(3, 1);
    let ms = modes(&t.model, &DVector::zeros(t.model.n()));
    let period = 2.0 * std::f64::consts::PI / ms[0].0;
    t.model.loads.push(Load {
        dof: dy,
        amp_n: -2.0e5,
        shape: Shape::Ramp {
            rise_s: 15.0 * period,
        },
    });
    let mut s = setup(
        "invented case: bridge truss under a slow mid-span ramp",
        t.model.clone(),
        Scheme::Hht { alpha: -0.05 },
        StepRule::Fixed {
            dt_s: period / 40.0,
        },
        25.0 * period,
    );
    s.layout = Layout::Spaced;
    s.probes = vec![
        disp(dy, "uy_mid", "mid-span deflection"),
        disp(t.dof(6, 0), "ux_end", "roller displacement"),
    ];
    s
}

fn noisy_probes() -> Setup {
    let mut m = chain(5, 1.0, 1.0e4);
    m.mass_damping_per_s = 0.4;
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let u0 = modal_start(&m, 0.01, 0.0);
    let mut s = setup(
        "invented case: damped chain in free vibration, noisy gauges",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        6.0,
    );
    s.u0 = u0;
    s.every = 2;
    s.noise = Some(Noise {
        seed: 0x5eed_0001,
        sigma: 2e-5,
    });
    s.probes = vec![
        disp(0, "u1", "gauge 1"),
        disp(4, "u5", "gauge 5"),
        vel(4, "v5", "velocity gauge 5"),
    ];
    s
}

fn adaptive_dip() -> Setup {
    // Safety 0.2 resolves each impact in about eight steps.
    adaptive_dip_with(0.2, 8.0e4, 0.04, 3.0)
}

fn leaky_contact() -> Setup {
    // Safety 0.9: the contact mode sets the step and each impact spans about two steps.
    let mut s = adaptive_dip_with(0.9, 4.0e4, 0.04, 1.0);
    s.layout = Layout::Spaced;
    s.title =
        "invented case: chain striking a penalty contact, impacts resolved in two steps".into();
    s
}

fn restart_header() -> Setup {
    let mut s = chain_ramp(6.0);
    s.restart = Some(Restart {
        at_step: 900,
        from_step: 600,
        dt_factor: 0.8,
        header_again: true,
    });
    s
}

fn restart_rewind() -> Setup {
    let mut s = impact();
    s.layout = Layout::Spaced;
    s.restart = Some(Restart {
        at_step: 1000,
        from_step: 800,
        dt_factor: 1.0,
        header_again: false,
    });
    s
}

fn mast_rk4() -> Setup {
    let mut t = mast(4, 1.0, 1.5, 5.0e6, 20.0);
    let top = t.dof(8, 0);
    let w0 = omega_max0(&t.model);
    let ms = modes(&t.model, &DVector::zeros(t.model.n()));
    t.model.mass_damping_per_s = 0.05 * ms[0].0;
    t.model.loads.push(Load {
        dof: top,
        amp_n: 2.0e3,
        shape: Shape::Harmonic {
            omega_rad_s: 0.6 * ms[0].0,
        },
    });
    let mut s = setup(
        "invented case: braced mast under a harmonic lateral load",
        t.model.clone(),
        Scheme::Rk4,
        StepRule::Fixed { dt_s: 0.3 / w0 },
        6.0 * 2.0 * std::f64::consts::PI / ms[0].0,
    );
    s.every = 5;
    s.layout = Layout::Spaced;
    s.probes = vec![
        disp(top, "ux_top", "top sway"),
        disp(t.dof(4, 0), "ux_mid", "mid-height sway"),
    ];
    s
}

fn bridge_fixed_ok() -> Setup {
    let mut t = bridge(6, 2.0, 2.0, 2.0e7, 50.0);
    let dy = t.dof(3, 1);
    t.model.mass_damping_per_s = 0.5;
    t.model.loads.push(Load {
        dof: dy,
        amp_n: -2.0e5,
        shape: Shape::Ramp { rise_s: 0.8 },
    });
    let dt = 0.8 * 2.0 / omega_max0(&t.model);
    let mut s = setup(
        "invented case: bridge truss under a ramp load",
        t.model.clone(),
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        3.0,
    );
    s.every = 4;
    s.layout = Layout::Fixed {
        width: 16,
        digits: 8,
        exp2: false,
    };
    s.probes = vec![disp(dy, "uy_mid", "mid-span deflection")];
    s
}

fn hidden_damper() -> Setup {
    let mut m = chain(4, 1.0, 1.0e4);
    m.dashpots.push(Dashpot {
        i: Some(2),
        j: Some(3),
        c: 4.0,
        recorded: false,
    });
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let u0 = modal_start(&m, 0.01, 0.0);
    let mut s = setup(
        "invented case: chain with an unlogged dashpot",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        6.0,
    );
    s.u0 = u0;
    s.every = 2;
    s.layout = Layout::Spaced;
    s.probes = vec![disp(3, "u4", "tip displacement")];
    s
}

fn backward_euler_decay() -> Setup {
    let m = chain(3, 1.0, 1.0e4);
    let ms = modes(&m, &DVector::zeros(3));
    let period = 2.0 * std::f64::consts::PI / ms[0].0;
    let u0 = modal_start(&m, 0.01, 0.0);
    let mut s = setup(
        "invented case: chain in free vibration, backward Euler",
        m,
        Scheme::BackwardEuler,
        StepRule::Fixed {
            dt_s: period / 400.0,
        },
        15.0 * period,
    );
    s.u0 = u0;
    s.every = 5;
    s.probes = vec![disp(2, "u3", "tip displacement")];
    s
}

fn initial_penetration() -> Setup {
    let mut m = chain(4, 1.0, 1.0e4);
    m.elements.push(Element {
        conn: Conn::Axial {
            i: None,
            j: Some(3),
        },
        law: Law::Contact { gap: 0.0, k: 4.0e4 },
        recorded: false,
    });
    m.mass_damping_per_s = 0.1;
    // Step from the contact-closed frequency, as a solver sizing its step with contacts would.
    let dt = 0.9 * 2.0 / omega_with_spring(&m, 3, 4.0e4);
    let mut s = setup(
        "invented case: chain starting inside an unlogged penalty contact",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        4.0,
    );
    s.u0 = vec![0.0, 0.0, 0.0, -0.01];
    s.every = 2;
    s.layout = Layout::JsonLines;
    s.probes = vec![disp(3, "u4", "tip displacement")];
    s
}

fn chain_stop_violent() -> Setup {
    chain_stop(6.0)
}

fn chain_stop_violent_nan() -> Setup {
    let mut s = chain_stop(6.0);
    s.stop_on_printed_overflow = false;
    s
}

/// ω_max·dt of the demo mast once its collar has latched (central difference is
/// stable to 2). The undamped oscillator would grow by 1.15 per step there; the
/// written history of the damped mast shows about 1.18 per step.
pub const DEMO_TOWER_OMEGA_DT: f64 = 2.005;

/// The demo: a braced six-storey mast swaying in a gusting wind load, modelled
/// for sway as a shear chain (storey masses, storey lateral stiffnesses), so the
/// structure stays linear and the growth past the limit stays a steady
/// exponential. About halfway its top reaches a clearance collar whose catch
/// latches and holds; the latched collar puts ω_max·dt at
/// [`DEMO_TOWER_OMEGA_DT`].
pub fn demo_tower() -> Setup {
    let storeys = 6;
    let mut m = chain(storeys, 200.0, 2.0e7);
    let top = storeys - 1;
    let dt = 0.9 * 2.0 / omega_max0(&m);
    let ms = modes(&m, &DVector::zeros(m.n()));
    let w1 = ms[0].0;
    let k = solve_increasing(
        |k| omega_with_spring(&m, top, k) * dt,
        DEMO_TOWER_OMEGA_DT,
        1.0,
        1e13,
    );
    // Static sway under the full mean load, to place the collar's clearance.
    let mean = 3.0e4;
    let k0 = stiffness0(&m);
    let mut f = DVector::zeros(m.n());
    f[top] = mean;
    let sway = k0.lu().solve(&f).map_or(0.01, |x| x[top]);
    m.elements.push(to_ground(
        top,
        Law::Latch {
            gap: 0.85 * sway.abs(),
            k,
            held_at: None,
        },
        true,
    ));
    m.mass_damping_per_s = 0.02 * w1;
    let period = 2.0 * std::f64::consts::PI / w1;
    m.loads.push(Load {
        dof: top,
        amp_n: mean,
        shape: Shape::Ramp {
            rise_s: 150.0 * period,
        },
    });
    m.loads.push(Load {
        dof: top,
        amp_n: 0.15 * mean,
        shape: Shape::Harmonic {
            omega_rad_s: 0.7 * w1,
        },
    });
    let mut s = setup(
        "invented case: braced mast in a gusting wind, latching clearance collar at the top",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        1.0e4,
    );
    s.every = 5;
    s.probes = vec![
        disp(top, "ux_top", "top sway"),
        disp(2, "ux_mid", "mid-height sway"),
        vel(top, "vx_top", "top sway velocity"),
    ];
    s
}
