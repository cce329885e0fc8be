//! Column names → roles, in the trade's words: plain phrases (`time step`,
//! `kinetic energy`), then energy terms by word stems and tokens in any case,
//! with separators or none (`E_damp`, `KinEng`, `PotEng`, `D_damp`, `DAMP`,
//! `damping_dissipation`, `SE`), the short forms particle codes print
//! (`Ekin`, `Epot`, `E_pair`, `TotEng`, `Ecouple`), and temperatures as probes.
//! A name that holds any word outside the energy vocabulary (`contact_force`,
//! `potential_drop`, `plastic strain`) is not an energy term. Pure.

use super::kinds::{EnergyTerm, Role};

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
            "cpu",
            "cpu s",
            "wall",
            "wall s",
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

/// Role of one column from its name and unit, with the reason.
pub fn detect(name: &str, unit: Option<&str>) -> (Role, String) {
    let norm = normalize(name);
    if is_temperature(&norm, unit) {
        return (
            Role::Probe,
            "a temperature: read as a probe, not an energy term".to_owned(),
        );
    }
    let compact: String = norm.chars().filter(|c| *c != ' ').collect();
    let words: Vec<&str> = norm.split(' ').collect();
    for p in PHRASES.iter() {
        let exact = norm == p.text || compact == p.compact;
        let contained = p.words.len() > 1 && words.windows(p.words.len()).any(|w| w == p.words);
        if exact || contained {
            let phrase = p.text;
            let why = if p.role == Role::Probe {
                format!("matched \"{phrase}\": wall-clock, not simulated, so a probe")
            } else {
                format!("matched \"{phrase}\"")
            };
            return (p.role, why);
        }
    }
    if let Some((term, why)) = energy_tokens(name) {
        return (Role::Energy(term), why);
    }
    (
        Role::Probe,
        "no role word; any other numeric column is a probe".to_owned(),
    )
}

/// A phrase of [`RULES`] with its forms for matching, prepared once: a name
/// is matched against every phrase, for every column of every header.
struct Phrase {
    role: Role,
    text: &'static str,
    /// Without its spaces (`timestep`).
    compact: String,
    /// Its words, which a longer name may hold one after another.
    words: Vec<&'static str>,
}

static PHRASES: std::sync::LazyLock<Vec<Phrase>> = std::sync::LazyLock::new(|| {
    RULES
        .iter()
        .flat_map(|(role, phrases)| {
            phrases.iter().map(|text| Phrase {
                role: *role,
                text,
                compact: text.chars().filter(|c| *c != ' ').collect(),
                words: text.split(' ').collect(),
            })
        })
        .collect()
});

/// `Temp`, `temperature`, or a name with a temperature unit (`T [K]`).
fn is_temperature(norm: &str, unit: Option<&str>) -> bool {
    let unit_is_temp = unit.is_some_and(|u| {
        matches!(
            u.trim()
                .trim_start_matches('°')
                .to_ascii_lowercase()
                .as_str(),
            "k" | "c" | "degc" | "degk" | "f" | "degf" | "kelvin" | "celsius"
        )
    });
    let words: Vec<&str> = norm.split(' ').collect();
    unit_is_temp || words.iter().any(|w| matches!(*w, "temp" | "temperature"))
}

/// Words that say "energy" (or work, or dissipated energy) without naming a term.
const MARKERS: &[&str] = &[
    "e", "en", "eng", "ener", "energy", "energies", "w", "work", "d",
];

/// Words that qualify a term without changing it (`Etot/N` is the total
/// energy per atom).
const NEUTRAL: &[&str] = &[
    "sum",
    "cum",
    "cumul",
    "cumulative",
    "accumulated",
    "acc",
    "all",
    "system",
    "sys",
    "model",
    "global",
    "glob",
    "n",
    "per",
    "atom",
    "atoms",
    "natoms",
    "particle",
];

