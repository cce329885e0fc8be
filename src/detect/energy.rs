//! Energy-balance detector. Warns when the relative balance error stays above
//! `DetectSettings::balance_warning` (energy created, +, or absorbed, −), and
//! raises critical when energy is being created and the error itself grows
//! exponentially — the signature of a numerical instability feeding energy
//! into the model. A linear or decelerating drift stays a warning.

use super::balance::{BalanceReading, EnergyBalance, describe_scale, term_name};
use super::{DetectSettings, Detector, Sample, Shared, forecast};
use crate::finding::{Evidence, Finding, Level};

/// Rows the error must stay beyond the threshold before a warning (persistence).
const PERSIST_ROWS: u32 = 3;
/// A raised warning clears once the error is back under this fraction of the
/// threshold (hysteresis) for `PERSIST_ROWS` rows.
const CLEAR_FRACTION: f64 = 0.8;
/// Window lengths (rows) over which exponential growth of the error is tested:
/// a geometric ladder, so that a slow instability is judged on a window about
/// as long as it takes to grow a decade.
const EXP_WINDOWS: [usize; 7] = [8, 16, 32, 64, 128, 256, 512];
/// Growth over a window that counts as exponential: one decade.
const EXP_MIN_GROWTH_LN: f64 = std::f64::consts::LN_10;
/// Minimum straightness of ln|error| against the row index.
const EXP_MIN_R2: f64 = 0.95;
/// Second-half slope over first-half slope: exponential growth keeps its rate
/// (ratio ≈ 1); a drift that started recently decelerates in log scale.
const EXP_MIN_RATE_RATIO: f64 = 0.7;

/// Energy created past this share of the energy scale (as it was before the
/// balance went off) is a runaway once it also doubles faster and faster.
const RUNAWAY_SHARE: f64 = 0.5;
/// Successive doublings of the error looked at, newest first.
const RUNAWAY_DOUBLINGS: usize = 3;
/// Each doubling takes at most this many times the rows of the one before
/// it: 1 for exponential growth, more than 1 for growth that speeds up,
/// 2^(1/p)-type lengthening for growth as tᵖ (a load or a missing source
/// taking hold from rest: p = 2 lengthens each doubling by √2). The margin
/// allows for the rounding of doublings to whole rows.
const RUNAWAY_SLOWDOWN: f64 = 1.12;
/// Rows the balance must have been judged within its threshold before a
/// runaway is judged against the scale of that stretch: a run whose balance
/// is off from its first rows (an initial penetration released) has no
/// scale of its own to be judged against.
const RUNAWAY_REFERENCE_ROWS: u32 = 16;

/// The energy-balance detector.
pub struct Energy {
    /// Column names, for messages.
    names: Vec<String>,
    warn: f64,
    bound: f64,
    level: Level,
    over: u32,
    under: u32,
    /// ln of the running peak of |error|, ring of the largest window.
    hist: Vec<f64>,
    /// Largest |error| so far in the segment.
    peak_error: f64,
    rows: usize,
    last: Option<BalanceReading>,
    rate_per_row: Option<f64>,
    /// Growth and forecast read from the error's exponential rise, while it lasts.
    growth: Option<Evidence>,
    /// The energy scale at the last row whose balance was within the
    /// threshold: a runaway is judged against the run before it, not
    /// against the energy it has itself created.
    ref_scale: f64,
    /// Rows judged within the threshold so far.
    rows_within: u32,
    /// Rows of the latest doubling of the error, while it runs away.
    runaway_doubling: Option<f64>,
}

impl Energy {
    /// Detector for a segment with these roles.
    pub fn new(schema: &crate::parse::Schema, settings: &DetectSettings) -> Self {
        Self {
            names: schema.columns.iter().map(|c| c.name.clone()).collect(),
            warn: settings.balance_warning,
            bound: settings.overflow_bound,
            level: Level::Ok,
            over: 0,
            under: 0,
            hist: vec![f64::NAN; EXP_WINDOWS[EXP_WINDOWS.len() - 1]],
            peak_error: 0.0,
            rows: 0,
            last: None,
            rate_per_row: None,
            growth: None,
            ref_scale: 0.0,
            rows_within: 0,
            runaway_doubling: None,
        }
    }

    /// Ordered ln|error| of the last `w` rows, if that many exist.
    fn recent(&self, w: usize) -> Option<Vec<f64>> {
        let cap = self.hist.len();
        if self.rows < w || w > cap {
            return None;
        }
        Some(
            (self.rows - w..self.rows)
                .map(|i| self.hist[i % cap])
                .collect(),
        )
    }

