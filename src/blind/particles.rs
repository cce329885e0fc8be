//! Two-dimensional Lennard-Jones particles in reduced units (ε = σ = m = 1),
//! force-shifted at r_c = 2.5 so energy and force are continuous:
//! U(r) = V(r) − V(r_c) − (r − r_c)·V′(r_c), V(r) = 4(r⁻¹² − r⁻⁶).
//! Velocity Verlet for NVE runs and the BAOAB splitting of Langevin dynamics
//! for NVT runs (Leimkuhler & Matthews, Molecular Dynamics, Springer 2015,
//! from memory), with the thermostat's work counted from the kinetic energy
//! it changes. A run stops as a solver would when a particle moves more than
//! `max_move` in one step. The stability check at written rows compares
//! Δt²·λ_max(H) with 4 (velocity Verlet on positions is central difference),
//! H the Hessian of the potential.

use nalgebra::DMatrix;

use super::rng::Rng;
use super::trace::{Column, Role, Row, Trace, overflowed};

/// Cut-off radius.
pub const CUTOFF: f64 = 2.5;

fn v_lj(r: f64) -> f64 {
    let s6 = r.powi(-6);
    4.0 * (s6 * s6 - s6)
}

fn dv_lj(r: f64) -> f64 {
    -48.0 * r.powi(-13) + 24.0 * r.powi(-7)
}

/// Second derivative of the Lennard-Jones potential.
pub fn d2v_lj(r: f64) -> f64 {
    624.0 * r.powi(-14) - 168.0 * r.powi(-8)
}

/// Force-shifted pair energy and its first derivative. Inside `inner`
/// (0: none) the energy continues linearly, as a tabulated potential that
/// starts at `inner` would: the force is capped and never overflows.
pub fn pair(r: f64, inner: f64) -> (f64, f64) {
    if r >= CUTOFF {
        return (0.0, 0.0);
    }
    let shifted = |r: f64| v_lj(r) - v_lj(CUTOFF) - (r - CUTOFF) * dv_lj(CUTOFF);
    if r < inner {
        let slope = dv_lj(inner) - dv_lj(CUTOFF);
        return (shifted(inner) + (r - inner) * slope, slope);
    }
    (shifted(r), dv_lj(r) - dv_lj(CUTOFF))
}

/// A Langevin thermostat whose target temperature ramps linearly.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Langevin {
    /// Friction γ.
    pub gamma: f64,
    /// Target temperature at t = 0.
    pub t_start: f64,
    /// Target temperature from `ramp` on.
    pub t_end: f64,
    /// Duration of the ramp.
    pub ramp: f64,
}

/// A particle system.
#[derive(Debug, Clone)]
pub struct Particles {
    /// Positions.
    pub x: Vec<[f64; 2]>,
    /// Velocities.
    pub v: Vec<[f64; 2]>,
    f: Vec<[f64; 2]>,
    /// Side of the periodic box (None: free cluster).
    pub box_len: Option<f64>,
    /// Potential energy.
    pub pe: f64,
    /// Time.
    pub t: f64,
    /// Steps taken.
    pub step: u64,
    /// Step.
    pub dt: f64,
    /// Thermostat (None: NVE).
    pub thermostat: Option<Langevin>,
    /// Work done by the thermostat so far.
    pub thermo_work: f64,
    /// Largest move in one step before the run stops.
    pub max_move: f64,
    /// Radius inside which the pair energy continues linearly (0: none).
    pub inner: f64,
    rng: Rng,
    /// The stop message once stopped.
    pub stop: Option<String>,
}

impl Particles {
    /// Particles at positions with velocities drawn at temperature `temp`
    /// (momentum removed, rescaled to exactly `temp`).
    pub fn new(x: Vec<[f64; 2]>, temp: f64, dt: f64, seed: u64) -> Particles {
        let mut rng = Rng::new(seed);
        let n = x.len();
        let mut v: Vec<[f64; 2]> = (0..n).map(|_| [rng.normal(), rng.normal()]).collect();
        let mut mean = [0.0; 2];
        for w in &v {
            mean[0] += w[0] / n as f64;
            mean[1] += w[1] / n as f64;
        }
        for w in &mut v {
            w[0] -= mean[0];
            w[1] -= mean[1];
        }
        let mut p = Particles {
            x,
            v,
            f: vec![[0.0; 2]; n],
            box_len: None,
            pe: 0.0,
            t: 0.0,
            step: 0,
            dt,
            thermostat: None,
            thermo_work: 0.0,
            max_move: 1.0,
            inner: 0.0,
            rng,
            stop: None,
        };
        let now = p.temperature();
        if now > 0.0 {
            let s = (temp / now).sqrt();
            p.v.iter_mut().for_each(|w| {
                w[0] *= s;
                w[1] *= s;
            });
        }
        p.forces();
        p
    }

