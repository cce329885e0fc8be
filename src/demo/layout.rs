//! Text layouts of an invented solver's history: comma-separated with a header
//! that carries units, whitespace-separated with `#` comment lines, headerless,
//! JSON Lines, and fixed-width fields with `D` exponents in the style of Fortran
//! `Dw.d` editing (an exponent above 99 is written without its letter, or as a
//! field of asterisks when the exponent width is fixed at two digits).

/// One output column: plain words (for delimited headers), a short name (for
/// whitespace, fixed-width and JSON keys) and its unit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColumnName {
    pub words: String,
    pub short: String,
    pub unit: String,
}

impl ColumnName {
    /// A column name.
    pub fn new(words: &str, short: &str, unit: &str) -> Self {
        Self {
            words: words.into(),
            short: short.into(),
            unit: unit.into(),
        }
    }
}

/// A text layout for the history.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layout {
    /// `time [s],step size [s],...` then comma-separated rows, `{:.9e}` numbers.
    Csv,
    /// `#` comment lines, a header of short names with units in brackets, then
    /// rows separated by runs of spaces; non-finite values as C's printf writes them.
    Spaced,
    /// Rows only, separated by spaces.
    Headerless,
    /// One JSON object per row keyed by short names; non-finite numbers as the
    /// bare tokens `NaN` / `Infinity` that some JSON writers emit.
    JsonLines,
    /// Fixed-width fields of `width` characters, each after one blank, with
    /// `digits` significant digits and a `D` exponent; `exp2` forces a two-digit
    /// exponent (asterisks beyond 99); `!` comment lines.
    Fixed {
        width: usize,
        digits: usize,
        exp2: bool,
    },
}

/// Result of formatting one row.
#[derive(Debug, Clone, PartialEq)]
pub struct Formatted {
    pub line: String,
    /// A field could not be printed (asterisks) or a value is non-finite.
    pub overflowed: bool,
}

impl Layout {
    /// The header line, if this layout writes one.
    pub fn header(&self, cols: &[ColumnName]) -> Option<String> {
        match self {
            Layout::Csv => Some(
                cols.iter()
                    .map(|c| {
                        if c.unit.is_empty() {
                            c.words.clone()
                        } else {
                            format!("{} [{}]", c.words, c.unit)
                        }
                    })
                    .collect::<Vec<_>>()
                    .join(","),
            ),
            Layout::Spaced => Some(
                cols.iter()
                    .map(|c| {
                        let n = if c.unit.is_empty() {
                            c.short.clone()
                        } else {
                            format!("{}[{}]", c.short, c.unit)
                        };
                        format!("{n:>18}")
                    })
                    .collect::<String>(),
            ),
            Layout::Fixed { width, .. } => Some(
                cols.iter()
                    .map(|c| {
                        let n = if c.unit.is_empty() {
                            c.short.clone()
                        } else {
                            format!("{}[{}]", c.short, c.unit)
                        };
                        format!(" {n:>w$}", w = *width)
                    })
                    .collect::<String>(),
            ),
            Layout::Headerless | Layout::JsonLines => None,
        }
    }

    /// A comment line, if this layout has comments.
    pub fn comment(&self, text: &str) -> Option<String> {
        match self {
            Layout::Csv | Layout::Spaced | Layout::Headerless => Some(format!("# {text}")),
            Layout::Fixed { .. } => Some(format!("! {text}")),
            Layout::JsonLines => None,
        }
    }

    /// Format one row. `int_cols[i]` marks integer columns (step counters).
    pub fn row(&self, cols: &[ColumnName], values: &[f64], int_cols: &[bool]) -> Formatted {
        let mut overflowed = values.iter().any(|v| !v.is_finite());
        let is_int = |i: usize| int_cols.get(i).copied().unwrap_or(false);
        let line = match *self {
            Layout::Csv => values
                .iter()
                .enumerate()
                .map(|(i, v)| rust_num(*v, is_int(i)))
                .collect::<Vec<_>>()
                .join(","),
            Layout::Spaced | Layout::Headerless => values
                .iter()
                .enumerate()
                .map(|(i, v)| format!("{:>18}", c_num(*v, is_int(i))))
                .collect::<String>(),
            Layout::JsonLines => {
                let body = cols
                    .iter()
                    .zip(values)
                    .enumerate()
                    .map(|(i, (c, v))| format!("\"{}\":{}", c.short, json_num(*v, is_int(i))))
                    .collect::<Vec<_>>()
                    .join(",");
                format!("{{{body}}}")
            }
            Layout::Fixed {
                width,
                digits,
                exp2,
            } => values
                .iter()
                .enumerate()
                .map(|(i, v)| {
                    let f = if is_int(i) {
                        fixed_int(*v, width)
                    } else {
                        fortran_d(*v, width, digits, exp2)
                    };
                    if f.starts_with('*') {
                        overflowed = true;
                    }
                    // One blank before each field, as a 1X edit descriptor writes.
                    format!(" {f}")
                })
                .collect::<String>(),
        };
        Formatted { line, overflowed }
    }
}

