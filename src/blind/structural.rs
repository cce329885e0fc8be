//! Second-order time integrators on a [`Chain`]: central difference (fixed
//! step or the element Courant step) and the implicit Newmark β–γ / HHT-α
//! family with Newton iterations on the tangent and an optional step
//! controller. Each checks, step by step, the spectral radius of its own
//! one-step map linearised about the current state ([`super::stab`]).

use nalgebra::DVector;

use super::chain::{Books, Chain, Eval, Ledger};
use super::sim::{Snap, Stepper};
use super::stab::{self, Cache, LIMIT_TOL};

fn accel(chain: &Chain, ev: &[Eval], t: f64, a: &mut [f64]) {
    let n = chain.n();
    let (mut r, mut ext, mut grav) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
    chain.internal(ev, &mut r);
    chain.loads_at(t, &mut ext, &mut grav);
    for j in 0..n {
        a[j] = (ext[j] + grav[j] - r[j]) / chain.mass[j];
    }
}

/// The state (u, v) with its books and element forces; time and step
/// counters left for the caller.
fn snap_of(chain: &Chain, ledger: &Ledger, u: &[f64], v: &[f64], ev: &[Eval]) -> Snap {
    Snap {
        u: u.to_vec(),
        v: v.to_vec(),
        books: ledger.books(chain, u, v, ev),
        forces: ev.iter().map(|e| e.f).collect(),
        ..Snap::default()
    }
}

/// Explicit central difference; damping forces from v(n−½).
#[derive(Debug, Clone)]
pub struct Cd {
    chain: Chain,
    u: Vec<f64>,
    vh: Vec<f64>,
    v: Vec<f64>,
    a: Vec<f64>,
    p: Vec<f64>,
    ev: Vec<Eval>,
    t: f64,
    n: u64,
    dt: f64,
    dt_prev: f64,
    /// Safety factor on the element Courant step (None: fixed step).
    courant: Option<f64>,
    /// Stop with a message once the step falls below this.
    dt_min: Option<f64>,
    /// Stop with a message once kinetic + stored energy passes this
    /// multiple of the external work done so far.
    energy_stop: Option<f64>,
    ledger: Ledger,
    cache: Cache,
    flag: bool,
    stop: Option<String>,
}

impl Cd {
    /// Start at rest state (u0, v0) at t = 0 with a fixed step.
    pub fn new(chain: Chain, u0: Vec<f64>, v0: Vec<f64>, dt: f64) -> Cd {
        Cd::resume(chain, u0, v0, 0.0, 0, Books::default(), dt)
    }

    /// Resume from a checkpoint (state, time, step count, books).
    pub fn resume(
        chain: Chain,
        u0: Vec<f64>,
        v0: Vec<f64>,
        t: f64,
        n: u64,
        books: Books,
        dt: f64,
    ) -> Cd {
        let m = chain.n();
        let p = vec![0.0; chain.elems.len()];
        let mut ev = vec![Eval::default(); chain.elems.len()];
        chain.evaluate(&u0, &v0, &p, &mut ev);
        let mut a = vec![0.0; m];
        accel(&chain, &ev, t, &mut a);
        let vh: Vec<f64> = v0.iter().zip(&a).map(|(v, a)| v - 0.5 * dt * a).collect();
        let mut ledger = Ledger::new(&chain, &u0, &ev, t);
        ledger.carry(&books);
        Cd {
            chain,
            u: u0,
            vh,
            v: v0,
            a,
            p,
            ev,
            t,
            n,
            dt,
            dt_prev: dt,
            courant: None,
            dt_min: None,
            energy_stop: None,
            ledger,
            cache: Cache::default(),
            flag: false,
            stop: None,
        }
    }

    /// Use safety × the element Courant step; stop below `dt_min`.
    pub fn courant(mut self, safety: f64, dt_min: f64) -> Cd {
        self.courant = Some(safety);
        self.dt_min = Some(dt_min);
        if let Some(dt) = self.chain.courant_step(&self.u) {
            self.dt = safety * dt;
            self.dt_prev = self.dt;
            for j in 0..self.u.len() {
                self.vh[j] = self.v[j] - 0.5 * self.dt * self.a[j];
            }
        }
        self
    }

