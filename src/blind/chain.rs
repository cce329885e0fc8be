//! The lumped structural model of the blind catalogue: masses on a line
//! joined to each other or to the ground by elements with a deformation
//! d = u_j − u_i (u_i = 0 for the ground). Each element gives an internal
//! force f (the force on node j is −f, on node i +f), a tangent stiffness
//! and damping, and the energy it stores or dissipates. The energy books are
//! kept by [`Ledger`]: stored energies exactly from the state, dissipation
//! and external work by the trapezoid rule on each step.

use nalgebra::DMatrix;

/// Constitutive law of an element.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Law {
    /// f = k·d.
    Linear { k: f64 },
    /// f = k·d·(1 + (d/d₀)²): a spring that stiffens as it deforms.
    Hardening { k: f64, d0: f64 },
    /// Two bars of axial stiffness k from (±a, 0) to the node at (0, h + d):
    /// U = k·(L − L₀)², L = √(a² + (h + d)²). Snaps through under a
    /// downward load (negative tangent during the snap).
    Arch { k: f64, a: f64, h: f64 },
    /// One-sided penalty contact closing when d < −gap: f = k·(d + gap).
    Contact { k: f64, gap: f64 },
    /// Crushable block in compression, touching when −d > gap: elastic k,
    /// perfectly plastic at force fy, no tension.
    Crush { k: f64, fy: f64, gap: f64 },
    /// Viscous dashpot: f = c·ḋ.
    Dashpot { c: f64 },
    /// Dashpot acting only while a contact of the same gap is closed
    /// (d < −gap): the contact's dissipation.
    GapDashpot { c: f64, gap: f64 },
    /// Regularised Coulomb friction: f = f₀·tanh(ḋ/v_ε).
    Friction { f0: f64, v_eps: f64 },
    /// Elastic–perfectly-plastic bar of rest length l₀ whose current length
    /// l₀ + d sets an element Courant step (length / wave speed).
    Bar {
        k: f64,
        fy: f64,
        l0: f64,
        wave_speed: f64,
    },
}

/// Where an element's energy is booked.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Book {
    /// Stored elastic energy (springs, arch, crush and bar elastic parts).
    Strain,
    /// Stored penalty contact energy.
    Contact,
    /// Viscous dissipation.
    Damping,
    /// Friction dissipation.
    Friction,
}

impl Law {
    /// Where this law's energy goes.
    pub fn book(&self) -> Book {
        match self {
            Law::Contact { .. } => Book::Contact,
            Law::Dashpot { .. } | Law::GapDashpot { .. } => Book::Damping,
            Law::Friction { .. } => Book::Friction,
            _ => Book::Strain,
        }
    }

    /// Force, tangent stiffness, tangent damping and the new plastic state,
    /// from the deformation, its rate and the committed plastic state.
    pub fn eval(&self, d: f64, ddot: f64, p: f64) -> Eval {
        let mut e = Eval {
            f: 0.0,
            kt: 0.0,
            ct: 0.0,
            p,
        };
        match *self {
            Law::Linear { k } => {
                e.f = k * d;
                e.kt = k;
            }
            Law::Hardening { k, d0 } => {
                let r = d / d0;
                e.f = k * d * (1.0 + r * r);
                e.kt = k * (1.0 + 3.0 * r * r);
            }
            Law::Arch { k, a, h } => {
                let y = h + d;
                let l = (a * a + y * y).sqrt();
                let l0 = (a * a + h * h).sqrt();
                e.f = 2.0 * k * (l - l0) * y / l;
                e.kt = 2.0 * k * (y * y / (l * l) + (l - l0) * a * a / (l * l * l));
            }
            Law::Contact { k, gap } => {
                if d < -gap {
                    e.f = k * (d + gap);
                    e.kt = k;
                }
            }
            Law::Crush { k, fy, gap } => {
                let el = -d - gap - p;
                if el > 0.0 {
                    if k * el <= fy {
                        e.f = -k * el;
                        e.kt = k;
                    } else {
                        e.p = -d - gap - fy / k;
                        e.f = -fy;
                    }
                }
            }
            Law::Dashpot { c } => {
                e.f = c * ddot;
                e.ct = c;
            }
            Law::GapDashpot { c, gap } => {
                if d < -gap {
                    e.f = c * ddot;
                    e.ct = c;
                }
            }
            Law::Friction { f0, v_eps } => {
                let t = (ddot / v_eps).tanh();
                e.f = f0 * t;
                e.ct = f0 / v_eps * (1.0 - t * t);
            }
            Law::Bar { k, fy, .. } => {
                let trial = k * (d - p);
                if trial.abs() <= fy {
                    e.f = trial;
                    e.kt = k;
                } else {
                    e.f = fy * trial.signum();
                    e.p = d - e.f / k;
                }
            }
        }
        e
    }

