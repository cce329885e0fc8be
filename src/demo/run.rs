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

use super::integrate::{Dynamics, Scheme, State};
use super::layout::{ColumnName, Layout};
use super::model::Model;
use super::prng::SplitMix64;

/// Tangent fingerprints that differ by less than this fraction of the largest
/// member stiffness reuse the last ω_max outright (geometric stiffness drifts a
/// little every step; ω then moves by a similar fraction, far inside any margin
/// used by the cases); up to [`RAYLEIGH_REL`] the Rayleigh quotient of the last
/// top eigenvector is used, whose error is second order in the change (Parlett,
/// *The Symmetric Eigenvalue Problem*, 1980, ch. 4, from memory); beyond it a new
/// eigen-solution is made.
const REUSE_REL: f64 = 1e-5;
const RAYLEIGH_REL: f64 = 2e-2;
/// Eigen-solutions kept (contacts that open and close revisit a few tangents).
const OMEGA_CACHE_LEN: usize = 8;

/// One eigen-solution of the tangent.
#[derive(Debug, Clone)]
struct OmegaCache {
    fingerprint: Vec<f64>,
    omega: f64,
    mode: DVector<f64>,
}

fn fp_change(a: &[f64], b: &[f64]) -> f64 {
    if a.len() != b.len() {
        return f64::INFINITY;
    }
    let scale = a.iter().fold(0.0_f64, |m, x| m.max(x.abs())).max(1e-300);
    let d = a
        .iter()
        .zip(b)
        .fold(0.0_f64, |m, (x, y)| m.max((x - y).abs()));
    if d.is_nan() { f64::INFINITY } else { d / scale }
}

/// How the step size is chosen.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepRule {
    /// A fixed step.
    Fixed { dt_s: f64 },
    /// dt = safety·2/ω_max of the current tangent, recomputed every step, capped at `dt_max_s`.
    Adaptive { safety: f64, dt_max_s: f64 },
}

/// What a probe samples.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    Displacement,
    Velocity,
}

/// A probe: one DOF's displacement or velocity, with its column name.
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    pub dof: usize,
    pub quantity: Quantity,
    pub name: ColumnName,
}

/// Which columns are written (time is always written).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Columns {
    /// Time, step size, step number, probes, energies.
    All,
    /// Time and energies.
    EnergyOnly,
    /// Time and probes.
    ProbesOnly,
}

/// A restart from an earlier checkpoint, as a user resubmitting a run would do.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Restart {
    /// Step at which the run is interrupted.
    pub at_step: u64,
    /// Step of the checkpoint it resumes from (earlier, so time goes back).
    pub from_step: u64,
    /// The step size is multiplied by this on resuming.
    pub dt_factor: f64,
    /// The resumed run writes its header again.
    pub header_again: bool,
}

/// Seeded measurement noise added to printed probe values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Noise {
    pub seed: u64,
    /// Standard deviation of the noise (probe units).
    pub sigma: f64,
}

/// Everything that defines one run.
#[derive(Debug, Clone)]
pub struct Setup {
    /// First comment line.
    pub title: String,
    pub model: Model,
    pub scheme: Scheme,
    pub step: StepRule,
    pub u0: Vec<f64>,
    pub v0: Vec<f64>,
    pub t_end_s: f64,
    pub max_steps: u64,
    /// A row every `every` steps (the first and a crashing row are always written).
    pub every: u64,
    pub layout: Layout,
    pub columns: Columns,
    pub probes: Vec<Probe>,
    pub noise: Option<Noise>,
    pub restart: Option<Restart>,
    /// The solver gives up (writes the row and an error comment) when the step
    /// falls below this, as solvers do when elements distort.
    pub dt_min_s: Option<f64>,
    /// Stop at the first row whose printed values or state are non-finite (true),
    /// or only once the state holds a NaN (false), as a solver whose only check is
    /// for NaN.
    pub stop_on_printed_overflow: bool,
}