    /// Stop once kinetic + stored energy exceeds `ratio` × the external
    /// work done so far (a solver's energy-ratio check).
    pub fn energy_stop(mut self, ratio: f64) -> Cd {
        self.energy_stop = Some(ratio);
        self
    }

    /// Change the fixed step from the next step on.
    pub fn set_dt(&mut self, dt: f64) {
        self.dt = dt;
    }

    /// The books at the current state.
    pub fn books(&self) -> Books {
        self.ledger.books(&self.chain, &self.u, &self.v, &self.ev)
    }

    fn check(&mut self, dt: f64) {
        let (k, c) = self.chain.tangent(&self.ev);
        let (w, wc) = stab::bounds(&self.chain.mass, &k, &c);
        if w * dt <= 1.5 && wc * dt <= 0.3 {
            return;
        }
        let mass = &self.chain.mass;
        let r = self
            .cache
            .radius(&k, &c, dt, || stab::cd_radius(mass, &k, &c, dt));
        if r > 1.0 + LIMIT_TOL {
            self.flag = true;
        }
    }
}

impl Stepper for Cd {
    fn step(&mut self) {
        if self.stop.is_some() {
            return;
        }
        let dt = match self.courant {
            Some(s) => self.chain.courant_step(&self.u).map_or(self.dt, |d| s * d),
            None => self.dt,
        };
        if let Some(min) = self.dt_min
            && (dt < min || dt.is_nan())
        {
            self.stop = Some(format!(
                "*** stopping: time step {dt:.3e} below the minimum {min:.3e} at t = {:.6e}",
                self.t
            ));
            return;
        }
        self.check(dt);
        let n = self.u.len();
        let h = 0.5 * (self.dt_prev + dt);
        for j in 0..n {
            self.vh[j] += h * self.a[j];
            self.u[j] += dt * self.vh[j];
        }
        self.t += dt;
        self.chain
            .evaluate(&self.u, &self.vh, &self.p, &mut self.ev);
        for (p, e) in self.p.iter_mut().zip(&self.ev) {
            *p = e.p;
        }
        accel(&self.chain, &self.ev, self.t, &mut self.a);
        for j in 0..n {
            self.v[j] = self.vh[j] + 0.5 * dt * self.a[j];
        }
        self.ledger.advance(&self.chain, &self.u, &self.ev, self.t);
        self.dt_prev = dt;
        self.dt = dt;
        self.n += 1;
        if let Some(ratio) = self.energy_stop {
            let b = self.books();
            let e = b.kinetic + b.strain + b.contact;
            if b.external > 0.0 && e > ratio * b.external {
                self.stop = Some(format!(
                    "ERROR: energy ratio {:.3} exceeds {ratio} at step {}; run terminated",
                    e / b.external,
                    self.n
                ));
            }
        }
    }

    fn snap(&self) -> Snap {
        let mut s = snap_of(&self.chain, &self.ledger, &self.u, &self.v, &self.ev);
        (s.t, s.step, s.dt) = (self.t, self.n, self.dt);
        s
    }

    fn take_flag(&mut self) -> bool {
        std::mem::take(&mut self.flag)
    }

    fn stopped(&self) -> Option<String> {
        self.stop.clone()
    }
}

/// Largest accepted local error estimate of a controlled step, relative to
/// its displacement increment.
pub const ERROR_TOL: f64 = 2e-3;

/// Newmark β–γ or HHT-α with Newton iterations; optionally a step controller
/// that cuts the step on a failed Newton solve or a large local error
/// estimate, and grows it after easy steps. The estimate is
/// e = |β − ⅙|·Δt²·(a(n+1) − a(n)) against the displacement increment
/// (Zienkiewicz & Xie, Earthquake Eng. Struct. Dyn. 20:871–887, 1991, from
/// memory).
#[derive(Debug, Clone)]
pub struct Implicit {
    chain: Chain,
    beta: f64,
    gamma: f64,
    alpha: f64,
    u: Vec<f64>,
    v: Vec<f64>,
    a: Vec<f64>,
    p: Vec<f64>,
    ev: Vec<Eval>,
    /// Internal minus applied force at the current state (HHT's old term).
    unbalanced: Vec<f64>,
    t: f64,
    n: u64,
    dt: f64,
    dt_max: f64,
    control: Option<f64>,
    easy: u32,
    iters: u32,
    last_dt: f64,
    ledger: Ledger,
    cache: Cache,
    flag: bool,
    stop: Option<String>,
}