    /// Stored energy at deformation d with plastic state p.
    pub fn stored(&self, d: f64, p: f64) -> f64 {
        match *self {
            Law::Linear { k } => 0.5 * k * d * d,
            Law::Hardening { k, d0 } => 0.5 * k * d * d + 0.25 * k * d.powi(4) / (d0 * d0),
            Law::Arch { k, a, h } => {
                let l = (a * a + (h + d) * (h + d)).sqrt();
                let l0 = (a * a + h * h).sqrt();
                k * (l - l0) * (l - l0)
            }
            Law::Contact { k, gap } if d < -gap => 0.5 * k * (d + gap) * (d + gap),
            Law::Crush { k, gap, .. } => {
                let el = (-d - gap - p).max(0.0);
                0.5 * k * el * el
            }
            Law::Bar { k, .. } => 0.5 * k * (d - p) * (d - p),
            _ => 0.0,
        }
    }

    /// Plastic dissipation of a change of plastic state.
    pub fn plastic_work(&self, p_old: f64, p_new: f64) -> f64 {
        match *self {
            Law::Crush { fy, .. } | Law::Bar { fy, .. } => fy * (p_new - p_old).abs(),
            _ => 0.0,
        }
    }
}

/// An element's response at one state.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Eval {
    /// Internal force.
    pub f: f64,
    /// Tangent stiffness ∂f/∂d.
    pub kt: f64,
    /// Tangent damping ∂f/∂ḋ.
    pub ct: f64,
    /// Plastic state after this evaluation.
    pub p: f64,
}

/// An element between node i (None: the ground) and node j.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Elem {
    /// First node, or the ground.
    pub i: Option<usize>,
    /// Second node.
    pub j: usize,
    /// Its law.
    pub law: Law,
}

/// Time history of a load.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// Constant.
    Const,
    /// From 0 to 1 linearly over [0, t1], then held.
    Ramp { t1: f64 },
    /// t·rate, growing without end.
    Rate { rate: f64 },
    /// sin(w·t).
    Sine { w: f64 },
    /// sin(w·t) with an amplitude ramped from 0 to 1 over [0, t1].
    RampSine { t1: f64, w: f64 },
    /// Half sine of duration t1 starting at t = 0, then nothing.
    Pulse { t1: f64 },
}

impl Shape {
    /// Value at time t.
    pub fn at(&self, t: f64) -> f64 {
        match *self {
            Shape::Const => 1.0,
            Shape::Ramp { t1 } => (t / t1).clamp(0.0, 1.0),
            Shape::Rate { rate } => rate * t,
            Shape::Sine { w } => (w * t).sin(),
            Shape::RampSine { t1, w } => (t / t1).clamp(0.0, 1.0) * (w * t).sin(),
            Shape::Pulse { t1 } => {
                if (0.0..t1).contains(&t) {
                    (std::f64::consts::PI * t / t1).sin()
                } else {
                    0.0
                }
            }
        }
    }
}

/// A nodal load; gravity loads are booked as potential energy, others as
/// external work.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Load {
    /// Node.
    pub node: usize,
    /// Amplitude.
    pub amp: f64,
    /// Time history.
    pub shape: Shape,
    /// Booked as gravity potential instead of external work.
    pub gravity: bool,
}

/// A chain: masses, elements, loads.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Chain {
    /// Nodal masses.
    pub mass: Vec<f64>,
    /// Elements.
    pub elems: Vec<Elem>,
    /// Loads.
    pub loads: Vec<Load>,
}

