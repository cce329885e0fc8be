//! Builders for the invented structures of the catalogue: a fixed–free spring
//! chain, a braced 2-D truss (bridge or mast), a shallow two-bar arch; modal
//! helpers (mode shapes, ω_max) and a bisection that picks a contact stiffness
//! giving a wanted ω_max·dt once the contact is closed.

use nalgebra::{DMatrix, DVector, SymmetricEigen};

use super::integrate::Scheme;
use super::layout::{ColumnName, Layout};
use super::model::{Conn, Element, Law, Model};
use super::run::{Columns, Probe, Quantity, Setup, StepRule};

/// A chain ground—0—1—…—(n−1) of equal masses `m_kg` and springs `k_n_m`; the last mass is free.
pub fn chain(n: usize, m_kg: f64, k_n_m: f64) -> Model {
    let elements = (0..n)
        .map(|j| Element {
            conn: Conn::Axial {
                i: j.checked_sub(1),
                j: Some(j),
            },
            law: Law::Linear { k: k_n_m },
            recorded: true,
        })
        .collect();
    Model {
        mass_kg: vec![m_kg; n],
        elements,
        dashpots: vec![],
        mass_damping_per_s: 0.0,
        loads: vec![],
    }
}

/// A member between DOF `dof` and ground.
pub fn to_ground(dof: usize, law: Law, recorded: bool) -> Element {
    Element {
        conn: Conn::Axial {
            i: None,
            j: Some(dof),
        },
        law,
        recorded,
    }
}

/// A 2-D truss: nodes with their DOFs (None = supported) and coordinates.
#[derive(Debug, Clone)]
pub struct Truss {
    pub model: Model,
    pub dofs: Vec<[Option<usize>; 2]>,
    pub xy: Vec<[f64; 2]>,
}

impl Truss {
    fn new(xy: Vec<[f64; 2]>, fixed: &[(usize, usize)], node_mass_kg: f64) -> Self {
        let mut dofs = vec![[None, None]; xy.len()];
        let mut n = 0;
        for (node, d) in dofs.iter_mut().enumerate() {
            for (c, slot) in d.iter_mut().enumerate() {
                if !fixed.contains(&(node, c)) {
                    *slot = Some(n);
                    n += 1;
                }
            }
        }
        Self {
            model: Model {
                mass_kg: vec![node_mass_kg; n],
                elements: vec![],
                dashpots: vec![],
                mass_damping_per_s: 0.0,
                loads: vec![],
            },
            dofs,
            xy,
        }
    }

    /// Add a bar of axial rigidity `ea_n` between nodes a and b (linear law k = EA/L).
    pub fn bar(&mut self, a: usize, b: usize, ea_n: f64) {
        let (xa, xb) = (self.xy[a], self.xy[b]);
        let l0 = (xb[0] - xa[0]).hypot(xb[1] - xa[1]);
        self.member(a, b, Law::Linear { k: ea_n / l0 });
    }

    /// Add a member with any law between nodes a and b.
    pub fn member(&mut self, a: usize, b: usize, law: Law) {
        self.model.elements.push(Element {
            conn: Conn::Bar {
                a: self.dofs[a],
                b: self.dofs[b],
                xa: self.xy[a],
                xb: self.xy[b],
            },
            law,
            recorded: true,
        });
    }

    /// DOF of a node's component (0 = x, 1 = y); panics on a supported component,
    /// which is a mistake in a case definition.
    pub fn dof(&self, node: usize, c: usize) -> usize {
        self.dofs[node][c].unwrap_or_else(|| panic!("node {node} component {c} is supported"))
    }
}

/// A simply supported bridge truss of `panels` panels of length `l_m` and height
/// `h_m`: bottom nodes 0..=panels, top nodes panels+1.. above the inner bottom
/// nodes; chords, verticals and diagonals sloping towards mid-span.
pub fn bridge(panels: usize, l_m: f64, h_m: f64, ea_n: f64, node_mass_kg: f64) -> Truss {
    let mut xy: Vec<[f64; 2]> = (0..=panels).map(|i| [i as f64 * l_m, 0.0]).collect();
    xy.extend((1..panels).map(|i| [i as f64 * l_m, h_m]));
    let top = |i: usize| panels + i; // top node above bottom node i (1..panels)
    let mut t = Truss::new(xy, &[(0, 0), (0, 1), (panels, 1)], node_mass_kg);
    for i in 0..panels {
        t.bar(i, i + 1, ea_n);
    }
    for i in 1..panels - 1 {
        t.bar(top(i), top(i + 1), ea_n);
    }
    for i in 1..panels {
        t.bar(i, top(i), ea_n);
    }
    t.bar(0, top(1), ea_n);
    t.bar(panels, top(panels - 1), ea_n);
    for i in 1..panels - 1 {
        if 2 * i < panels {
            t.bar(top(i), i + 1, ea_n);
        } else {
            t.bar(i, top(i + 1), ea_n);
        }
    }
    t
}

