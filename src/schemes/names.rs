//! Schemes as people write them in a comment line of a history file
//! (`# scheme: central difference`, `# integrator: Newmark beta=0.25
//! gamma=0.5`, `# scheme: HHT alpha = -0.05`): the names `rhoscope limits`
//! knows, in any case, with spaces, hyphens or underscores, and the usual other
//! names of the same schemes. Parameters are `key=value` (or `key value`)
//! pairs; a scheme that needs one and lacks it is refused with the reason.

use super::{Scheme, SchemeParams};

/// Other names of each scheme, after lower-casing and turning `-`/`_` into
/// spaces. Velocity Verlet and leapfrog give the same positions as central
/// difference on a linear system (Hairer, Lubich & Wanner, *Geometric Numerical
/// Integration*, 2nd ed., Springer 2006, §I.1.4, from memory), so they share
/// its limit ω·Δt ≤ 2.
const ALIASES: &[(&str, &str)] = &[
    ("central difference", "central-difference"),
    ("centraldifference", "central-difference"),
    ("explicit central difference", "central-difference"),
    ("cd", "central-difference"),
    ("velocity verlet", "central-difference"),
    ("verlet", "central-difference"),
    ("leapfrog", "central-difference"),
    ("leap frog", "central-difference"),
    ("forward euler", "forward-euler"),
    ("explicit euler", "forward-euler"),
    ("euler", "forward-euler"),
    ("backward euler", "backward-euler"),
    ("implicit euler", "backward-euler"),
    ("trapezoidal", "trapezoidal"),
    ("trapezoidal rule", "trapezoidal"),
    ("crank nicolson", "trapezoidal"),
    ("rk4", "rk4"),
    ("rk 4", "rk4"),
    ("runge kutta", "rk4"),
    ("runge kutta 4", "rk4"),
    ("classical runge kutta", "rk4"),
    ("newmark", "newmark"),
    ("newmark beta", "newmark"),
    ("hht", "hht"),
    ("hht alpha", "hht"),
    ("hilber hughes taylor", "hht"),
    ("generalized alpha", "generalized-alpha"),
    ("generalised alpha", "generalized-alpha"),
    ("gen alpha", "generalized-alpha"),
];

/// Newmark members named by their acceleration assumption: (name, β, γ).
/// Newmark, "A method of computation for structural dynamics", J. Eng. Mech.
/// Div. ASCE 85 (1959): average acceleration β = ¼, γ = ½; linear
/// acceleration β = ⅙, γ = ½.
const NEWMARK_MEMBERS: &[(&str, f64, f64)] = &[
    ("average acceleration", 0.25, 0.5),
    ("constant average acceleration", 0.25, 0.5),
    ("newmark average acceleration", 0.25, 0.5),
    ("linear acceleration", 1.0 / 6.0, 0.5),
    ("newmark linear acceleration", 1.0 / 6.0, 0.5),
];

/// The scheme a declaration names, or why it cannot be read. A declaration
/// may go on after a semicolon about other things (`central difference;
/// fixed step 1e-3 s`): when the whole does not read, its first clause does.
pub fn from_declaration(text: &str) -> Result<Scheme, String> {
    match (whole_declaration(text), text.split_once(';')) {
        (Err(e), Some((first, _))) => whole_declaration(first).map_err(|_| e),
        (r, _) => r,
    }
}

fn whole_declaration(text: &str) -> Result<Scheme, String> {
    let lower = text.trim().to_lowercase();
    // Split the name words from the parameters: the first word holding a
    // digit or an '=' starts the parameters.
    let spaced: String = lower
        .chars()
        .map(|c| if c == ',' || c == ';' { ' ' } else { c })
        .collect();
    let spaced = spaced.replace('=', " = ");
    let words: Vec<&str> = spaced.split_whitespace().collect();
    // The longest run of leading words that names a scheme and leaves
    // parameters that read.
    let mut first_error = None;
    for k in (1..=words.len()).rev() {
        let name = words[..k].join(" ").replace(['-', '_'], " ");
        let member = NEWMARK_MEMBERS.iter().find(|(n, _, _)| *n == name);
        let alias = ALIASES.iter().find(|(n, _)| *n == name);
        if member.is_none() && alias.is_none() {
            continue;
        }
        let params = match read_params(&words[k..]) {
            Ok(p) => p,
            Err(e) => {
                first_error.get_or_insert(e);
                continue;
            }
        };
        if let Some((_, beta, gamma)) = member {
            return Ok(Scheme::Newmark {
                beta: *beta,
                gamma: *gamma,
            });
        }
        if let Some((_, canonical)) = alias {
            return Scheme::parse(canonical, &params).map_err(|e| e.to_string());
        }
    }
    Err(first_error
        .unwrap_or_else(|| format!("\"{}\" is not a scheme this program knows", text.trim())))
}

