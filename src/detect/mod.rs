//! Online detectors: each one is fed rows in file order and may emit [`Finding`]s.
//! Pure and causal: no clocks (arrival instants come in as data), no files; a
//! decision at line L sees rows up to L only. The [`Engine`] owns one of each
//! detector for the segment being read and keeps a [`Status`] of the latest
//! estimates for the dashboard.

pub mod balance;
pub mod clock;
pub mod energy;
pub mod forecast;
pub mod growth;
pub mod modes;
pub mod nonfinite;
pub mod score;
pub mod step;

use crate::alarm::Level;
use crate::parse::Schema;
use crate::parse::roles::RoleMap;

/// One data row as the detectors see it.
#[derive(Debug, Clone, Copy)]
pub struct Sample<'a> {
    /// 1-based physical line in the file.
    pub line: u64,
    /// One value per column of the current schema (non-finite kept as such).
    pub values: &'a [f64],
    /// Wall-clock arrival instant in seconds on a monotonic clock, when following live.
    pub arrival_s: Option<f64>,
}

/// The finite value of column `col` of a row, if there is one.
pub fn finite_at(values: &[f64], col: Option<usize>) -> Option<f64> {
    col.and_then(|i| values.get(i))
        .copied()
        .filter(|v| v.is_finite())
}

/// Quantitative evidence attached to a finding; every field optional (and
/// left out of JSON when absent).
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default)]
pub struct Evidence {
    /// Spectral radius of the fitted map per output interval.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_per_output: Option<f64>,
    /// Spectral radius per solver step (|μ|^(1/k) when output every k steps).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_per_step: Option<f64>,
    /// Growth rate per unit simulated time (1/s).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub growth_rate_per_s: Option<f64>,
    /// Frequency of the dominant growing mode (Hz, simulated time).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frequency_hz: Option<f64>,
    /// Energy balance error relative to the energy scale (fraction, signed; + = created).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub balance_error: Option<f64>,
    /// Solver steps until overflow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_steps: Option<f64>,
    /// Simulated time at overflow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_time: Option<f64>,
    /// Wall-clock seconds until overflow (live only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub forecast_wall_s: Option<f64>,
    /// Line where the growing mode is estimated to have started.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub onset_line: Option<u64>,
    /// Simulated time of the onset.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub onset_time: Option<f64>,
    /// Stability margin at the observed frequency when the scheme is declared
    /// (Ω_crit/Ω − 1; negative means past the limit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stability_margin: Option<f64>,
}

impl Evidence {
    /// Fill the growth, forecast, onset and margin fields that are still
    /// empty from `other` (the balance error is left alone).
    pub fn fill_growth_from(&mut self, other: &Evidence) {
        let fill = |a: &mut Option<f64>, b: Option<f64>| *a = a.or(b);
        fill(&mut self.growth_per_output, other.growth_per_output);
        fill(&mut self.growth_per_step, other.growth_per_step);
        fill(&mut self.growth_rate_per_s, other.growth_rate_per_s);
        fill(&mut self.frequency_hz, other.frequency_hz);
        fill(&mut self.forecast_steps, other.forecast_steps);
        fill(&mut self.forecast_time, other.forecast_time);
        fill(&mut self.forecast_wall_s, other.forecast_wall_s);
        fill(&mut self.onset_time, other.onset_time);
        fill(&mut self.stability_margin, other.stability_margin);
        self.onset_line = self.onset_line.or(other.onset_line);
    }
}

/// What a detector concluded at one line.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// Detector name: `nonfinite`, `growth`, `energy`, `step`, `forecast`, ...
    pub detector: &'static str,
    /// `Ok` clears a condition this detector raised before (for hysteresis).
    pub level: Level,
    pub line: u64,
    /// Simulated time at `line`, when a time column exists.
    pub time: Option<f64>,
    /// One sentence in the trade's words.
    pub message: String,
    pub evidence: Evidence,
}

/// Thresholds and options of the detectors (validated by `settings`).
#[derive(Debug, Clone, PartialEq)]
pub struct DetectSettings {
    /// Relative energy balance error that raises a warning (fraction; default 0.05).
    pub balance_warning: f64,
    /// Magnitude treated as overflow for the forecast (default f64::MAX).
    pub overflow_bound: f64,
    /// Declared integration scheme, if any: the stability margin is then
    /// reported at the observed growth or frequency.
    pub scheme: Option<crate::schemes::Scheme>,
}

