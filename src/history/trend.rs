//! Trend of a positive signal (the time step) over a window: the least-squares
//! slope of ln y against x, reported as the relative change per unit x.
//! Ordinary least squares for a straight line (any statistics text; e.g.
//! Montgomery & Runger, *Applied Statistics and Probability for Engineers*,
//! 2014, eq. 11-7 and 11-8).

/// Relative change of `y` per unit `x` fitted over the samples (exp(slope) − 1
/// of the line through (x, ln y)). Non-positive or non-finite y are left out;
/// `None` with fewer than 3 usable samples or no spread in x.
pub fn relative_change_per_unit(samples: impl IntoIterator<Item = (f64, f64)>) -> Option<f64> {
    let (mut n, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    // Shift x by the first sample to keep the sums well conditioned.
    let mut x0 = None;
    for (x, y) in samples {
        if !(y > 0.0 && y.is_finite() && x.is_finite()) {
            continue;
        }
        let base = *x0.get_or_insert(x);
        let x = x - base;
        let ly = y.ln();
        n += 1.0;
        sx += x;
        sy += ly;
        sxx += x * x;
        sxy += x * ly;
    }
    if n < 3.0 {
        return None;
    }
    let sxx_c = sxx - sx * sx / n;
    if sxx_c <= 0.0 {
        return None;
    }
    let slope = (sxy - sx * sy / n) / sxx_c;
    Some(slope.exp_m1())
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    // Tolerance: rounding of sums of ~100 logarithms in f64.
    const TOL: f64 = 1e-9;

    #[test]
    fn exact_geometric_decay_is_recovered() {
        // y = 2·0.99^x: closed form, relative change −1 % per unit x.
        let s = (0..100).map(|i| (f64::from(i), 2.0 * 0.99f64.powi(i)));
        let r = relative_change_per_unit(s).unwrap();
        assert!((r + 0.01).abs() < TOL, "{r}");
    }

    #[test]
    fn constant_step_has_no_trend_and_bad_samples_are_ignored() {
        let s = vec![
            (0.0, 1e-6),
            (1.0, 1e-6),
            (2.0, f64::NAN),
            (3.0, 1e-6),
            (4.0, 0.0),
        ];
        let r = relative_change_per_unit(s).unwrap();
        assert!(r.abs() < TOL);
        assert!(relative_change_per_unit(vec![(1.0, 1.0), (1.0, 2.0), (1.0, 3.0)]).is_none());
    }
}