/// The scheme the detectors use, and a sentence saying which was used: the
/// one from `--scheme` or the configuration comes first, else the one the file
/// declares at a line (as written there).
pub fn choose(
    settings: Option<Scheme>,
    declared: Option<&(u64, String)>,
) -> (Option<Scheme>, Option<String>) {
    match (settings, declared) {
        (Some(s), Some((line, text))) => (
            Some(s),
            Some(format!(
                "scheme {s} from --scheme or the configuration; the file declares \"{text}\" at line {line}, which gives way"
            )),
        ),
        (Some(s), None) => (
            Some(s),
            Some(format!("scheme {s} from --scheme or the configuration")),
        ),
        (None, Some((line, text))) => match from_declaration(text) {
            Ok(s) => (
                Some(s),
                Some(format!("scheme {s}, declared by the file at line {line}")),
            ),
            Err(why) => (
                None,
                Some(format!(
                    "the file declares the scheme \"{text}\" at line {line}, but it cannot be read: {why}"
                )),
            ),
        },
        (None, None) => (None, None),
    }
}

/// `beta = 0.25 gamma = 0.5`, `alpha -0.05`, `rho_inf=0.8`.
fn read_params(words: &[&str]) -> Result<SchemeParams, String> {
    let mut p = SchemeParams::default();
    let mut i = 0;
    while i < words.len() {
        let key = words[i];
        let mut j = i + 1;
        if words.get(j) == Some(&"=") {
            j += 1;
        }
        let value: f64 = words
            .get(j)
            .and_then(|v| v.parse().ok())
            .ok_or_else(|| format!("parameter \"{key}\" has no number after it"))?;
        let slot = match key {
            "beta" => &mut p.beta,
            "gamma" => &mut p.gamma,
            "alpha" => &mut p.alpha,
            "rho" | "rho-inf" | "rhoinf" | "rho_inf" | "ρ∞" => &mut p.rho_inf,
            other => {
                return Err(format!(
                    "\"{other}\" is not a parameter (write beta=, gamma=, alpha= or rho_inf=)"
                ));
            }
        };
        *slot = Some(value);
        i = j + 1;
    }
    Ok(p)
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn spellings() {
        let cd = Ok(Scheme::CentralDifference);
        assert_eq!(from_declaration("central difference"), cd);
        assert_eq!(from_declaration("Central-Difference"), cd);
        assert_eq!(from_declaration("central_difference"), cd);
        assert_eq!(from_declaration("velocity Verlet"), cd);
        assert_eq!(from_declaration("RK4"), Ok(Scheme::Rk4));
        assert_eq!(from_declaration("Runge-Kutta 4"), Ok(Scheme::Rk4));
        assert_eq!(from_declaration("explicit Euler"), Ok(Scheme::ForwardEuler));
        assert_eq!(from_declaration("Crank-Nicolson"), Ok(Scheme::Trapezoidal));
        assert_eq!(
            from_declaration("Newmark beta=0.25 gamma=0.5"),
            Ok(Scheme::Newmark {
                beta: 0.25,
                gamma: 0.5
            })
        );
        assert_eq!(
            from_declaration("newmark, gamma = 0.5, beta = 0.25"),
            Ok(Scheme::Newmark {
                beta: 0.25,
                gamma: 0.5
            })
        );
        assert_eq!(
            from_declaration("average acceleration"),
            Ok(Scheme::Newmark {
                beta: 0.25,
                gamma: 0.5
            })
        );
        assert_eq!(
            from_declaration("HHT alpha=-0.05"),
            Ok(Scheme::Hht { alpha: -0.05 })
        );
        assert_eq!(
            from_declaration("generalized-alpha rho_inf 0.8"),
            Ok(Scheme::GeneralizedAlpha { rho_inf: 0.8 })
        );
        // Clauses about other things after a semicolon.
        assert_eq!(
            from_declaration("central difference; fixed step 1.1e-2 s; 3 degrees of freedom"),
            cd
        );
        assert_eq!(
            from_declaration("HHT-alpha alpha=-0.05; fixed step 3.3e-3 s"),
            Ok(Scheme::Hht { alpha: -0.05 })
        );
        assert!(from_declaration("magic; fixed step 1e-3 s").is_err());
    }

    #[test]
    fn the_flag_wins_and_says_so() {
        let decl = (3, "central difference".to_owned());
        let (s, note) = choose(Some(Scheme::Rk4), Some(&decl));
        assert_eq!(s, Some(Scheme::Rk4));
        assert!(note.unwrap_or_default().contains("gives way"));
        let (s, note) = choose(None, Some(&decl));
        assert_eq!(s, Some(Scheme::CentralDifference));
        assert!(note.unwrap_or_default().contains("line 3"));
        let bad = (4, "magic".to_owned());
        let (s, note) = choose(None, Some(&bad));
        assert_eq!(s, None);
        assert!(note.unwrap_or_default().contains("cannot be read"));
        assert_eq!(choose(None, None), (None, None));
    }

    #[test]
    fn refusals_say_why() {
        assert!(from_declaration("newmark").unwrap_err().contains("beta"));
        assert!(
            from_declaration("magic stepper")
                .unwrap_err()
                .contains("not a scheme")
        );
        assert!(from_declaration("hht alpha").unwrap_err().contains("alpha"));
        assert!(
            from_declaration("hht alpha=")
                .unwrap_err()
                .contains("no number")
        );
        assert!(
            from_declaration("rk4 order=4")
                .unwrap_err()
                .contains("not a parameter")
        );
    }
}
