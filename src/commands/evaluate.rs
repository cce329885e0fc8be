//! `rhoscope evaluate`: wiring only — build the labelled sets asked for
//! ([`crate::evaluate::registry`], and labels files through
//! [`crate::evaluate::labelled`]), score them, print one table per set (and
//! the blind set's breakdown by class); or write one set as files
//! ([`crate::evaluate::export`]).

use std::fs::OpenOptions;
use std::io::Write;
use std::path::Path;

use anyhow::{Context, bail};

use crate::cli::evaluate::EvaluateArgs;
use crate::evaluate::{self, Filter, Input, Set, SetSpec, export, labelled, selected};
use crate::settings::Settings;

/// Run `rhoscope evaluate`; returns the exit code.
pub fn run(args: EvaluateArgs) -> anyhow::Result<i32> {
    let registry = evaluate::registry();
    let mut names: Vec<&str> = args.sets.iter().map(String::as_str).collect();
    if args.write.is_some() && names.len() != 1 {
        bail!("--write needs exactly one --set NAME (the set whose histories to write)");
    }
    if names.is_empty() && args.labels.is_empty() {
        names.push(evaluate::demo::CATALOGUE);
        names.push(evaluate::blind::BLIND);
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
        let mut set = labelled::read(path, &Settings::default())?;
        if let Some(l) = args.min_lead {
            set.min_lead = l;
        }
        labelled_sets.push(set);
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
    if let Some(dir) = &args.write {
        return write_set(&(specs[0].build)(filter)?, dir).map(|_| 0);
    }
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
        met &= scored.targets_met();
        if i > 0 {
            text.push('\n');
        }
        text += &scored.text();
        if scored.name == evaluate::blind::BLIND {
            text += "\n";
            text += &evaluate::blind::by_class(&scored);
        }
    }
    super::out::print(&text)?;
    Ok(if met { 0 } else { 1 })
}

/// Create `path` with `bytes`; an existing file (or link) is an error, never
/// overwritten.
fn create_new(path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
    let mut f = OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)
        .with_context(|| {
            format!(
                "cannot create '{}' (an existing file is never overwritten: write the set to \
                 an empty directory)",
                path.display()
            )
        })?;
    f.write_all(bytes)
        .and_then(|_| f.sync_all())
        .with_context(|| format!("writing '{}'", path.display()))
}

/// Write every case of `set` into `dir` and a labels.csv beside them.
fn write_set(set: &Set, dir: &Path) -> anyhow::Result<()> {
    if set.cases.is_empty() {
        bail!("set '{}' has no case to write", set.name);
    }
    std::fs::create_dir_all(dir).with_context(|| format!("creating '{}'", dir.display()))?;
    let mut rows = Vec::with_capacity(set.cases.len());
    for c in &set.cases {
        let bytes = match &c.input {
            Input::Bytes(b) => std::borrow::Cow::Borrowed(b.as_slice()),
            Input::Path(p) => std::borrow::Cow::Owned(
                std::fs::read(p).with_context(|| format!("reading '{}'", p.display()))?,
            ),
        };
        let file = export::file_name(&c.name, &bytes);
        if rows.iter().any(|(_, f, _)| f == &file) {
            bail!(
                "two cases of set '{}' would both be written to '{file}'",
                set.name
            );
        }
        create_new(&dir.join(&file), &bytes)?;
        rows.push((c.name.clone(), file, c.label));
    }
    create_new(
        &dir.join("labels.csv"),
        export::labels_csv(&rows).as_bytes(),
    )?;
    eprintln!(
        "rhoscope evaluate: wrote {} histories of set '{}' and labels.csv to '{}'",
        rows.len(),
        set.name,
        dir.display()
    );
    Ok(())
}