    /// Cap the pair force inside `inner` (see [`pair`]).
    pub fn with_inner(mut self, inner: f64) -> Particles {
        self.inner = inner;
        self.forces();
        self
    }

    /// Put the particles in a periodic box of side `len`.
    pub fn in_box(mut self, len: f64) -> Particles {
        self.box_len = Some(len);
        self.forces();
        self
    }

    /// Add a velocity to particles `from..to`.
    pub fn push(&mut self, from: usize, to: usize, dv: [f64; 2]) {
        for w in &mut self.v[from..to] {
            w[0] += dv[0];
            w[1] += dv[1];
        }
    }

    fn sep(&self, i: usize, j: usize) -> [f64; 2] {
        let mut d = [self.x[i][0] - self.x[j][0], self.x[i][1] - self.x[j][1]];
        if let Some(l) = self.box_len {
            for c in &mut d {
                *c -= l * (*c / l).round();
            }
        }
        d
    }

    fn forces(&mut self) {
        let n = self.x.len();
        self.f.iter_mut().for_each(|f| *f = [0.0; 2]);
        self.pe = 0.0;
        for i in 0..n {
            for j in i + 1..n {
                let d = self.sep(i, j);
                let r = (d[0] * d[0] + d[1] * d[1]).sqrt();
                let (u, du) = pair(r, self.inner);
                self.pe += u;
                for c in 0..2 {
                    let fc = -du * d[c] / r;
                    self.f[i][c] += fc;
                    self.f[j][c] -= fc;
                }
            }
        }
    }

    /// Kinetic energy.
    pub fn kinetic(&self) -> f64 {
        0.5 * self
            .v
            .iter()
            .map(|w| w[0] * w[0] + w[1] * w[1])
            .sum::<f64>()
    }

    /// Temperature 2·KE / (2N − 2) (k_B = 1, momentum conserved).
    pub fn temperature(&self) -> f64 {
        2.0 * self.kinetic() / (2.0 * self.x.len() as f64 - 2.0)
    }

    /// One step: velocity Verlet, or BAOAB with the thermostat.
    pub fn step(&mut self) {
        if self.stop.is_some() {
            return;
        }
        let dt = self.dt;
        let old = self.x.clone();
        let kick = |p: &mut Particles, h: f64| {
            for (w, f) in p.v.iter_mut().zip(&p.f) {
                w[0] += h * f[0];
                w[1] += h * f[1];
            }
        };
        let drift = |p: &mut Particles, h: f64| {
            for (x, w) in p.x.iter_mut().zip(&p.v) {
                x[0] += h * w[0];
                x[1] += h * w[1];
            }
        };
        kick(self, 0.5 * dt);
        match self.thermostat {
            None => drift(self, dt),
            Some(th) => {
                drift(self, 0.5 * dt);
                let frac = (self.t / th.ramp).clamp(0.0, 1.0);
                let target = th.t_start + (th.t_end - th.t_start) * frac;
                let c1 = (-th.gamma * dt).exp();
                let c2 = (1.0 - c1 * c1).sqrt() * target.sqrt();
                let before = self.kinetic();
                for k in 0..self.v.len() {
                    for c in 0..2 {
                        let z = self.rng.normal();
                        self.v[k][c] = c1 * self.v[k][c] + c2 * z;
                    }
                }
                self.thermo_work += self.kinetic() - before;
                drift(self, 0.5 * dt);
            }
        }
        self.forces();
        kick(self, 0.5 * dt);
        self.t += dt;
        self.step += 1;
        let mut worst = 0.0f64;
        for (a, b) in self.x.iter().zip(&old) {
            let m = ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt();
            worst = worst.max(if m.is_nan() { f64::INFINITY } else { m });
        }
        if worst > self.max_move {
            self.stop = Some(format!(
                "ERROR: particle moved {worst:.3e} in one step (limit {}) at step {}: lost particle, run stopped",
                self.max_move, self.step
            ));
        }
    }

