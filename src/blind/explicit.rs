//! First-order time integrators on a [`Chain`] written as ẏ = f(t, y),
//! y = (u, v): forward Euler, classical RK4, backward Euler (linear chains),
//! and the Bogacki–Shampine 3(2) embedded pair with error control for
//! adaptive runs (Bogacki & Shampine, Appl. Math. Lett. 2:321–325, 1989).
//! Forward Euler and RK4 check the spectral radius of R(Δt·L) on the
//! tangent at every step ([`super::stab::explicit_radius`]).

use nalgebra::{DMatrix, DVector};

use super::chain::{Chain, Eval, Ledger};
use super::sim::{Snap, Stepper};
use super::stab::{self, Cache, Explicit, LIMIT_TOL};

/// Which first-order method.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// Forward Euler, fixed step.
    ForwardEuler,
    /// Classical RK4, fixed step.
    Rk4,
    /// Backward Euler, fixed step (linear chains only).
    BackwardEuler,
    /// Bogacki–Shampine 3(2) with error control.
    Adaptive {
        /// Relative tolerance.
        rtol: f64,
        /// Absolute tolerance on displacements.
        atol_u: f64,
        /// Absolute tolerance on velocities.
        atol_v: f64,
        /// Largest step.
        dt_max: f64,
    },
}

/// Scratch for derivative evaluations.
#[derive(Debug, Clone)]
struct Work {
    ev: Vec<Eval>,
    r: Vec<f64>,
    ext: Vec<f64>,
    grav: Vec<f64>,
}

fn deriv(c: &Chain, p: &[f64], t: f64, y: &[f64], out: &mut [f64], w: &mut Work) {
    let n = c.n();
    let (u, v) = y.split_at(n);
    c.evaluate(u, v, p, &mut w.ev);
    rates(c, t, v, out, w);
}

/// The derivative from element responses already in `w.ev`.
fn rates(c: &Chain, t: f64, v: &[f64], out: &mut [f64], w: &mut Work) {
    let n = c.n();
    c.internal(&w.ev, &mut w.r);
    c.loads_at(t, &mut w.ext, &mut w.grav);
    for j in 0..n {
        out[j] = v[j];
        out[n + j] = (w.ext[j] + w.grav[j] - w.r[j]) / c.mass[j];
    }
}

/// A first-order run on a chain (elastic laws; plastic states stay at 0).
#[derive(Debug, Clone)]
pub struct FirstOrder {
    chain: Chain,
    method: Method,
    y: Vec<f64>,
    t: f64,
    n: u64,
    dt: f64,
    last_dt: f64,
    p: Vec<f64>,
    k: [Vec<f64>; 5],
    w: Work,
    ledger: Ledger,
    be: Option<(f64, DMatrix<f64>)>,
    linear: bool,
    cache: Cache,
    flag: bool,
    stop: Option<String>,
}

impl FirstOrder {
    /// Start from (u0, v0) at t = 0.
    pub fn new(chain: Chain, method: Method, u0: Vec<f64>, v0: Vec<f64>, dt: f64) -> FirstOrder {
        let n = chain.n();
        let ne = chain.elems.len();
        let p = vec![0.0; ne];
        let mut ev = vec![Eval::default(); ne];
        chain.evaluate(&u0, &v0, &p, &mut ev);
        let ledger = Ledger::new(&chain, &u0, &ev, 0.0);
        let mut y = u0;
        y.extend_from_slice(&v0);
        let linear = chain.is_linear();
        FirstOrder {
            method,
            y,
            t: 0.0,
            n: 0,
            dt,
            last_dt: dt,
            p,
            k: std::array::from_fn(|_| vec![0.0; 2 * n]),
            w: Work {
                ev,
                r: vec![0.0; n],
                ext: vec![0.0; n],
                grav: vec![0.0; n],
            },
            ledger,
            be: None,
            linear,
            cache: Cache::default(),
            flag: false,
            stop: None,
            chain,
        }
    }

