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
//! something new is in the data. A fit that still predicts well is renewed
//! only every few windows. A growing mode is refitted every few rows while
//! it is followed; an eigenvalue that claims growth but fails its checks is
//! looked at again after a stride that doubles each time it fails again.
//!
//! Growth alone is not a fault — snap-through, flutter and resonance grow too.
//! Critical needs a numerical signature as well: a mode at a frequency no
//! integrator resolves (sign-alternating per output, or above a quarter cycle
//! per step), or energy being created while the mode grows.

mod evidence;
mod predictor;
mod words;

use nalgebra::Complex;

use self::evidence::Declared;
use self::predictor::Model;
use self::words::{Signature, critical_message};
use super::clock::Clock;
use super::envelope::Envelope;
use super::modes::{self, GrowingMode};
use super::{DetectSettings, Detector, Sample, Shared, Status, forecast};
use crate::finding::{Evidence, Finding, Level};
use crate::parse::roles::{Role, RoleMap};
use crate::schemes::critical_omega;

/// Window length in outputs (≥ 3× model order; 200 samples suit ranks 3–6).
pub const WINDOW_ROWS: usize = 200;
/// Rows of the short window tried when the long one fits badly.
const SHORT_ROWS: usize = 4 * modes::EMBED_DIM;
/// Relative one-step misfit of the long window above which the short one is tried.
const SHORT_FIT_MISFIT: f64 = 1e-3;
/// Fewest rows for a first fit.
const MIN_ROWS: usize = modes::MIN_FIT_ROWS;
/// Rows between fits before the first model exists.
const EMPTY_STRIDE: usize = 8;
/// While the window is younger than `EARLY_ROWS` (a new segment, a restart,
/// a step change), fits come every `EARLY_STRIDE` rows on short windows: an
/// instability right after a restart may crash a few dozen rows later.
const EARLY_ROWS: usize = 32;
const EARLY_STRIDE: usize = 4;
/// Rows between fits while a growing mode is being followed.
const FOLLOW_STRIDE: usize = 8;
/// Fits at the follow stride for a growing eigenvalue not judged numerical,
/// before the stride starts doubling.
const FITS_BEFORE_BACKOFF: u32 = 2;
/// Rows between fits while the last fit still predicts each new row well.
const REFRESH_ROWS: usize = 16 * WINDOW_ROWS;
/// Fewest rows between a fit and one called by a per-row trigger.
const TRIGGER_GAP: usize = 4;
/// Rows before a second fit that must find a mode judged numerical again
/// before it is called critical.
const CONFIRM_STRIDE: usize = 2;
/// A mode judged numerical must be found again within this many rows.
const CONFIRM_WITHIN: u64 = 3 * FOLLOW_STRIDE as u64;
/// A step size that changes by this factor from one row to the next starts a
/// new window: the one-step map changes with the step.
const STEP_CHANGE: f64 = 1.5;
/// A mode carrying less than this share of the latest snapshot, growing no
/// faster than `RIDING_RATIO` times the channels as a whole, grows with the
/// motion (a nonlinear response fitted by a linear map) rather than against it.
const RIDING_SHARE: f64 = 0.5;
const RIDING_RATIO: f64 = 1.5;
/// A mode followed over several fits that has grown to this many times the
/// largest departure any fitted column made before its onset has outgrown
/// the run's own response: no structure's physical response grows steadily
/// by six decades past what it was already doing (common practice, no
/// source).
const OUTGROWN: f64 = 1e6;
/// The response before the onset counts as established (the mode outgrew a
/// motion, rather than being the first motion out of rest) when it was at
/// least this share of the magnitude at which the mode was first seen.
const ESTABLISHED: f64 = 1e-3;
/// Fits that must follow one mode before it can be called outgrown.
const OUTGROWN_FITS: u32 = 3;
/// Phase within this of π (radians) counts as the negative real axis.
const NEGATIVE_AXIS: f64 = 0.02;
/// Fits without a growing mode before a raised critical clears.
const QUIET_FITS_TO_CLEAR: u32 = 3;