impl Chain {
    /// A chain of n equal masses m, each joined to the next by a spring k and
    /// the first to the ground.
    pub fn springs(n: usize, m: f64, k: f64) -> Chain {
        let mut c = Chain {
            mass: vec![m; n],
            ..Chain::default()
        };
        for j in 0..n {
            c.add(
                if j == 0 { None } else { Some(j - 1) },
                j,
                Law::Linear { k },
            );
        }
        c
    }

    /// Add an element.
    pub fn add(&mut self, i: Option<usize>, j: usize, law: Law) -> &mut Chain {
        self.elems.push(Elem { i, j, law });
        self
    }

    /// Add a load.
    pub fn load(&mut self, node: usize, amp: f64, shape: Shape) -> &mut Chain {
        self.loads.push(Load {
            node,
            amp,
            shape,
            gravity: false,
        });
        self
    }

    /// Add gravity g (downward = negative) on every node.
    pub fn gravity(&mut self, g: f64) -> &mut Chain {
        for (node, &m) in self.mass.iter().enumerate() {
            self.loads.push(Load {
                node,
                amp: m * g,
                shape: Shape::Const,
                gravity: true,
            });
        }
        self
    }

    /// Whether every element is linear (springs and dashpots): the tangent
    /// never changes.
    pub fn is_linear(&self) -> bool {
        self.elems
            .iter()
            .all(|e| matches!(e.law, Law::Linear { .. } | Law::Dashpot { .. }))
    }

    /// Number of nodes.
    pub fn n(&self) -> usize {
        self.mass.len()
    }

    /// Deformation of element `e` for nodal values x.
    pub fn deform(&self, e: &Elem, x: &[f64]) -> f64 {
        x[e.j] - e.i.map_or(0.0, |i| x[i])
    }

    /// Evaluate every element at (u, v) with committed plastic states p.
    pub fn evaluate(&self, u: &[f64], v: &[f64], p: &[f64], out: &mut [Eval]) {
        for (k, e) in self.elems.iter().enumerate() {
            out[k] = e.law.eval(self.deform(e, u), self.deform(e, v), p[k]);
        }
    }

    /// Nodal internal forces of evaluated elements.
    pub fn internal(&self, ev: &[Eval], r: &mut [f64]) {
        r.iter_mut().for_each(|x| *x = 0.0);
        for (e, x) in self.elems.iter().zip(ev) {
            r[e.j] += x.f;
            if let Some(i) = e.i {
                r[i] -= x.f;
            }
        }
    }

    /// Nodal loads at time t: (external, gravity).
    pub fn loads_at(&self, t: f64, ext: &mut [f64], grav: &mut [f64]) {
        ext.iter_mut().for_each(|x| *x = 0.0);
        grav.iter_mut().for_each(|x| *x = 0.0);
        for l in &self.loads {
            let f = l.amp * l.shape.at(t);
            if l.gravity {
                grav[l.node] += f;
            } else {
                ext[l.node] += f;
            }
        }
    }

    /// Tangent stiffness and damping matrices of evaluated elements.
    pub fn tangent(&self, ev: &[Eval]) -> (DMatrix<f64>, DMatrix<f64>) {
        let n = self.n();
        let mut k = DMatrix::zeros(n, n);
        let mut c = DMatrix::zeros(n, n);
        for (e, x) in self.elems.iter().zip(ev) {
            for (m, val) in [(&mut k, x.kt), (&mut c, x.ct)] {
                m[(e.j, e.j)] += val;
                if let Some(i) = e.i {
                    m[(i, i)] += val;
                    m[(i, e.j)] -= val;
                    m[(e.j, i)] -= val;
                }
            }
        }
        (k, c)
    }

    /// The smallest element Courant step over the bars (length / wave speed).
    pub fn courant_step(&self, u: &[f64]) -> Option<f64> {
        self.elems
            .iter()
            .filter_map(|e| match e.law {
                Law::Bar { l0, wave_speed, .. } => Some((l0 + self.deform(e, u)) / wave_speed),
                _ => None,
            })
            .reduce(f64::min)
    }
}

