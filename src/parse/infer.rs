//! Roles of a headerless table read from its first rows: the simulated time (the
//! first column, increasing by regular or smoothly varying increments), the step
//! counter (integers, increasing), a step-size column (the time increment per
//! row is a whole number of its values), and the output stride that follows. Each
//! inference carries its reason; `--role` overrides any of them. Pure.

use super::roles::Role;
use super::{Inferred, StepSize};

/// Rows held back from a headerless table to infer its roles (fewer at the end
/// of input, or when a row already holds a non-finite value).
pub const INFER_ROWS: usize = 8;

/// Largest ratio between successive time increments still read as smoothly
/// varying (an adaptive step changes by a bounded factor from step to step;
/// common practice, no source).
const SMOOTH_RATIO: f64 = 3.0;

/// Relative tolerance for "the time increment is a whole number of step sizes":
/// printed values carry 6 or more significant digits, and an adaptive step
/// varies a little within one output interval (common practice, no source).
const WHOLE_TOL: f64 = 0.02;

/// What was inferred.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Inference {
    pub inferred: Vec<Inferred>,
    /// Output stride and step size, said in words.
    pub notes: Vec<String>,
}

/// Infer roles from the first rows of a headerless table (all rows have the same
/// number of fields). `given` is a step size known without a column (given by
/// the user or declared by the file): with time alone it gives the stride.
pub fn headerless(rows: &[&[f64]], given: Option<StepSize>) -> Inference {
    let n = rows.first().map_or(0, |r| r.len());
    let col = |c: usize| -> Vec<f64> { rows.iter().map(|r| r[c]).collect() };
    let mut out = Inference::default();
    if n == 0 {
        return out;
    }
    let mut time = None;
    let mut step = None;
    let first = col(0);
    if let Some(why) = counter(&first) {
        step = Some(0);
        out.push(
            0,
            Role::StepNumber,
            format!("inferred: first column, {why}"),
        );
        if n > 1
            && let Some(why) = time_like(&col(1))
        {
            time = Some(1);
            out.push(
                1,
                Role::Time,
                format!("inferred: after the step counter, {why}"),
            );
        }
    } else if let Some(why) = time_like(&first) {
        time = Some(0);
        out.push(0, Role::Time, format!("inferred: first column, {why}"));
        if let Some((c, why)) = (1..n.min(3)).find_map(|c| counter(&col(c)).map(|w| (c, w))) {
            step = Some(c);
            out.push(c, Role::StepNumber, format!("inferred: {why}"));
        }
    }
    let steps = step.map(col);
    let dt = time.and_then(|t| {
        let times = col(t);
        (0..n)
            .filter(|c| Some(*c) != time && Some(*c) != step)
            .find_map(|c| step_size(&times, &col(c), steps.as_deref()).map(|k| (c, k)))
    });
    if let Some((c, k)) = dt {
        out.push(
            c,
            Role::StepSize,
            format!("inferred: positive, and each time increment is {k} of its values"),
        );
    }
    out.stride_notes(rows, time, step, dt, given);
    if time.is_none() {
        out.notes.push(
            "no column reads as time (the first column does not increase steadily): alarms \
             carry no time; --role NAME=time names one"
                .to_owned(),
        );
    }
    out
}

impl Inference {
    fn push(&mut self, column: usize, role: Role, reason: String) {
        self.inferred.push(Inferred {
            column,
            role,
            reason,
        });
    }

