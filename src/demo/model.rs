//! Lumped-mass models of invented structures: spring-mass chains and small 2-D
//! trusses whose members follow a force law ([`Law`], in [`super::law`]), plus
//! viscous dashpots and time-dependent nodal loads. Pure arithmetic: internal
//! force, strain energy and tangent stiffness for a displacement vector.

use nalgebra::{DMatrix, DVector, SymmetricEigen};

pub use super::law::Law;

/// How a member attaches to the degrees of freedom (`None` = fixed to ground).
#[derive(Debug, Clone, PartialEq)]
pub enum Conn {
    /// A 1-D member along a line of DOFs: extension e = u_j − u_i.
    Axial { i: Option<usize>, j: Option<usize> },
    /// A 2-D bar between nodes a and b at initial positions `xa`, `xb`, with the
    /// x and y DOF of each end; geometrically exact (extension = current length − l0).
    Bar {
        a: [Option<usize>; 2],
        b: [Option<usize>; 2],
        xa: [f64; 2],
        xb: [f64; 2],
    },
}

/// One member: connection, force law, and whether the solver writes its strain
/// energy into the internal-energy column (an unrecorded member is an energy term
/// the history does not show).
#[derive(Debug, Clone, PartialEq)]
pub struct Element {
    pub conn: Conn,
    pub law: Law,
    pub recorded: bool,
}

/// A linear viscous dashpot between two DOFs (or to ground); `recorded` tells
/// whether its dissipation is written to the damping column.
#[derive(Debug, Clone, PartialEq)]
pub struct Dashpot {
    pub i: Option<usize>,
    pub j: Option<usize>,
    pub c: f64,
    pub recorded: bool,
}

/// Time shape of a nodal load.
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    /// Constant from t = 0.
    Constant,
    /// Linear rise over `rise_s`, then held.
    Ramp { rise_s: f64 },
    /// Half-sine pulse starting at `start_s`, lasting `duration_s`.
    HalfSine { start_s: f64, duration_s: f64 },
    /// sin(ω t).
    Harmonic { omega_rad_s: f64 },
}

/// A force of amplitude `amp_n` on one DOF.
#[derive(Debug, Clone, PartialEq)]
pub struct Load {
    pub dof: usize,
    pub amp_n: f64,
    pub shape: Shape,
}

impl Load {
    /// Force at time t.
    pub fn at(&self, t_s: f64) -> f64 {
        let f = match self.shape {
            Shape::Constant => 1.0,
            Shape::Ramp { rise_s } => (t_s / rise_s).clamp(0.0, 1.0),
            Shape::HalfSine {
                start_s,
                duration_s,
            } => {
                let s = (t_s - start_s) / duration_s;
                if (0.0..=1.0).contains(&s) {
                    (std::f64::consts::PI * s).sin()
                } else {
                    0.0
                }
            }
            Shape::Harmonic { omega_rad_s } => (omega_rad_s * t_s).sin(),
        };
        self.amp_n * f
    }
}

/// Strain energy split by whether the history records it.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct StrainEnergy {
    pub recorded_j: f64,
    pub unrecorded_j: f64,
}

/// A lumped-mass model.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    /// Diagonal of the lumped mass matrix (kg), one entry per DOF.
    pub mass_kg: Vec<f64>,
    pub elements: Vec<Element>,
    pub dashpots: Vec<Dashpot>,
    /// Mass-proportional damping coefficient a in C = a·M (1/s); recorded.
    pub mass_damping_per_s: f64,
    pub loads: Vec<Load>,
}

/// Geometry of a bar in its current configuration: unit vector and length.
fn bar_state(
    a: &[Option<usize>; 2],
    b: &[Option<usize>; 2],
    xa: &[f64; 2],
    xb: &[f64; 2],
    u: &DVector<f64>,
) -> ([f64; 2], f64, f64) {
    let d = |c: usize| {
        let ua = a[c].map_or(0.0, |k| u[k]);
        let ub = b[c].map_or(0.0, |k| u[k]);
        (xb[c] + ub) - (xa[c] + ua)
    };
    let (dx, dy) = (d(0), d(1));
    let l = dx.hypot(dy);
    let l0 = (xb[0] - xa[0]).hypot(xb[1] - xa[1]);
    ([dx / l, dy / l], l, l0)
}

impl Model {
    /// Number of degrees of freedom.
    pub fn n(&self) -> usize {
        self.mass_kg.len()
    }

