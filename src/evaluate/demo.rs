//! The demo catalogue as labelled sets: the catalogue itself (labels computed
//! by running each case), and variants the detectors were not tuned on —
//! every case written with twice and three times the output interval, and
//! with another noise seed where it has noise, each relabelled from its own
//! run by the catalogue's rule ([`crate::demo::label`]).

use super::{Case, Filter, Input, Label, Set, selected};
use crate::demo::{Expected, Run, Setup};
use crate::settings::Settings;

/// Name of the catalogue set.
pub const CATALOGUE: &str = "catalogue";
/// Name of the variants set.
pub const VARIANTS: &str = "variants";

fn label(e: Expected) -> Label {
    Label {
        level: e.level,
        onset_line: e.onset_line,
        crash_line: e.crash_line,
    }
}

/// The names of the catalogue's cases (its variants are named after them).
pub fn names() -> Vec<String> {
    crate::demo::cases::specs()
        .iter()
        .map(|c| c.name.to_string())
        .collect()
}

/// The labelled demo catalogue.
pub fn catalogue(filter: Filter) -> anyhow::Result<Set> {
    let cases = crate::demo::catalogue()
        .into_iter()
        .filter(|c| selected(filter, c.name))
        .map(|c| {
            let mut bytes = Vec::new();
            // Writing to memory cannot fail.
            let _ = c.write(&mut bytes);
            Case {
                name: c.name.to_string(),
                input: Input::Bytes(bytes),
                label: label(c.expected),
            }
        })
        .collect();
    Ok(Set {
        name: CATALOGUE.into(),
        title: "Demo catalogue".into(),
        settings: Settings::default(),
        cases,
        min_lead: super::score::MIN_LEAD,
    })
}

/// Variants of the catalogue's cases (see the module documentation).
pub fn variants(filter: Filter) -> anyhow::Result<Set> {
    let mut cases = Vec::new();
    for c in crate::demo::catalogue() {
        let mut variants: Vec<(String, Setup)> = Vec::new();
        for factor in [2, 3] {
            let mut s = c.setup();
            s.every *= factor;
            variants.push((format!("{} every×{factor}", c.name), s));
        }
        let base = c.setup();
        if let Some(n) = base.noise {
            let mut s = base;
            s.noise = Some(crate::demo::run::Noise {
                seed: n.seed.wrapping_mul(31).wrapping_add(17),
                ..n
            });
            variants.push((format!("{} seed", c.name), s));
        }
        for (name, setup) in variants {
            if !selected(filter, &name) {
                continue;
            }
            let summary = Run::new(setup.clone()).summarize();
            let mut bytes = Vec::new();
            let _ = Run::new(setup).write_all(&mut bytes);
            cases.push(Case {
                name,
                input: Input::Bytes(bytes),
                label: label(crate::demo::label(c.expected.level, &summary)),
            });
        }
    }
    Ok(Set {
        name: VARIANTS.into(),
        title: "Variants (output interval ×2, ×3; other noise seeds)".into(),
        settings: Settings::default(),
        cases,
        min_lead: super::score::MIN_LEAD,
    })
}
