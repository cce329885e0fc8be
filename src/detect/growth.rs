//! Growth detector: the effective amplification of the integration, read from
//! a sliding window of recent outputs. Probe columns (energy columns when no
//! probe is written) are fitted jointly by delay-embedded DMD (see
//! [`super::modes`]); the strongest growing mode gives the spectral radius per
//! output, per solver step (|μ|^(1/k) with k steps per output — the modulus is
//! exact, the phase aliases), the growth rate per unit time, the frequency,
//! the onset (the mode back-extrapolated to its noise floor) and the overflow
//! forecast.
//!
//! Refits are triggered per row by a cheap test: the last fit predicts each
//! new row; when the one-step misfit rises well above the misfit of the fit,
//! something new is in the data. Otherwise the fit is renewed once per window.
//!
//! Growth alone is not a fault — snap-through, flutter and resonance grow too.
//! Critical needs a numerical signature as well: a mode at a frequency no
//! integrator resolves (sign-alternating per output, or above a quarter cycle
//! per step), or energy being created while the mode grows.

use super::balance::EnergyBalance;
use super::clock::Clock;
use super::modes::{self, Analysis, GrowingMode};
use super::{DetectSettings, Detector, Evidence, Finding, Sample, Status, forecast};
use crate::alarm::Level;
use crate::parse::roles::{Role, RoleMap};

/// Window length in outputs (≥ 3× model order; 200 samples suit ranks 3–6).
pub const WINDOW_ROWS: usize = 200;
/// Rows of the short window tried when the long one fits badly.
const SHORT_ROWS: usize = 4 * modes::EMBED_DIM;
/// Relative one-step misfit of the long window above which the short one is tried.
const SHORT_FIT_MISFIT: f64 = 1e-3;
/// Fewest rows for a first fit.
const MIN_ROWS: usize = 3 * modes::EMBED_DIM;
/// Rows between fits before the first model exists.
const EMPTY_STRIDE: usize = 8;
/// Rows between fits while a growing mode is being followed.
const FOLLOW_STRIDE: usize = 8;
/// Refit when the RMS one-step misfit exceeds this multiple of the fit's own.
const TRIGGER_RATIO: f64 = 4.0;
/// Weight of the newest row in the misfit average.
const MISFIT_WEIGHT: f64 = 0.125;
/// Fits without a growing mode before a raised critical clears.
const QUIET_FITS_TO_CLEAR: u32 = 3;

/// Per-row predictor of the last fit, for the refit trigger.
struct Model {
    analysis: Analysis,
    /// Latest snapshot [y_t; y_{t−1}; …], newest first.
    snap: Vec<f64>,
    filled: usize,
    misfit2: f64,
    base2: f64,
    y: Vec<f64>,
}

impl Model {
    /// Update the per-row predictor; returns true when the misfit calls for a refit.
    fn track(&mut self, row: &[f64]) -> bool {
        let model = self;
        let q = model.analysis.map.q;
        let dim = model.snap.len();
        let mut y = std::mem::take(&mut model.y);
        model.analysis.map.channels(row, &mut y);
        if model.filled * q >= dim {
            let p = &model.analysis.predictor;
            let mut e2 = 0.0;
            for (c, yc) in y.iter().enumerate() {
                let mut pred = 0.0;
                for (k, s) in model.snap.iter().enumerate() {
                    pred += p[(c, k)] * s;
                }
                e2 += (yc - pred) * (yc - pred);
            }
            model.misfit2 += MISFIT_WEIGHT * (e2 / q as f64 - model.misfit2);
        }
        model.snap.copy_within(0..dim - q, q);
        model.snap[..q].copy_from_slice(&y);
        model.filled += 1;
        model.y = y;
        model.misfit2 > TRIGGER_RATIO * TRIGGER_RATIO * model.base2
    }
}

/// The growth detector.
pub struct Growth {
    cols: Vec<usize>,
    data: Vec<f64>,
    lines: Vec<u64>,
    /// Relative balance error at each row of the window (NaN before it is judged).
    balances: Vec<f64>,
    count: usize,
    clock: Clock,
    balance: Option<EnergyBalance>,
    balance_rel: Option<f64>,
    bound: f64,
    /// Energy created beyond this fraction of the energy scale confirms that a
    /// growing mode is numerical: the balance warning threshold, since single
    /// contact events in healthy explicit runs create a few per cent.
    energy_confirm: f64,
    model: Option<Model>,
    since_fit: usize,
    min_gap: usize,
    following: bool,
    level: Level,
    quiet_fits: u32,
    first_line: Option<u64>,
    evidence: Evidence,
    scratch: Vec<f64>,
    /// Latest raw values of the fitted columns.
    prev: Vec<f64>,
}