    /// Growth rate per row of |error| if it grows exponentially over one of
    /// the test windows.
    /// The steepest window that passes is taken: a long window averages in
    /// the slower start, and the forecast should follow the present rate.
    fn exponential_rate(&self) -> Option<f64> {
        EXP_WINDOWS
            .iter()
            .filter_map(|&w| {
                let y = self.recent(w)?;
                if y.iter().any(|v| !v.is_finite()) {
                    return None;
                }
                exponential_slope(&y)
            })
            .reduce(f64::max)
    }

    /// "Column "X" closes the balance as …" when a column with no role
    /// would close it.
    fn closing_sentence(&self, balance: Option<&EnergyBalance>) -> String {
        let Some(c) = balance.and_then(EnergyBalance::closing) else {
            return String::new();
        };
        let name = self
            .names
            .get(c.col)
            .map_or_else(|| format!("{}", c.col + 1), |n| n.clone());
        let role = match c.kind {
            super::closure::ClosingKind::Dissipated => "dissipated",
            super::closure::ClosingKind::Stored => "internal",
            super::closure::ClosingKind::ExternalWork => "external_work",
        };
        format!(
            " Column \"{name}\" closes the balance as {} (it explains {:.0} % of the error); if it is one, read it so with --role '{name}={role}'.",
            c.kind.words(),
            c.r2 * 100.0
        )
    }

    /// The error's envelope doubled `RUNAWAY_DOUBLINGS` times in a row,
    /// each doubling on rows of its own (no single jump carries two) and
    /// none slower than `RUNAWAY_SLOWDOWN` times the one before: the rate
    /// per row of the latest doubling and its rows.
    fn runaway_rate(&self) -> Option<(f64, f64)> {
        let cap = self.hist.len();
        let now = self.hist[(self.rows - 1) % cap];
        let back = |drop: f64| {
            (1..self.rows.min(cap)).find(|&b| self.hist[(self.rows - 1 - b) % cap] <= now - drop)
        };
        let mut at = [0usize; RUNAWAY_DOUBLINGS + 1];
        for (i, a) in at.iter_mut().enumerate().skip(1) {
            *a = back(i as f64 * std::f64::consts::LN_2)?;
        }
        let rows: Vec<f64> = at.windows(2).map(|w| (w[1] - w[0]) as f64).collect();
        let steady = rows.iter().all(|&d| d >= 1.0)
            && rows.windows(2).all(|w| w[0] <= RUNAWAY_SLOWDOWN * w[1]);
        steady.then(|| (std::f64::consts::LN_2 / rows[0], rows[0]))
    }

    fn terms_sentence(balance: Option<&EnergyBalance>) -> String {
        let Some(b) = balance else {
            return String::new();
        };
        let found: Vec<&str> = b.found().iter().map(|t| term_name(*t)).collect();
        let missing: Vec<&str> = b.missing().iter().map(|t| term_name(*t)).collect();
        if missing.is_empty() {
            format!(" Terms read: {}.", found.join(", "))
        } else {
            format!(
                " Terms read: {}; not written: {}.",
                found.join(", "),
                missing.join(", ")
            )
        }
    }
}

/// " Overflow in about N steps." when a forecast was made.
fn forecast_words(ev: &Evidence) -> String {
    match ev.forecast_steps {
        Some(n) => format!(" Overflow in about {n:.0} solver steps."),
        None => String::new(),
    }
}

/// Slope per sample of `y` (= ln|error|) when it rises straight and by at
/// least a decade over the window without slowing down.
pub fn exponential_slope(y: &[f64]) -> Option<f64> {
    let n = y.len();
    if n < 8 {
        return None;
    }
    let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let all = crate::schemes::fit::line_fit(&x, y)?;
    if all.b * ((n - 1) as f64) < EXP_MIN_GROWTH_LN || all.r2 < EXP_MIN_R2 {
        return None;
    }
    let h = n / 2;
    let first = crate::schemes::fit::line_fit(&x[..h], &y[..h])?;
    let second = crate::schemes::fit::line_fit(&x[h..], &y[h..])?;
    (first.b > 0.0 && second.b >= EXP_MIN_RATE_RATIO * first.b).then_some(all.b)
}

