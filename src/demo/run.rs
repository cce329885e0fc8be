//! One simulated run turned into history lines, one at a time: steps the model
//! with its scheme (fixed or adaptive step), keeps the energy books (kinetic
//! ½vᵀMv, strain energy from the members, external work and damping dissipation
//! accumulated by the trapezoid rule), samples probes, formats rows in the chosen
//! layout, and stops as a solver does when a value turns non-finite (that row is
//! written). It also labels itself: the line where the step first exceeds the
//! scheme's stability limit for the current highest frequency (or the step
//! collapses below a tenth of its first value), the first line with a non-finite
//! or overflowed field, and the energy-balance error seen in the written columns.

use std::collections::VecDeque;
use std::io::{self, Write};

use nalgebra::{DMatrix, DVector};

use super::integrate::{Dynamics, State};
use super::layout::ColumnName;
use super::omega::OmegaMax;
use super::prng::SplitMix64;
pub use super::setup::{
    Columns, FNV_OFFSET, Noise, Probe, Quantity, Restart, Setup, StepRule, Summary, fnv1a,
};

#[derive(Debug, Clone)]
struct Books {
    w_ext_j: f64,
    d_rec_j: f64,
    d_unrec_j: f64,
    f_prev: DVector<f64>,
}

#[derive(Debug, Clone)]
struct Checkpoint {
    state: State,
    step: u64,
    books: Books,
}

/// A run producing its history line by line.
#[derive(Debug)]
pub struct Run {
    setup: Setup,
    dynamics: Dynamics,
    state: State,
    books: Books,
    step: u64,
    dt_s: f64,
    dt_taken_s: f64,
    dt_first_s: f64,
    cols: Vec<ColumnName>,
    int_cols: Vec<bool>,
    damping_column: bool,
    queue: VecDeque<String>,
    line: u64,
    rows: u64,
    finished: bool,
    rng: SplitMix64,
    checkpoint: Option<Checkpoint>,
    restarted: bool,
    omega: OmegaMax,
    unstable_pending: bool,
    summary: Summary,
    balance: Vec<(u64, f64, f64)>,
    e0: Option<f64>,
    peak_ku: f64,
    peak_w: f64,
}

impl Run {
    /// Prepare a run; nothing is computed until lines are asked for.
    pub fn new(setup: Setup) -> Self {
        let dynamics = Dynamics::new(setup.model.clone());
        let n = setup.model.n();
        let vec_or_zero = |x: &Vec<f64>| {
            if x.len() == n {
                DVector::from_vec(x.clone())
            } else {
                DVector::zeros(n)
            }
        };
        let state = dynamics.start(vec_or_zero(&setup.u0), vec_or_zero(&setup.v0));
        let mut f_prev = DVector::zeros(n);
        setup.model.load(0.0, &mut f_prev);
        let damping_column = dynamics.c_rec.iter().any(|c| *c != 0.0);
        let mut cols = vec![ColumnName::new("time", "time", "s")];
        let mut int_cols = vec![false];
        if setup.columns == Columns::All {
            cols.push(ColumnName::new("step size", "dt", "s"));
            cols.push(ColumnName::new("step", "step", ""));
            int_cols.extend([false, true]);
        }
        if setup.columns != Columns::EnergyOnly {
            for p in &setup.probes {
                cols.push(p.name.clone());
                int_cols.push(false);
            }
        }
        if setup.columns != Columns::ProbesOnly {
            cols.push(ColumnName::new("kinetic energy", "E_kin", "J"));
            cols.push(ColumnName::new("internal energy", "E_int", "J"));
            cols.push(ColumnName::new("external work", "W_ext", "J"));
            int_cols.extend([false, false, false]);
            if damping_column {
                cols.push(ColumnName::new("damping energy", "E_damp", "J"));
                int_cols.push(false);
            }
        }
        let seed = setup.noise.map_or(1, |n| n.seed);
        let mut run = Self {
            dynamics,
            state,
            books: Books {
                w_ext_j: 0.0,
                d_rec_j: 0.0,
                d_unrec_j: 0.0,
                f_prev,
            },
            step: 0,
            dt_s: 0.0,
            dt_taken_s: 0.0,
            dt_first_s: 0.0,
            cols,
            int_cols,
            damping_column,
            queue: VecDeque::new(),
            line: 0,
            rows: 0,
            finished: false,
            rng: SplitMix64::new(seed),
            checkpoint: None,
            restarted: false,
            omega: OmegaMax::new(&setup.model),
            unstable_pending: false,
            summary: Summary {
                min_dt_ratio: 1.0,
                ..Summary::default()
            },
            balance: Vec::new(),
            e0: None,
            peak_ku: 0.0,
            peak_w: 0.0,
            setup,
        };
        run.dt_s = run.next_dt();
        run.dt_taken_s = run.dt_s;
        run.dt_first_s = run.dt_s;
        run.preamble();
        run
    }