    fn check(&mut self, scheme: Explicit, dt: f64) {
        let n = self.chain.n();
        if self.linear && self.cache_hit(dt) {
            return;
        }
        let (u, v) = self.y.split_at(n);
        let mut ev = vec![Eval::default(); self.chain.elems.len()];
        self.chain.evaluate(u, v, &self.p, &mut ev);
        let (k, c) = self.chain.tangent(&ev);
        if scheme == Explicit::Rk4 {
            let (w, wc) = stab::bounds(&self.chain.mass, &k, &c);
            if (w + wc) * dt <= 2.5 {
                return;
            }
        }
        let mass = &self.chain.mass;
        let r = self.cache.radius(&k, &c, dt, || {
            stab::explicit_radius(scheme, mass, &k, &c, dt)
        });
        if r > 1.0 + LIMIT_TOL {
            self.flag = true;
        }
    }

    /// For a linear chain, the flag from the cached radius when the step has
    /// not changed; false when it must be computed.
    fn cache_hit(&mut self, dt: f64) -> bool {
        if let Some(r) = self.cache_last(dt) {
            if r > 1.0 + LIMIT_TOL {
                self.flag = true;
            }
            return true;
        }
        false
    }

    fn cache_last(&self, dt: f64) -> Option<f64> {
        self.cache.last_for(dt)
    }

    fn fixed(&mut self, dt: f64) {
        let n2 = self.y.len();
        let (c, p, w, t) = (&self.chain, &self.p, &mut self.w, self.t);
        match self.method {
            Method::ForwardEuler => {
                let [k1, ..] = &mut self.k;
                rates(c, t, &self.y[c.n()..], k1, w);
                for i in 0..n2 {
                    self.y[i] += dt * k1[i];
                }
            }
            Method::Rk4 => {
                let [k1, k2, k3, k4, tmp] = &mut self.k;
                rates(c, t, &self.y[c.n()..], k1, w);
                for i in 0..n2 {
                    tmp[i] = self.y[i] + 0.5 * dt * k1[i];
                }
                deriv(c, p, t + 0.5 * dt, tmp, k2, w);
                for i in 0..n2 {
                    tmp[i] = self.y[i] + 0.5 * dt * k2[i];
                }
                deriv(c, p, t + 0.5 * dt, tmp, k3, w);
                for i in 0..n2 {
                    tmp[i] = self.y[i] + dt * k3[i];
                }
                deriv(c, p, t + dt, tmp, k4, w);
                for i in 0..n2 {
                    self.y[i] += dt / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
                }
            }
            Method::BackwardEuler => {
                let inv = match &self.be {
                    Some((h, m)) if *h == dt => m.clone(),
                    _ => {
                        let m = be_inverse(c, dt);
                        self.be = Some((dt, m.clone()));
                        m
                    }
                };
                let n = c.n();
                c.loads_at(t + dt, &mut w.ext, &mut w.grav);
                let mut rhs = DVector::from_column_slice(&self.y);
                for j in 0..n {
                    rhs[n + j] += dt * (w.ext[j] + w.grav[j]) / c.mass[j];
                }
                let y1 = inv * rhs;
                self.y.copy_from_slice(y1.as_slice());
            }
            Method::Adaptive { .. } => {}
        }
    }

