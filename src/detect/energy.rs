//! Energy-balance detector. Warns when the relative balance error stays above
//! `DetectSettings::balance_warning` (energy created, +, or absorbed, −), and
//! raises critical when energy is being created and the error itself grows
//! exponentially — the signature of a numerical instability feeding energy
//! into the model. A linear or decelerating drift stays a warning.

use super::balance::{BalanceReading, EnergyBalance, term_name};
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

/// The energy-balance detector.
pub struct Energy {
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
}

impl Energy {
    /// Detector for a segment with these roles.
    pub fn new(settings: &DetectSettings) -> Self {
        Self {
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
        if beyond {
            self.over += 1;
            self.under = 0;
        } else if rel.abs() < CLEAR_FRACTION * self.warn {
            self.under += 1;
            self.over = 0;
        }
        // Exponential test only when the error matters (keeps healthy rows cheap).
        self.rate_per_row = if beyond && rel > 0.0 && self.rows.is_multiple_of(4) {
            self.exponential_rate()
        } else if beyond && rel > 0.0 {
            self.rate_per_row
        } else {
            None
        };
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
        let new_level = if let Some(rate) = self.rate_per_row
            && self.over >= 1
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
                reading.scale.sqrt(),
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
                Level::Critical => format!(
                    "Energy balance error {:+.1} % and growing exponentially: energy is created by the integration, a numerical instability.{}",
                    rel * 100.0,
                    Self::terms_sentence(shared.balance.as_ref())
                ),
                Level::Warning => format!(
                    "Energy balance error {:+.1} % of the energy scale (threshold {:.1} %): {}.{}",
                    rel * 100.0,
                    self.warn * 100.0,
                    word,
                    Self::terms_sentence(shared.balance.as_ref())
                ),
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
