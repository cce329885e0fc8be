//! The labelled cases: each an invented structure, a scheme and a step, a load
//! history and a file layout. Levels are declared from the physics of the run
//! (numerical blow-up, energy drift, or healthy) and checked against what the
//! simulation measures about itself; onset and crash lines come from the run.
//! The groups of cases sit in their own files and share setups through
//! [`families`]; none imports another.

mod blowups;
pub mod families;
mod steps;
mod traps;

use crate::demo::run::Setup;
use crate::finding::Level;

/// A case before it is labelled.
#[derive(Debug, Clone, Copy)]
pub struct Spec {
    pub name: &'static str,
    pub description: &'static str,
    pub level: Level,
    pub build: fn() -> Setup,
}

/// The catalogue's cases in order.
pub fn specs() -> Vec<Spec> {
    let mut v = blowups::specs();
    v.extend(traps::specs());
    v.extend(steps::specs());
    v
}

pub(crate) fn spec(
    name: &'static str,
    level: Level,
    description: &'static str,
    build: fn() -> Setup,
) -> Spec {
    Spec {
        name,
        description,
        level,
        build,
    }
}
