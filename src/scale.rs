//! How plotted values reach a chart: the one transform shared by the
//! dashboard's charts and the report image. A [`Scale`] maps data to axis
//! units (linear, log10, or symmetric log where the values span many
//! decades); [`fit`] takes a chart's series through it and into the unit
//! square, so a chart widget only ever sees finite coordinates in `[0, 1]`,
//! whatever the run wrote (±1e308, infinities, NaN, subnormals). Pure: no
//! terminal, no files.

/// How a chart maps y values to its axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scale {
    /// y times a factor (100 shows fractions as percent).
    Linear(f64),
    /// log10 y, for positive values spanning many decades.
    Log,
    /// sign(y)·log10(1 + |y|/c): linear near zero, logarithmic far out, for
    /// signed data spanning many decades (Webber, "A bi-symmetric log
    /// transformation for wide-range data", Meas. Sci. Technol. 24, 2013).
    SymLog(f64),
}

impl Scale {
    /// Axis units of `y`; `None` when `y` has no place on this axis (NaN, a
    /// value ≤ 0 on a log axis, or a result that is not finite).
    pub fn map(self, y: f64) -> Option<f64> {
        let t = match self {
            Scale::Linear(k) => y * k,
            Scale::Log => {
                if y > 0.0 {
                    y.log10()
                } else {
                    return None;
                }
            }
            Scale::SymLog(c) => y.signum() * (y.abs() / c).ln_1p() / std::f64::consts::LN_10,
        };
        t.is_finite().then_some(t)
    }

    /// Back from axis units to data units (for labels), saturated to the
    /// finite range.
    pub fn unmap(self, t: f64) -> f64 {
        let v = match self {
            Scale::Linear(k) => t / k,
            Scale::Log => 10f64.powf(t),
            Scale::SymLog(c) => t.signum() * c * (10f64.powf(t.abs()) - 1.0),
        };
        saturate(v)
    }

    /// Linear unless the finite values span more than `decades`: then log10
    /// when all are positive, else symmetric log about the median magnitude.
    pub fn choose(values: impl IntoIterator<Item = f64>, decades: f64) -> Scale {
        let mut mags: Vec<f64> = values.into_iter().filter(|y| y.is_finite()).collect();
        let all_positive = mags.iter().all(|&y| y > 0.0);
        mags.iter_mut().for_each(|y| *y = y.abs());
        mags.retain(|&y| y > 0.0);
        if mags.is_empty() {
            return Scale::Linear(1.0);
        }
        mags.sort_by(f64::total_cmp);
        let (lo, hi) = (mags[0], mags[mags.len() - 1]);
        let median = mags[mags.len() / 2];
        if all_positive && (hi / lo).log10() > decades {
            Scale::Log
        } else if (hi / median).log10() > decades {
            // A power of ten, so ticks at whole axis units read as round numbers.
            Scale::SymLog(10f64.powf(median.log10().round()))
        } else {
            Scale::Linear(1.0)
        }
    }

    /// A word for the axis when it is not linear.
    pub fn word(self) -> Option<&'static str> {
        match self {
            Scale::Linear(_) => None,
            Scale::Log => Some("log"),
            Scale::SymLog(_) => Some("sym. log"),
        }
    }
}

/// A value clamped to the finite range (NaN stays NaN).
fn saturate(v: f64) -> f64 {
    if v.is_nan() {
        v
    } else {
        v.clamp(-f64::MAX, f64::MAX)
    }
}

/// A plotted value made finite: NaN has no place (a gap), ±inf sits at the
/// largest finite magnitude.
pub fn tame(v: f64) -> Option<f64> {
    (!v.is_nan()).then(|| saturate(v))
}

/// Where `v` lies between `lo` and `hi`, as a fraction in `[0, 1]`; `0.5` when
/// the range is empty. Computed on halves so that no difference of two finite
/// values overflows.
pub fn unit(v: f64, lo: f64, hi: f64) -> f64 {
    let d = hi / 2.0 - lo / 2.0;
    if !(d > 0.0 && d.is_finite()) {
        return 0.5;
    }
    let u = (v / 2.0 - lo / 2.0) / d;
    if u.is_nan() { 0.5 } else { u.clamp(0.0, 1.0) }
}

/// A chart's data taken into the unit square.
#[derive(Debug, Clone, PartialEq)]
pub struct Fitted {
    /// How y was mapped.
    pub scale: Scale,
    /// Each series' points, x and y in `[0, 1]`; NaN values are left out.
    pub series: Vec<Vec<(f64, f64)>>,
    /// Height of the reference line in `[0, 1]`.
    pub reference: Option<f64>,
    /// Data values at the bottom, middle and top of the plot (y = 0, ½, 1):
    /// the least and greatest value drawn, and the middle of the axis.
    pub y_labels: [f64; 3],
}

