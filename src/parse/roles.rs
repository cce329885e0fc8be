//! Column roles, detected by name: time, step size, step number, energy terms,
//! implicit-solver diagnostics; every other numeric column is a probe.

/// An energy term of the balance.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum EnergyTerm {
    Kinetic,
    Internal,
    ExternalWork,
    /// Damping, friction, plastic or other physical losses.
    Dissipated,
    /// Terms a solver adds: hourglass control, contact/penalty, added mass.
    Artificial,
    Total,
}

/// What a column means to the detectors.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Role {
    Time,
    StepSize,
    StepNumber,
    Energy(EnergyTerm),
    /// Nonlinear iterations per step (implicit runs).
    Iterations,
    /// Residual norm (implicit runs).
    Residual,
    /// Step cutbacks (implicit runs).
    Cutbacks,
    /// Any other numeric signal.
    Probe,
    /// Excluded by the user.
    Ignore,
}

/// The role of every column of a schema, with the reason it was chosen and the
/// sign with which an energy term enters the balance.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RoleMap {
    pub roles: Vec<Role>,
    /// One short sentence per column: why this role (matched word, override).
    pub reasons: Vec<String>,
    /// +1 or −1 per column: the sign convention applied to energy terms (1 elsewhere).
    pub signs: Vec<f64>,
}

/// Every role, with the key that names it in configuration and flags.
pub const ROLE_KEYS: &[(Role, &str)] = &[
    (Role::Time, "time"),
    (Role::StepSize, "step_size"),
    (Role::StepNumber, "step_number"),
    (Role::Energy(EnergyTerm::Kinetic), "kinetic"),
    (Role::Energy(EnergyTerm::Internal), "internal"),
    (Role::Energy(EnergyTerm::ExternalWork), "external_work"),
    (Role::Energy(EnergyTerm::Dissipated), "dissipated"),
    (Role::Energy(EnergyTerm::Artificial), "artificial"),
    (Role::Energy(EnergyTerm::Total), "total"),
    (Role::Iterations, "iterations"),
    (Role::Residual, "residual"),
    (Role::Cutbacks, "cutbacks"),
    (Role::Probe, "probe"),
    (Role::Ignore, "ignore"),
];

impl Role {
    /// The key naming this role in configuration, flags and reports.
    pub fn key(self) -> &'static str {
        ROLE_KEYS
            .iter()
            .find(|(r, _)| *r == self)
            .map_or("probe", |(_, k)| k)
    }

    /// The role named by `key` (as [`Role::key`] writes it).
    pub fn from_key(key: &str) -> Option<Role> {
        let key = key.trim().to_ascii_lowercase().replace(['-', ' '], "_");
        ROLE_KEYS.iter().find(|(_, k)| *k == key).map(|(r, _)| *r)
    }
}

impl EnergyTerm {
    /// The energy term named by `key` (`kinetic`, `internal`, `external_work`,
    /// `dissipated`, `artificial`, `total`).
    pub fn from_key(key: &str) -> Option<EnergyTerm> {
        match Role::from_key(key)? {
            Role::Energy(t) => Some(t),
            _ => None,
        }
    }
}

impl RoleMap {
    /// Index of the first column with `role`.
    pub fn find(&self, role: Role) -> Option<usize> {
        self.roles.iter().position(|r| *r == role)
    }
    /// Indices of all columns with `role`.
    pub fn all(&self, role: Role) -> Vec<usize> {
        self.roles
            .iter()
            .enumerate()
            .filter(|(_, r)| **r == role)
            .map(|(i, _)| i)
            .collect()
    }
}

/// User choices that override name matching: roles by column name, and the sign
/// with which each energy term enters the balance (codes differ on the sign of
/// external work and on what "total" includes).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RoleRules {
    /// Column name (matched like detection: case, spacing, underscores ignored) → role.
    pub overrides: Vec<(String, Role)>,
    /// Sign per energy term; terms not listed enter with +1.
    pub signs: Vec<(EnergyTerm, f64)>,
}

impl RoleRules {
    /// The sign applied to `term`.
    pub fn sign(&self, term: EnergyTerm) -> f64 {
        self.signs
            .iter()
            .rev()
            .find(|(t, _)| *t == term)
            .map_or(1.0, |(_, s)| *s)
    }
}

/// Lower-case words of a column name: units are already split off; `_`, `-`,
/// `.`, `/` and spaces separate words.
pub fn normalize(name: &str) -> String {
    let mut out = String::with_capacity(name.len());
    for ch in name.chars() {
        if ch.is_alphanumeric() {
            out.extend(ch.to_lowercase());
        } else if !out.is_empty() && !out.ends_with(' ') {
            out.push(' ');
        }
    }
    out.trim_end().to_owned()
}