fn rust_num(v: f64, int: bool) -> String {
    if int && v.is_finite() {
        format!("{}", v as i64)
    } else {
        format!("{v:.9e}")
    }
}

fn c_num(v: f64, int: bool) -> String {
    if v.is_nan() {
        "nan".into()
    } else if v.is_infinite() {
        if v > 0.0 { "inf".into() } else { "-inf".into() }
    } else if int {
        format!("{}", v as i64)
    } else {
        format!("{v:.8e}")
    }
}

fn json_num(v: f64, int: bool) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        if v > 0.0 {
            "Infinity".into()
        } else {
            "-Infinity".into()
        }
    } else if int {
        format!("{}", v as i64)
    } else {
        format!("{v:e}")
    }
}

fn fixed_int(v: f64, width: usize) -> String {
    let s = if v.is_finite() {
        format!("{}", v as i64)
    } else {
        String::new()
    };
    if s.is_empty() || s.len() > width {
        "*".repeat(width)
    } else {
        format!("{s:>width$}")
    }
}

/// Fortran-style `Dw.d` editing: `0.ddddddD±ee`, right-justified in `width`;
/// exponents of three digits are written without the letter (`0.123456+105`)
/// unless `exp2` fixes the exponent at two digits, in which case the whole field
/// is asterisks; NaN and infinities are written as `NaN` and `Infinity`.
pub fn fortran_d(v: f64, width: usize, digits: usize, exp2: bool) -> String {
    let stars = "*".repeat(width);
    if v.is_nan() {
        return format!("{:>width$}", "NaN");
    }
    if v.is_infinite() {
        let s = if v > 0.0 { "Infinity" } else { "-Infinity" };
        return if s.len() <= width {
            format!("{s:>width$}")
        } else {
            stars
        };
    }
    let digits = digits.max(1);
    let (mant, exp) = if v == 0.0 {
        ("0".repeat(digits), 0)
    } else {
        // x = d.ddd·10^e  →  0.dddd·10^(e+1).
        let s = format!("{:.*e}", digits - 1, v.abs());
        let (m, e) = s.split_once('e').unwrap_or((&s, "0"));
        let e: i32 = e.parse().unwrap_or(0);
        (m.replace('.', ""), e + 1)
    };
    let sign = if v < 0.0 { "-" } else { "" };
    let esign = if exp < 0 { '-' } else { '+' };
    let ea = exp.unsigned_abs();
    let body = if ea <= 99 {
        format!("{sign}0.{mant}D{esign}{ea:02}")
    } else if !exp2 && ea <= 999 {
        format!("{sign}0.{mant}{esign}{ea:03}")
    } else {
        return stars;
    };
    if body.len() > width {
        stars
    } else {
        format!("{body:>width$}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fortran_d_editing() {
        // Expected strings follow the Fortran rules for Dw.d editing (0.d…d mantissa,
        // two-digit exponent with letter, three-digit exponent without letter),
        // e.g. Intel Fortran Language Reference, "E and D Editing".
        assert_eq!(fortran_d(1234.5, 14, 6, false), "  0.123450D+04");
        assert_eq!(fortran_d(-0.00123, 14, 6, false), " -0.123000D-02");
        assert_eq!(fortran_d(0.0, 14, 6, false), "  0.000000D+00");
        assert_eq!(fortran_d(1.5e105, 14, 6, false), "  0.150000+106");
        assert_eq!(fortran_d(1.5e105, 14, 6, true), "**************");
        assert_eq!(fortran_d(f64::NAN, 14, 6, true), "           NaN");
    }

    #[test]
    fn csv_header_carries_units() {
        let cols = vec![
            ColumnName::new("time", "t", "s"),
            ColumnName::new("step", "step", ""),
        ];
        assert_eq!(Layout::Csv.header(&cols).as_deref(), Some("time [s],step"));
        let f = Layout::Csv.row(&cols, &[0.5, 3.0], &[false, true]);
        assert_eq!(f.line, "5.000000000e-1,3");
        assert!(!f.overflowed);
    }
}