impl Detector for Energy {
    fn name(&self) -> &'static str {
        "energy"
    }

    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>) {
        let Some(reading) = shared.reading else {
            return;
        };
        let clock = &shared.clock;
        let cap = self.hist.len();
        // The envelope of the error: the energy an instability creates piles
        // up, while the exchange between terms makes the error itself swing.
        self.peak_error = self.peak_error.max(reading.error.abs());
        self.hist[self.rows % cap] = self.peak_error.ln();
        self.rows += 1;
        self.last = Some(reading);
        let Some(rel) = reading.relative else {
            return;
        };
        let beyond = rel.abs() > self.warn;
        if !beyond {
            self.ref_scale = reading.scale;
            self.rows_within = self.rows_within.saturating_add(1);
        }
        if beyond {
            self.over += 1;
            self.under = 0;
        } else if rel.abs() < CLEAR_FRACTION * self.warn {
            self.under += 1;
            self.over = 0;
        }
        // Exponential test only when the error matters (keeps healthy rows cheap).
        self.rate_per_row = if beyond && rel > 0.0 && self.rows.is_multiple_of(2) {
            self.exponential_rate()
        } else if beyond && rel > 0.0 {
            self.rate_per_row
        } else {
            None
        };
        // A runaway: energy created past a large share of the scale the run
        // had before, doubling faster and faster (a particle run with too
        // large a step may never print a NaN, and its solver may stop with
        // its own error instead).
        self.runaway_doubling = None;
        if beyond
            && rel > 0.0
            && self.rows_within >= RUNAWAY_REFERENCE_ROWS
            && reading.error > RUNAWAY_SHARE * self.ref_scale
            && let Some((rate, half)) = self.runaway_rate()
        {
            self.rate_per_row = Some(self.rate_per_row.map_or(rate, |r| r.max(rate)));
            self.runaway_doubling = Some(half);
        }
        let time = clock.time;
        self.growth = None;
        let mut evidence = Evidence {
            balance_error: Some(rel),
            ..Evidence::default()
        };
        let word = if rel > 0.0 {
            "created (+): energy is coming from nowhere"
        } else {
            "absorbed (−): energy is disappearing"
        };
        // A column with no role that closes the balance explains the error:
        // no evidence of energy created by the integration.
        let explained = beyond
            && self.rate_per_row.is_some()
            && shared
                .balance
                .as_ref()
                .and_then(EnergyBalance::closing)
                .is_some();
        let new_level = if let Some(rate) = self.rate_per_row
            && self.over >= 1
            && !explained
        {
            let k = clock.steps_per_output();
            // Energy ∝ amplitude², so amplitude grows by exp(rate/2) per output.
            let rho_step = (rate / (2.0 * k)).exp();
            evidence.growth_per_step = Some(rho_step);
            evidence.growth_per_output = Some((rate / 2.0).exp());
            if let Some(tpr) = clock.time_per_row.filter(|v| *v > 0.0) {
                evidence.growth_rate_per_s = Some(rate / 2.0 / tpr);
            }
            forecast::fill(
                &mut evidence,
                reading.magnitude.sqrt(),
                rho_step,
                self.bound.sqrt(),
                clock,
            );
            self.growth = Some(evidence.clone());
            Level::Critical
        } else if self.over >= PERSIST_ROWS {
            Level::Warning
        } else if self.under >= PERSIST_ROWS {
            Level::Ok
        } else {
            self.level
        };
        let new_level = new_level.max(
            if self.level == Level::Critical && self.under < PERSIST_ROWS {
                Level::Critical
            } else {
                Level::Ok
            },
        );
        if new_level != self.level {
            let message = match new_level {
                Level::Critical => match self.runaway_doubling {
                    Some(half) => format!(
                        "Runaway: the energy balance has gained {:.0} % of the energy scale the run had before ({:.4}; now {}), doubling faster and faster (last doubling in {half:.0} rows): energy is created by the integration, a numerical instability.{}{}",
                        reading.error / self.ref_scale * 100.0,
                        self.ref_scale,
                        describe_scale(&reading, &self.names),
                        forecast_words(&evidence),
                        Self::terms_sentence(shared.balance.as_ref())
                    ),
                    None => format!(
                        "Energy balance error {:+.1} % and growing exponentially: energy is created by the integration, a numerical instability.{}{}",
                        rel * 100.0,
                        forecast_words(&evidence),
                        Self::terms_sentence(shared.balance.as_ref())
                    ),
                },
                Level::Warning => {
                    format!(
                        "Energy balance error {:+.1} % of the energy scale ({}; threshold {:.1} %): {}.{}",
                        rel * 100.0,
                        describe_scale(&reading, &self.names),
                        self.warn * 100.0,
                        word,
                        Self::terms_sentence(shared.balance.as_ref())
                    ) + &self.closing_sentence(shared.balance.as_ref())
                }
                Level::Ok => format!(
                    "Energy balance back within {:.1} % ({:+.2} %).",
                    self.warn * 100.0,
                    rel * 100.0
                ),
            };
            self.level = new_level;
            out.push(Finding {
                level: new_level,
                line: sample.line,
                time,
                message,
                evidence,
            });
        }
    }

    fn status(&self, status: &mut super::Status) {
        if let Some(r) = self.last
            && let Some(rel) = r.relative
        {
            status.evidence.balance_error = Some(rel);
        }
        if let Some(g) = &self.growth {
            status.evidence.fill_growth_from(g);
        }
    }
}
