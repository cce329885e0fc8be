//! What the dashboard, the many-run table and the metrics show of a run's
//! estimates, decided once, here, from the detectors' [`Status`] and the
//! [`Alarm`]s they raised; the screens only word and draw it. A growth reading
//! is shown with its standing: the estimate of a growing mode that passed the
//! detectors' checks (the one their alarms carry), or the latest fit alone,
//! which is shown as approximate when it finds no growth and not at all when
//! it claims a growth the checks did not confirm. Each reading's level is the
//! standing level of the detector that decides it, so a screen never judges a
//! number against a threshold of its own. Pure: no terminal, no files.

use crate::alarm::Alarm;
use crate::detect::Status;
use crate::finding::{Evidence, Level};

/// A latest fit's growth per step within this of 1 reads as "≈ 1": a fit over
/// a short window cannot tell 1.0004 from 1 (common practice, no source).
pub const NEAR_ONE_PER_STEP: f64 = 1e-3;

/// Name of the detector whose critical alarm means the run has blown up.
const BLOW_UP: &str = "nonfinite";
/// Names of the detectors that decide the growth and the energy readings.
const GROWTH: &str = "growth";
const ENERGY: &str = "energy";

/// How far the growth reading is to be trusted.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum Standing {
    /// No fit yet.
    #[default]
    NoEstimate,
    /// The latest fit claims a growth the detectors' checks did not confirm:
    /// not a reading (a window over a change of regime, a decaying mode, noise).
    NotConfirmed,
    /// The latest fit, no growing mode confirmed, at or below 1 (within
    /// [`NEAR_ONE_PER_STEP`]): an approximate reading.
    Approximate,
    /// A growing mode that passed the checks: the estimate alarms are raised with.
    Confirmed,
}

/// Where the run turned non-finite (its blow-up), once it has.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BlowUp {
    pub line: u64,
    pub time: Option<f64>,
}

/// One run's readouts. Feed it the alarms and segments in file order and the
/// detectors' status after each slice; read [`Readouts::evidence`] and the
/// levels.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Readouts {
    /// The estimates to show: the status with the growth fields of a fit
    /// that is [`Standing::NotConfirmed`] left out, the onset of the worst
    /// alarm held while its growth goes on, and no forecast once the run has
    /// blown up.
    pub evidence: Evidence,
    /// Standing of the growth fields of `evidence`.
    pub growth: Standing,
    /// Level of the growth reading: the growth detector's standing level (or
    /// the energy detector's, when the energy error's exponential rise carries
    /// the estimate) while a mode is confirmed; `Ok` otherwise.
    pub growth_level: Level,
    /// Level of the energy balance reading: the energy detector's standing
    /// level (its threshold is the configured `balance_warning`).
    pub balance_level: Level,
    /// The run's blow-up in this segment, if it had one.
    pub blow_up: Option<BlowUp>,
    /// Onset carried by the worst alarm of this segment (level, line, time).
    alarm_onset: Option<(Level, u64, Option<f64>)>,
}

impl Readouts {
    /// An alarm of the current segment.
    pub fn alarm(&mut self, a: &Alarm) {
        if a.detector == BLOW_UP && a.level == Level::Critical && self.blow_up.is_none() {
            self.blow_up = Some(BlowUp {
                line: a.line,
                time: a.time,
            });
            self.evidence.forecast_steps = None;
            self.evidence.forecast_time = None;
            self.evidence.forecast_wall_s = None;
        }
        if let Some(line) = a.evidence.onset_line
            && a.level > self.alarm_onset.map_or(Level::Ok, |o| o.0)
        {
            self.alarm_onset = Some((a.level, line, a.evidence.onset_time));
        }
    }

    /// A new segment: what was read of the previous one no longer applies.
    pub fn segment(&mut self) {
        *self = Self::default();
    }

    /// The detectors' latest estimates.
    pub fn status(&mut self, s: &Status) {
        let mut e = s.evidence.clone();
        let rho = e.growth_per_step;
        self.growth = match rho {
            None => Standing::NoEstimate,
            Some(_) if s.growth_confirmed => Standing::Confirmed,
            Some(r) if r.is_finite() && r <= 1.0 + NEAR_ONE_PER_STEP => Standing::Approximate,
            Some(_) => Standing::NotConfirmed,
        };
        if self.growth == Standing::NotConfirmed {
            e.growth_per_output = None;
            e.growth_per_step = None;
            e.growth_rate_per_s = None;
            e.frequency_hz = None;
            e.stability_margin = None;
            e.suggested_dt = None;
        }
        self.growth_level = if self.growth == Standing::Confirmed {
            let energy = s.level(ENERGY);
            let by_energy = if energy == Level::Critical {
                energy
            } else {
                Level::Ok
            };
            s.level(GROWTH).max(by_energy)
        } else {
            Level::Ok
        };
        self.balance_level = s.level(ENERGY);
        // Later fits place the onset inside their own window; while the
        // growth goes on, the onset the alarm was raised with is the one to show.
        if self.growth == Standing::Confirmed
            && let Some((_, line, time)) = self.alarm_onset
            && e.onset_line.is_none_or(|now| line < now)
        {
            e.onset_line = Some(line);
            e.onset_time = time;
        }
        // A forecast only for a growth the checks confirmed, and none once the
        // run has blown up.
        if self.blow_up.is_some() || self.growth != Standing::Confirmed {
            e.forecast_steps = None;
            e.forecast_time = None;
            e.forecast_wall_s = None;
        }
        self.evidence = e;
    }