/// A braced mast of `levels` storeys of height `h_m` and width `w_m`, pinned at
/// both base nodes; node 2·j and 2·j+1 are the left and right nodes of level j.
pub fn mast(levels: usize, w_m: f64, h_m: f64, ea_n: f64, node_mass_kg: f64) -> Truss {
    let xy: Vec<[f64; 2]> = (0..=levels)
        .flat_map(|j| [[0.0, j as f64 * h_m], [w_m, j as f64 * h_m]])
        .collect();
    let mut t = Truss::new(xy, &[(0, 0), (0, 1), (1, 0), (1, 1)], node_mass_kg);
    for j in 0..levels {
        let (l0, r0, l1, r1) = (2 * j, 2 * j + 1, 2 * j + 2, 2 * j + 3);
        t.bar(l0, l1, ea_n);
        t.bar(r0, r1, ea_n);
        t.bar(l1, r1, ea_n);
        if j % 2 == 0 {
            t.bar(l0, r1, ea_n);
        } else {
            t.bar(r0, l1, ea_n);
        }
    }
    t
}

/// Sorted circular frequencies (rad/s) and mass-normalised-then-max-scaled mode
/// shapes of the tangent system at `u`.
pub fn modes(model: &Model, u: &DVector<f64>) -> Vec<(f64, Vec<f64>)> {
    let n = model.n();
    let s: Vec<f64> = model.mass_kg.iter().map(|m| 1.0 / m.sqrt()).collect();
    let mut k = model.tangent(u);
    for r in 0..n {
        for c in 0..n {
            k[(r, c)] *= s[r] * s[c];
        }
    }
    let Some(eig) = SymmetricEigen::try_new(k, 1e-14, 10_000) else {
        return vec![];
    };
    let mut out: Vec<(f64, Vec<f64>)> = (0..n)
        .map(|i| {
            let phi: Vec<f64> = (0..n).map(|r| eig.eigenvectors[(r, i)] * s[r]).collect();
            let peak = phi.iter().fold(0.0_f64, |m, x| m.max(x.abs())).max(1e-300);
            let w = eig.eigenvalues[i].max(0.0).sqrt();
            (w, phi.iter().map(|x| x / peak).collect())
        })
        .collect();
    out.sort_by(|a, b| a.0.total_cmp(&b.0));
    out
}

/// ω_max of the model at rest.
pub fn omega_max0(model: &Model) -> f64 {
    model.omega_max(&DVector::zeros(model.n()))
}

/// Bisection for an increasing `f` (e.g. ω_max·dt as a function of a contact
/// stiffness): the argument in [lo, hi] where f reaches `target`.
pub fn solve_increasing(f: impl Fn(f64) -> f64, target: f64, mut lo: f64, mut hi: f64) -> f64 {
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        if f(mid) < target {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi / lo < 1.0 + 1e-13 {
            break;
        }
    }
    (lo * hi).sqrt()
}

/// ω_max with an extra stiffness `k` between `dof` and ground (a closed contact).
pub fn omega_with_spring(model: &Model, dof: usize, k: f64) -> f64 {
    let mut m = model.clone();
    m.elements.push(to_ground(dof, Law::Linear { k }, true));
    omega_max0(&m)
}

/// A displacement probe column.
pub fn disp(dof: usize, short: &str, words: &str) -> Probe {
    Probe {
        dof,
        quantity: Quantity::Displacement,
        name: ColumnName::new(words, short, "m"),
    }
}

/// A velocity probe column.
pub fn vel(dof: usize, short: &str, words: &str) -> Probe {
    Probe {
        dof,
        quantity: Quantity::Velocity,
        name: ColumnName::new(words, short, "m/s"),
    }
}

/// A setup with common defaults: CSV, all columns, a row every step, at rest.
pub fn setup(title: &str, model: Model, scheme: Scheme, step: StepRule, t_end_s: f64) -> Setup {
    Setup {
        title: title.into(),
        model,
        scheme,
        step,
        u0: vec![],
        v0: vec![],
        t_end_s,
        max_steps: 200_000,
        every: 1,
        layout: Layout::Csv,
        columns: Columns::All,
        probes: vec![],
        noise: None,
        restart: None,
        dt_min_s: None,
        stop_on_printed_overflow: true,
    }
}

/// Stiffness matrix helper for tests: K at rest.
pub fn stiffness0(model: &Model) -> DMatrix<f64> {
    model.tangent(&DVector::zeros(model.n()))
}
