//! The blind catalogue: labelled histories written from
//! `docs/blind-catalogue.md` alone, to judge the detectors on runs their
//! thresholds were not argued on. Every case is a small deterministic
//! simulation with its own models and integrators ([`chain`],
//! [`structural`], [`explicit`], [`particles`]), written as a solver would
//! ([`write`]) and labelled by the rule of [`label`] from what the run
//! measured about itself. Pure: no files, no clocks, no terminal.
//!
//! The files of this module are frozen by their SHA-256 in the spec; new
//! cases go in new files listed there as additions.

#![allow(clippy::needless_range_loop)] // index loops read as the formulas they code

pub mod chain;
pub mod explicit;
pub mod kit;
pub mod label;
pub mod particles;
pub mod rng;
pub mod sim;
pub mod stab;
pub mod structural;
pub mod trace;
pub mod write;

mod cases_buried;
mod cases_gradual;
mod cases_names;
mod cases_particles;
mod cases_steps;
mod cases_violent;

pub use label::{Label, Measures, Verdict};
pub use trace::Trace;
pub use write::Layout;

/// The failure class a case belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Class {
    /// Energy terms under plain, short, prefixed and particle names.
    EnergyNames,
    /// Adaptive steps cut deeply that recover, and a collapse that does not.
    StepCut,
    /// Violent but physical runs with a closed balance.
    ViolentPhysical,
    /// A small high mode growing slowly under a large physical response.
    BuriedMode,
    /// Numeric rows without a header, output every k-th step.
    Headerless,
    /// Runaways that stay finite; particle runs with a deep potential.
    FiniteRunaway,
    /// Instability right after a restart or a step change.
    ShortSpan,
    /// Marginally past the limit, then firmly past it.
    GradualOnset,
    /// Stable runs whose written balance drifts.
    Drift,
}

impl Class {
    /// The class's name in the spec and in reports.
    pub fn word(self) -> &'static str {
        match self {
            Class::EnergyNames => "energy-names",
            Class::StepCut => "step-cut",
            Class::ViolentPhysical => "violent-physical",
            Class::BuriedMode => "buried-mode",
            Class::Headerless => "headerless",
            Class::FiniteRunaway => "finite-runaway",
            Class::ShortSpan => "short-span",
            Class::GradualOnset => "gradual-onset",
            Class::Drift => "drift",
        }
    }
}

/// How a case is made, before it is run.
#[derive(Debug, Clone, Copy)]
pub struct Spec {
    /// Case name.
    pub name: &'static str,
    /// Failure class.
    pub class: Class,
    /// What the spec intends the run to be; a test checks that the computed
    /// label agrees. Never used as the label.
    pub intent: Verdict,
    /// Run the simulation: its record and the layout it is written in.
    pub build: fn() -> (Trace, Layout),
}

/// A generated case.
#[derive(Debug, Clone)]
pub struct Case {
    /// Case name.
    pub name: &'static str,
    /// Failure class.
    pub class: Class,
    /// The spec's intent (for checks only).
    pub intent: Verdict,
    /// The file.
    pub bytes: Vec<u8>,
    /// The label computed from the run.
    pub label: Label,
    /// What the label rule measured.
    pub measures: Measures,
    /// Number of data rows.
    pub rows: usize,
    /// File name extension that fits the layout (`csv`, `tsv`, `jsonl`,
    /// `txt`).
    pub extension: &'static str,
}

/// Every case's spec, in catalogue order.
pub fn specs() -> Vec<Spec> {
    let mut all = Vec::new();
    all.extend(cases_names::specs());
    all.extend(cases_steps::specs());
    all.extend(cases_violent::specs());
    all.extend(cases_buried::specs());
    all.extend(cases_gradual::specs());
    all.extend(cases_particles::specs());
    all
}

/// Run, write and label one case.
pub fn generate(spec: &Spec) -> Case {
    let (trace, layout) = (spec.build)();
    let written = write::write(&trace, &layout);
    let label = label::label(&trace, &written);
    let measures = label::measure(&trace, &written);
    let extension = match layout.delim {
        write::Delim::Comma => "csv",
        write::Delim::Tab => "tsv",
        write::Delim::Jsonl => "jsonl",
        _ => "txt",
    };
    Case {
        extension,
        name: spec.name,
        class: spec.class,
        intent: spec.intent,
        rows: written.row_lines.len(),
        bytes: written.bytes,
        label,
        measures,
    }
}

/// The whole catalogue.
pub fn catalogue() -> Vec<Case> {
    specs().iter().map(generate).collect()
}

/// One case by name.
pub fn case(name: &str) -> Option<Case> {
    specs().iter().find(|s| s.name == name).map(generate)
}
