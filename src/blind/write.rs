//! Writing a [`Trace`] as a solver would: delimiters, headers, number
//! spellings of C, Fortran and Python writers (including their spellings of
//! NaN and infinity, Fortran's exponent without the letter past 99, and
//! asterisks when a fixed field overflows). Pure: returns bytes and the
//! physical line of each row.

use super::trace::{Item, Role, Trace, overflowed};

/// How fields are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delim {
    /// `a,b,c`
    Comma,
    /// Fields right-aligned to the layout's width, separated by spaces.
    Spaces,
    /// `a<TAB>b`
    Tab,
    /// `a;b;c`
    Semicolon,
    /// Fortran fixed width: fields of exactly the layout's width, no separator.
    Fixed,
    /// One JSON object a line.
    Jsonl,
}

/// How numbers are spelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Num {
    /// C `%.<p>e` (or `%.<p>E` when upper).
    Sci {
        /// Digits after the point.
        prec: usize,
        /// Capital `E`.
        upper: bool,
    },
    /// C `%.<p>g`.
    General(usize),
    /// Python's shortest round-trip `repr`.
    Short,
    /// Fortran `Dw.d`: `0.ddddD+ee`, letter dropped past exponent 99.
    FortranD(usize),
    /// Fortran `Ew.d`: `0.ddddE+ee`.
    FortranE(usize),
    /// Fortran `Fw.d`: asterisks when the value does not fit the width.
    FixedF(usize),
}

/// How a header is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HeaderStyle {
    /// No header line at all.
    None,
    /// Names on their own line.
    Plain,
    /// Names after `# `.
    Hash,
}

/// How NaN and infinity are spelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NonFinite {
    /// C printf: `nan`, `-nan`, `inf`, `-inf`.
    C,
    /// Fortran: `NaN`, `Infinity`, `-Infinity`.
    Fortran,
    /// Python: `nan`, `inf`, `-inf`.
    Python,
}

/// A file layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Layout {
    /// Separator.
    pub delim: Delim,
    /// Number spelling.
    pub num: Num,
    /// Header style.
    pub header: HeaderStyle,
    /// NaN / infinity spelling.
    pub nonfinite: NonFinite,
    /// Field width for `Spaces` (0: no alignment) and `Fixed`.
    pub width: usize,
}

impl Layout {
    /// A layout with C `%.6e` numbers and C spellings.
    pub fn new(delim: Delim, header: HeaderStyle) -> Layout {
        Layout {
            delim,
            num: Num::Sci {
                prec: 6,
                upper: false,
            },
            header,
            nonfinite: NonFinite::C,
            width: 0,
        }
    }

    /// The same layout with another number spelling.
    pub fn num(mut self, num: Num) -> Layout {
        self.num = num;
        self
    }

    /// The same layout with another field width.
    pub fn width(mut self, width: usize) -> Layout {
        self.width = width;
        self
    }

    /// The same layout with other NaN / infinity spellings.
    pub fn nonfinite(mut self, nonfinite: NonFinite) -> Layout {
        self.nonfinite = nonfinite;
        self
    }
}

/// The written file and where its rows and stop message landed.
#[derive(Debug, Clone, PartialEq)]
pub struct Written {
    /// The file's bytes.
    pub bytes: Vec<u8>,
    /// 1-based physical line of each data row, in order.
    pub row_lines: Vec<u64>,
    /// Whether each row has a field that is not a finite number as written
    /// (NaN, infinity, asterisks) or is at least 1e300 in magnitude.
    pub bad_rows: Vec<bool>,
    /// 1-based physical line of the solver's stop message.
    pub stop_line: Option<u64>,
}