    /// Internal force vector into `f` and the strain energy.
    pub fn internal(&self, u: &DVector<f64>, f: &mut DVector<f64>) -> StrainEnergy {
        f.fill(0.0);
        let mut w = StrainEnergy::default();
        for el in &self.elements {
            let e = match &el.conn {
                Conn::Axial { i, j } => {
                    let e = j.map_or(0.0, |k| u[k]) - i.map_or(0.0, |k| u[k]);
                    let n = el.law.force(e);
                    if let Some(j) = j {
                        f[*j] += n;
                    }
                    if let Some(i) = i {
                        f[*i] -= n;
                    }
                    e
                }
                Conn::Bar { a, b, xa, xb } => {
                    let (dir, l, l0) = bar_state(a, b, xa, xb, u);
                    let e = l - l0;
                    let n = el.law.force(e);
                    for c in 0..2 {
                        if let Some(k) = b[c] {
                            f[k] += n * dir[c];
                        }
                        if let Some(k) = a[c] {
                            f[k] -= n * dir[c];
                        }
                    }
                    e
                }
            };
            let energy = el.law.energy(e);
            if el.recorded {
                w.recorded_j += energy;
            } else {
                w.unrecorded_j += energy;
            }
        }
        w
    }

    /// Tangent stiffness matrix at `u`.
    pub fn tangent(&self, u: &DVector<f64>) -> DMatrix<f64> {
        let n = self.n();
        let mut k = DMatrix::zeros(n, n);
        for el in &self.elements {
            match &el.conn {
                Conn::Axial { i, j } => {
                    let e = j.map_or(0.0, |d| u[d]) - i.map_or(0.0, |d| u[d]);
                    let kt = el.law.stiffness(e);
                    let ends = [(*i, -1.0), (*j, 1.0)];
                    for (p, sp) in ends {
                        for (q, sq) in ends {
                            if let (Some(p), Some(q)) = (p, q) {
                                k[(p, q)] += sp * sq * kt;
                            }
                        }
                    }
                }
                Conn::Bar { a, b, xa, xb } => {
                    let (dir, l, l0) = bar_state(a, b, xa, xb, u);
                    let e = l - l0;
                    let kt = el.law.stiffness(e);
                    let nl = el.law.force(e) / l;
                    // Local 2×2 block: kt·n nᵀ + (N/L)(I − n nᵀ).
                    let block = |r: usize, c: usize| {
                        let nn = dir[r] * dir[c];
                        let id = if r == c { 1.0 } else { 0.0 };
                        kt * nn + nl * (id - nn)
                    };
                    let ends = [(a, -1.0), (b, 1.0)];
                    for (ep, sp) in ends {
                        for (eq, sq) in ends {
                            for (r, dp) in ep.iter().enumerate() {
                                for (c, dq) in eq.iter().enumerate() {
                                    if let (Some(p), Some(q)) = (dp, dq) {
                                        k[(*p, *q)] += sp * sq * block(r, c);
                                    }
                                }
                            }
                        }
                    }
                }
            }
        }
        k
    }

    /// Engage every open latch whose extension at `u` has passed its clearance:
    /// from now on it holds about the edge it crossed. Force and strain energy are
    /// continuous at the switch (both laws agree beyond the edge). Returns how many
    /// latches engaged.
    pub fn engage_latches(&mut self, u: &DVector<f64>) -> usize {
        let mut engaged = 0;
        for el in &mut self.elements {
            if let Law::Latch {
                gap,
                held_at: held @ None,
                ..
            } = &mut el.law
            {
                let e = match &el.conn {
                    Conn::Axial { i, j } => j.map_or(0.0, |d| u[d]) - i.map_or(0.0, |d| u[d]),
                    Conn::Bar { a, b, xa, xb } => {
                        let (_, l, l0) = bar_state(a, b, xa, xb, u);
                        l - l0
                    }
                };
                if e.abs() > *gap {
                    *held = Some(gap.copysign(e));
                    engaged += 1;
                }
            }
        }
        engaged
    }