impl Growth {
    /// Detector for a segment with these roles.
    pub fn new(roles: &RoleMap, settings: &DetectSettings) -> Self {
        let mut cols = roles.all(Role::Probe);
        if cols.is_empty() {
            cols = roles
                .roles
                .iter()
                .enumerate()
                .filter(|(_, r)| matches!(r, Role::Energy(_)))
                .map(|(i, _)| i)
                .collect();
        }
        let m = cols.len();
        Self {
            data: vec![0.0; WINDOW_ROWS * m],
            lines: vec![0; WINDOW_ROWS],
            balances: vec![f64::NAN; WINDOW_ROWS],
            cols,
            count: 0,
            clock: Clock::new(roles),
            balance: EnergyBalance::new(roles),
            balance_rel: None,
            bound: settings.overflow_bound,
            energy_confirm: settings.balance_warning,
            model: None,
            since_fit: 0,
            min_gap: FOLLOW_STRIDE,
            following: false,
            level: Level::Ok,
            quiet_fits: 0,
            first_line: None,
            evidence: Evidence::default(),
            scratch: Vec::new(),
            prev: vec![0.0; m],
        }
    }

    fn reset_window(&mut self) {
        self.count = 0;
        self.model = None;
        self.since_fit = 0;
    }

    /// Fit the window and decide.
    fn refit(&mut self, line: u64, out: &mut Vec<Finding>) {
        let m = self.cols.len();
        let n = self.count.min(WINDOW_ROWS);
        let start = self.count - n;
        self.scratch.clear();
        for i in start..self.count {
            let p = i % WINDOW_ROWS;
            self.scratch
                .extend_from_slice(&self.data[p * m..(p + 1) * m]);
        }
        self.since_fit = 0;
        let Some(analysis) = modes::analyse(&self.scratch, n, m) else {
            return;
        };
        let mut growing = analysis.growing.map(|g| (g, n));
        let candidate = analysis.spectral_radius.ln() * n as f64 > modes::MIN_WINDOW_GROWTH.ln();
        // Contact, yielding and other changes of regime make a long window
        // non-linear; a short recent window is still nearly linear.
        if growing.is_none()
            && n > SHORT_ROWS
            && analysis.misfit_rms > SHORT_FIT_MISFIT * analysis.signal_rms
        {
            growing = modes::analyse(&self.scratch[(n - SHORT_ROWS) * m..], SHORT_ROWS, m)
                .and_then(|a| a.growing)
                .map(|g| (g, SHORT_ROWS));
        }
        // Seed the predictor with the newest snapshot of the window.
        let (q, d) = (analysis.map.q, analysis.map.d);
        let mut snap = vec![0.0; q * d];
        let mut y = vec![0.0; q];
        for lag in 0..d.min(n) {
            let r = n - 1 - lag;
            analysis
                .map
                .channels(&self.scratch[r * m..(r + 1) * m], &mut y);
            snap[lag * q..(lag + 1) * q].copy_from_slice(&y);
        }
        let floor = 1e-9 * analysis.signal_rms;
        let base = analysis.misfit_rms.max(floor);
        self.model = Some(Model {
            snap,
            filled: d,
            misfit2: base * base,
            base2: base * base,
            y,
            analysis,
        });
        match growing {
            Some((g, n)) => self.judge(g, line, n, out),
            None => {
                // An eigenvalue that claims growth but failed its checks is
                // looked at again soon: it may be a mode still near the noise.
                self.following = candidate;

                self.evidence = Evidence::default();
                self.quiet_fits += 1;
                if self.level > Level::Ok && self.quiet_fits >= QUIET_FITS_TO_CLEAR {
                    self.level = Level::Ok;
                    out.push(Finding {
                        detector: "growth",
                        level: Level::Ok,
                        line,
                        time: self.clock.time,
                        message: "No growing mode in the latest outputs.".into(),
                        evidence: Evidence::default(),
                    });
                }
            }
        }
    }