impl Default for DetectSettings {
    fn default() -> Self {
        Self {
            balance_warning: 0.05,
            overflow_bound: f64::MAX,
            scheme: None,
        }
    }
}

/// Latest estimates, for the dashboard and the report.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Status {
    pub evidence: Evidence,
}

/// What the engine derives from each row once, for every detector: the
/// segment's clock (time, step, steps per output, arrival) and its energy
/// balance, ticked with the row before any detector sees it.
pub struct Shared {
    pub clock: clock::Clock,
    /// The balance terms of this segment, when any energy column exists.
    pub balance: Option<balance::EnergyBalance>,
    /// The balance reading of the latest row (`None` when its terms were not all finite).
    pub reading: Option<balance::BalanceReading>,
}

impl Shared {
    /// Clock and balance for a segment with these roles.
    pub fn new(roles: &RoleMap) -> Self {
        Self {
            clock: clock::Clock::new(roles),
            balance: balance::EnergyBalance::new(roles),
            reading: None,
        }
    }

    /// Advance with one row.
    pub fn tick(&mut self, sample: &Sample) {
        self.clock.tick(sample.values, sample.arrival_s);
        self.reading = self.balance.as_mut().and_then(|b| b.update(sample.values));
    }
}

/// An online detector.
pub trait Detector {
    /// Short name used in alarms.
    fn name(&self) -> &'static str;
    /// Feed one row, with the quantities the engine derived from it; push
    /// any findings to `out`.
    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>);
    /// Contribute the latest estimates to the status.
    fn status(&self, _status: &mut Status) {}
    /// Contribute estimates of lower standing, after every detector's
    /// `status` (e.g. the growth of the latest fit when no growing mode is
    /// confirmed): they fill only what is still empty.
    fn fallback_status(&self, _status: &mut Status) {}
}

/// All detectors for one segment.
pub struct Engine {
    shared: Shared,
    detectors: Vec<Box<dyn Detector + Send>>,
    status: Status,
}

impl Engine {
    /// Detectors for a segment with this schema and these roles.
    pub fn new(schema: &Schema, roles: &RoleMap, settings: &DetectSettings) -> Self {
        let detectors: Vec<Box<dyn Detector + Send>> = vec![
            Box::new(nonfinite::NonFinite::new(schema, roles)),
            Box::new(growth::Growth::new(roles, settings)),
            Box::new(energy::Energy::new(settings)),
            Box::new(step::StepSize::new(roles)),
        ];
        Self {
            shared: Shared::new(roles),
            detectors,
            status: Status::default(),
        }
    }

    /// Feed one row to every detector; findings are appended to `out`.
    pub fn feed(&mut self, sample: &Sample, out: &mut Vec<Finding>) {
        self.shared.tick(sample);
        for d in &mut self.detectors {
            d.feed(sample, &self.shared, out);
        }
    }

    /// Latest estimates of all detectors.
    pub fn status(&mut self) -> &Status {
        let mut s = Status::default();
        for d in &self.detectors {
            d.status(&mut s);
        }
        for d in &self.detectors {
            d.fallback_status(&mut s);
        }
        self.status = s;
        &self.status
    }
}

/// Run rows held in memory through a fresh [`Engine`] and an
/// [`AlarmBook`](crate::alarm::AlarmBook): the alarms raised and the final
/// status. For checks and benchmarks of the detectors alone; files go
/// through the pipeline.
pub fn replay<'a, I>(
    schema: &Schema,
    roles: &RoleMap,
    settings: &DetectSettings,
    rows: I,
) -> (Vec<crate::alarm::Alarm>, Status)
where
    I: IntoIterator<Item = (u64, &'a [f64])>,
{
    let mut engine = Engine::new(schema, roles, settings);
    let mut book = crate::alarm::AlarmBook::default();
    let mut findings = Vec::new();
    let mut alarms = Vec::new();
    for (line, values) in rows {
        engine.feed(
            &Sample {
                line,
                values,
                arrival_s: None,
            },
            &mut findings,
        );
        for f in findings.drain(..) {
            if let Some(a) = book.take(&f) {
                alarms.push(a);
            }
        }
    }
    let status = engine.status().clone();
    (alarms, status)
}
