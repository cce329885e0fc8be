//! Time integrators for M a + C v + f_int(u) = F(t) on a lumped-mass [`Model`]:
//! central difference (explicit, damping from the half-step velocity; Belytschko,
//! Liu & Moran, *Nonlinear Finite Elements for Continua and Structures*, 2000,
//! Box 6.1), Newmark β–γ (Newmark, J. Eng. Mech. Div. ASCE 85, 1959) and HHT-α
//! (Hilber, Hughes & Taylor, Earthquake Eng. Struct. Dyn. 5, 1977) with Newton
//! iterations on the tangent, forward and backward Euler and classical RK4 on the
//! first-order form. One call advances one step of any size (fixed or adaptive).

use nalgebra::{DMatrix, DVector};

use super::model::Model;

/// An integration scheme.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scheme {
    /// Central difference (explicit; lumped mass; damping force from v at n−½).
    CentralDifference,
    /// Newmark β–γ (β = ¼, γ = ½ average acceleration; β = ⅙, γ = ½ linear acceleration).
    Newmark { beta: f64, gamma: f64 },
    /// HHT-α with α ∈ [−⅓, 0], β = (1−α)²/4, γ = (1−2α)/2.
    Hht { alpha: f64 },
    /// Forward (explicit) Euler on (u, v).
    ForwardEuler,
    /// Classical fourth-order Runge–Kutta on (u, v).
    Rk4,
    /// Backward (implicit) Euler on (u, v).
    BackwardEuler,
}

impl Scheme {
    /// Average-acceleration Newmark.
    pub const AVERAGE_ACCELERATION: Scheme = Scheme::Newmark {
        beta: 0.25,
        gamma: 0.5,
    };
    /// Linear-acceleration Newmark.
    pub const LINEAR_ACCELERATION: Scheme = Scheme::Newmark {
        beta: 1.0 / 6.0,
        gamma: 0.5,
    };

    /// Plain name for comments in the written history.
    pub fn label(&self) -> String {
        match self {
            Scheme::CentralDifference => "central difference".into(),
            Scheme::Newmark { beta, gamma } => format!("Newmark beta={beta:.4} gamma={gamma:.4}"),
            Scheme::Hht { alpha } => format!("HHT-alpha alpha={alpha}"),
            Scheme::ForwardEuler => "forward Euler".into(),
            Scheme::Rk4 => "RK4".into(),
            Scheme::BackwardEuler => "backward Euler".into(),
        }
    }

    /// Largest stable Ω = ω·dt for an undamped mode (0 when no Ω > 0 is stable,
    /// infinity when every Ω is).
    /// Central difference: 2; Newmark with γ = ½: 1/√(γ/2 − β) when 2β < γ
    /// (Hughes, *The Finite Element Method*, 1987, §9.1); RK4: 2√2 on the
    /// imaginary axis (Hairer & Wanner, *Solving ODEs II*, 1996, §IV.2);
    /// forward Euler: none (|G| = √(1+Ω²)).
    pub fn omega_limit(&self) -> f64 {
        match *self {
            Scheme::CentralDifference => 2.0,
            Scheme::Newmark { beta, gamma } => {
                if 2.0 * beta >= gamma {
                    f64::INFINITY
                } else {
                    1.0 / (gamma / 2.0 - beta).sqrt()
                }
            }
            Scheme::Hht { .. } | Scheme::BackwardEuler => f64::INFINITY,
            Scheme::ForwardEuler => 0.0,
            Scheme::Rk4 => 2.0 * std::f64::consts::SQRT_2,
        }
    }
}

/// State at a step: displacement, velocity, acceleration, time.
#[derive(Debug, Clone, PartialEq)]
pub struct State {
    pub u: DVector<f64>,
    pub v: DVector<f64>,
    pub a: DVector<f64>,
    pub t_s: f64,
    /// Central difference only: velocity at n−½ and the previous step size.
    pub v_half: DVector<f64>,
    pub dt_prev_s: f64,
    /// Newton iterations used by the last implicit step (0 for explicit schemes).
    pub iterations: u32,
}

/// Newton iteration cap and relative residual tolerance of implicit steps.
const NEWTON_MAX_ITER: u32 = 30;
const NEWTON_REL_TOL: f64 = 1e-11;

/// The model with its constant matrices, ready to step.
#[derive(Debug, Clone)]
pub struct Dynamics {
    pub model: Model,
    pub mass: DVector<f64>,
    /// Recorded and unrecorded damping matrices and their sum.
    pub c_rec: DMatrix<f64>,
    pub c_unrec: DMatrix<f64>,
    pub c: DMatrix<f64>,
}

