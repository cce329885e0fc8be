//! The label rule of the blind catalogue (docs/blind-catalogue.md, "How
//! labels are computed"), applied to a run's own record and the lines its
//! writer produced. Nothing here is typed in per case.

use super::trace::{Role, Trace};
use super::write::Written;

/// Expected level of a case.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Verdict {
    /// Healthy: no crash, balance within 5 % of the energy scale.
    Ok,
    /// Stable, but the written balance drifts past 5 % of the energy scale.
    Warning,
    /// Blow-up, runaway or collapse: the run crashes or is stopped.
    Critical,
}

impl Verdict {
    /// Lower-case word for tables and labels.csv.
    pub fn word(self) -> &'static str {
        match self {
            Verdict::Ok => "ok",
            Verdict::Warning => "warning",
            Verdict::Critical => "critical",
        }
    }
}

/// A case's label.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Label {
    /// Expected level.
    pub level: Verdict,
    /// 1-based physical line where the trouble starts (None when healthy).
    pub onset_line: Option<u64>,
    /// 1-based physical line of the crash (critical only).
    pub crash_line: Option<u64>,
}

/// What the label rule measured on a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measures {
    /// Energy scale S: peak kinetic energy or the largest range of a written
    /// energy term (0 when the file writes no energies).
    pub scale: f64,
    /// Largest |e(n)|/S before the crash (0 when S = 0).
    pub max_drift: f64,
    /// Index of the first row with |e(n)| > 0.05·S.
    pub drift_row: Option<usize>,
    /// Index of the first bad row (non-finite, asterisks, ≥ 1e300).
    pub bad_row: Option<usize>,
    /// Index of the first row where e(n) > 100·KE(first row).
    pub runaway_row: Option<usize>,
    /// Index of the first row where e(n) > 0.1·KE(first row), for runs that
    /// write no external work and start moving.
    pub creation_row: Option<usize>,
    /// Index of the first row after a step past the stability limit.
    pub limit_row: Option<usize>,
    /// Index of the first row from which the step stays below a tenth of
    /// the first row's step.
    pub collapse_row: Option<usize>,
    /// Smallest step over the largest step (the depth of the deepest cut).
    pub step_ratio: f64,
}

/// Share of the energy scale past which a balance drifts.
pub const DRIFT_SHARE: f64 = 0.05;
/// Multiple of the first row's kinetic energy past which a run that never
/// prints a non-finite value is a runaway.
pub const RUNAWAY_MULTIPLE: f64 = 100.0;
/// Share of the first row's kinetic energy past which the energy error of a
/// run without external work marks the onset of a runaway.
pub const RUNAWAY_ONSET_SHARE: f64 = 0.1;
/// Fraction of the first step under which a step that never recovers has
/// collapsed.
pub const COLLAPSE_FRACTION: f64 = 0.1;

fn sum_role(trace: &Trace, values: &[f64], role: Role) -> f64 {
    trace
        .columns
        .iter()
        .zip(values)
        .filter(|(c, _)| c.role == role)
        .map(|(_, v)| *v)
        .sum()
}

/// Measure a run by the label rule.
pub fn measure(trace: &Trace, written: &Written) -> Measures {
    let rows: Vec<_> = trace.rows().collect();
    let bad_row = written.bad_rows.iter().position(|&b| b);
    let good = bad_row.unwrap_or(rows.len());
    let energy_cols: Vec<usize> = trace
        .columns
        .iter()
        .enumerate()
        .filter(|(_, c)| {
            matches!(
                c.role,
                Role::Kinetic | Role::Internal | Role::Dissipated | Role::External
            )
        })
        .map(|(i, _)| i)
        .collect();
    let balance = |i: usize| -> f64 {
        let v = &rows[i].values;
        let mut b = sum_role(trace, v, Role::Kinetic)
            + sum_role(trace, v, Role::Internal)
            + sum_role(trace, v, Role::Dissipated)
            - sum_role(trace, v, Role::External);
        if trace.thermostat {
            b -= rows[i].thermostat_work;
        }
        b
    };
    let mut scale: f64 = 0.0;
    for &c in &energy_cols {
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for r in &rows[..good] {
            lo = lo.min(r.values[c]);
            hi = hi.max(r.values[c]);
            if trace.columns[c].role == Role::Kinetic {
                scale = scale.max(r.values[c]);
            }
        }
        if hi >= lo {
            scale = scale.max(hi - lo);
        }
    }
    let mut max_drift: f64 = 0.0;
    let mut drift_row = None;
    let mut runaway_row = None;
    let mut creation_row = None;
    let no_work = trace.column_of(Role::External).is_none() && !trace.thermostat;
    if good > 0 && !energy_cols.is_empty() {
        let b0 = balance(0);
        let ke0 = sum_role(trace, &rows[0].values, Role::Kinetic);
        for i in 0..good {
            let e = balance(i) - b0;
            if scale > 0.0 {
                max_drift = max_drift.max(e.abs() / scale);
                if drift_row.is_none() && e.abs() > DRIFT_SHARE * scale {
                    drift_row = Some(i);
                }
            }
            if runaway_row.is_none() && !trace.thermostat && ke0 > 0.0 && e > RUNAWAY_MULTIPLE * ke0
            {
                runaway_row = Some(i);
            }
            if creation_row.is_none() && no_work && ke0 > 0.0 && e > RUNAWAY_ONSET_SHARE * ke0 {
                creation_row = Some(i);
            }
        }
    }
    let limit_row = rows.iter().position(|r| r.past_limit);
    let dt0 = rows.first().map(|r| r.dt).unwrap_or(0.0);
    let mut collapse_row = None;
    if dt0 > 0.0 {
        for i in (0..rows.len()).rev() {
            if rows[i].dt < COLLAPSE_FRACTION * dt0 {
                collapse_row = Some(i);
            } else {
                break;
            }
        }
    }
    let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
    for r in &rows {
        if r.dt > 0.0 && r.dt.is_finite() {
            lo = lo.min(r.dt);
            hi = hi.max(r.dt);
        }
    }
    let step_ratio = if hi > 0.0 { lo / hi } else { 1.0 };
    Measures {
        scale,
        max_drift,
        drift_row,
        bad_row,
        runaway_row,
        creation_row,
        limit_row,
        collapse_row,
        step_ratio,
    }
}

/// The label of a run.
pub fn label(trace: &Trace, written: &Written) -> Label {
    let m = measure(trace, written);
    let line = |i: usize| written.row_lines[i];
    let crash = [
        m.bad_row.map(line),
        written.stop_line,
        m.runaway_row.map(line),
    ]
    .into_iter()
    .flatten()
    .min();
    if let Some(crash) = crash {
        let onset = [
            m.limit_row.map(line),
            m.collapse_row.map(line),
            m.creation_row.map(line),
        ]
        .into_iter()
        .flatten()
        .filter(|&l| l <= crash)
        .min()
        .unwrap_or(crash);
        return Label {
            level: Verdict::Critical,
            onset_line: Some(onset),
            crash_line: Some(crash),
        };
    }
    if let Some(i) = m.drift_row {
        return Label {
            level: Verdict::Warning,
            onset_line: Some(line(i)),
            crash_line: None,
        };
    }
    Label {
        level: Verdict::Ok,
        onset_line: None,
        crash_line: None,
    }
}
