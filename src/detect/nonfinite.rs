//! Non-finite detector: the first row where a column that held finite values
//! turns NaN, infinite, or overflows its print field (a field of asterisks) — the
//! blow-up. Two cases are told apart and reported at warning level instead: a
//! time or step-number column that outgrows its print field is a format problem,
//! not a blow-up; a column that is non-finite from its first row was never a
//! number the checks could use. Comparisons use `is_finite`, since `NaN > x` is
//! always false.

use super::{Detector, Sample, Shared};
use crate::finding::{Evidence, Finding, Level};
use crate::parse::roles::{Role, RoleMap};
use crate::parse::{Schema, is_field_overflow};

/// Watches every column for the turn from finite to non-finite.
pub struct NonFinite {
    names: Vec<String>,
    counters: Vec<bool>,
    /// Columns the user excluded (role `ignore`).
    ignored: Vec<bool>,
    seen_finite: Vec<bool>,
    reported: Vec<bool>,
    last_time: Option<f64>,
    first_row: bool,
    /// Every checked column has held a finite value (the common, fast case).
    settled: bool,
}

impl NonFinite {
    /// A detector for a segment with this schema.
    pub fn new(schema: &Schema, roles: &RoleMap) -> Self {
        let n = schema.columns.len();
        let role = |i: usize| roles.roles.get(i).copied().unwrap_or(Role::Probe);
        Self {
            names: schema.columns.iter().map(|c| c.name.clone()).collect(),
            counters: (0..n)
                .map(|i| matches!(role(i), Role::Time | Role::StepNumber))
                .collect(),
            ignored: (0..n).map(|i| role(i) == Role::Ignore).collect(),
            seen_finite: vec![false; n],
            reported: vec![false; n],
            last_time: None,
            first_row: true,
            settled: false,
        }
    }

    fn finding(&self, level: Level, line: u64, message: String) -> Finding {
        Finding {
            level,
            line,
            time: self.last_time,
            message,
            evidence: Evidence {
                onset_line: (level == Level::Critical).then_some(line),
                onset_time: if level == Level::Critical {
                    self.last_time
                } else {
                    None
                },
                ..Evidence::default()
            },
        }
    }
}

fn describe(v: f64) -> &'static str {
    if is_field_overflow(v) {
        "overflowed its print field (asterisks)"
    } else if v.is_nan() {
        "turned NaN"
    } else {
        "turned infinite"
    }
}

impl Detector for NonFinite {
    fn name(&self) -> &'static str {
        "nonfinite"
    }

    fn feed(&mut self, sample: &Sample, shared: &Shared, out: &mut Vec<Finding>) {
        let n = self.names.len().min(sample.values.len());
        self.last_time = shared.clock.time;
        // Fast path: every checked column has been finite before and is now.
        if self.settled && sample.values[..n].iter().all(|v| v.is_finite()) {
            return;
        }
        let mut dead = Vec::new();
        for i in 0..n {
            let v = sample.values[i];
            if self.ignored[i] {
                continue;
            }
            if v.is_finite() {
                self.seen_finite[i] = true;
                continue;
            }
            let name = &self.names[i];
            if !self.seen_finite[i] {
                if self.first_row {
                    dead.push(name.clone());
                }
                continue;
            }
            if self.reported[i] {
                continue;
            }
            self.reported[i] = true;
            let f = if self.counters[i] && is_field_overflow(v) {
                self.finding(
                    Level::Warning,
                    sample.line,
                    format!(
                        "column \"{name}\" outgrew its print field: a format problem, not a blow-up"
                    ),
                )
            } else {
                self.finding(
                    Level::Critical,
                    sample.line,
                    format!(
                        "blow-up: column \"{name}\" {} after holding finite values",
                        describe(v)
                    ),
                )
            };
            out.push(f);
        }
        if !dead.is_empty() {
            let list = dead.join("\", \"");
            let msg =
                format!("column \"{list}\" is non-finite from its first row and cannot be checked");
            out.push(self.finding(Level::Warning, sample.line, msg));
        }
        self.first_row = false;
        self.settled = (0..n).all(|i| self.ignored[i] || self.seen_finite[i]);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parse::field_overflow;
    use crate::parse::header::split_unit;
    use crate::parse::roles::{RoleRules, assign};

    /// The detector and the shared clock it reads the time from.
    fn detector(names: &[&str]) -> (NonFinite, Shared) {
        let schema = Schema {
            columns: names.iter().map(|n| split_unit(n)).collect(),
            ..Schema::default()
        };
        let roles = assign(&schema, &RoleRules::default());
        (NonFinite::new(&schema, &roles), Shared::new(&roles))
    }

    fn feed(d: &mut (NonFinite, Shared), line: u64, values: &[f64]) -> Vec<Finding> {
        let mut out = Vec::new();
        let sample = Sample {
            line,
            values,
            arrival_s: None,
        };
        d.1.tick(&sample);
        d.0.feed(&sample, &d.1, &mut out);
        out
    }

    #[test]
    fn finite_to_nan_is_a_blowup_once() {
        let mut d = detector(&["time", "ke"]);
        assert!(feed(&mut d, 2, &[0.0, 1.0]).is_empty());
        let f = feed(&mut d, 3, &[0.1, f64::NAN]);
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].level, Level::Critical);
        assert_eq!(f[0].line, 3);
        assert_eq!(f[0].time, Some(0.1));
        assert!(feed(&mut d, 4, &[0.2, f64::NAN]).is_empty());
    }

    #[test]
    fn step_counter_overflow_is_a_format_warning() {
        let mut d = detector(&["step", "ke"]);
        feed(&mut d, 1, &[99999.0, 1.0]);
        let f = feed(&mut d, 2, &[field_overflow(), 1.0]);
        assert_eq!(f[0].level, Level::Warning);
        let f = feed(&mut d, 3, &[field_overflow(), field_overflow()]);
        assert_eq!(f[0].level, Level::Critical);
    }

    #[test]
    fn dead_column_is_reported_not_a_blowup() {
        let mut d = detector(&["t", "residual"]);
        let f = feed(&mut d, 1, &[0.0, f64::NAN]);
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].level, Level::Warning);
        assert!(feed(&mut d, 2, &[0.1, f64::NAN]).is_empty());
        assert!(feed(&mut d, 3, &[0.2, 1.0e-3]).is_empty());
        assert_eq!(
            feed(&mut d, 4, &[0.3, f64::INFINITY])[0].level,
            Level::Critical
        );
    }
}
