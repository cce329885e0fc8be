//! Blow-ups of invented structures: a step past the limit once a stop or guard
//! closes, schemes run past their limits, a tiny seeded high mode, a NaN out
//! of a tabulated law, a collapsing step, and the same runs in other layouts
//! and column sets; plus the plain healthy ramp they are set against.

use super::families::{bridge_guide, chain_ramp, chain_stop, modal_start};
use super::{Spec, spec};
use crate::demo::build::{chain, disp, omega_max0, omega_with_spring, setup, to_ground, vel};
use crate::demo::integrate::Scheme;
use crate::demo::layout::Layout;
use crate::demo::model::{Law, Load, Shape};
use crate::demo::run::{Columns, Setup, StepRule};
use crate::finding::Level;

/// The blow-ups of the first catalogue and its plain healthy ramp, in order.
pub fn specs() -> Vec<Spec> {
    use Level::{Critical, Ok};
    vec![
        spec(
            "chain-stop-cd",
            Critical,
            "six-mass chain pushed by a slow ramp onto a clearance stop; central difference at 0.9 of the free limit; the closed stop puts the step at 1.02 times its new limit",
            chain_stop_csv,
        ),
        spec(
            "bridge-guide-cd",
            Critical,
            "six-panel bridge truss under a mid-span ramp load meets a clearance guide; central difference, fixed step; closing the guide puts the step at 1.05 times its limit",
            bridge_guide_default,
        ),
        spec(
            "cd-omega-2.01",
            Critical,
            "three-mass chain run by central difference at omega*dt = 2.01 for its highest mode (growth 1.2213 per step), free vibration in the first mode",
            cd_201,
        ),
        spec(
            "rk4-past-limit",
            Critical,
            "four-mass chain run by RK4 at omega*dt = 2.9 for its highest mode, just past 2*sqrt(2); rows every 2 steps, JSON Lines",
            rk4_past,
        ),
        spec(
            "linacc-past-limit",
            Critical,
            "five-mass chain run by linear-acceleration Newmark at omega*dt = 3.6, past 2*sqrt(3); rows every 4 steps",
            linacc_past,
        ),
        spec(
            "forward-euler-chain",
            Critical,
            "undamped four-mass chain run by forward Euler (unstable at any step); rows every 5 steps",
            forward_euler,
        ),
        spec(
            "tiny-mode-cd",
            Critical,
            "eight-mass chain in large first-mode vibration with a highest mode seeded at 1e-12 and omega*dt = 2.0004 (growth 1.04 per step); rows every 10 steps",
            tiny_mode,
        ),
        spec(
            "chain-stop-cd-every7",
            Critical,
            "the clearance-stop chain written every 7 steps as JSON Lines (an odd stride keeps the sign alternation)",
            chain_stop_every7,
        ),
        spec(
            "sudden-nan",
            Critical,
            "five-mass chain whose tip member follows a tabulated curve; an impact drives it past the table's end and the force turns NaN without warning",
            sudden_nan,
        ),
        spec(
            "crush-step-collapse",
            Critical,
            "mass crushing a log-strain member under a growing force; adaptive central difference; the stable step collapses by orders of magnitude until the solver gives up",
            crush_collapse,
        ),
        spec(
            "bridge-guide-energy-only",
            Critical,
            "the bridge meeting its clearance guide, written with time and energy columns only",
            bridge_energy_only,
        ),
        spec(
            "chain-stop-probes-only",
            Critical,
            "the clearance-stop chain at 1.1 times its limit, written with time and displacement probes only",
            chain_stop_probes_only,
        ),
        spec(
            "chain-stop-headerless",
            Critical,
            "the clearance-stop chain written without a header, whitespace-separated",
            chain_stop_headerless,
        ),
        spec(
            "bridge-guide-fixed-width",
            Critical,
            "the bridge meeting its guide, written in fixed-width fields with D exponents of two digits (asterisks past 1e99)",
            bridge_fixed,
        ),
        spec(
            "chain-ramp-ok",
            Ok,
            "six-mass chain under a slow ramp load with light damping; central difference at 0.9 of its limit",
            chain_ramp_ok,
        ),
    ]
}

// ---------------------------------------------------------------- chains

fn chain_stop_csv() -> Setup {
    chain_stop(2.02)
}

fn chain_stop_every7() -> Setup {
    let mut s = chain_stop(2.02);
    s.every = 7;
    s.layout = Layout::JsonLines;
    s
}

fn chain_stop_probes_only() -> Setup {
    let mut s = chain_stop(2.2);
    s.columns = Columns::ProbesOnly;
    s.layout = Layout::Spaced;
    s
}

fn chain_stop_headerless() -> Setup {
    let mut s = chain_stop(2.05);
    s.layout = Layout::Headerless;
    s
}

fn chain_ramp_ok() -> Setup {
    let mut s = chain_ramp(8.0);
    s.probes.insert(0, disp(2, "u3", "displacement mass 3"));
    s
}