/// Write a trace in a layout.
pub fn write(trace: &Trace, layout: &Layout) -> Written {
    let mut out = Written {
        bytes: Vec::new(),
        row_lines: Vec::new(),
        bad_rows: Vec::new(),
        stop_line: None,
    };
    let mut line = 0u64;
    let mut push = |out: &mut Written, text: &str| {
        out.bytes.extend_from_slice(text.as_bytes());
        out.bytes.push(b'\n');
        line += 1;
        line
    };
    for item in &trace.items {
        match item {
            Item::Text(t) => {
                push(&mut out, t);
            }
            Item::Stop(t) => {
                let l = push(&mut out, t);
                out.stop_line = Some(l);
            }
            Item::Header => {
                if layout.header != HeaderStyle::None && layout.delim != Delim::Jsonl {
                    let h = header(trace, layout);
                    push(&mut out, &h);
                }
            }
            Item::Row(r) => {
                let mut bad = false;
                let mut fields = Vec::with_capacity(r.values.len());
                for (c, &v) in trace.columns.iter().zip(&r.values) {
                    let (text, is_bad) = field(v, c.role, layout);
                    bad |= is_bad;
                    fields.push((c.name.as_str(), text));
                }
                let text = join(&fields, layout);
                let l = push(&mut out, &text);
                out.row_lines.push(l);
                out.bad_rows.push(bad);
            }
        }
    }
    out
}

fn header(trace: &Trace, layout: &Layout) -> String {
    let names: Vec<&str> = trace.columns.iter().map(|c| c.name.as_str()).collect();
    let body = match layout.delim {
        Delim::Comma => names.join(","),
        Delim::Semicolon => names.join(";"),
        Delim::Tab => names.join("\t"),
        Delim::Spaces if layout.width > 0 => names
            .iter()
            .map(|n| format!("{n:>w$}", w = layout.width))
            .collect::<Vec<_>>()
            .join(" "),
        Delim::Spaces => names.join(" "),
        Delim::Fixed => names
            .iter()
            .map(|n| format!("{n:>w$}", w = layout.width))
            .collect::<String>(),
        Delim::Jsonl => String::new(),
    };
    match layout.header {
        HeaderStyle::Hash => format!("# {}", body.trim_start()),
        _ => body,
    }
}

fn join(fields: &[(&str, String)], layout: &Layout) -> String {
    match layout.delim {
        Delim::Comma => fields
            .iter()
            .map(|f| f.1.as_str())
            .collect::<Vec<_>>()
            .join(","),
        Delim::Semicolon => fields
            .iter()
            .map(|f| f.1.as_str())
            .collect::<Vec<_>>()
            .join(";"),
        Delim::Tab => fields
            .iter()
            .map(|f| f.1.as_str())
            .collect::<Vec<_>>()
            .join("\t"),
        Delim::Spaces if layout.width > 0 => fields
            .iter()
            .map(|f| format!("{:>w$}", f.1, w = layout.width))
            .collect::<Vec<_>>()
            .join(" "),
        Delim::Spaces => fields
            .iter()
            .map(|f| f.1.as_str())
            .collect::<Vec<_>>()
            .join(" "),
        Delim::Fixed => fields
            .iter()
            .map(|f| format!("{:>w$}", f.1, w = layout.width))
            .collect::<String>(),
        Delim::Jsonl => {
            let body: Vec<String> = fields
                .iter()
                .map(|(n, t)| format!("\"{n}\": {t}"))
                .collect();
            format!("{{{}}}", body.join(", "))
        }
    }
}

/// One field's text, and whether it is bad as written.
fn field(v: f64, role: Role, layout: &Layout) -> (String, bool) {
    if !v.is_finite() {
        return (nonfinite(v, layout), true);
    }
    if role == Role::Step {
        return (format!("{}", v.round() as i64), overflowed(v));
    }
    let text = match layout.num {
        Num::Sci { prec, upper } => c_sci(v, prec, upper),
        Num::General(p) => c_general(v, p),
        Num::Short => py_repr(v),
        Num::FortranD(d) => fortran_exp(v, d, 'D'),
        Num::FortranE(d) => fortran_exp(v, d, 'E'),
        Num::FixedF(d) => format!("{v:.d$}"),
    };
    if layout.delim == Delim::Fixed && text.len() > layout.width {
        return ("*".repeat(layout.width), true);
    }
    (text, overflowed(v))
}

