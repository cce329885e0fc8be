//! `rhoscope evaluate`: wiring only — build the labelled sets asked for
//! ([`crate::evaluate::registry`], and labels files through
//! [`crate::evaluate::labelled`]), score them, print one table per set.

use anyhow::bail;

use crate::cli::evaluate::EvaluateArgs;
use crate::evaluate::{self, Filter, Set, SetSpec, labelled, selected};
use crate::settings::Settings;

/// Run `rhoscope evaluate`; returns the exit code.
pub fn run(args: EvaluateArgs) -> anyhow::Result<i32> {
    let registry = evaluate::registry();
    let mut names: Vec<&str> = args.sets.iter().map(String::as_str).collect();
    if names.is_empty() && args.labels.is_empty() {
        names.push(evaluate::demo::CATALOGUE);
    }
    if args.variants && !names.contains(&evaluate::demo::VARIANTS) {
        names.push(evaluate::demo::VARIANTS);
    }
    let mut specs: Vec<&SetSpec> = Vec::new();
    for n in &names {
        match registry.iter().find(|s| s.name == *n) {
            Some(s) if !specs.iter().any(|p| p.name == s.name) => specs.push(s),
            Some(_) => {}
            None => {
                let known: Vec<&str> = registry.iter().map(|s| s.name).collect();
                bail!("unknown set '{n}' (known: {})", known.join(", "));
            }
        }
    }
    let mut labelled_sets: Vec<Set> = Vec::with_capacity(args.labels.len());
    for path in &args.labels {
        labelled_sets.push(labelled::read(path, &Settings::default())?);
    }
    let labelled_names = |name: &String| {
        labelled_sets
            .iter()
            .any(|s| s.cases.iter().any(|c| &c.name == name))
    };
    for name in &args.cases {
        if !specs.iter().any(|s| (s.names)().contains(name)) && !labelled_names(name) {
            let mut known: Vec<String> = specs.iter().flat_map(|s| (s.names)()).collect();
            known.extend(
                labelled_sets
                    .iter()
                    .flat_map(|s| s.cases.iter().map(|c| c.name.clone())),
            );
            known.sort();
            known.dedup();
            bail!("unknown case '{name}' (known: {})", known.join(", "));
        }
    }
    let filter: Filter = (!args.cases.is_empty()).then_some(args.cases.as_slice());
    let mut sets = Vec::with_capacity(specs.len());
    for s in &specs {
        sets.push((s.build)(filter)?);
    }
    for mut set in labelled_sets {
        set.cases.retain(|c| selected(filter, &c.name));
        sets.push(set);
    }
    let mut text = String::new();
    let mut met = true;
    for (i, set) in sets.iter().enumerate() {
        let scored = evaluate::score_set(set)?;
        met &= scored.totals().targets_met();
        if i > 0 {
            text.push('\n');
        }
        text += &scored.text();
    }
    super::scan::print(&text)?;
    Ok(if met { 0 } else { 1 })
}
