//! Short, fixed-width renderings of numbers, counts and durations for panels.

/// A number with `sig` significant digits: plain notation between 1e-3 and 1e5,
/// scientific outside; `—` for a missing or non-finite value.
pub fn num(v: Option<f64>, sig: usize) -> String {
    match v {
        None => "—".into(),
        Some(v) if v.is_nan() => "NaN".into(),
        Some(v) if v.is_infinite() => if v > 0.0 { "+inf" } else { "-inf" }.into(),
        Some(v) => {
            let sig = sig.max(1);
            let a = v.abs();
            if a == 0.0 {
                "0".into()
            } else if (1e-3..1e5).contains(&a) {
                let mag = a.log10().floor() as i32;
                let decimals = (sig as i32 - 1 - mag).max(0) as usize;
                format!("{v:.decimals$}")
            } else {
                format!("{v:.*e}", sig - 1)
            }
        }
    }
}

/// A simulated time, the one way every screen writes it: `t 9.4130 s`
/// (five significant digits).
pub fn sim_time(t: f64) -> String {
    format!("t {} s", num(Some(t), 5))
}

/// A signed percentage of a fraction: `+1.23 %`.
pub fn pct(frac: Option<f64>) -> String {
    match frac {
        Some(f) if f.is_finite() && (100.0 * f).abs() < 0.005 => "0.00 %".into(),
        Some(f) if f.is_finite() && (100.0 * f).abs() < 1e5 => format!("{:+.2} %", 100.0 * f),
        // Past 10⁵ % (or overflowing when scaled) in scientific notation.
        Some(f) if f.is_finite() => format!("{:+.2e} %", 100.0 * f),
        Some(_) => "NaN".into(),
        None => "—".into(),
    }
}

/// A frequency in Hz or kHz: `200.0 Hz`, `50.00 kHz`.
pub fn hz(v: Option<f64>) -> String {
    match v {
        Some(f) if f.is_finite() && f.abs() >= 1e3 => format!("{} kHz", num(Some(f / 1e3), 4)),
        Some(_) => format!("{} Hz", num(v, 4)),
        None => "—".into(),
    }
}

/// Labels for the two ends of an axis, with enough digits to tell them apart.
pub fn axis_labels(lo: f64, hi: f64) -> [String; 2] {
    let scale = lo.abs().max(hi.abs());
    let spread = (hi - lo).abs();
    let sig = if spread > 0.0 && scale > 0.0 {
        ((scale / spread).log10().ceil() as usize + 2).clamp(3, 8)
    } else {
        3
    };
    [num(Some(lo), sig), num(Some(hi), sig)]
}

/// A count with thin thousands separators: `12,345,678`.
pub fn count(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, ch) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

/// A wall-clock duration: `3 s`, `4m 12s`, `2h 05m`, `3d 04h`.
pub fn duration(seconds: Option<f64>) -> String {
    let Some(s) = seconds.filter(|s| s.is_finite()) else {
        return "—".into();
    };
    let neg = s < 0.0;
    let s = s.abs().round() as u64;
    let body = if s < 60 {
        format!("{s} s")
    } else if s < 3_600 {
        format!("{}m {:02}s", s / 60, s % 60)
    } else if s < 86_400 {
        format!("{}h {:02}m", s / 3_600, (s % 3_600) / 60)
    } else {
        format!("{}d {:02}h", s / 86_400, (s % 86_400) / 3_600)
    };
    if neg { format!("-{body}") } else { body }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers() {
        assert_eq!(num(Some(1.004_213), 5), "1.0042");
        assert_eq!(num(Some(1.0e-6), 3), "1.00e-6");
        assert_eq!(num(Some(-12_345.0), 3), "-12345");
        assert_eq!(num(None, 3), "—");
        assert_eq!(num(Some(f64::NAN), 3), "NaN");
        assert_eq!(pct(Some(0.0123)), "+1.23 %");
        assert_eq!(pct(Some(-1e-7)), "0.00 %");
        assert_eq!(pct(Some(1e300)), "+1.00e302 %");
        assert_eq!(pct(Some(f64::MAX)), "+inf %");
        assert_eq!(hz(Some(50_000.0)), "50.00 kHz");
        let [a, b] = axis_labels(0.99997, 1.00001);
        assert_ne!(a, b);
    }

    #[test]
    fn counts_and_durations() {
        assert_eq!(count(0), "0");
        assert_eq!(count(1_234_567), "1,234,567");
        assert_eq!(duration(Some(59.4)), "59 s");
        assert_eq!(duration(Some(252.0)), "4m 12s");
        assert_eq!(duration(Some(7_500.0)), "2h 05m");
        assert_eq!(duration(Some(-90.0)), "-1m 30s");
    }
}