impl Implicit {
    /// Newmark β–γ from (u0, v0) at t = 0.
    pub fn newmark(
        chain: Chain,
        u0: Vec<f64>,
        v0: Vec<f64>,
        dt: f64,
        beta: f64,
        gamma: f64,
    ) -> Self {
        let m = chain.n();
        let p = vec![0.0; chain.elems.len()];
        let mut ev = vec![Eval::default(); chain.elems.len()];
        chain.evaluate(&u0, &v0, &p, &mut ev);
        let mut a = vec![0.0; m];
        accel(&chain, &ev, 0.0, &mut a);
        let unbalanced: Vec<f64> = (0..m).map(|j| -chain.mass[j] * a[j]).collect();
        let ledger = Ledger::new(&chain, &u0, &ev, 0.0);
        Implicit {
            chain,
            beta,
            gamma,
            alpha: 0.0,
            u: u0,
            v: v0,
            a,
            p,
            ev,
            unbalanced,
            t: 0.0,
            n: 0,
            dt,
            dt_max: dt,
            control: None,
            easy: 0,
            iters: 0,
            last_dt: dt,
            ledger,
            cache: Cache::default(),
            flag: false,
            stop: None,
        }
    }

    /// HHT-α (α ∈ [−⅓, 0]) with β = (1−α)²/4, γ = (1−2α)/2.
    pub fn hht(chain: Chain, u0: Vec<f64>, v0: Vec<f64>, dt: f64, alpha: f64) -> Self {
        let beta = (1.0 - alpha) * (1.0 - alpha) / 4.0;
        let gamma = (1.0 - 2.0 * alpha) / 2.0;
        let mut s = Implicit::newmark(chain, u0, v0, dt, beta, gamma);
        s.alpha = alpha;
        s
    }

    /// Cut the step by 4 when Newton fails or the local error estimate
    /// passes 2e-3 of the increment; double it after two easy steps (up to
    /// the first step); stop below `dt_min`.
    pub fn controlled(mut self, dt_min: f64) -> Self {
        self.control = Some(dt_min);
        self
    }

    /// Zienkiewicz–Xie error estimate of a step, relative to its increment.
    fn error(&self, dt: f64, u1: &[f64], a1: &[f64]) -> f64 {
        let mut e = 0.0f64;
        let mut du = 1e-8f64;
        for j in 0..u1.len() {
            e = e.max((self.beta - 1.0 / 6.0).abs() * dt * dt * (a1[j] - self.a[j]).abs());
            du = du.max((u1[j] - self.u[j]).abs());
        }
        e / du
    }

    /// Change the step (and the controller's largest step).
    pub fn set_dt(&mut self, dt: f64) {
        self.dt = dt;
        self.dt_max = dt;
        self.last_dt = dt;
    }

    /// One Newton solve for the step dt: (u, v, a, element responses,
    /// iterations), or None when it did not converge.
    fn solve(
        &self,
        dt: f64,
        max_iter: u32,
    ) -> (Vec<f64>, Vec<f64>, Vec<f64>, Vec<Eval>, u32, bool) {
        let c = &self.chain;
        let n = c.n();
        let (b, g, al) = (self.beta, self.gamma, self.alpha);
        let ut: Vec<f64> = (0..n)
            .map(|j| self.u[j] + dt * self.v[j] + dt * dt * (0.5 - b) * self.a[j])
            .collect();
        let vt: Vec<f64> = (0..n)
            .map(|j| self.v[j] + dt * (1.0 - g) * self.a[j])
            .collect();
        let mut u1: Vec<f64> = (0..n).map(|j| ut[j] + b * dt * dt * self.a[j]).collect();
        let mut ev = vec![Eval::default(); c.elems.len()];
        let (mut r, mut ext, mut grav) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
        let kin = |u1: &[f64]| -> (Vec<f64>, Vec<f64>) {
            let a1: Vec<f64> = (0..n).map(|j| (u1[j] - ut[j]) / (b * dt * dt)).collect();
            let v1: Vec<f64> = (0..n).map(|j| vt[j] + g * dt * a1[j]).collect();
            (a1, v1)
        };
        let mut converged = false;
        let mut it = 0;
        while it < max_iter {
            it += 1;
            let (a1, v1) = kin(&u1);
            c.evaluate(&u1, &v1, &self.p, &mut ev);
            c.internal(&ev, &mut r);
            c.loads_at(self.t + dt, &mut ext, &mut grav);
            let (kt, ct) = c.tangent(&ev);
            let mut jac = &kt * (1.0 + al) + &ct * ((1.0 + al) * g / (b * dt));
            let mut res = DVector::zeros(n);
            for j in 0..n {
                jac[(j, j)] += c.mass[j] / (b * dt * dt);
                res[j] = -(c.mass[j] * a1[j] + (1.0 + al) * (r[j] - ext[j] - grav[j])
                    - al * self.unbalanced[j]);
            }
            let Some(du) = jac.lu().solve(&res) else {
                break;
            };
            let mut big = 0.0f64;
            let mut scale = 1e-9f64;
            for j in 0..n {
                u1[j] += du[j];
                big = big.max(du[j].abs());
                scale = scale.max(u1[j].abs());
            }
            if !big.is_finite() {
                break;
            }
            if big <= 1e-10 * scale {
                converged = true;
                break;
            }
        }
        let (a1, v1) = kin(&u1);
        c.evaluate(&u1, &v1, &self.p, &mut ev);
        (u1, v1, a1, ev, it, converged)
    }