fn chain_at_omega(n: usize, omega_dt: f64, scheme: Scheme, t_end_s: f64) -> Setup {
    let m = chain(n, 1.0, 1.0e4);
    let dt = omega_dt / omega_max0(&m);
    let u0 = modal_start(&m, 0.01, 1e-8);
    let mut s = setup(
        "invented case: spring chain in free vibration",
        m,
        scheme,
        StepRule::Fixed { dt_s: dt },
        t_end_s,
    );
    s.u0 = u0;
    s.probes = vec![
        disp(0, "u1", "displacement mass 1"),
        disp(n - 1, "u_tip", "tip displacement"),
    ];
    s
}

fn cd_201() -> Setup {
    let mut s = chain_at_omega(3, 2.01, Scheme::CentralDifference, 100.0);
    s.layout = Layout::Spaced;
    s
}

fn rk4_past() -> Setup {
    let mut s = chain_at_omega(4, 2.9, Scheme::Rk4, 1000.0);
    s.every = 2;
    s.layout = Layout::JsonLines;
    s
}

fn linacc_past() -> Setup {
    let mut s = chain_at_omega(5, 3.6, Scheme::LINEAR_ACCELERATION, 1000.0);
    s.every = 4;
    s
}

fn forward_euler() -> Setup {
    let mut s = chain_at_omega(4, 0.5, Scheme::ForwardEuler, 1000.0);
    s.every = 5;
    s
}

fn tiny_mode() -> Setup {
    let m = chain(8, 1.0, 1.0e4);
    let dt = 2.0004 / omega_max0(&m);
    let u0 = modal_start(&m, 0.05, 0.05e-12);
    let mut s = setup(
        "invented case: eight-mass chain, large first-mode vibration",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        1000.0,
    );
    s.u0 = u0;
    s.every = 10;
    s.probes = vec![
        disp(0, "u1", "displacement mass 1"),
        disp(7, "u8", "displacement mass 8"),
    ];
    s
}

fn sudden_nan() -> Setup {
    let mut m = chain(5, 1.0, 1.0e4);
    // Tip member: a tabulated stiffening curve defined for |e| ≤ 0.05 m only.
    m.elements[4].law = Law::Table {
        e: vec![-0.05, -0.02, 0.0, 0.02, 0.05],
        n: vec![-900.0, -240.0, 0.0, 240.0, 900.0],
    };
    m.mass_damping_per_s = 0.2;
    // Step from the stiffest slope of the curve (22,000 N/m at the table's ends).
    let dt = 0.8 * 2.0 / omega_with_spring(&m, 4, 1.0e4);
    m.loads.push(Load {
        dof: 4,
        amp_n: 1500.0,
        shape: Shape::HalfSine {
            start_s: 1.5,
            duration_s: 0.1,
        },
    });
    let mut s = setup(
        "invented case: five-mass chain with a tabulated tip member, struck at the tip",
        m,
        Scheme::CentralDifference,
        StepRule::Fixed { dt_s: dt },
        4.0,
    );
    s.u0 = vec![0.002, 0.004, 0.006, 0.008, 0.01];
    s.layout = Layout::Spaced;
    s.probes = vec![
        disp(4, "u5", "tip displacement"),
        vel(4, "v5", "tip velocity"),
    ];
    s
}

fn crush_collapse() -> Setup {
    let mut m = chain(2, 1.0, 2.0e4);
    // The second mass rests on a log-strain member 0.1 m long.
    m.elements
        .push(to_ground(1, Law::LogCrush { ea: 1.0e4, l0: 0.1 }, true));
    m.mass_damping_per_s = 20.0;
    m.loads.push(Load {
        dof: 1,
        amp_n: -1.5e5,
        shape: Shape::Ramp { rise_s: 3.0 },
    });
    let dt0 = 0.9 * 2.0 / omega_max0(&m);
    let mut s = setup(
        "invented case: a mass crushing a short member under a growing force",
        m,
        Scheme::CentralDifference,
        StepRule::Adaptive {
            safety: 0.9,
            dt_max_s: 1.0,
            max_growth: f64::INFINITY,
        },
        3.0,
    );
    s.dt_min_s = Some(1e-3 * dt0);
    s.every = 30;
    s.probes = vec![disp(1, "u2", "displacement mass 2")];
    s
}

// ---------------------------------------------------------------- bridge

fn bridge_guide_default() -> Setup {
    let mut s = bridge_guide(2.05);
    s.layout = Layout::Spaced;
    s
}

fn bridge_energy_only() -> Setup {
    let mut s = bridge_guide(2.03);
    s.columns = Columns::EnergyOnly;
    s
}

fn bridge_fixed() -> Setup {
    let mut s = bridge_guide(2.1);
    s.layout = Layout::Fixed {
        width: 15,
        digits: 7,
        exp2: true,
    };
    s
}