/// A stem of an energy term.
struct Stem {
    /// The token starts with this (or equals it, when `exact`).
    text: &'static str,
    exact: bool,
    term: EnergyTerm,
    /// The word alone, or with another word of the vocabulary, is this term even
    /// without an energy marker (`damping`, `damping_dissipation`).
    strong: bool,
    /// The word alone (a single-word name) is this term (`strain`, `potential`).
    alone: bool,
    /// A part of the potential energy, as particle codes split it (`E_pair`).
    part: bool,
}

const fn stem(text: &'static str, term: EnergyTerm) -> Stem {
    Stem {
        text,
        exact: false,
        term,
        strong: false,
        alone: false,
        part: false,
    }
}

const fn strong(mut s: Stem) -> Stem {
    s.strong = true;
    s.alone = true;
    s
}

const fn alone(mut s: Stem) -> Stem {
    s.alone = true;
    s
}

const fn exact(mut s: Stem) -> Stem {
    s.exact = true;
    s
}

const fn part(mut s: Stem) -> Stem {
    s.part = true;
    s.exact = true;
    s
}

use EnergyTerm::{Artificial, Dissipated, ExternalWork, Internal, Kinetic, Total};

/// Stems in order of precedence when a name holds several (`contact
/// dissipation` is dissipated, `hourglass dissipation` artificial).
const STEMS: &[Stem] = &[
    strong(stem("hourglass", Artificial)),
    exact(stem("hg", Artificial)),
    strong(stem("dissip", Dissipated)),
    exact(stem("diss", Dissipated)),
    strong(stem("damp", Dissipated)),
    strong(stem("fric", Dissipated)),
    strong(stem("viscous", Dissipated)),
    strong(exact(stem("visc", Dissipated))),
    stem("plast", Dissipated),
    stem("thermostat", Dissipated),
    stem("barostat", Dissipated),
    stem("coupl", Dissipated),
    stem("contact", Artificial),
    stem("penal", Artificial),
    stem("interf", Artificial),
    stem("artif", Artificial),
    stem("stabili", Artificial),
    strong(exact(stem("kin", Kinetic))),
    strong(stem("kinet", Kinetic)),
    // The short forms, as words of a longer name (`KE_total`, `total_PE`).
    strong(exact(stem("ke", Kinetic))),
    strong(exact(stem("pe", Internal))),
    strong(exact(stem("se", Internal))),
    strong(exact(stem("ie", Internal))),
    alone(stem("potential", Internal)),
    exact(stem("pot", Internal)),
    alone(stem("strain", Internal)),
    alone(stem("elast", Internal)),
    stem("intern", Internal),
    exact(stem("int", Internal)),
    part(stem("pair", Internal)),
    part(stem("mol", Internal)),
    part(stem("bond", Internal)),
    part(stem("angle", Internal)),
    part(stem("dihed", Internal)),
    part(stem("impro", Internal)),
    part(stem("imp", Internal)),
    part(stem("coul", Internal)),
    part(stem("vdwl", Internal)),
    part(stem("long", Internal)),
    stem("extern", ExternalWork),
    exact(stem("ext", ExternalWork)),
    stem("total", Total),
    exact(stem("tot", Total)),
    stem("conserv", Total),
];

/// Two-letter and fused short forms: `KE`, `PE`, `SE` (strain energy), `IE`.
const SHORT: &[(&str, EnergyTerm)] = &[
    ("ke", Kinetic),
    ("pe", Internal),
    ("se", Internal),
    ("ie", Internal),
];

fn find_stem(token: &str) -> Option<&'static Stem> {
    STEMS.iter().find(|s| {
        if s.exact {
            token == s.text
        } else {
            token.starts_with(s.text)
        }
    })
}