    fn stride_notes(
        &mut self,
        rows: &[&[f64]],
        time: Option<usize>,
        step: Option<usize>,
        dt: Option<(usize, u64)>,
        given: Option<StepSize>,
    ) {
        let median_diff = |c: usize| median(rows.windows(2).map(|w| w[1][c] - w[0][c]).collect());
        let name = |c: usize| format!("c{}", c + 1);
        match (step, dt, time) {
            (Some(s), _, t) => {
                if let Some(k) = median_diff(s) {
                    self.notes.push(format!(
                        "output every {} solver steps (from the step counter {})",
                        fmt_count(k),
                        name(s)
                    ));
                    if let (Some(t), None) = (t, dt)
                        && let Some(dtime) = median_diff(t)
                        && k > 0.0
                    {
                        self.notes.push(format!(
                            "step size ≈ {:.4e} from time differences ÷ step differences",
                            dtime / k
                        ));
                    }
                }
            }
            (None, Some((c, k)), _) => self.notes.push(format!(
                "output every {k} solver steps (time increment ÷ step size {})",
                name(c)
            )),
            (None, None, Some(t)) => {
                let Some(dtime) = median_diff(t) else { return };
                self.notes.push(match given {
                    Some(h) => {
                        let k = dtime / h.value;
                        let whole = (k - k.round()).abs() <= WHOLE_TOL * k.round().max(1.0);
                        let check = if whole {
                            ""
                        } else {
                            ": not a whole number of steps, check the step size and the time's unit"
                        };
                        format!(
                            "output every {} solver steps ({dtime:.4e} of time per row ÷ {h}){check}",
                            fmt_count(if whole { k.round() } else { k })
                        )
                    }
                    None => format!(
                        "no step counter or step size: {dtime:.4e} of time per output row; the \
                         output stride is unknown, so growth is per output row; --step-size \
                         gives the solver's step"
                    ),
                });
            }
            (None, None, None) => {}
        }
    }
}

/// The middle value (the upper one of an even count).
fn median(mut v: Vec<f64>) -> Option<f64> {
    v.sort_by(f64::total_cmp);
    v.get(v.len() / 2).copied()
}

fn fmt_count(k: f64) -> String {
    if (k - k.round()).abs() < 1e-9 {
        format!("{}", k.round())
    } else {
        format!("{k:.2}")
    }
}

fn is_integer(v: f64) -> bool {
    v.is_finite() && (v - v.round()).abs() <= 1e-9 * v.abs().max(1.0)
}

/// Integers increasing from row to row; the reason names the increment.
fn counter(v: &[f64]) -> Option<String> {
    if v.len() < 2 || !v.iter().all(|x| is_integer(*x)) {
        return None;
    }
    let d: Vec<f64> = v.windows(2).map(|w| w[1] - w[0]).collect();
    if d.iter().any(|x| *x < 1.0) {
        return None;
    }
    let regular = d.iter().all(|x| *x == d[0]);
    Some(if regular {
        format!("integers rising by {} per row", fmt_count(d[0]))
    } else {
        "integers rising from row to row".to_owned()
    })
}

/// Finite, strictly increasing, not all integers, with increments that are
/// regular or change smoothly; the reason names the increments.
fn time_like(v: &[f64]) -> Option<String> {
    if v.len() < 2 || !v.iter().all(|x| x.is_finite()) || v.iter().all(|x| is_integer(*x)) {
        return None;
    }
    let d: Vec<f64> = v.windows(2).map(|w| w[1] - w[0]).collect();
    if d.iter().any(|x| *x <= 0.0) {
        return None;
    }
    let smooth = d
        .windows(2)
        .all(|w| w[1] / w[0] <= SMOOTH_RATIO && w[0] / w[1] <= SMOOTH_RATIO);
    if !smooth {
        return None;
    }
    let (lo, hi) = d
        .iter()
        .fold((f64::INFINITY, 0.0_f64), |(a, b), x| (a.min(*x), b.max(*x)));
    let rows = v.len();
    Some(if hi <= lo * (1.0 + WHOLE_TOL) {
        // The median, as the stride note gives the time per row.
        let mid = median(d).unwrap_or(lo);
        format!("increasing by a regular {mid:.4e} per row over {rows} rows")
    } else {
        format!("increasing by smoothly varying {lo:.4e} to {hi:.4e} per row over {rows} rows")
    })
}