/// Name lists in the trade's plain words, tried in order (the first that
/// matches wins). A phrase matches when the name equals it, or equals it with the
/// spaces removed (`timestep`); a phrase of several words also matches a name that
/// holds all of them as whole words (`total kinetic energy`).
const RULES: &[(Role, &[&str])] = &[
    (
        Role::Probe,
        &[
            "wall time",
            "wall clock",
            "cpu time",
            "elapsed",
            "elapsed time",
            "walltime",
            "cputime",
            "clock time",
            "run time",
        ],
    ),
    (
        Role::StepSize,
        &[
            "dt",
            "delta t",
            "time step",
            "step size",
            "time increment",
            "increment size",
            "stable step",
        ],
    ),
    (
        Role::Cutbacks,
        &[
            "cutback",
            "cutbacks",
            "bisections",
            "step reductions",
            "halvings",
        ],
    ),
    (
        Role::Iterations,
        &[
            "iterations",
            "iters",
            "iter",
            "its",
            "newton iterations",
            "nonlinear iterations",
            "equilibrium iterations",
        ],
    ),
    (
        Role::Residual,
        &[
            "residual",
            "residual norm",
            "res",
            "rnorm",
            "norm of residual",
            "force residual",
        ],
    ),
    (
        Role::StepNumber,
        &[
            "step",
            "steps",
            "step number",
            "step no",
            "step nr",
            "nstep",
            "cycle",
            "cycles",
            "cycle number",
            "increment",
            "inc",
            "n",
        ],
    ),
    (
        Role::Energy(EnergyTerm::Artificial),
        &[
            "hourglass",
            "hourglass energy",
            "contact energy",
            "penalty energy",
            "sliding energy",
            "interface energy",
            "added mass",
            "mass scaling",
            "artificial",
            "artificial energy",
            "stabilization energy",
            "stabilisation energy",
            "spurious energy",
        ],
    ),
    (
        Role::Energy(EnergyTerm::Dissipated),
        &[
            "damping energy",
            "dissipated",
            "dissipated energy",
            "dissipation",
            "energy dissipated",
            "friction energy",
            "frictional energy",
            "plastic work",
            "plastic energy",
            "plastic dissipation",
            "viscous energy",
            "viscous dissipation",
            "losses",
            "energy loss",
        ],
    ),
    (
        Role::Energy(EnergyTerm::Kinetic),
        &["kinetic", "kinetic energy", "ke", "ekin", "e kin"],
    ),
    (
        Role::Energy(EnergyTerm::Internal),
        &[
            "internal",
            "internal energy",
            "strain energy",
            "ie",
            "eint",
            "e int",
            "elastic energy",
            "potential energy",
        ],
    ),
    (
        Role::Energy(EnergyTerm::ExternalWork),
        &[
            "external work",
            "ext work",
            "external",
            "work",
            "w ext",
            "wext",
            "applied work",
            "work done",
            "external energy",
        ],
    ),
    (
        Role::Energy(EnergyTerm::Total),
        &[
            "total energy",
            "total",
            "etot",
            "e tot",
            "energy",
            "energy total",
        ],
    ),
    (
        Role::Time,
        &[
            "time",
            "t",
            "sim time",
            "simulation time",
            "simulated time",
            "physical time",
            "solution time",
            "model time",
            "analysis time",
        ],
    ),
];

/// Role of one column name, with the reason.
pub fn detect(name: &str) -> (Role, String) {
    let norm = normalize(name);
    let compact: String = norm.chars().filter(|c| *c != ' ').collect();
    let words: Vec<&str> = norm.split(' ').collect();
    for (role, phrases) in RULES {
        for phrase in *phrases {
            let phrase_compact: String = phrase.chars().filter(|c| *c != ' ').collect();
            let exact = norm == *phrase || compact == phrase_compact;
            let contained = phrase.contains(' ') && phrase.split(' ').all(|w| words.contains(&w));
            if exact || contained {
                let why = if *role == Role::Probe {
                    format!("matched \"{phrase}\": wall-clock, not simulated, so a probe")
                } else {
                    format!("matched \"{phrase}\"")
                };
                return (*role, why);
            }
        }
    }
    if let Some((term, stem)) = energy_abbreviation(&words) {
        return (
            Role::Energy(term),
            format!("energy abbreviation \"{stem}\""),
        );
    }
    (
        Role::Probe,
        "no role word; any other numeric column is a probe".to_owned(),
    )
}

/// Word stems of the energy terms, for short names such as `E_damp` or `Ehg`
/// (first match wins, so `interf` comes before `int`).
const ENERGY_STEMS: &[(&str, EnergyTerm)] = &[
    ("kin", EnergyTerm::Kinetic),
    ("interf", EnergyTerm::Artificial),
    ("int", EnergyTerm::Internal),
    ("strain", EnergyTerm::Internal),
    ("elast", EnergyTerm::Internal),
    ("pot", EnergyTerm::Internal),
    ("ext", EnergyTerm::ExternalWork),
    ("damp", EnergyTerm::Dissipated),
    ("diss", EnergyTerm::Dissipated),
    ("fric", EnergyTerm::Dissipated),
    ("plast", EnergyTerm::Dissipated),
    ("visc", EnergyTerm::Dissipated),
    ("hg", EnergyTerm::Artificial),
    ("hour", EnergyTerm::Artificial),
    ("cont", EnergyTerm::Artificial),
    ("pen", EnergyTerm::Artificial),
    ("art", EnergyTerm::Artificial),
    ("stab", EnergyTerm::Artificial),
    ("tot", EnergyTerm::Total),
];