    fn check(&mut self, dt: f64) {
        if self.beta >= 0.25 && self.gamma >= 0.5 {
            return;
        }
        let (k, c) = self.chain.tangent(&self.ev);
        let (w, _) = stab::bounds(&self.chain.mass, &k, &c);
        if w * dt <= 3.3 {
            return;
        }
        let (mass, b, g) = (&self.chain.mass, self.beta, self.gamma);
        let r = self
            .cache
            .radius(&k, &c, dt, || stab::newmark_radius(mass, &k, &c, dt, b, g));
        if r > 1.0 + LIMIT_TOL {
            self.flag = true;
        }
    }
}

impl Stepper for Implicit {
    fn step(&mut self) {
        if self.stop.is_some() {
            return;
        }
        self.check(self.dt);
        let result = loop {
            let max_iter = if self.control.is_some() { 6 } else { 40 };
            let (u1, v1, a1, ev, it, converged) = self.solve(self.dt, max_iter);
            let err = self.error(self.dt, &u1, &a1);
            let ok = converged && err <= ERROR_TOL;
            match self.control {
                Some(dt_min) if !ok => {
                    self.dt *= 0.25;
                    self.easy = 0;
                    if self.dt < dt_min {
                        self.stop = Some(format!(
                            "*** step {:.3e} below minimum {dt_min:.3e}: no convergence at t = {:.6e}",
                            self.dt, self.t
                        ));
                        return;
                    }
                }
                _ => break (u1, v1, a1, ev, it, err),
            }
        };
        let (u1, v1, a1, ev, it, err) = result;
        let dt = self.dt;
        self.u = u1;
        self.v = v1;
        self.a = a1;
        self.ev = ev;
        for (p, e) in self.p.iter_mut().zip(&self.ev) {
            *p = e.p;
        }
        self.t += dt;
        self.n += 1;
        self.iters = it;
        self.last_dt = dt;
        let n = self.chain.n();
        let (mut r, mut ext, mut grav) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
        self.chain.internal(&self.ev, &mut r);
        self.chain.loads_at(self.t, &mut ext, &mut grav);
        for j in 0..n {
            self.unbalanced[j] = r[j] - ext[j] - grav[j];
        }
        self.ledger.advance(&self.chain, &self.u, &self.ev, self.t);
        if self.control.is_some() {
            if it <= 3 && err <= ERROR_TOL / 4.0 {
                self.easy += 1;
                if self.easy >= 2 {
                    self.dt = (self.dt * 2.0).min(self.dt_max);
                    self.easy = 0;
                }
            } else {
                self.easy = 0;
            }
        }
    }

    fn snap(&self) -> Snap {
        let mut s = snap_of(&self.chain, &self.ledger, &self.u, &self.v, &self.ev);
        (s.t, s.step, s.dt, s.iters) = (self.t, self.n, self.last_dt, self.iters);
        s
    }

    fn take_flag(&mut self) -> bool {
        std::mem::take(&mut self.flag)
    }

    fn stopped(&self) -> Option<String> {
        self.stop.clone()
    }
}