    /// A cheap fingerprint of the tangent: per member its tangent stiffness, its
    /// geometric term N/L and (for bars) kt times its direction. Two states whose
    /// fingerprints agree to a small fraction of the largest stiffness have
    /// nearly the same tangent matrix.
    pub fn fingerprint(&self, u: &DVector<f64>, out: &mut Vec<f64>) {
        out.clear();
        for el in &self.elements {
            match &el.conn {
                Conn::Axial { i, j } => {
                    let e = j.map_or(0.0, |d| u[d]) - i.map_or(0.0, |d| u[d]);
                    out.push(el.law.stiffness(e));
                }
                Conn::Bar { a, b, xa, xb } => {
                    let (dir, l, l0) = bar_state(a, b, xa, xb, u);
                    let kt = el.law.stiffness(l - l0);
                    out.extend([kt, el.law.force(l - l0) / l, kt * dir[0], kt * dir[1]]);
                }
            }
        }
    }

    /// yᵀ K_t(u) y without assembling K_t: the sum over members of their
    /// tangent quadratic form on the relative motion of their ends.
    pub fn tangent_form(&self, u: &DVector<f64>, y: &DVector<f64>) -> f64 {
        let at = |d: Option<usize>, v: &DVector<f64>| d.map_or(0.0, |k| v[k]);
        let mut sum = 0.0;
        for el in &self.elements {
            match &el.conn {
                Conn::Axial { i, j } => {
                    let e = at(*j, u) - at(*i, u);
                    let dy = at(*j, y) - at(*i, y);
                    sum += el.law.stiffness(e) * dy * dy;
                }
                Conn::Bar { a, b, xa, xb } => {
                    let (dir, l, l0) = bar_state(a, b, xa, xb, u);
                    let kt = el.law.stiffness(l - l0);
                    let nl = el.law.force(l - l0) / l;
                    let d = [at(b[0], y) - at(a[0], y), at(b[1], y) - at(a[1], y)];
                    let along = d[0] * dir[0] + d[1] * dir[1];
                    // dᵀ(kt n nᵀ + (N/L)(I − n nᵀ))d
                    sum += kt * along * along + nl * (d[0] * d[0] + d[1] * d[1] - along * along);
                }
            }
        }
        sum
    }

    /// Damping matrices (recorded, unrecorded).
    pub fn damping(&self) -> (DMatrix<f64>, DMatrix<f64>) {
        let n = self.n();
        let mut rec = DMatrix::zeros(n, n);
        let mut unrec = DMatrix::zeros(n, n);
        for (d, m) in self.mass_kg.iter().enumerate() {
            rec[(d, d)] += self.mass_damping_per_s * m;
        }
        for dp in &self.dashpots {
            let c = if dp.recorded { &mut rec } else { &mut unrec };
            let ends = [(dp.i, -1.0), (dp.j, 1.0)];
            for (p, sp) in ends {
                for (q, sq) in ends {
                    if let (Some(p), Some(q)) = (p, q) {
                        c[(p, q)] += sp * sq * dp.c;
                    }
                }
            }
        }
        (rec, unrec)
    }

    /// External load vector at time t.
    pub fn load(&self, t_s: f64, f: &mut DVector<f64>) {
        f.fill(0.0);
        for l in &self.loads {
            f[l.dof] += l.at(t_s);
        }
    }

    /// Highest circular frequency ω_max (rad/s) of the tangent system at `u`:
    /// square root of the largest eigenvalue of M^{-1/2} K_t M^{-1/2} (symmetric
    /// eigen-solver with an iteration cap). NaN when it cannot be computed.
    pub fn omega_max(&self, u: &DVector<f64>) -> f64 {
        self.top_mode(&self.tangent(u)).map_or(f64::NAN, |(w, _)| w)
    }

    /// M^{-1/2} K M^{-1/2} for a stiffness matrix K.
    pub fn scaled(&self, k: &DMatrix<f64>) -> DMatrix<f64> {
        let n = self.n();
        let s: Vec<f64> = self.mass_kg.iter().map(|m| 1.0 / m.sqrt()).collect();
        DMatrix::from_fn(n, n, |r, c| k[(r, c)] * s[r] * s[c])
    }

    /// ω_max and the unit eigenvector of M^{-1/2} K M^{-1/2} that carries it.
    pub fn top_mode(&self, k: &DMatrix<f64>) -> Option<(f64, DVector<f64>)> {
        let a = self.scaled(k);
        if a.iter().any(|x| !x.is_finite()) {
            return None;
        }
        let eig = SymmetricEigen::try_new(a, 1e-14, 10_000)?;
        let (i, lam) = eig
            .eigenvalues
            .iter()
            .copied()
            .enumerate()
            .max_by(|a, b| a.1.total_cmp(&b.1))?;
        Some((lam.max(0.0).sqrt(), eig.eigenvectors.column(i).into_owned()))
    }
}
#[cfg(test)]
mod tests {
    use super::*;