/// Fit `series` (x, y in data units) and an optional reference height into the
/// unit square: x across the window `x`, y across the range of the values
/// after the scale chosen for them (symmetric log beyond `decades`); the
/// least value sits on the bottom edge, the greatest on the top edge. `None`
/// when no series has a value (NaN is no value).
/// Cost: one pass over the points plus a sort of their magnitudes.
pub fn fit(
    series: &[&[(f64, f64)]],
    reference: Option<f64>,
    x: (f64, f64),
    decades: f64,
) -> Option<Fitted> {
    let ys = || {
        series
            .iter()
            .flat_map(|s| s.iter().map(|p| p.1))
            .filter_map(tame)
    };
    ys().next()?;
    let scale = Scale::choose(ys().chain(reference.and_then(tame)), decades);
    let at = |y: f64| tame(y).and_then(|y| scale.map(y));
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for m in ys().chain(reference.and_then(tame)).filter_map(&at) {
        lo = lo.min(m);
        hi = hi.max(m);
    }
    if lo > hi {
        return None;
    }
    let (x0, x1) = (
        tame(x.0).unwrap_or(0.0),
        tame(x.1).unwrap_or(0.0).max(tame(x.0).unwrap_or(0.0)),
    );
    let y_unit = |m: f64| unit(m, lo, hi);
    let out: Vec<Vec<(f64, f64)>> = series
        .iter()
        .map(|s| {
            s.iter()
                .filter_map(|&(px, py)| {
                    let m = at(py)?;
                    let ux = tame(px).map_or(0.0, |px| unit(px, x0, x1));
                    Some((ux, y_unit(m)))
                })
                .collect()
        })
        .collect();
    let y_labels = if hi > lo {
        [lo, lo / 2.0 + hi / 2.0, hi]
    } else {
        let d = (lo.abs() * 0.01).max(1e-300);
        [saturate(lo - d), lo, saturate(lo + d)]
    };
    Some(Fitted {
        scale,
        reference: reference.and_then(&at).map(y_unit),
        series: out,
        y_labels: y_labels.map(|t| scale.unmap(t)),
    })
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    /// Tolerance of the round trips below: a few ulps of the axis value.
    const ROUND_TRIP: f64 = 1e-12;

    #[test]
    fn symmetric_log_is_odd_and_inverts() {
        // Webber (2013), eq. 1 with C = 1: y = ±9 maps to ±1 decade.
        let s = Scale::SymLog(1.0);
        assert!((s.map(9.0).unwrap() - 1.0).abs() < ROUND_TRIP);
        assert!((s.map(-9.0).unwrap() + 1.0).abs() < ROUND_TRIP);
        assert_eq!(s.map(0.0), Some(0.0));
        for y in [-1e300, -3.5, 0.25, 7e12] {
            let back = s.unmap(s.map(y).unwrap());
            assert!(((back - y) / y).abs() < 1e-9, "{y} → {back}");
        }
    }

    #[test]
    fn the_scale_follows_the_decades_spanned() {
        assert_eq!(Scale::choose([1.0, 2.0, 3.0], 4.0), Scale::Linear(1.0));
        assert_eq!(Scale::choose([1.0, 2.0, 1e9], 4.0), Scale::Log);
        assert!(matches!(
            Scale::choose([-1.0, 2.0, 1.5, 1e75], 4.0),
            Scale::SymLog(c) if c == 1.0
        ));
        assert_eq!(
            Scale::choose([f64::NAN, f64::INFINITY], 4.0),
            Scale::Linear(1.0)
        );
    }

    #[test]
    fn extreme_values_land_inside_the_unit_square() {
        let pts = [
            (0.0, 0.0),
            (1.0, 1e308),
            (2.0, -f64::MAX),
            (3.0, f64::INFINITY),
            (4.0, f64::NAN),
            (5.0, 5e-324),
        ];
        let f = fit(&[&pts], Some(1.0), (0.0, 5.0), 4.0).unwrap();
        assert_eq!(f.series[0].len(), 5, "NaN is left out, inf is clamped");
        for (x, y) in &f.series[0] {
            assert!((0.0..=1.0).contains(x) && (0.0..=1.0).contains(y));
        }
        assert!(f.y_labels.iter().all(|v| v.is_finite()));
        assert!(f.y_labels[0] < f.y_labels[2]);
    }

    #[test]
    fn equal_values_sit_in_the_middle() {
        let pts = [(0.0, 2.5), (1.0, 2.5)];
        let f = fit(&[&pts], None, (0.0, 1.0), 4.0).unwrap();
        assert_eq!(f.series[0], vec![(0.0, 0.5), (1.0, 0.5)]);
        assert!(f.y_labels[0] < 2.5 && 2.5 < f.y_labels[2]);
        assert!(fit(&[&[(0.0, f64::NAN)]], None, (0.0, 1.0), 4.0).is_none());
    }

    #[test]
    fn labels_of_a_linear_axis_are_the_ends_of_the_data() {
        let pts = [(0.0, 0.0), (1.0, 9.0), (2.0, 3.0)];
        let f = fit(&[&pts], None, (0.0, 2.0), 4.0).unwrap();
        assert_eq!(f.y_labels, [0.0, 4.5, 9.0]);
        assert_eq!(f.series[0], vec![(0.0, 0.0), (0.5, 1.0), (1.0, 1.0 / 3.0)]);
    }

    #[test]
    fn a_symmetric_log_axis_labels_its_middle_in_data_units() {
        let pts = [(0.0, -1.0), (1.0, 1.0), (2.0, 2.0), (3.0, 1e75)];
        let f = fit(&[&pts], None, (0.0, 3.0), 4.0).unwrap();
        assert!(matches!(f.scale, Scale::SymLog(_)));
        assert!((f.y_labels[2] / 1e75 - 1.0).abs() < 1e-9);
        // Half way up a log axis is near the geometric middle, not 5e74.
        assert!(f.y_labels[1] < 1e40, "{}", f.y_labels[1]);
    }
}