/// The growth detector.
pub struct Growth {
    cols: Vec<usize>,
    data: Vec<f64>,
    lines: Vec<u64>,
    /// Relative balance error at each row of the window (NaN before it is judged).
    balances: Vec<f64>,
    count: usize,
    balance_rel: Option<f64>,
    /// How large the written energies are (running peak of the stored sum).
    energy_scale: Option<f64>,
    bound: f64,
    /// Energy created beyond this fraction of the energy scale confirms that a
    /// growing mode is numerical: the balance warning threshold, since single
    /// contact events in healthy explicit runs create a few per cent.
    energy_confirm: f64,
    model: Option<Model>,
    since_fit: usize,
    /// The fitted columns have changed since the window started (see `feed`).
    moving: bool,
    /// Rows until the next scheduled fit.
    stride: usize,
    /// Consecutive fits with a growing eigenvalue not judged numerical.
    unconfirmed: u32,
    /// A growing mode without a numerical signature is followed: refit as soon
    /// as the energy balance shows energy created.
    watch_balance: bool,
    /// A per-row trigger fired; refit once the minimum gap has passed.
    pending: bool,
    level: Level,
    quiet_fits: u32,
    first_line: Option<u64>,
    /// Simulated time at `first_line`.
    first_time: Option<f64>,
    evidence: Evidence,
    /// Estimates of the latest fit, growing mode or not (for the dashboard).
    latest: Evidence,
    /// Eigenvalue of the growing mode last judged.
    followed: Option<Complex<f64>>,
    /// Declared scheme and its stability limit Ω_crit (undamped).
    scheme: Option<Declared>,
    scratch: Vec<f64>,
    /// Latest raw values of the fitted columns.
    prev: Vec<f64>,
    /// A mode judged numerical by one fit, waiting for the next to find it
    /// again: its eigenvalue and the line of that fit.
    candidate: Option<(Complex<f64>, u64)>,
    /// Step size of the previous row, when the file writes one.
    last_dt: Option<f64>,
    /// A column with no role closes the balance: its error is no evidence.
    balance_explained: bool,
    /// Peak departure of each fitted column from its first value, by block
    /// of lines: how large the run's response was before a mode's onset.
    envelope: Envelope,
    /// The fitted columns' values at the segment's first row.
    origin: Option<Vec<f64>>,
    /// The followed mode: fits that found it, and the largest departure of
    /// the fitted columns when it was first found.
    followed_fits: u32,
    first_seen_departure: f64,
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
            balance_rel: None,
            energy_scale: None,
            bound: settings.overflow_bound,
            energy_confirm: settings.balance_warning,
            model: None,
            since_fit: 0,
            moving: false,
            stride: EMPTY_STRIDE,
            unconfirmed: 0,
            watch_balance: false,
            pending: false,
            level: Level::Ok,
            quiet_fits: 0,
            first_line: None,
            first_time: None,
            evidence: Evidence::default(),
            latest: Evidence::default(),
            followed: None,
            scheme: settings
                .scheme
                .and_then(|sc| Some((sc, critical_omega(&sc, 0.0).ok().flatten()?))),
            scratch: Vec::new(),
            prev: vec![0.0; m],
            candidate: None,
            last_dt: None,
            balance_explained: false,
            envelope: Envelope::new(m),
            origin: None,
            followed_fits: 0,
            first_seen_departure: 0.0,
        }
    }

    /// Stride after a fit whose growing eigenvalue is not (yet) judged
    /// numerical: the follow stride for a few fits, then doubling.
    fn backoff(&mut self) -> usize {
        self.unconfirmed += 1;
        let doublings = self.unconfirmed.saturating_sub(FITS_BEFORE_BACKOFF).min(16);
        (FOLLOW_STRIDE << doublings).min(REFRESH_ROWS)
    }

    /// Largest departure of the fitted columns from their first values, at
    /// the latest row.
    fn departure(&self) -> f64 {
        let Some(origin) = &self.origin else {
            return 0.0;
        };
        self.prev
            .iter()
            .zip(origin)
            .fold(0.0_f64, |a, (v, o)| a.max((v - o).abs()))
    }

    fn reset_window(&mut self) {
        self.latest = Evidence::default();
        self.candidate = None;
        self.count = 0;
        self.moving = false;
        self.model = None;
        self.since_fit = 0;
        self.pending = false;
    }

    /// Fit the window and decide.
    fn refit(&mut self, line: u64, clock: &Clock, out: &mut Vec<Finding>) {
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
        self.pending = false;
        let Some(analysis) = modes::analyse(&self.scratch, n, m) else {
            return;
        };
        self.latest = evidence::estimate(&analysis, clock, self.scheme.as_ref());
        let mut growing = analysis.growing.map(|g| (g, n, analysis.signal_growth_ln));
        let candidate = analysis.spectral_radius.ln() * n as f64 > modes::MIN_WINDOW_GROWTH.ln();
        // Contact, yielding and other changes of regime make a long window
        // non-linear; a short recent window is still nearly linear.
        if growing.is_none()
            && n > SHORT_ROWS
            && analysis.misfit_rms > SHORT_FIT_MISFIT * analysis.signal_rms
        {
            growing = modes::analyse(&self.scratch[(n - SHORT_ROWS) * m..], SHORT_ROWS, m)
                .and_then(|a| a.growing.map(|g| (g, SHORT_ROWS, a.signal_growth_ln)));
        }
        // A small high-frequency mode under a large, slower (and often
        // non-linear) response: the second difference of the outputs keeps
        // every eigenvalue of a linear system (it is a fixed linear filter)
        // while it scales a mode at phase θ per row by 2 − 2 cos θ — four at
        // the sign-alternating end, (θ)² at the slow end.
        if growing.is_none() && n >= MIN_ROWS + 2 {
            let hp = modes::second_difference(&self.scratch, n, m);
            growing = modes::analyse(&hp, n - 2, m).and_then(|a| {
                a.growing
                    .filter(|g| g.mu.arg().abs() >= 0.5 * std::f64::consts::PI)
                    .map(|g| (g, n - 2, a.signal_growth_ln))
            });
        }
        self.model = Some(Model::seed(analysis, &self.scratch, n, m));
        match growing {
            Some((g, n, signal)) => self.judge(g, line, n, signal, clock, out),
            None => {
                // An eigenvalue that claims growth but failed its checks is
                // looked at again soon, since it may be a mode still near the
                // noise; less often once it keeps failing.
                self.stride = if candidate {
                    self.backoff()
                } else if n < EARLY_ROWS {
                    EARLY_STRIDE
                } else if n < WINDOW_ROWS {
                    // The window is still filling: each fit sees more.
                    EMPTY_STRIDE
                } else {
                    self.unconfirmed = 0;
                    REFRESH_ROWS
                };
                self.watch_balance = false;
                self.followed = None;
                self.followed_fits = 0;
                self.candidate = None;
                self.evidence = Evidence::default();
                self.quiet_fits += 1;
                if self.level > Level::Ok && self.quiet_fits >= QUIET_FITS_TO_CLEAR {
                    self.level = Level::Ok;
                    out.push(Finding {
                        level: Level::Ok,
                        line,
                        time: clock.time,
                        message: "No growing mode in the latest outputs.".into(),
                        evidence: Evidence::default(),
                    });
                }
            }
        }
    }

    fn judge(
        &mut self,
        g: GrowingMode,
        line: u64,
        n: usize,
        signal_growth_ln: f64,
        clock: &Clock,
        out: &mut Vec<Finding>,
    ) {
        self.quiet_fits = 0;
        let k = clock.steps_per_output();
        let rho_out = g.mu.norm();
        let rho_step = rho_out.powf(1.0 / k);
        let phase = g.mu.arg().abs();
        let mut ev = Evidence {
            growth_per_output: Some(rho_out),
            growth_per_step: Some(rho_step),
            balance_error: self.balance_rel,
            ..Evidence::default()
        };
        ev.stability_margin = evidence::margin_of_growth(self.scheme.as_ref(), rho_step);
        let remedy = evidence::remedy(self.scheme.as_ref(), rho_step, phase, clock, &mut ev);
        let tpr = clock.time_per_row.filter(|v| *v > 0.0);
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
        if let (Some(t), Some(tpr)) = (clock.time, tpr) {
            let rows_back = (line as f64 - onset) / spacing.max(1.0);
            let t0 = t - rows_back * tpr;
            ev.onset_time = Some(self.first_time.map_or(t0, |f| t0.max(f)));
        }
        // While the same mode is followed (an eigenvalue close to the last
        // one), later windows no longer reach back to where it started: keep
        // the earliest onset seen.
        let same = self.followed.is_some_and(|m| modes::same_mode(m, g.mu));
        if same
            && let Some(prev) = self.evidence.onset_line
            && prev < onset.round() as u64
        {
            ev.onset_line = Some(prev);
            ev.onset_time = self.evidence.onset_time;
        }
        let departure = self.departure();
        if same {
            self.followed_fits += 1;
        } else {
            self.followed_fits = 1;
            self.first_seen_departure = departure;
        }
        self.followed = Some(g.mu);
        // Forecast from the mode's present raw magnitude; energies grow as its
        // square (ρ² per step), so a written energy column may reach the
        // bound first: the sooner of the two is the forecast.
        let raw = self.prev.iter().fold(0.0_f64, |a, v| a.max(v.abs()));
        let amplitude = (g.share * raw).max(f64::MIN_POSITIVE);
        let by_amplitude = forecast::steps_to_bound(amplitude, rho_step, self.bound);
        let by_energy = self
            .energy_scale
            .and_then(|e| forecast::steps_to_bound(e, rho_step * rho_step, self.bound));
        match (by_amplitude, by_energy) {
            (Some(a), Some(e)) if e < a => forecast::fill(
                &mut ev,
                self.energy_scale.unwrap_or(1.0),
                rho_step * rho_step,
                self.bound,
                clock,
            ),
            _ => forecast::fill(&mut ev, amplitude, rho_step, self.bound, clock),
        }
        // The phase per row tells a numerical mode only when every step is
        // written: output every k steps (or an unknown stride) aliases a
        // physical mode to any phase. Then only an eigenvalue on the negative
        // real axis — a sign flip every row, as the explicit schemes' mode
        // shows at an odd stride — is taken for one.
        let every_step = clock.stride_known() && k < 1.5;
        let sign_alternating = if every_step {
            phase >= 0.75 * std::f64::consts::PI
        } else {
            phase >= std::f64::consts::PI - NEGATIVE_AXIS
        };
        let above_quarter = every_step && phase >= 0.5 * std::f64::consts::PI;
        // Energy created while the mode grew: the balance error rose by the
        // confirmation threshold since the mode stood at its noise floor (a
        // constant offset, such as an initial penetration, or an error the
        // run already had before the mode appeared, does not count).
        let back_rows = (back.min((n - 1) as f64)) as usize;
        let before = self.balances[(last - back_rows) % WINDOW_ROWS];
        let before = if before.is_finite() { before } else { 0.0 };
        let created = !self.balance_explained
            && self
                .balance_rel
                .is_some_and(|r| r > self.energy_confirm && r - before > self.energy_confirm);
        // A small mode growing no faster than the motion as a whole is part
        // of that motion (a snap-through, a load taking hold), whatever its
        // frequency.
        let riding = g.share < RIDING_SHARE
            && signal_growth_ln > 0.0
            && rho_out.ln() <= RIDING_RATIO * signal_growth_ln;
        // A mode followed over several fits that has outgrown, by decades,
        // a response the run had established before it: growth with no
        // physical end, whatever its phase (output every k steps aliases
        // the sign-alternating mode of an explicit scheme to any phase).
        // A balance that is written and closes vetoes it.
        let before = ev
            .onset_line
            .and_then(|l| self.envelope.peaks_before(l))
            .map_or(0.0, |p| p.into_iter().fold(0.0, f64::max));
        let balance_closes = self
            .balance_rel
            .is_some_and(|r| r.abs() < self.energy_confirm);
        let outgrown = self.followed_fits >= OUTGROWN_FITS
            && before > 0.0
            && before >= ESTABLISHED * self.first_seen_departure
            && departure >= OUTGROWN * before
            && !balance_closes;
        let numerical = (sign_alternating || above_quarter || created || outgrown) && !riding;
        // A mode judged numerical must hold its eigenvalue over two fits a
        // few rows apart: a transient that a linear fit follows with a
        // growing eigenvalue does not.
        let confirmed = numerical
            && self
                .candidate
                .is_some_and(|(mu, at)| modes::same_mode(mu, g.mu) && line - at <= CONFIRM_WITHIN);
        self.candidate = numerical.then_some((g.mu, line));
        // A mode judged numerical is followed closely; one that may be
        // physical less often each time, until energy is created (a per-row
        // trigger, see `feed`).
        self.stride = if numerical && !confirmed && self.level < Level::Critical {
            self.unconfirmed = 0;
            CONFIRM_STRIDE
        } else if numerical {
            self.unconfirmed = 0;
            FOLLOW_STRIDE
        } else {
            self.backoff()
        };
        self.watch_balance = !numerical;
        self.evidence = ev.clone();
        if confirmed && self.level < Level::Critical {
            self.level = Level::Critical;
            out.push(Finding {
                level: Level::Critical,
                line,
                time: clock.time,
                message: critical_message(
                    &ev,
                    k,
                    clock.stride_known(),
                    Signature {
                        alternating: sign_alternating,
                        created,
                        outgrown: (outgrown && !sign_alternating && !above_quarter)
                            .then_some(departure / before),
                    },
                    remedy.map(|r| (r, self.first_time)),
                ),
                evidence: ev,
            });
        }
    }
}