    /// The column names written (in order).
    pub fn columns(&self) -> &[ColumnName] {
        &self.cols
    }

    /// Solver step of the last row produced.
    pub fn step_number(&self) -> u64 {
        self.step
    }

    /// Simulated time of the last state (s).
    pub fn time_s(&self) -> f64 {
        self.state.t_s
    }

    /// Physical lines handed out or queued so far.
    pub fn lines(&self) -> u64 {
        self.line
    }

    /// A comment line in this run's layout (None for layouts without comments).
    pub fn comment(&self, text: &str) -> Option<String> {
        self.setup.layout.comment(text)
    }

    /// The next line of the history (without newline), or None when the run has ended.
    pub fn next_line(&mut self) -> Option<String> {
        while self.queue.is_empty() && !self.finished {
            self.advance();
        }
        self.queue.pop_front()
    }

    /// Write the whole history to `out`, one `\n`-terminated line each.
    pub fn write_all(&mut self, out: &mut dyn Write) -> io::Result<()> {
        while let Some(l) = self.next_line() {
            out.write_all(l.as_bytes())?;
            out.write_all(b"\n")?;
        }
        Ok(())
    }

    /// Run to the end without keeping the text, and report what happened.
    pub fn summarize(mut self) -> Summary {
        let mut h = FNV_OFFSET;
        while let Some(l) = self.next_line() {
            h = fnv1a(fnv1a(h, l.as_bytes()), b"\n");
        }
        let mut s = self.finish_summary();
        s.bytes_hash = h;
        s
    }

    fn finish_summary(mut self) -> Summary {
        let final_scale = self.balance.iter().fold(0.0_f64, |m, b| m.max(b.2));
        let mut s = std::mem::take(&mut self.summary);
        s.lines = self.line;
        s.rows = self.rows;
        for &(line, err, scale) in &self.balance {
            if scale >= 0.1 * final_scale && scale > 0.0 {
                let rel = err / scale;
                if rel.abs() > s.max_balance_rel {
                    s.max_balance_rel = rel.abs();
                }
                s.final_balance_rel = rel;
                if rel.abs() > 0.05 && s.drift_line.is_none() {
                    s.drift_line = Some(line);
                }
            }
        }
        s
    }

    fn push(&mut self, text: String) {
        self.line += 1;
        self.queue.push_back(text);
    }

    fn push_comment(&mut self, text: &str) {
        if let Some(c) = self.setup.layout.comment(text) {
            self.push(c);
        }
    }

    fn preamble(&mut self) {
        let title = self.setup.title.clone();
        self.push_comment(&title);
        let rule = match self.setup.step {
            StepRule::Fixed { dt_s } => format!("fixed step {dt_s:e} s"),
            StepRule::Adaptive { safety, .. } => format!("adaptive step, safety {safety}"),
        };
        let text = format!(
            "scheme: {}; {rule}; {} degrees of freedom",
            self.setup.scheme.label(),
            self.setup.model.n()
        );
        self.push_comment(&text);
        self.header();
        self.check_stability();
        if self.emit_row() {
            self.finished = true;
        }
    }

    /// Mark the next row as unstable when the step about to be taken exceeds the
    /// scheme's limit for the current highest frequency.
    fn check_stability(&mut self) {
        let limit = self.setup.scheme.omega_limit();
        // Only the first onset is labelled; after it the check is not needed.
        if limit.is_finite() && self.summary.unstable_line.is_none() && !self.unstable_pending {
            let w = self.omega_max();
            if w * self.dt_s > limit * (1.0 + 1e-9) {
                self.unstable_pending = true;
            }
        }
    }