/// The number of `dt` values in each time increment, when it is the same whole
/// number k ≥ 1 on every row (and equal to the step counter's increment when there
/// is one).
fn step_size(times: &[f64], dt: &[f64], steps: Option<&[f64]>) -> Option<u64> {
    if times.len() < 2 || !dt.iter().all(|h| h.is_finite() && *h > 0.0) {
        return None;
    }
    let mut whole = None;
    for i in 1..times.len() {
        let k = (times[i] - times[i - 1]) / dt[i];
        let r = k.round();
        if r < 1.0 || (k - r).abs() > WHOLE_TOL * r {
            return None;
        }
        if let Some(s) = steps
            && (s[i] - s[i - 1] - r).abs() > 0.5
        {
            return None;
        }
        match whole {
            None => whole = Some(r),
            Some(w) if w != r => return None,
            _ => {}
        }
    }
    whole.map(|w| w as u64)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rows(cols: &[Vec<f64>]) -> Vec<Vec<f64>> {
        (0..cols[0].len())
            .map(|i| cols.iter().map(|c| c[i]).collect())
            .collect()
    }

    fn infer(cols: &[Vec<f64>]) -> Inference {
        let r = rows(cols);
        let refs: Vec<&[f64]> = r.iter().map(Vec::as_slice).collect();
        headerless(&refs, None)
    }

    fn role_of(inf: &Inference, c: usize) -> Option<Role> {
        inf.inferred.iter().find(|i| i.column == c).map(|i| i.role)
    }

    #[test]
    fn time_step_and_stride_from_a_counter() {
        // Output every 3rd step of dt = 1e-3: step, time, two probes.
        let step: Vec<f64> = (0..8).map(|i| (3 * i) as f64).collect();
        let time: Vec<f64> = step.iter().map(|s| s * 1e-3).collect();
        let p: Vec<f64> = (0..8).map(|i| (i as f64).sin()).collect();
        let inf = infer(&[step, time, p.clone(), p]);
        assert_eq!(role_of(&inf, 0), Some(Role::StepNumber));
        assert_eq!(role_of(&inf, 1), Some(Role::Time));
        assert_eq!(role_of(&inf, 2), None);
        assert!(
            inf.notes[0].contains("every 3 solver steps"),
            "{:?}",
            inf.notes
        );
        assert!(inf.notes[1].contains("1.0000e-3"), "{:?}", inf.notes);
    }

    #[test]
    fn stride_from_a_step_size_column() {
        let dt = vec![2.5e-4; 6];
        let time: Vec<f64> = (1..=6).map(|i| i as f64 * 1e-3).collect();
        let p = vec![1.0, -2.0, 3.0, -4.0, 5.0, -6.0];
        let inf = infer(&[time, p, dt]);
        assert_eq!(role_of(&inf, 0), Some(Role::Time));
        assert_eq!(role_of(&inf, 2), Some(Role::StepSize));
        assert!(
            inf.notes[0].contains("every 4 solver steps"),
            "{:?}",
            inf.notes
        );
    }

    #[test]
    fn adaptive_time_without_counter_leaves_the_stride_unknown() {
        let mut t = 0.0;
        let mut h = 1e-3;
        let time: Vec<f64> = (0..8)
            .map(|_| {
                t += h;
                h *= 1.3;
                t
            })
            .collect();
        let inf = infer(&[time, vec![0.1; 8]]);
        assert_eq!(role_of(&inf, 0), Some(Role::Time));
        assert!(inf.inferred[0].reason.contains("smoothly varying"));
        assert!(
            inf.notes[0].contains("stride is unknown"),
            "{:?}",
            inf.notes
        );
    }

    #[test]
    fn what_is_not_time() {
        // A first column that oscillates: nothing inferred, and said.
        let inf = infer(&[vec![0.1, -0.2, 0.3, -0.1], vec![1.0, 2.0, 3.0, 4.5]]);
        assert!(inf.inferred.is_empty());
        assert!(inf.notes[0].contains("no column reads as time"));
        // A jump by a factor of 10 between increments is not a smooth clock.
        let inf = infer(&[vec![0.0, 1.0e-3, 2.0e-3, 1.2e-2], vec![1.0; 4]]);
        assert!(inf.inferred.is_empty());
        // A constant probe whose value does not divide the time increment.
        let time: Vec<f64> = (0..5).map(|i| i as f64 * 1e-3).collect();
        let inf = infer(&[time, vec![0.7e-3; 5]]);
        assert_eq!(role_of(&inf, 1), None);
    }
}