fn nonfinite(v: f64, layout: &Layout) -> String {
    let fortran = |w: usize| {
        if v.is_nan() {
            "NaN".to_string()
        } else {
            let word = if w >= 9 || w == 0 { "Infinity" } else { "Inf" };
            if v < 0.0 {
                format!("-{word}")
            } else {
                word.to_string()
            }
        }
    };
    match (layout.delim, layout.nonfinite) {
        (Delim::Jsonl, _) if v.is_nan() => "NaN".into(),
        (Delim::Jsonl, _) if v > 0.0 => "Infinity".into(),
        (Delim::Jsonl, _) => "-Infinity".into(),
        (_, NonFinite::Fortran) => fortran(layout.width),
        (_, NonFinite::C) if v.is_nan() => {
            if v.is_sign_negative() {
                "-nan".into()
            } else {
                "nan".into()
            }
        }
        (_, NonFinite::Python) if v.is_nan() => "nan".into(),
        (_, _) if v > 0.0 => "inf".into(),
        (_, _) => "-inf".into(),
    }
}

/// C `%.<prec>e`: one digit, point, `prec` digits, `e`, sign, at least two
/// exponent digits.
pub fn c_sci(v: f64, prec: usize, upper: bool) -> String {
    let s = format!("{v:.prec$e}");
    let (mant, exp) = s.split_once('e').unwrap_or((&s, "0"));
    let e: i32 = exp.parse().unwrap_or(0);
    let letter = if upper { 'E' } else { 'e' };
    let sign = if e < 0 { '-' } else { '+' };
    format!("{mant}{letter}{sign}{:02}", e.abs())
}

/// C `%.<p>g`: the shorter of fixed and exponent forms, trailing zeros cut.
pub fn c_general(v: f64, p: usize) -> String {
    let p = p.max(1);
    if v == 0.0 {
        return "0".into();
    }
    let s = format!("{v:.prec$e}", prec = p - 1);
    let e: i32 = s
        .split_once('e')
        .and_then(|(_, e)| e.parse().ok())
        .unwrap_or(0);
    if e < -4 || e >= p as i32 {
        let t = c_sci(v, p - 1, false);
        let (mant, exp) = t.split_once('e').unwrap_or((&t, ""));
        format!("{}e{exp}", trim_zeros(mant))
    } else {
        let decimals = (p as i32 - 1 - e).max(0) as usize;
        trim_zeros(&format!("{v:.decimals$}")).to_string()
    }
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}

/// Python's `repr` of a float: shortest round trip, exponent form below 1e-4
/// and from 1e16, exponent with sign and two digits at least.
pub fn py_repr(v: f64) -> String {
    let a = v.abs();
    if a != 0.0 && !(1e-4..1e16).contains(&a) {
        let s = format!("{v:e}");
        let (mant, exp) = s.split_once('e').unwrap_or((&s, "0"));
        let e: i32 = exp.parse().unwrap_or(0);
        let sign = if e < 0 { '-' } else { '+' };
        format!("{mant}e{sign}{:02}", e.abs())
    } else {
        let s = format!("{v:?}");
        if s.contains('.') || s.contains('e') {
            s
        } else {
            format!("{s}.0")
        }
    }
}

/// Fortran `Ew.d` / `Dw.d` without the width: `0.ddddD+ee`; exponents past
/// 99 drop the letter (`0.dddd+105`).
pub fn fortran_exp(v: f64, d: usize, letter: char) -> String {
    if v == 0.0 {
        return format!("0.{}{letter}+00", "0".repeat(d));
    }
    // d significant digits as 0.ddd × 10^(e+1).
    let s = format!("{:.prec$e}", v.abs(), prec = d.saturating_sub(1));
    let (mant, exp) = s.split_once('e').unwrap_or((&s, "0"));
    let e: i32 = exp.parse::<i32>().unwrap_or(0) + 1;
    let digits: String = mant.chars().filter(|c| c.is_ascii_digit()).collect();
    let sign = if v < 0.0 { "-" } else { "" };
    let esign = if e < 0 { '-' } else { '+' };
    if e.abs() > 99 {
        format!("{sign}0.{digits}{esign}{:03}", e.abs())
    } else {
        format!("{sign}0.{digits}{letter}{esign}{:02}", e.abs())
    }
}