    /// The growth per step worth showing as a number (confirmed or approximate).
    pub fn growth_per_step(&self) -> Option<f64> {
        self.evidence.growth_per_step
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    fn status(rho: f64, confirmed: bool, levels: &[(&'static str, Level)]) -> Status {
        Status {
            evidence: Evidence {
                growth_per_step: Some(rho),
                growth_rate_per_s: Some(248.0),
                frequency_hz: Some(26.8),
                forecast_steps: Some(40.0),
                balance_error: Some(-0.155),
                ..Evidence::default()
            },
            growth_confirmed: confirmed,
            levels: levels.to_vec(),
        }
    }

    #[test]
    fn a_fit_claiming_growth_the_checks_did_not_confirm_is_no_reading() {
        let mut r = Readouts::default();
        r.status(&status(10.766, false, &[(ENERGY, Level::Warning)]));
        assert_eq!(r.growth, Standing::NotConfirmed);
        assert_eq!(r.growth_per_step(), None);
        assert_eq!(r.evidence.growth_rate_per_s, None);
        assert_eq!(r.evidence.frequency_hz, None);
        assert_eq!(r.evidence.forecast_steps, None);
        assert_eq!(r.growth_level, Level::Ok);
        // The balance reading keeps its value and the energy detector's level.
        assert_eq!(r.evidence.balance_error, Some(-0.155));
        assert_eq!(r.balance_level, Level::Warning);
    }

    #[test]
    fn a_latest_fit_without_growth_is_approximate_and_a_confirmed_mode_takes_its_alarm_level() {
        let mut r = Readouts::default();
        r.status(&status(0.9986, false, &[]));
        assert_eq!(r.growth, Standing::Approximate);
        assert_eq!(r.growth_per_step(), Some(0.9986));
        r.status(&status(1.0004, false, &[]));
        assert_eq!(r.growth, Standing::Approximate);
        // A latest fit is shown, but forecasts nothing.
        assert_eq!(r.evidence.forecast_steps, None);
        // A confirmed mode the detectors judged physical (no alarm) is shown
        // at Ok; one they alarmed on at the alarm's level.
        r.status(&status(1.03, true, &[]));
        assert_eq!((r.growth, r.growth_level), (Standing::Confirmed, Level::Ok));
        r.status(&status(1.22, true, &[(GROWTH, Level::Critical)]));
        assert_eq!(r.growth_level, Level::Critical);
        // A balance warning alone does not colour the growth reading.
        r.status(&status(1.03, true, &[(ENERGY, Level::Warning)]));
        assert_eq!(r.growth_level, Level::Ok);
        r.status(&status(1.03, true, &[(ENERGY, Level::Critical)]));
        assert_eq!(r.growth_level, Level::Critical);
    }

    fn alarm(detector: &'static str, line: u64, onset: Option<u64>) -> Alarm {
        Alarm {
            level: Level::Critical,
            detector,
            line,
            time: Some(9.41),
            message: String::new(),
            evidence: Evidence {
                onset_line: onset,
                ..Evidence::default()
            },
        }
    }

    #[test]
    fn after_a_blow_up_there_is_no_forecast_and_a_new_segment_forgets_it() {
        let mut r = Readouts::default();
        r.status(&status(1.3, true, &[(GROWTH, Level::Critical)]));
        assert_eq!(r.evidence.forecast_steps, Some(40.0));
        r.alarm(&alarm(BLOW_UP, 2035, None));
        assert_eq!(
            r.blow_up,
            Some(BlowUp {
                line: 2035,
                time: Some(9.41)
            })
        );
        assert_eq!(r.evidence.forecast_steps, None);
        r.status(&status(1.3, true, &[(GROWTH, Level::Critical)]));
        assert_eq!(r.evidence.forecast_steps, None);
        r.segment();
        assert_eq!(r, Readouts::default());
    }

    #[test]
    fn the_worst_alarms_onset_holds_while_the_mode_is_confirmed() {
        let mut r = Readouts::default();
        r.alarm(&alarm(GROWTH, 600, Some(496)));
        let mut s = status(1.2, true, &[(GROWTH, Level::Critical)]);
        s.evidence.onset_line = Some(580);
        r.status(&s);
        assert_eq!(r.evidence.onset_line, Some(496));
        s.growth_confirmed = false;
        s.evidence.growth_per_step = Some(0.99);
        r.status(&s);
        assert_eq!(r.evidence.onset_line, Some(580));
    }
}