    fn header(&mut self) {
        if let Some(h) = self.setup.layout.header(&self.cols) {
            self.push(h);
        }
    }

    fn omega_max(&mut self) -> f64 {
        let u = self.state.u.clone();
        self.omega_at(&u)
    }

    /// ω_max of the tangent at `u` (see [`OmegaMax`]).
    fn omega_at(&mut self, u: &DVector<f64>) -> f64 {
        self.omega.at(&self.dynamics.model, u)
    }

    fn next_dt(&mut self) -> f64 {
        match self.setup.step {
            StepRule::Fixed { dt_s } => dt_s,
            StepRule::Adaptive {
                safety,
                dt_max_s,
                max_growth,
            } => {
                // Look ahead along the velocity so a contact about to close is
                // counted in the estimate, as solvers add penalty stiffness to it.
                let w_now = self.omega_max();
                let reach = self.dt_s.max(self.dt_taken_s) * 1.5;
                let ahead = &self.state.u + &self.state.v * reach;
                let w = w_now.max(self.omega_at(&ahead));
                let cap = if self.dt_taken_s > 0.0 {
                    dt_max_s.min(max_growth * self.dt_taken_s)
                } else {
                    dt_max_s
                };
                if w > 0.0 {
                    (safety * 2.0 / w).min(cap)
                } else if w.is_nan() {
                    f64::NAN
                } else {
                    cap
                }
            }
        }
    }

    fn energies(&self) -> (f64, f64, f64) {
        let s = &self.state;
        let kin = 0.5 * s.v.component_mul(&s.v).dot(&self.dynamics.mass);
        let mut f = DVector::zeros(s.u.len());
        let w = self.dynamics.model.internal(&s.u, &mut f);
        (kin, w.recorded_j, w.unrecorded_j)
    }

    /// Format and queue the current row; true when it holds a non-finite value.
    fn emit_row(&mut self) -> bool {
        let (kin, u_rec, _) = self.energies();
        let b = &self.books;
        let (w_ext, d_rec) = (b.w_ext_j, b.d_rec_j);
        let mut values = vec![self.state.t_s];
        if self.setup.columns == Columns::All {
            values.push(self.dt_taken_s);
            values.push(self.step as f64);
        }
        if self.setup.columns != Columns::EnergyOnly {
            for i in 0..self.setup.probes.len() {
                let p = &self.setup.probes[i];
                let x = match p.quantity {
                    Quantity::Displacement => self.state.u[p.dof],
                    Quantity::Velocity => self.state.v[p.dof],
                };
                let noise = self
                    .setup
                    .noise
                    .map_or(0.0, |n| n.sigma * self.rng.normal());
                values.push(x + noise);
            }
        }
        if self.setup.columns != Columns::ProbesOnly {
            values.extend([kin, u_rec, w_ext]);
            if self.damping_column {
                values.push(d_rec);
            }
        }
        let nonfinite = values.iter().any(|v| !v.is_finite());
        let f = self.setup.layout.row(&self.cols, &values, &self.int_cols);
        self.push(f.line);
        self.rows += 1;
        let line = self.line;
        if f.overflowed && self.summary.crash_line.is_none() {
            self.summary.crash_line = Some(line);
        }
        if self.unstable_pending && self.summary.unstable_line.is_none() {
            self.summary.unstable_line = Some(line);
        }
        self.unstable_pending = false;
        let ratio = self.dt_taken_s / self.dt_first_s;
        if ratio < self.summary.min_dt_ratio {
            self.summary.min_dt_ratio = ratio;
        }
        // A cut that recovers is not a collapse: the stretch below a tenth
        // starts again after every recovery.
        if ratio >= 0.1 {
            self.summary.collapse_line = None;
        } else if self.summary.collapse_line.is_none() {
            self.summary.collapse_line = Some(line);
        }
        // Balance as the written columns show it (unrecorded terms are missing).
        let e = kin + u_rec + d_rec - w_ext;
        if e.is_finite() {
            let e0 = *self.e0.get_or_insert(e);
            self.peak_ku = self.peak_ku.max(kin + u_rec);
            self.peak_w = self.peak_w.max(w_ext.abs());
            self.balance
                .push((line, e - e0, self.peak_ku.max(self.peak_w)));
        }
        nonfinite
    }

