//! Online detectors: each one is fed rows in file order and may emit
//! [`Finding`]s. Pure and causal: no clocks (arrival instants come in as
//! data), no files; a decision at line L sees rows up to L only. The
//! [`Engine`] owns one of each detector for the segment being read — nonfinite,
//! growth, energy, solver, step — ticks the [`Shared`] clock and balance once
//! per row, names every finding with its detector's [`Detector::name`], and
//! keeps a [`Status`] of the latest estimates for the dashboard. `forecast.rs`
//! (steps and time to the overflow bound) and `modes.rs` (one DMD fit) serve
//! the detectors; [`replay`] runs rows through an engine and an alarm book.

pub mod balance;
pub mod clock;
pub mod closure;
pub mod energy;
pub mod envelope;
pub mod forecast;
pub mod growth;
pub mod modes;
pub mod nonfinite;
pub mod solver;
pub mod step;

use crate::finding::{Evidence, Finding, Level};
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
    /// The growth fields come from a growing mode that passed the detectors'
    /// checks (the estimate their alarms carry); false when they are only the
    /// latest fit's ([`Detector::fallback_status`]).
    pub growth_confirmed: bool,
    /// Each detector's standing level in this segment: that of its latest
    /// finding, rises and clears alike (what the alarm book holds).
    pub levels: Vec<(&'static str, Level)>,
}

impl Status {
    /// The standing level of the detector named `detector` (`Ok` when it has
    /// found nothing in this segment).
    pub fn level(&self, detector: &str) -> Level {
        self.levels
            .iter()
            .find(|(d, _)| *d == detector)
            .map_or(Level::Ok, |(_, l)| *l)
    }
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
    /// Short name used in alarms; the engine pairs every finding of this
    /// detector with it.
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
    /// Each detector's latest finding level (see [`Status::levels`]).
    levels: Vec<(&'static str, Level)>,
    /// Findings of one detector on the current row, before they are named.
    scratch: Vec<Finding>,
}

impl Engine {
    /// Detectors for a segment with this schema and these roles.
    pub fn new(schema: &Schema, roles: &RoleMap, settings: &DetectSettings) -> Self {
        let detectors: Vec<Box<dyn Detector + Send>> = vec![
            Box::new(nonfinite::NonFinite::new(schema, roles)),
            Box::new(growth::Growth::new(roles, settings)),
            Box::new(energy::Energy::new(schema, settings)),
            Box::new(solver::Solver::new(roles)),
            Box::new(step::StepSize::new(roles)),
        ];
        let mut shared = Shared::new(roles);
        shared
            .clock
            .set_declared_step(schema.step_size.map(|h| h.value));
        Self {
            shared,
            detectors,
            status: Status::default(),
            levels: Vec::new(),
            scratch: Vec::new(),
        }
    }

    /// Feed one row to every detector; findings are appended to `out`, each
    /// with the [`Detector::name`] of the detector that made it.
    pub fn feed(&mut self, sample: &Sample, out: &mut Vec<(&'static str, Finding)>) {
        self.shared.tick(sample);
        for d in &mut self.detectors {
            d.feed(sample, &self.shared, &mut self.scratch);
            if let Some(last) = self.scratch.last() {
                let name = d.name();
                match self.levels.iter_mut().find(|(n, _)| *n == name) {
                    Some(slot) => slot.1 = last.level,
                    None => self.levels.push((name, last.level)),
                }
                out.extend(self.scratch.drain(..).map(|f| (name, f)));
            }
        }
    }

    /// Latest estimates of all detectors.
    pub fn status(&mut self) -> &Status {
        let mut s = Status::default();
        for d in &self.detectors {
            d.status(&mut s);
        }
        s.growth_confirmed = s.evidence.growth_per_step.is_some();
        for d in &self.detectors {
            d.fallback_status(&mut s);
        }
        s.levels.clone_from(&self.levels);
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
        for (detector, f) in findings.drain(..) {
            if let Some(a) = book.take(detector, &f) {
                alarms.push(a);
            }
        }
    }
    let status = engine.status().clone();
    (alarms, status)
}
