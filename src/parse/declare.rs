//! Declarations a history file makes about its run in text lines: the
//! integration scheme in a comment line (`# scheme: central difference`), and a
//! step size in a comment or a text line outside the table (`timestep 0.005`,
//! `Time step : 0.005`, `dt = 1e-3`, as solver logs echo their input). The text
//! is kept as written; `schemes::names` reads a scheme from it.

use super::number::parse_field;

/// The scheme named by a comment body (the text after `#`, `%` or `!`), as
/// written: `scheme: central difference` → `central difference`. Keys:
/// `scheme`, `integrator`, `integration scheme`, `time integration`,
/// `time integrator`; `:` or `=` after the key.
pub fn scheme(comment_body: &str) -> Option<&str> {
    let (key, value) = split_key(comment_body)?;
    let key = words(key);
    const KEYS: &[&str] = &[
        "scheme",
        "integrator",
        "integration scheme",
        "integration method",
        "time integration",
        "time integrator",
        "time integration scheme",
        "time integration method",
        "time scheme",
    ];
    let value = value.trim();
    (KEYS.contains(&key.as_str()) && !value.is_empty()).then_some(value)
}

/// A step size given by a line `KEY [:|=] NUMBER [UNIT]` where KEY is `timestep`,
/// `time step`, `dt`, `delta t`, `time increment` or `step size` (any case).
/// The number must be positive and finite.
pub fn step_size(line: &str) -> Option<f64> {
    let line = line.trim();
    let (key, value) = match split_key(line) {
        Some((k, v)) => (k.to_owned(), v.to_owned()),
        None => {
            // `timestep 0.005`: key words, then the number.
            let toks: Vec<&str> = line.split_whitespace().collect();
            let at = toks
                .iter()
                .position(|t| parse_field(t.as_bytes()).is_some())?;
            (toks[..at].join(" "), toks[at..].join(" "))
        }
    };
    const KEYS: &[&str] = &[
        "timestep",
        "time step",
        "dt",
        "delta t",
        "time increment",
        "step size",
        "time step size",
    ];
    if !KEYS.contains(&words(&key).as_str()) {
        return None;
    }
    let mut parts = value.split_whitespace();
    let v = parse_field(parts.next()?.as_bytes())?;
    // At most one more word: a unit.
    let unit_ok = match (parts.next(), parts.next()) {
        (None, _) => true,
        (Some(u), None) => u.chars().all(|c| c.is_alphabetic() || "[]()/µ".contains(c)),
        _ => false,
    };
    (unit_ok && v.is_finite() && v > 0.0).then_some(v)
}

/// `key: value` or `key = value`; `None` without a separator.
fn split_key(text: &str) -> Option<(&str, &str)> {
    let at = text.find([':', '='])?;
    Some((&text[..at], &text[at + 1..]))
}

/// Lower-case words joined by single spaces (`Time_Step` → `time step`).
fn words(text: &str) -> String {
    text.split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(str::to_lowercase)
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scheme_comments() {
        assert_eq!(
            scheme(" scheme: central difference"),
            Some("central difference")
        );
        assert_eq!(
            scheme("Integrator = Newmark beta=0.25 gamma=0.5"),
            Some("Newmark beta=0.25 gamma=0.5")
        );
        assert_eq!(
            scheme("time integration: HHT alpha=-0.05"),
            Some("HHT alpha=-0.05")
        );
        assert_eq!(scheme("scheme:"), None);
        assert_eq!(scheme("written by a test scheme"), None);
        assert_eq!(scheme("color scheme: dark"), None);
    }

    #[test]
    fn step_size_lines() {
        assert_eq!(step_size("timestep 0.005"), Some(0.005));
        assert_eq!(step_size("  Time step     : 0.005"), Some(0.005));
        assert_eq!(step_size("dt = 1.0e-6 s"), Some(1.0e-6));
        assert_eq!(step_size("Time_Step=2D-4"), Some(2.0e-4));
        // Not declarations of a step size.
        assert_eq!(step_size("timestep 0.005 0.01"), None);
        assert_eq!(step_size("reset_timestep 0"), None);
        assert_eq!(step_size("time step collapsed to 1e-9 at element 17"), None);
        assert_eq!(step_size("dt = -1"), None);
        assert_eq!(step_size("Step Temp E_pair"), None);
    }
}