impl Detector for Growth {
    fn name(&self) -> &'static str {
        "growth"
    }

    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>) {
        if self.first_line.is_none() {
            self.first_line = Some(sample.line);
            self.first_time = shared.clock.time;
        }
        if let Some(r) = shared.reading {
            self.balance_rel = r.relative;
            // Looked for only while the balance is off (it costs a pass over
            // the unassigned columns).
            self.balance_explained = r.relative.is_some_and(|v| v > self.energy_confirm)
                && shared
                    .balance
                    .as_ref()
                    .and_then(super::balance::EnergyBalance::closing)
                    .is_some();
            self.energy_scale = Some(r.magnitude).filter(|e| *e > 0.0);
        }
        let m = self.cols.len();
        if m == 0 {
            return;
        }
        // A new step size starts a new window (the map changes with it).
        if let Some(dt) =
            super::finite_at(sample.values, shared.clock.dt_col()).filter(|h| *h > 0.0)
        {
            if self
                .last_dt
                .is_some_and(|h0| (dt / h0).max(h0 / dt) >= STEP_CHANGE)
            {
                self.reset_window();
            }
            self.last_dt = Some(dt);
        }
        // Runs often start at exact rest: a window of rest followed by the
        // first motion is a step, not a free response, so the window starts
        // with the last row of rest.
        if !self.moving && self.count > 0 {
            let same = self
                .cols
                .iter()
                .zip(&self.prev)
                .all(|(&c, &p)| sample.values.get(c).is_some_and(|&v| v == p));
            if same {
                self.count = 0;
            } else {
                self.moving = true;
            }
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
        let origin = self.origin.get_or_insert_with(|| self.prev.clone());
        self.scratch.clear();
        self.scratch
            .extend(self.prev.iter().zip(origin.iter()).map(|(v, o)| v - o));
        self.envelope.push(sample.line, &self.scratch);
        self.lines[p] = sample.line;
        self.balances[p] = self.balance_rel.unwrap_or(f64::NAN);
        self.count += 1;
        self.since_fit += 1;
        let row = &self.data[p * m..(p + 1) * m];
        // A trigger waits for the minimum gap between fits rather than being lost.
        self.pending |= self.model.as_mut().is_some_and(|model| model.track(row));
        if self.watch_balance && self.balance_rel.is_some_and(|r| r > self.energy_confirm) {
            self.watch_balance = false;
            self.pending = true;
        }
        let n = self.count.min(WINDOW_ROWS);
        if n < MIN_ROWS {
            return;
        }
        let due = match &self.model {
            None if n < EARLY_ROWS => self.since_fit >= EARLY_STRIDE,
            None => self.since_fit >= EMPTY_STRIDE,
            Some(_) => self.since_fit >= self.stride,
        };
        if due || (self.pending && self.since_fit >= TRIGGER_GAP) {
            self.refit(sample.line, &shared.clock, out);
        }
    }

    fn status(&self, status: &mut Status) {
        status.evidence.fill_growth_from(&self.evidence);
    }

    fn fallback_status(&self, status: &mut Status) {
        status.evidence.fill_growth_from(&self.latest);
    }
}