/// `E damp`, `damp energy`, `Edamp`, `W ext`: an energy letter or word with a
/// term's stem.
fn energy_abbreviation<'a>(words: &[&'a str]) -> Option<(EnergyTerm, &'a str)> {
    let stem = match *words {
        ["e" | "en" | "energy", s] | [s, "e" | "energy"] => s,
        ["w", s] if s.starts_with("ext") => s,
        [w] if w.len() >= 4 && w.starts_with('e') => &w[1..],
        _ => return None,
    };
    ENERGY_STEMS
        .iter()
        .find(|(p, _)| stem.starts_with(p))
        .map(|(_, t)| (*t, stem))
}

/// Assign a role to every column of `schema`: overrides first, then name matching.
/// Only the first column matched by name to time, step size or step number gets
/// that role; later ones become probes.
pub fn assign(schema: &crate::parse::Schema, rules: &RoleRules) -> RoleMap {
    let mut map = RoleMap::default();
    for col in &schema.columns {
        let norm = normalize(&col.name);
        let over = rules
            .overrides
            .iter()
            .rev()
            .find(|(n, _)| normalize(n) == norm)
            .map(|(_, r)| *r);
        let (mut role, mut why) = match over {
            Some(r) => (r, "set by configuration".to_owned()),
            None => detect(&col.name),
        };
        let single = matches!(role, Role::Time | Role::StepSize | Role::StepNumber);
        if single && over.is_none() && map.roles.contains(&role) {
            why = format!("{why}, but an earlier column already has this role: probe");
            role = Role::Probe;
        }
        let sign = match role {
            Role::Energy(term) => rules.sign(term),
            _ => 1.0,
        };
        map.roles.push(role);
        map.reasons.push(why);
        map.signs.push(sign);
    }
    map
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parse::Schema;
    use crate::parse::header::split_unit;

    fn role(name: &str) -> Role {
        detect(&split_unit(name).name).0
    }

    #[test]
    fn plain_words() {
        assert_eq!(role("Time [s]"), Role::Time);
        assert_eq!(role("time_step"), Role::StepSize);
        assert_eq!(role("dt"), Role::StepSize);
        assert_eq!(role("Step"), Role::StepNumber);
        assert_eq!(
            role("kinetic energy (J)"),
            Role::Energy(EnergyTerm::Kinetic)
        );
        assert_eq!(role("Strain-Energy"), Role::Energy(EnergyTerm::Internal));
        assert_eq!(role("W_ext"), Role::Energy(EnergyTerm::ExternalWork));
        assert_eq!(
            role("hourglass energy"),
            Role::Energy(EnergyTerm::Artificial)
        );
        assert_eq!(
            role("friction energy"),
            Role::Energy(EnergyTerm::Dissipated)
        );
        assert_eq!(role("Total Energy"), Role::Energy(EnergyTerm::Total));
        assert_eq!(role("newton iterations"), Role::Iterations);
        assert_eq!(role("residual norm"), Role::Residual);
        assert_eq!(role("wall time [s]"), Role::Probe);
        assert_eq!(role("disp node 12 [µm]"), Role::Probe);
        assert_eq!(role("TimeStep"), Role::StepSize);
        assert_eq!(role("contact force"), Role::Probe);
        assert_eq!(role("E_damp [J]"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("E_hg"), Role::Energy(EnergyTerm::Artificial));
        assert_eq!(role("Edamp"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("e_interface"), Role::Energy(EnergyTerm::Artificial));
        assert_eq!(role("visc energy"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("edge"), Role::Probe);
        assert_eq!(role("u_x"), Role::Probe);
        assert_eq!(role("plastic strain"), Role::Probe);
        assert_eq!(
            role("total kinetic energy"),
            Role::Energy(EnergyTerm::Kinetic)
        );
    }

    #[test]
    fn overrides_and_signs() {
        let schema = Schema {
            columns: ["t", "ext work", "Q"]
                .iter()
                .map(|n| split_unit(n))
                .collect(),
        };
        let rules = RoleRules {
            overrides: vec![("q".into(), Role::Energy(EnergyTerm::Dissipated))],
            signs: vec![(EnergyTerm::ExternalWork, -1.0)],
        };
        let map = assign(&schema, &rules);
        assert_eq!(map.roles[0], Role::Time);
        assert_eq!(map.roles[2], Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(map.signs[1], -1.0);
        assert_eq!(map.reasons[2], "set by configuration");
    }
}