impl Dynamics {
    /// Prepare a model.
    pub fn new(model: Model) -> Self {
        let mass = DVector::from_vec(model.mass_kg.clone());
        let (c_rec, c_unrec) = model.damping();
        let c = &c_rec + &c_unrec;
        Self {
            model,
            mass,
            c_rec,
            c_unrec,
            c,
        }
    }

    fn fint(&self, u: &DVector<f64>) -> DVector<f64> {
        let mut f = DVector::zeros(u.len());
        self.model.internal(u, &mut f);
        f
    }

    fn fext(&self, t_s: f64) -> DVector<f64> {
        let mut f = DVector::zeros(self.mass.len());
        self.model.load(t_s, &mut f);
        f
    }

    /// Acceleration M⁻¹(F(t) − f_int(u) − C v).
    pub fn accel(&self, u: &DVector<f64>, v: &DVector<f64>, t_s: f64) -> DVector<f64> {
        let r = self.fext(t_s) - self.fint(u) - &self.c * v;
        r.component_div(&self.mass)
    }

    /// Initial state at rest or with given displacement and velocity.
    pub fn start(&self, u0: DVector<f64>, v0: DVector<f64>) -> State {
        let a = self.accel(&u0, &v0, 0.0);
        State {
            v_half: v0.clone(),
            u: u0,
            v: v0,
            a,
            t_s: 0.0,
            dt_prev_s: 0.0,
            iterations: 0,
        }
    }