/// The energy books of a run.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Books {
    /// Kinetic energy.
    pub kinetic: f64,
    /// Elastic energy stored in springs, arch, crush block and bars.
    pub strain: f64,
    /// Energy stored in penalty contacts.
    pub contact: f64,
    /// Plastic dissipation so far.
    pub plastic: f64,
    /// Viscous dissipation so far.
    pub damping: f64,
    /// Friction dissipation so far.
    pub friction: f64,
    /// Work of external (non-gravity) loads so far.
    pub external: f64,
    /// Gravity potential energy (−work of gravity so far).
    pub gravity: f64,
}

impl Books {
    /// Kinetic + stored + dissipated + gravity potential − external work:
    /// constant for an exact run.
    pub fn balance(&self) -> f64 {
        self.kinetic
            + self.strain
            + self.contact
            + self.plastic
            + self.damping
            + self.friction
            + self.gravity
            - self.external
    }
}

/// Keeps the path-dependent books (dissipation, work) from step to step;
/// the stored energies are computed from the state when asked.
#[derive(Debug, Clone, PartialEq)]
pub struct Ledger {
    paths: Books,
    u: Vec<f64>,
    ev: Vec<Eval>,
    ext: Vec<f64>,
    grav: Vec<f64>,
    ext_new: Vec<f64>,
    grav_new: Vec<f64>,
}

impl Ledger {
    /// Books at the initial state (dissipation and work start at 0).
    pub fn new(chain: &Chain, u: &[f64], ev: &[Eval], t: f64) -> Ledger {
        let n = chain.n();
        let mut l = Ledger {
            paths: Books::default(),
            u: u.to_vec(),
            ev: ev.to_vec(),
            ext: vec![0.0; n],
            grav: vec![0.0; n],
            ext_new: vec![0.0; n],
            grav_new: vec![0.0; n],
        };
        chain.loads_at(t, &mut l.ext, &mut l.grav);
        l
    }

    /// Carry the dissipation and work of `books` over (a restart).
    pub fn carry(&mut self, books: &Books) {
        self.paths = Books {
            kinetic: 0.0,
            strain: 0.0,
            contact: 0.0,
            ..*books
        };
    }

    /// The books at the state (u, v) with element responses `ev`.
    pub fn books(&self, chain: &Chain, u: &[f64], v: &[f64], ev: &[Eval]) -> Books {
        let mut b = self.paths;
        b.kinetic = 0.5
            * chain
                .mass
                .iter()
                .zip(v)
                .map(|(m, v)| m * v * v)
                .sum::<f64>();
        for (e, x) in chain.elems.iter().zip(ev) {
            let s = e.law.stored(chain.deform(e, u), x.p);
            match e.law.book() {
                Book::Contact => b.contact += s,
                Book::Strain => b.strain += s,
                _ => {}
            }
        }
        b
    }

    /// Advance the path-dependent books to a new state u at time t, with the
    /// element responses applied there.
    pub fn advance(&mut self, chain: &Chain, u: &[f64], ev: &[Eval], t: f64) {
        chain.loads_at(t, &mut self.ext_new, &mut self.grav_new);
        for j in 0..chain.n() {
            let du = u[j] - self.u[j];
            self.paths.external += 0.5 * (self.ext[j] + self.ext_new[j]) * du;
            self.paths.gravity -= 0.5 * (self.grav[j] + self.grav_new[j]) * du;
        }
        for (k, e) in chain.elems.iter().enumerate() {
            match e.law.book() {
                Book::Damping | Book::Friction => {
                    let dd = chain.deform(e, u) - chain.deform(e, &self.u);
                    let w = 0.5 * (self.ev[k].f + ev[k].f) * dd;
                    if e.law.book() == Book::Damping {
                        self.paths.damping += w;
                    } else {
                        self.paths.friction += w;
                    }
                }
                _ => self.paths.plastic += e.law.plastic_work(self.ev[k].p, ev[k].p),
            }
        }
        self.u.copy_from_slice(u);
        self.ev.copy_from_slice(ev);
        std::mem::swap(&mut self.ext, &mut self.ext_new);
        std::mem::swap(&mut self.grav, &mut self.grav_new);
    }
}