    /// A latch engages once, on the side it crossed, and then holds both ways;
    /// force and energy do not jump at the switch (a jump would put energy into
    /// the books that no force did work for).
    #[test]
    fn latch_engages_once_and_holds() {
        let mut m = Model {
            mass_kg: vec![1.0],
            elements: vec![Element {
                conn: Conn::Axial {
                    i: None,
                    j: Some(0),
                },
                law: Law::Latch {
                    gap: 0.1,
                    k: 50.0,
                    held_at: None,
                },
                recorded: true,
            }],
            dashpots: vec![],
            mass_damping_per_s: 0.0,
            loads: vec![],
        };
        let at = |x: f64| DVector::from_vec(vec![x]);
        assert_eq!(m.engage_latches(&at(0.05)), 0);
        let before = (
            m.elements[0].law.force(0.12),
            m.elements[0].law.energy(0.12),
        );
        assert_eq!(m.engage_latches(&at(0.12)), 1);
        let law = &m.elements[0].law;
        // Exact arithmetic on both sides of the switch, so only rounding separates them.
        let tol = 1e-12;
        assert!((law.force(0.12) - before.0).abs() < tol);
        assert!((law.energy(0.12) - before.1).abs() < tol);
        // Held: pulls back inside the clearance, where the open stop was slack.
        assert!(law.force(0.0) < -1.0);
        assert_eq!(m.engage_latches(&at(-0.5)), 0);
    }

    #[test]
    fn tangent_form_matches_assembled_matrix() {
        let bar = |xa: [f64; 2]| Element {
            conn: Conn::Bar {
                a: [None, Some(2)],
                b: [Some(0), Some(1)],
                xa,
                xb: [0.1, 0.3],
            },
            law: Law::Softening {
                k: 100.0,
                f_max: 3.0,
            },
            recorded: true,
        };
        let mut m = Model {
            mass_kg: vec![1.0, 2.0, 3.0],
            elements: vec![bar([-1.0, 0.0]), bar([1.0, 0.2])],
            dashpots: vec![],
            mass_damping_per_s: 0.0,
            loads: vec![],
        };
        m.elements.push(Element {
            conn: Conn::Axial {
                i: Some(2),
                j: Some(1),
            },
            law: Law::Linear { k: 7.0 },
            recorded: true,
        });
        let u = DVector::from_vec(vec![0.02, -0.11, 0.05]);
        let y = DVector::from_vec(vec![0.3, -0.7, 1.1]);
        let direct = (m.tangent(&u) * &y).dot(&y);
        // Same quadratic form two ways; only rounding separates them.
        assert!((direct - m.tangent_form(&u, &y)).abs() < 1e-10 * direct.abs().max(1.0));
    }

    #[test]
    fn bar_tangent_matches_finite_difference_of_force() {
        // A shallow two-bar arch: apex node with two DOFs, supports fixed.
        let bar = |xa: [f64; 2]| Element {
            conn: Conn::Bar {
                a: [None, None],
                b: [Some(0), Some(1)],
                xa,
                xb: [0.0, 0.3],
            },
            law: Law::Linear { k: 100.0 },
            recorded: true,
        };
        let m = Model {
            mass_kg: vec![1.0, 1.0],
            elements: vec![bar([-1.0, 0.0]), bar([1.0, 0.0])],
            dashpots: vec![],
            mass_damping_per_s: 0.0,
            loads: vec![],
        };
        let u = DVector::from_vec(vec![0.02, -0.11]);
        let k = m.tangent(&u);
        let h = 1e-7;
        for c in 0..2 {
            let mut up = u.clone();
            let mut um = u.clone();
            up[c] += h;
            um[c] -= h;
            let mut fp = DVector::zeros(2);
            let mut fm = DVector::zeros(2);
            m.internal(&up, &mut fp);
            m.internal(&um, &mut fm);
            for r in 0..2 {
                let fd = (fp[r] - fm[r]) / (2.0 * h);
                assert!((fd - k[(r, c)]).abs() < 1e-5 * (1.0 + fd.abs()));
            }
        }
    }
}