    /// One accepted Bogacki–Shampine step; returns the step taken.
    fn adaptive(&mut self, rtol: f64, atol_u: f64, atol_v: f64, dt_max: f64) -> f64 {
        let n = self.chain.n();
        let n2 = 2 * n;
        let (c, p, t) = (&self.chain, &self.p, self.t);
        let [k1, k2, k3, k4, tmp] = &mut self.k;
        let mut h = self.dt;
        rates(c, t, &self.y[n..], k1, &mut self.w);
        loop {
            for i in 0..n2 {
                tmp[i] = self.y[i] + 0.5 * h * k1[i];
            }
            deriv(c, p, t + 0.5 * h, tmp, k2, &mut self.w);
            for i in 0..n2 {
                tmp[i] = self.y[i] + 0.75 * h * k2[i];
            }
            deriv(c, p, t + 0.75 * h, tmp, k3, &mut self.w);
            for i in 0..n2 {
                tmp[i] = self.y[i] + h * (2.0 / 9.0 * k1[i] + k2[i] / 3.0 + 4.0 / 9.0 * k3[i]);
            }
            deriv(c, p, t + h, tmp, k4, &mut self.w);
            let mut err = 0.0f64;
            for i in 0..n2 {
                let e = h * (-5.0 / 72.0 * k1[i] + k2[i] / 12.0 + k3[i] / 9.0 - k4[i] / 8.0);
                let atol = if i < n { atol_u } else { atol_v };
                let sc = atol + rtol * self.y[i].abs().max(tmp[i].abs());
                err = err.max(e.abs() / sc);
            }
            let factor = if err > 0.0 {
                (0.9 * err.powf(-1.0 / 3.0)).clamp(0.2, 5.0)
            } else {
                5.0
            };
            if err <= 1.0 {
                self.y.copy_from_slice(tmp);
                self.dt = (h * factor).min(dt_max);
                return h;
            }
            h *= factor;
        }
    }
}

fn be_inverse(c: &Chain, dt: f64) -> DMatrix<f64> {
    let n = c.n();
    let ev = vec![Eval::default(); c.elems.len()];
    let mut ev0 = ev.clone();
    c.evaluate(&vec![0.0; n], &vec![0.0; n], &vec![0.0; ev.len()], &mut ev0);
    let (k, cm) = c.tangent(&ev0);
    let mut m = DMatrix::identity(2 * n, 2 * n);
    for i in 0..n {
        m[(i, n + i)] -= dt;
        for j in 0..n {
            m[(n + i, j)] += dt * k[(i, j)] / c.mass[i];
            m[(n + i, n + j)] += dt * cm[(i, j)] / c.mass[i];
        }
    }
    m.try_inverse()
        .unwrap_or_else(|| DMatrix::from_element(2 * n, 2 * n, f64::NAN))
}

impl Stepper for FirstOrder {
    fn step(&mut self) {
        let dt = match self.method {
            Method::Adaptive {
                rtol,
                atol_u,
                atol_v,
                dt_max,
            } => self.adaptive(rtol, atol_u, atol_v, dt_max),
            Method::ForwardEuler => {
                self.check(Explicit::ForwardEuler, self.dt);
                self.fixed(self.dt);
                self.dt
            }
            Method::Rk4 => {
                self.check(Explicit::Rk4, self.dt);
                self.fixed(self.dt);
                self.dt
            }
            Method::BackwardEuler => {
                self.fixed(self.dt);
                self.dt
            }
        };
        self.t += dt;
        self.n += 1;
        self.last_dt = dt;
        let n = self.chain.n();
        let (u, v) = self.y.split_at(n);
        self.chain.evaluate(u, v, &self.p, &mut self.w.ev);
        self.ledger.advance(&self.chain, u, &self.w.ev, self.t);
    }

    fn snap(&self) -> Snap {
        let n = self.chain.n();
        Snap {
            t: self.t,
            step: self.n,
            dt: self.last_dt,
            iters: 0,
            u: self.y[..n].to_vec(),
            v: self.y[n..].to_vec(),
            books: self
                .ledger
                .books(&self.chain, &self.y[..n], &self.y[n..], &self.w.ev),
            forces: self.w.ev.iter().map(|e| e.f).collect(),
        }
    }

    fn take_flag(&mut self) -> bool {
        std::mem::take(&mut self.flag)
    }

    fn stopped(&self) -> Option<String> {
        self.stop.clone()
    }
}