/// Tokens of a name: lower-case words split at separators and at case changes
/// (`KinEng` → `kin eng`, `E_pair` → `e pair`, `ECouple` → `e couple`).
pub fn tokens(name: &str) -> Vec<String> {
    let chars: Vec<char> = name.chars().collect();
    let mut out: Vec<String> = Vec::new();
    let mut cur = String::new();
    for (i, &c) in chars.iter().enumerate() {
        if !c.is_alphanumeric() {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            continue;
        }
        let prev = i.checked_sub(1).map(|j| chars[j]);
        let next = chars.get(i + 1).copied();
        let boundary = c.is_uppercase()
            && prev.is_some_and(|p| {
                p.is_lowercase() || (p.is_uppercase() && next.is_some_and(char::is_lowercase))
            });
        if boundary && !cur.is_empty() {
            out.push(std::mem::take(&mut cur));
        }
        cur.extend(c.to_lowercase());
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// An energy term from the tokens of a name, with the reason. Every token must
/// be an energy marker, a neutral qualifier or a stem of the vocabulary.
fn energy_tokens(name: &str) -> Option<(EnergyTerm, String)> {
    let all = tokens(name);
    let numbered = all.iter().any(|t| t.chars().all(|c| c.is_ascii_digit()));
    let toks: Vec<&str> = all
        .iter()
        .map(String::as_str)
        .filter(|t| !NEUTRAL.contains(t) && !t.chars().all(|c| c.is_ascii_digit()))
        .collect();
    if let [t] = toks.as_slice() {
        // `strain_1` is a gauge, not the strain energy: a numbered single word
        // needs a marker fused to it (`Ekin_1`).
        return single_token(t, !numbered);
    }
    let mut marker = false;
    let mut stems: Vec<&Stem> = Vec::new();
    for t in &toks {
        if MARKERS.contains(t) {
            marker = true;
        } else if let Some(s) = find_stem(t) {
            stems.push(s);
        } else {
            return None;
        }
    }
    let best = STEMS
        .iter()
        .find(|s| stems.iter().any(|x| std::ptr::eq(*x, *s)))?;
    // Without a marker, the strong words must agree on the term (`damping
    // dissipation`, `contact dissipation`), unless one is hourglass control,
    // which makes any energy artificial; `kin_visc` is a viscosity.
    let mut strong = stems.iter().filter(|s| s.strong).map(|s| s.term);
    let first = strong.next();
    let agree = first.is_some() && strong.all(|t| Some(t) == first);
    if !(marker || agree || best.term == Artificial && best.strong) {
        return None;
    }
    Some((best.term, stem_reason(best, marker)))
}

/// True for a part of the potential energy as particle codes print it
/// (`E_pair`, `E_mol`, `ebond`, `ecoul`): counted only when no column holds the
/// whole potential energy.
pub fn is_energy_part(name: &str) -> bool {
    tokens(name).iter().any(|t| {
        let t = t
            .strip_prefix('e')
            .filter(|r| find_stem(r).is_some_and(|s| s.part));
        t.is_some()
    }) || tokens(name)
        .iter()
        .any(|t| find_stem(t).is_some_and(|s| s.part))
}

/// One token: a stem alone (`damping`, `strain`), a short form (`KE`, `SE`), or a
/// marker fused with a stem (`Ekin`, `Epot`, `Etot`, `Ecouple`, `kineng`).
fn single_token(t: &str, may_stand_alone: bool) -> Option<(EnergyTerm, String)> {
    if let Some((_, term)) = SHORT.iter().find(|(s, _)| *s == t) {
        return Some((*term, format!("short form \"{t}\" of an energy term")));
    }
    if let Some(s) = find_stem(t)
        && s.alone
        && may_stand_alone
    {
        return Some((s.term, format!("energy word \"{t}\"")));
    }
    let fused = [
        t.strip_prefix('e').filter(|r| r.len() >= 2),
        t.strip_prefix('w').filter(|r| r.len() >= 3),
        t.strip_suffix("energy"),
        t.strip_suffix("eng"),
    ];
    fused
        .into_iter()
        .flatten()
        .find_map(|rest| find_stem(rest).map(|s| (s.term, format!("energy abbreviation \"{t}\""))))
}

fn stem_reason(s: &Stem, marker: bool) -> String {
    if s.part {
        format!("a part of the potential energy (stem \"{}…\")", s.text)
    } else if marker {
        format!("stem \"{}…\" with an energy word", s.text)
    } else {
        format!("energy stem \"{}…\"", s.text)
    }
}