    /// Whether Δt²·λ_max(H) > 4: velocity Verlet past its limit here. A
    /// block Gershgorin bound (λ_max ≤ max_i 2·Σ_j max(|a_ij|, |b_ij|), the
    /// pair block being a·êêᵀ + b·(I − êêᵀ)) decides most rows without an
    /// eigenvalue solve.
    pub fn past_limit(&self) -> bool {
        let n = self.x.len();
        let mut blocks = Vec::new();
        let mut gersh = vec![0.0f64; n];
        for i in 0..n {
            for j in i + 1..n {
                let d = self.sep(i, j);
                let r = (d[0] * d[0] + d[1] * d[1]).sqrt();
                if r >= CUTOFF {
                    continue;
                }
                let a = if r < self.inner { 0.0 } else { d2v_lj(r) };
                let b = pair(r, self.inner).1 / r;
                // Block Gershgorin: the pair block has eigenvalues a and b.
                let g = 2.0 * a.abs().max(b.abs());
                gersh[i] += g;
                gersh[j] += g;
                blocks.push((i, j, [d[0] / r, d[1] / r], a, b));
            }
        }
        let bound = gersh.iter().cloned().fold(0.0, f64::max);
        let dt2 = self.dt * self.dt;
        if !bound.is_finite() || gersh.iter().any(|g| g.is_nan()) {
            return true;
        }
        if bound * dt2 <= 4.0 {
            return false;
        }
        let mut h = DMatrix::<f64>::zeros(2 * n, 2 * n);
        for (i, j, e, a, b) in blocks {
            for p in 0..2 {
                for q in 0..2 {
                    let id = if p == q { 1.0 } else { 0.0 };
                    let v = b * id + (a - b) * e[p] * e[q];
                    h[(2 * i + p, 2 * i + q)] += v;
                    h[(2 * j + p, 2 * j + q)] += v;
                    h[(2 * i + p, 2 * j + q)] -= v;
                    h[(2 * j + p, 2 * i + q)] -= v;
                }
            }
        }
        let top = h
            .symmetric_eigenvalues()
            .iter()
            .cloned()
            .fold(0.0, f64::max);
        top * dt2 > 4.0
    }
}

/// A quantity a particle run writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pq {
    /// Step counter.
    Step,
    /// Time.
    Time,
    /// Temperature.
    Temp,
    /// Kinetic energy.
    Kinetic,
    /// Potential energy.
    Potential,
    /// The pair part of the potential (all of it here), written beside it.
    Pair,
    /// Kinetic + potential.
    Total,
}

impl Pq {
    fn role(self) -> Role {
        match self {
            Pq::Step => Role::Step,
            Pq::Time => Role::Time,
            Pq::Temp | Pq::Pair => Role::Other,
            Pq::Kinetic => Role::Kinetic,
            Pq::Potential => Role::Internal,
            Pq::Total => Role::Total,
        }
    }

    fn value(self, p: &Particles) -> f64 {
        match self {
            Pq::Step => p.step as f64,
            Pq::Time => p.t,
            Pq::Temp => p.temperature(),
            Pq::Kinetic => p.kinetic(),
            Pq::Potential | Pq::Pair => p.pe,
            Pq::Total => p.kinetic() + p.pe,
        }
    }
}

/// Run particles for `steps` steps, a row every `stride`, into a trace with
/// these columns (text lines already in `trace` stay before the header).
/// The limit is checked at rows until it first fires.
pub fn record(
    p: &mut Particles,
    cols: &[(&str, Pq)],
    stride: u64,
    steps: u64,
    mut trace: Trace,
) -> Trace {
    trace.columns = cols
        .iter()
        .map(|(n, q)| Column {
            name: (*n).to_string(),
            role: q.role(),
        })
        .collect();
    trace.thermostat = p.thermostat.is_some();
    trace.header();
    let mut fired = false;
    let mut tail: Option<usize> = None;
    loop {
        if p.step.is_multiple_of(stride) {
            let values: Vec<f64> = cols.iter().map(|c| c.1.value(p)).collect();
            let bad = values.iter().any(|&v| overflowed(v));
            let past = !fired && p.past_limit();
            fired |= past;
            trace.row(Row {
                values,
                past_limit: past,
                dt: p.dt,
                thermostat_work: p.thermo_work,
            });
            if bad && tail.is_none() {
                tail = Some(2);
            }
            match tail {
                Some(0) => break,
                Some(k) => tail = Some(k - 1),
                None => {}
            }
            if p.step >= steps {
                break;
            }
        }
        p.step();
        if let Some(m) = &p.stop {
            trace.stop(m.clone());
            break;
        }
    }
    trace
}

/// A triangular lattice of `nx` × `ny` particles at spacing `a`, centred on
/// (cx, cy).
pub fn lattice(nx: usize, ny: usize, a: f64, cx: f64, cy: f64) -> Vec<[f64; 2]> {
    let mut x = Vec::with_capacity(nx * ny);
    let h = a * 3f64.sqrt() / 2.0;
    for j in 0..ny {
        for i in 0..nx {
            let off = if j % 2 == 1 { 0.5 * a } else { 0.0 };
            x.push([i as f64 * a + off, j as f64 * h]);
        }
    }
    let n = x.len() as f64;
    let mx = x.iter().map(|p| p[0]).sum::<f64>() / n;
    let my = x.iter().map(|p| p[1]).sum::<f64>() / n;
    x.iter_mut().for_each(|p| {
        p[0] += cx - mx;
        p[1] += cy - my;
    });
    x
}

/// A square grid of n × n particles at spacing `a`, filling a periodic box
/// of side n·a.
pub fn grid(n: usize, a: f64) -> Vec<[f64; 2]> {
    let mut x = Vec::with_capacity(n * n);
    for j in 0..n {
        for i in 0..n {
            x.push([(i as f64 + 0.5) * a, (j as f64 + 0.5) * a]);
        }
    }
    x
}
