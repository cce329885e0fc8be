//! Numbers as solvers print them. A fast path hands the field to `fast-float2`;
//! only fields it rejects take the tolerant slow path, which reads Fortran `D`
//! exponents, Fortran's letter-less three-digit exponents (`0.1234+105`), fields
//! of asterisks (a value that did not fit its print width), quoted numbers and
//! the many spellings of NaN and infinity that C and Fortran runtimes write.

use super::field_overflow;

/// Read a whole field as a number; `None` when it is not one.
///
/// Leading and trailing blanks are ignored.
pub fn parse_field(field: &[u8]) -> Option<f64> {
    let field = trim(field);
    if field.is_empty() {
        return None;
    }
    if let Ok(v) = fast_float2::parse::<f64, _>(field) {
        return Some(v);
    }
    parse_slow(field)
}

/// Trim ASCII blanks (space, tab, CR) from both ends.
pub fn trim(mut s: &[u8]) -> &[u8] {
    while let [first, rest @ ..] = s {
        if matches!(first, b' ' | b'\t' | b'\r') {
            s = rest;
        } else {
            break;
        }
    }
    while let [rest @ .., last] = s {
        if matches!(last, b' ' | b'\t' | b'\r') {
            s = rest;
        } else {
            break;
        }
    }
    s
}

/// The tolerant path for a trimmed, non-empty field the fast parser rejected.
pub fn parse_slow(field: &[u8]) -> Option<f64> {
    let field = strip_quotes(field);
    if field.is_empty() || field.len() > 64 {
        return None;
    }
    if field.iter().all(|&b| b == b'*') {
        return Some(field_overflow());
    }
    if let Some(v) = non_finite_word(field) {
        return Some(v);
    }
    // Rewrite into a buffer the fast parser accepts: D/d/Q/q exponent → E, an
    // exponent sign directly after a mantissa digit or point → E±, and a decimal
    // comma → point (a field holding a comma was not split on commas).
    let mut buf = [0u8; 72];
    let mut n = 0;
    let mut seen_digit = false;
    let mut seen_exp = false;
    let mut seen_point = false;
    for (i, &b) in field.iter().enumerate() {
        let out = match b {
            b'0'..=b'9' => {
                seen_digit = true;
                b
            }
            b'd' | b'D' | b'q' | b'Q' | b'e' | b'E' if seen_digit && !seen_exp => {
                seen_exp = true;
                b'E'
            }
            b'+' | b'-' if i > 0 && seen_digit && !seen_exp => {
                let prev = field[i - 1];
                if prev.is_ascii_digit() || prev == b'.' {
                    seen_exp = true;
                    buf[n] = b'E';
                    n += 1;
                    b
                } else {
                    return None;
                }
            }
            b'.' | b',' if !seen_point && !seen_exp => {
                seen_point = true;
                b'.'
            }
            b'+' | b'-' => b,
            _ => return None,
        };
        if n >= buf.len() {
            return None;
        }
        buf[n] = out;
        n += 1;
    }
    fast_float2::parse::<f64, _>(&buf[..n]).ok()
}

fn strip_quotes(field: &[u8]) -> &[u8] {
    match field {
        [b'"', inner @ .., b'"'] | [b'\'', inner @ .., b'\''] => trim(inner),
        _ => field,
    }
}

/// NaN and infinity as C, Fortran and other runtimes print them: `nan`, `-nan`,
/// `NaN`, `nan(0x8000)`, `NaNQ`, `inf`, `-Infinity`, `+Inf`, `1.#INF`, `-1.#IND`,
/// `1.#QNAN`.
fn non_finite_word(field: &[u8]) -> Option<f64> {
    let (negative, body) = match field {
        [b'-', rest @ ..] => (true, rest),
        [b'+', rest @ ..] => (false, rest),
        _ => (false, field),
    };
    let lower = |s: &[u8], word: &[u8]| s.eq_ignore_ascii_case(word);
    let starts = |s: &[u8], word: &[u8]| s.len() >= word.len() && lower(&s[..word.len()], word);
    let inf = if negative {
        f64::NEG_INFINITY
    } else {
        f64::INFINITY
    };
    if lower(body, b"inf") || lower(body, b"infinity") || lower(body, b"1.#inf") {
        return Some(inf);
    }
    if lower(body, b"nan")
        || lower(body, b"nanq")
        || lower(body, b"nans")
        || (starts(body, b"nan(") && body.ends_with(b")"))
        || lower(body, b"1.#qnan")
        || lower(body, b"1.#snan")
        || lower(body, b"1.#ind")
    {
        return Some(f64::NAN);
    }
    None
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::parse::is_field_overflow;

    /// Relative tolerance: a decimal string rounds to the nearest f64, so the
    /// parsed value and the literal agree to the last bit; 1e-15 allows one ulp.
    const REL: f64 = 1e-15;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= REL * b.abs().max(f64::MIN_POSITIVE)
    }

    #[test]
    fn plain_numbers() {
        assert!(close(
            parse_field(b" 1.234567890E-03 ").unwrap(),
            1.234567890e-3
        ));
        assert!(close(parse_field(b"-42").unwrap(), -42.0));
        assert!(close(parse_field(b"\"2.5\"").unwrap(), 2.5));
    }

    #[test]
    fn fortran_exponents() {
        // Fortran D editing writes D for the exponent letter; with Ew.d and a
        // three-digit exponent the letter is dropped (Intel Fortran language
        // reference, "E and D editing").
        assert!(close(parse_field(b"1.0D+03").unwrap(), 1.0e3));
        assert!(close(parse_field(b"-2.5d-2").unwrap(), -2.5e-2));
        assert!(close(parse_field(b"0.1234+105").unwrap(), 0.1234e105));
        assert!(close(parse_field(b"-0.9876-120").unwrap(), -0.9876e-120));
        assert!(close(parse_field(b"1,25E-03").unwrap(), 1.25e-3));
    }

    #[test]
    fn asterisks_and_non_finite() {
        assert!(is_field_overflow(parse_field(b"**********").unwrap()));
        for w in [
            "nan",
            "-nan",
            "NaN",
            "+NaN",
            "nan(0x8000)",
            "NaNQ",
            "1.#QNAN",
            "-1.#IND",
        ] {
            assert!(parse_field(w.as_bytes()).unwrap().is_nan(), "{w}");
        }
        for w in ["inf", "Infinity", "+Inf", "1.#INF"] {
            assert_eq!(parse_field(w.as_bytes()), Some(f64::INFINITY), "{w}");
        }
        for w in ["-inf", "-Infinity", "-1.#INF"] {
            assert_eq!(parse_field(w.as_bytes()), Some(f64::NEG_INFINITY), "{w}");
        }
    }

    #[test]
    fn rejects_words() {
        for w in [
            "",
            "time",
            "1.0x",
            "--1",
            "1-",
            "e5",
            "1.0E+03+2",
            "12:30",
            "1.2.3",
            "1,2,3",
        ] {
            assert_eq!(parse_field(w.as_bytes()), None, "{w}");
        }
    }
}
