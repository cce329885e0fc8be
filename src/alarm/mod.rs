//! Findings → alarms: levels, persistence and hysteresis (one alarm per raise,
//! not one per row), acknowledgement; and the [`AlarmSink`] trait through which
//! the report, the event log and the dashboard receive alarms.

use serde::{Deserialize, Serialize};

use crate::detect::{Evidence, Finding};

/// Severity, ordered: `Ok < Warning < Critical`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Level {
    Ok,
    Warning,
    Critical,
}

/// A raised alarm.
#[derive(Debug, Clone, PartialEq)]
pub struct Alarm {
    pub level: Level,
    pub detector: &'static str,
    /// 1-based physical line in the file where it was decided.
    pub line: u64,
    pub time: Option<f64>,
    pub message: String,
    pub evidence: Evidence,
}

/// Receives raised alarms.
pub trait AlarmSink {
    fn alarm(&mut self, alarm: &Alarm);
}

impl AlarmSink for Vec<Alarm> {
    fn alarm(&mut self, alarm: &Alarm) {
        self.push(alarm.clone());
    }
}

/// Turns a stream of findings into alarms: a detector's alarm is raised when its
/// level rises, and not again until it has cleared (a finding at `Ok`) or risen.
#[derive(Debug, Default)]
pub struct AlarmBook {
    active: Vec<(&'static str, Level)>,
}

impl AlarmBook {
    /// Process one finding; returns the alarm it raises, if any.
    pub fn take(&mut self, f: &Finding) -> Option<Alarm> {
        let current = self.active.iter().position(|(d, _)| *d == f.detector);
        let prev = current.map(|i| self.active[i].1).unwrap_or(Level::Ok);
        match current {
            Some(i) => self.active[i].1 = f.level,
            None => self.active.push((f.detector, f.level)),
        }
        if f.level > prev {
            Some(Alarm {
                level: f.level,
                detector: f.detector,
                line: f.line,
                time: f.time,
                message: f.message.clone(),
                evidence: f.evidence.clone(),
            })
        } else {
            None
        }
    }

    /// Forget all active conditions (a new segment).
    pub fn reset(&mut self) {
        self.active.clear();
    }
}