    /// Advance `s` by one step of `dt_s` with `scheme`.
    pub fn step(&self, scheme: Scheme, s: &State, dt_s: f64) -> State {
        let t1 = s.t_s + dt_s;
        match scheme {
            Scheme::CentralDifference => {
                // v_{n+½} = v_{n−½} + ½(Δt_{n−1} + Δt_n)·a_n; u_{n+1} = u_n + Δt_n·v_{n+½};
                // a_{n+1} from the forces at u_{n+1} with damping on v_{n+½};
                // v_{n+1} = v_{n+½} + ½Δt_n·a_{n+1}   (BLM 2000, Box 6.1).
                let vh = &s.v_half + &s.a * (0.5 * (s.dt_prev_s + dt_s));
                let u1 = &s.u + &vh * dt_s;
                let a1 = self.accel(&u1, &vh, t1);
                let v1 = &vh + &a1 * (0.5 * dt_s);
                self.done(u1, v1, a1, t1, vh, dt_s, 0)
            }
            Scheme::Newmark { beta, gamma } => self.newmark(s, dt_s, beta, gamma, 0.0),
            Scheme::Hht { alpha } => {
                let beta = (1.0 - alpha) * (1.0 - alpha) / 4.0;
                let gamma = (1.0 - 2.0 * alpha) / 2.0;
                self.newmark(s, dt_s, beta, gamma, alpha)
            }
            Scheme::ForwardEuler => {
                let u1 = &s.u + &s.v * dt_s;
                let v1 = &s.v + &s.a * dt_s;
                let a1 = self.accel(&u1, &v1, t1);
                self.done(u1, v1.clone(), a1, t1, v1, dt_s, 0)
            }
            Scheme::Rk4 => {
                let h = dt_s;
                let (u, v, t) = (&s.u, &s.v, s.t_s);
                let k1u = v.clone();
                let k1v = s.a.clone();
                let u2 = u + &k1u * (h / 2.0);
                let v2 = v + &k1v * (h / 2.0);
                let k2v = self.accel(&u2, &v2, t + h / 2.0);
                let u3 = u + &v2 * (h / 2.0);
                let v3 = v + &k2v * (h / 2.0);
                let k3v = self.accel(&u3, &v3, t + h / 2.0);
                let u4 = u + &v3 * h;
                let v4 = v + &k3v * h;
                let k4v = self.accel(&u4, &v4, t + h);
                let u1 = u + (k1u + &v2 * 2.0 + &v3 * 2.0 + &v4) * (h / 6.0);
                let v1 = v + (k1v + k2v * 2.0 + k3v * 2.0 + k4v) * (h / 6.0);
                let a1 = self.accel(&u1, &v1, t1);
                self.done(u1, v1.clone(), a1, t1, v1, dt_s, 0)
            }
            Scheme::BackwardEuler => self.backward_euler(s, dt_s),
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn done(
        &self,
        u: DVector<f64>,
        v: DVector<f64>,
        a: DVector<f64>,
        t_s: f64,
        v_half: DVector<f64>,
        dt_s: f64,
        iterations: u32,
    ) -> State {
        State {
            u,
            v,
            a,
            t_s,
            v_half,
            dt_prev_s: dt_s,
            iterations,
        }
    }

    /// Newmark β–γ, or HHT-α when `alpha` ≠ 0, solved for a_{n+1} by Newton:
    /// M a₁ + (1+α)(C v₁ + f(u₁) − F₁) − α(C v₀ + f(u₀) − F₀) = 0 with
    /// u₁ = u₀ + Δt v₀ + Δt²((½−β)a₀ + β a₁), v₁ = v₀ + Δt((1−γ)a₀ + γ a₁)
    /// (Hilber, Hughes & Taylor 1977, eqs. 2–3; α = 0 gives Newmark 1959).
    fn newmark(&self, s: &State, dt: f64, beta: f64, gamma: f64, alpha: f64) -> State {
        let t1 = s.t_s + dt;
        let up = &s.u + &s.v * dt + &s.a * (dt * dt * (0.5 - beta));
        let vp = &s.v + &s.a * (dt * (1.0 - gamma));
        let old = if alpha == 0.0 {
            DVector::zeros(s.u.len())
        } else {
            (&self.c * &s.v + self.fint(&s.u) - self.fext(s.t_s)) * alpha
        };
        let f1 = self.fext(t1);
        let kin = |a1: &DVector<f64>| (&up + a1 * (beta * dt * dt), &vp + a1 * (gamma * dt));
        let (a1, iterations) = self.newton(
            s.a.clone(),
            |a1| {
                let (u1, v1) = kin(a1);
                let ma = a1.component_mul(&self.mass);
                (
                    ma,
                    (&self.c * &v1 - &f1) * (1.0 + alpha) - &old,
                    u1,
                    1.0 + alpha,
                )
            },
            |a1| {
                let (u1, _) = kin(a1);
                DMatrix::from_diagonal(&self.mass)
                    + (&self.c * (gamma * dt) + self.model.tangent(&u1) * (beta * dt * dt))
                        * (1.0 + alpha)
            },
            &f1,
        );
        let (u1, v1) = kin(&a1);
        self.done(u1, v1.clone(), a1, t1, v1, dt, iterations)
    }

    /// Backward Euler: v₁ = v₀ + Δt a₁, u₁ = u₀ + Δt v₁, with M a₁ + C v₁ + f(u₁) = F₁,
    /// solved for v₁ by Newton.
    fn backward_euler(&self, s: &State, dt: f64) -> State {
        let t1 = s.t_s + dt;
        let f1 = self.fext(t1);
        let (v1, iterations) = self.newton(
            s.v.clone(),
            |v1| {
                let ma = ((v1 - &s.v) / dt).component_mul(&self.mass);
                (ma, &self.c * v1 - &f1, &s.u + v1 * dt, 1.0)
            },
            |v1| {
                DMatrix::from_diagonal(&(&self.mass / dt))
                    + &self.c
                    + self.model.tangent(&(&s.u + v1 * dt)) * dt
            },
            &f1,
        );
        let u1 = &s.u + &v1 * dt;
        let a1 = (&v1 - &s.v) / dt;
        self.done(u1, v1.clone(), a1, t1, v1, dt, iterations)
    }

    /// Newton iterations on x for the residual M·a(x) + w·f_int(u(x)) + rest(x),
    /// where `parts(x)` gives (M·a, rest, u, w) and `jac(x)` the Jacobian. Stops
    /// at a residual of [`NEWTON_REL_TOL`] of the force scale, after
    /// [`NEWTON_MAX_ITER`] iterations, or on a non-finite residual.
    fn newton(
        &self,
        mut x: DVector<f64>,
        parts: impl Fn(&DVector<f64>) -> (DVector<f64>, DVector<f64>, DVector<f64>, f64),
        jac: impl Fn(&DVector<f64>) -> DMatrix<f64>,
        f_ext: &DVector<f64>,
    ) -> (DVector<f64>, u32) {
        let mut iterations = 0;
        loop {
            let (ma, rest, u, w) = parts(&x);
            let fi = self.fint(&u);
            let r = &ma + &fi * w + rest;
            let scale = f_ext.norm() + fi.norm() + ma.norm() + 1e-300;
            if r.norm() <= NEWTON_REL_TOL * scale
                || iterations >= NEWTON_MAX_ITER
                || !r.iter().all(|v| v.is_finite())
            {
                return (x, iterations);
            }
            match jac(&x).lu().solve(&r) {
                Some(d) => x -= d,
                None => x.fill(f64::NAN),
            }
            iterations += 1;
        }
    }
}