/// What the run found out about itself once finished.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Summary {
    /// Lines written.
    pub lines: u64,
    /// Data rows written.
    pub rows: u64,
    /// First line at or after the step where ω_max·dt first exceeded the scheme's limit.
    pub unstable_line: Option<u64>,
    /// First line where the step fell below a tenth of its first value.
    pub collapse_line: Option<u64>,
    /// First line holding a non-finite or overflowed field.
    pub crash_line: Option<u64>,
    /// Largest |balance error| relative to the energy scale, over rows where the
    /// scale had reached a tenth of its final value (the written columns only).
    pub max_balance_rel: f64,
    /// Balance error at the last finite row (same measure).
    pub final_balance_rel: f64,
    /// First line where |balance error| passed 5 % of the (established) scale.
    pub drift_line: Option<u64>,
    /// Smallest step over the first step.
    pub min_dt_ratio: f64,
    /// FNV-1a hash of the written bytes (lines with their newlines), for
    /// checking that a rewrite gives the same file.
    pub bytes_hash: u64,
}

/// FNV-1a over `bytes`, continuing from `h` (Fowler, Noll & Vo; offset basis
/// 0xcbf29ce484222325, prime 0x100000001b3).
pub fn fnv1a(mut h: u64, bytes: &[u8]) -> u64 {
    for b in bytes {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// FNV-1a offset basis.
pub const FNV_OFFSET: u64 = 0xcbf2_9ce4_8422_2325;

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
    omega_cache: Vec<OmegaCache>,
    fingerprint: Vec<f64>,
    inv_sqrt_mass: DVector<f64>,
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
            omega_cache: Vec::new(),
            fingerprint: Vec::new(),
            inv_sqrt_mass: DVector::from_iterator(
                n,
                setup.model.mass_kg.iter().map(|m| 1.0 / m.sqrt()),
            ),
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

    /// ω_max of the tangent at `u`. A full eigen-solution is made when the tangent
    /// has moved by more than [`OMEGA_REUSE_REL`] of its norm since the last one;
    /// in between, the Rayleigh quotient of the last top eigenvector is used, whose
    /// error is second order in the change (Parlett, *The Symmetric Eigenvalue
    /// Problem*, 1980, §4.6, from memory).
    fn omega_at(&mut self, u: &DVector<f64>) -> f64 {
        let model = &self.dynamics.model;
        let mut fp = std::mem::take(&mut self.fingerprint);
        model.fingerprint(u, &mut fp);
        let changes: Vec<f64> = self
            .omega_cache
            .iter()
            .map(|c| fp_change(&c.fingerprint, &fp))
            .collect();
        let best = changes
            .iter()
            .copied()
            .enumerate()
            .min_by(|a, b| a.1.total_cmp(&b.1));
        let w = match best {
            Some((i, d)) if d <= REUSE_REL => self.omega_cache[i].omega,
            Some((i, d)) if d <= RAYLEIGH_REL => {
                let y = self.omega_cache[i].mode.component_mul(&self.inv_sqrt_mass);
                model.tangent_form(u, &y).max(0.0).sqrt()
            }
            _ => match model.top_mode(&model.tangent(u)) {
                Some((w, x)) => {
                    if self.omega_cache.len() >= OMEGA_CACHE_LEN {
                        self.omega_cache.remove(0);
                    }
                    self.omega_cache.push(OmegaCache {
                        fingerprint: fp.clone(),
                        omega: w,
                        mode: x,
                    });
                    w
                }
                None => f64::NAN,
            },
        };
        self.fingerprint = fp;
        w
    }

    fn next_dt(&mut self) -> f64 {
        match self.setup.step {
            StepRule::Fixed { dt_s } => dt_s,
            StepRule::Adaptive { safety, dt_max_s } => {
                // Look ahead along the velocity so a contact about to close is
                // counted in the estimate, as solvers add penalty stiffness to it.
                let w_now = self.omega_max();
                let reach = self.dt_s.max(self.dt_taken_s) * 1.5;
                let ahead = &self.state.u + &self.state.v * reach;
                let w = w_now.max(self.omega_at(&ahead));
                if w > 0.0 {
                    (safety * 2.0 / w).min(dt_max_s)
                } else if w.is_nan() {
                    f64::NAN
                } else {
                    dt_max_s
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
        if ratio < 0.1 && self.summary.collapse_line.is_none() {
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