    /// True when a printed energy of the current state is non-finite.
    fn printed_nonfinite(&self) -> bool {
        if self.setup.columns == Columns::ProbesOnly {
            return false;
        }
        let (kin, u_rec, _) = self.energies();
        let b = &self.books;
        ![kin, u_rec, b.w_ext_j, b.d_rec_j]
            .iter()
            .all(|x| x.is_finite())
    }

    /// The state is usable: finite, or — for a solver that only checks for NaN —
    /// free of NaN (infinities then run on until they meet and make one).
    fn finite_state(&self) -> bool {
        let s = &self.state;
        let ok = |x: &f64| {
            if self.setup.stop_on_printed_overflow {
                x.is_finite()
            } else {
                !x.is_nan()
            }
        };
        s.u.iter().chain(s.v.iter()).all(ok) && ok(&self.dt_s)
    }

    fn advance(&mut self) {
        if let Some(r) = self.setup.restart {
            if !self.restarted && self.step == r.from_step && self.checkpoint.is_none() {
                self.checkpoint = Some(Checkpoint {
                    state: self.state.clone(),
                    step: self.step,
                    books: self.books.clone(),
                });
            }
            if !self.restarted
                && self.step == r.at_step
                && let Some(c) = self.checkpoint.take()
            {
                self.restarted = true;
                let note = format!(
                    "run interrupted at step {}; resumed from checkpoint at step {} (t = {:e} s) with step size x{}",
                    self.step, c.step, c.state.t_s, r.dt_factor
                );
                self.push_comment(&note);
                if r.header_again {
                    self.header();
                }
                self.state = c.state;
                self.step = c.step;
                self.books = c.books;
                if let StepRule::Fixed { dt_s } = &mut self.setup.step {
                    *dt_s *= r.dt_factor;
                }
                self.dt_s = self.next_dt();
                self.dt_taken_s = self.dt_s;
                self.unstable_pending = false;
                self.check_stability();
                self.emit_row();
                return;
            }
        }
        if self.state.t_s >= self.setup.t_end_s * (1.0 - 1e-12) || self.step >= self.setup.max_steps
        {
            self.finished = true;
            return;
        }
        let dt = self.dt_s;
        let next = self.dynamics.step(self.setup.scheme, &self.state, dt);
        // Trapezoid-rule work increments: ΔW = ½Δuᵀ(F_n + F_{n+1}), ΔD = ½Δuᵀ(C v_n + C v_{n+1}).
        let du = &next.u - &self.state.u;
        let mut f1 = DVector::zeros(du.len());
        self.dynamics.model.load(next.t_s, &mut f1);
        let b = &mut self.books;
        b.w_ext_j += 0.5 * du.dot(&(&b.f_prev + &f1));
        let dc = |c: &DMatrix<f64>| 0.5 * du.dot(&(c * (&self.state.v + &next.v)));
        b.d_rec_j += dc(&self.dynamics.c_rec);
        b.d_unrec_j += dc(&self.dynamics.c_unrec);
        b.f_prev = f1;
        self.state = next;
        self.dynamics.model.engage_latches(&self.state.u);
        self.step += 1;
        self.dt_taken_s = dt;
        self.dt_s = self.next_dt();
        self.check_stability();
        let end = self.state.t_s >= self.setup.t_end_s * (1.0 - 1e-12)
            || self.step >= self.setup.max_steps;
        let too_small = self.setup.dt_min_s.is_some_and(|m| self.dt_s < m);
        let due = self.step.is_multiple_of(self.setup.every.max(1)) || end;
        if !self.finite_state()
            || (due && self.setup.stop_on_printed_overflow && self.printed_nonfinite())
        {
            self.emit_row();
            self.push_comment("error: non-finite value; run terminated");
            self.finished = true;
        } else if too_small {
            self.emit_row();
            let text = format!(
                "error: step {:e} s below the minimum at t = {:e} s; run terminated",
                self.dt_s, self.state.t_s
            );
            self.push_comment(&text);
            self.finished = true;
        } else if due {
            self.emit_row();
        }
    }
}