    fn judge(&mut self, g: GrowingMode, line: u64, n: usize, out: &mut Vec<Finding>) {
        self.following = true;
        self.min_gap = FOLLOW_STRIDE;
        self.quiet_fits = 0;
        let k = self.clock.steps_per_output();
        let rho_out = g.mu.norm();
        let rho_step = rho_out.powf(1.0 / k);
        let phase = g.mu.arg().abs();
        let mut ev = Evidence {
            growth_per_output: Some(rho_out),
            growth_per_step: Some(rho_step),
            balance_error: self.balance_rel,
            ..Evidence::default()
        };
        let tpr = self.clock.time_per_row.filter(|v| *v > 0.0);
        if let Some(tpr) = tpr {
            ev.growth_rate_per_s = Some(rho_out.ln() / tpr);
            ev.frequency_hz = Some(phase / (2.0 * std::f64::consts::PI) / tpr);
        }
        // Onset: outputs since the mode stood at its noise floor.
        let back = (g.snr.ln() / rho_out.ln()).max(0.0);
        let last = self.count - 1;
        let first = self.count - n;
        let spacing = (self.lines[last % WINDOW_ROWS] - self.lines[first % WINDOW_ROWS]) as f64
            / (n - 1).max(1) as f64;
        let seg_first = self.first_line.unwrap_or(line);
        let onset = (line as f64 - back * spacing).max(seg_first as f64);
        ev.onset_line = Some(onset.round() as u64);
        if let (Some(t), Some(tpr)) = (self.clock.time, tpr) {
            let rows_back = (line as f64 - onset) / spacing.max(1.0);
            ev.onset_time = Some(t - rows_back * tpr);
        }
        // Forecast from the mode's present raw magnitude.
        let raw = self.prev.iter().fold(0.0_f64, |a, v| a.max(v.abs()));
        forecast::fill(
            &mut ev,
            (g.share * raw).max(f64::MIN_POSITIVE),
            rho_step,
            self.bound,
            &self.clock,
        );
        let sign_alternating = phase >= 0.75 * std::f64::consts::PI;
        let above_quarter = k < 1.5 && phase >= 0.5 * std::f64::consts::PI;
        // Energy created while the mode grew: the balance error rose by the
        // confirmation threshold over the fitted window (a constant offset, such
        // as an initial penetration, does not count).
        let before = self.balances[first % WINDOW_ROWS];
        let before = if before.is_finite() { before } else { 0.0 };
        let created = self
            .balance_rel
            .is_some_and(|r| r > self.energy_confirm && r - before > self.energy_confirm);
        let numerical = sign_alternating || above_quarter || created;
        self.evidence = ev.clone();
        if numerical && self.level < Level::Critical {
            self.level = Level::Critical;
            out.push(Finding {
                detector: "growth",
                level: Level::Critical,
                line,
                time: self.clock.time,
                message: critical_message(&ev, k, sign_alternating, created),
                evidence: ev,
            });
        }
    }
}

fn critical_message(ev: &Evidence, k: f64, alternating: bool, created: bool) -> String {
    let mut s = String::from("Numerical instability: ");
    s += if alternating {
        "a sign-alternating mode"
    } else {
        "an oscillating mode"
    };
    if let Some(r) = ev.growth_per_step {
        s += &format!(" grows ×{r:.4} per solver step");
    }
    if k > 1.5 {
        s += &format!(" (about {k:.0} steps per output)");
    }
    if created {
        s += " while the energy balance shows energy created";
    }
    if let Some(l) = ev.onset_line {
        s += &format!("; it started near line {l}");
    }
    if let Some(n) = ev.forecast_steps {
        s += &format!("; overflow in about {n:.0} steps");
        if let Some(w) = ev.forecast_wall_s {
            s += &format!(" ({w:.0} s wall clock)");
        }
    }
    s += ".";
    if let Some(t) = ev.onset_time {
        s += &format!(" Restart files written after t = {t:.6e} carry the growing mode.");
    }
    s
}

impl Detector for Growth {
    fn name(&self) -> &'static str {
        "growth"
    }

    fn feed(&mut self, sample: &Sample, out: &mut Vec<Finding>) {
        self.clock.tick(sample.values, sample.arrival_s);
        self.first_line.get_or_insert(sample.line);
        if let Some(b) = self.balance.as_mut()
            && let Some(r) = b.update(sample.values)
        {
            self.balance_rel = r.relative;
        }
        let m = self.cols.len();
        if m == 0 {
            return;
        }
        let p = self.count % WINDOW_ROWS;
        for (k, &c) in self.cols.iter().enumerate() {
            let v = sample.values.get(c).copied().unwrap_or(f64::NAN);
            if !v.is_finite() {
                self.reset_window();
                return;
            }
            self.data[p * m + k] = v;
            self.prev[k] = v;
        }
        self.lines[p] = sample.line;
        self.balances[p] = self.balance_rel.unwrap_or(f64::NAN);
        self.count += 1;
        self.since_fit += 1;
        let row = &self.data[p * m..(p + 1) * m];
        let triggered = self.model.as_mut().is_some_and(|model| model.track(row));
        let n = self.count.min(WINDOW_ROWS);
        if n < MIN_ROWS {
            return;
        }
        let due = match (&self.model, self.following) {
            (None, _) => self.since_fit >= EMPTY_STRIDE,
            (Some(_), true) => self.since_fit >= FOLLOW_STRIDE,
            (Some(_), false) => self.since_fit >= WINDOW_ROWS,
        };
        if due || (triggered && self.since_fit >= self.min_gap) {
            self.refit(sample.line, out);
        }
    }

    fn status(&self, status: &mut Status) {
        let e = &self.evidence;
        let s = &mut status.evidence;
        s.growth_per_output = e.growth_per_output.or(s.growth_per_output);
        s.growth_per_step = e.growth_per_step.or(s.growth_per_step);
        s.growth_rate_per_s = e.growth_rate_per_s.or(s.growth_rate_per_s);
        s.frequency_hz = e.frequency_hz.or(s.frequency_hz);
        s.forecast_steps = e.forecast_steps.or(s.forecast_steps);
        s.forecast_time = e.forecast_time.or(s.forecast_time);
        s.forecast_wall_s = e.forecast_wall_s.or(s.forecast_wall_s);
        s.onset_line = e.onset_line.or(s.onset_line);
        s.onset_time = e.onset_time.or(s.onset_time);
    }
}
