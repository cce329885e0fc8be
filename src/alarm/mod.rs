//! Findings → alarms: the [`AlarmBook`] raises one [`Alarm`] per rise of a
//! detector's level, not one per row. Persistence and hysteresis are decided
//! by each detector; acknowledgement belongs to the dashboard (`app/`) and the
//! alarms reach their consumers through the pipeline's sink. Uses only
//! `finding` (below both this module and `detect/`).

use crate::finding::{Evidence, Finding, Level};

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

/// Turns a stream of findings into alarms: a detector's alarm is raised when its
/// level rises, and not again until it has cleared (a finding at `Ok`) or risen.
/// Persistence (how long a condition must hold) and hysteresis (how far it must
/// fall back before it clears) are decided by each detector, which knows its
/// own signal; the book only guarantees one alarm per raise. A drop from
/// critical to warning raises nothing; the condition stays at the lower level.
#[derive(Debug, Default)]
pub struct AlarmBook {
    active: Vec<(&'static str, Level)>,
}

impl AlarmBook {
    /// Process one finding of the detector named `detector`; returns the
    /// alarm it raises, if any.
    pub fn take(&mut self, detector: &'static str, f: &Finding) -> Option<Alarm> {
        let current = self.active.iter().position(|(d, _)| *d == detector);
        let prev = current.map(|i| self.active[i].1).unwrap_or(Level::Ok);
        match current {
            Some(i) => self.active[i].1 = f.level,
            None => self.active.push((detector, f.level)),
        }
        if f.level > prev {
            Some(Alarm {
                level: f.level,
                detector,
                line: f.line,
                time: f.time,
                message: f.message.clone(),
                evidence: f.evidence.clone(),
            })
        } else {
            None
        }
    }

    /// Highest active level over all detectors.
    pub fn level(&self) -> Level {
        self.active
            .iter()
            .map(|(_, l)| *l)
            .max()
            .unwrap_or(Level::Ok)
    }

    /// Forget all active conditions (a new segment).
    pub fn reset(&mut self) {
        self.active.clear();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn finding(detector: &'static str, level: Level, line: u64) -> (&'static str, Finding) {
        let f = Finding {
            level,
            line,
            time: None,
            message: String::new(),
            evidence: Evidence::default(),
        };
        (detector, f)
    }

    #[test]
    fn one_alarm_per_raise() {
        let mut book = AlarmBook::default();
        let lines: Vec<u64> = [
            finding("energy", Level::Warning, 10),
            finding("energy", Level::Warning, 11),
            finding("growth", Level::Critical, 12),
            finding("energy", Level::Critical, 13),
            finding("energy", Level::Warning, 14),
            finding("energy", Level::Ok, 15),
            finding("energy", Level::Warning, 16),
        ]
        .iter()
        .filter_map(|(d, f)| book.take(d, f))
        .map(|a| a.line)
        .collect();
        assert_eq!(lines, vec![10, 12, 13, 16]);
        assert_eq!(book.level(), Level::Critical);
        book.reset();
        assert_eq!(book.level(), Level::Ok);
    }
}
