//! Honest simulations of invented structures that write solver-like history
//! files: lumped-mass spring chains and 2-D trusses ([`model`]), real integrators
//! ([`integrate`]), energy books and self-labelling runs ([`run`]), text layouts
//! ([`layout`]) and a catalogue of labelled cases ([`catalogue`]) on which the
//! detectors are evaluated. Pure code: lines go to a `Write` or come one at a
//! time from [`Run::next_line`]; the only file I/O is the live writer in [`live`].

pub mod build;
pub mod cases;
pub mod integrate;
pub mod law;
pub mod layout;
pub mod live;

pub mod model;
pub mod omega;
pub mod prng;
pub mod run;
pub mod setup;

use std::io::{self, Write};
use std::sync::OnceLock;

use crate::finding::Level;

pub use run::{Run, Setup, Summary};

/// What a correct monitor should conclude about a case, and where.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Expected {
    /// Ok for a healthy run, warning for a stable run whose energy balance drifts
    /// past 5 %, critical for a numerical blow-up (or a run that dies).
    pub level: Level,
    /// 1-based physical line where the trouble starts, found by the simulation:
    /// for a blow-up, the first row whose step exceeds the scheme's stability
    /// limit for the current highest frequency (or where the step has collapsed
    /// below a tenth of its first value, or the crash row when nothing announced
    /// it); for a drift case, the first row where the written balance error passed
    /// 5 % of the energy scale; None for a healthy run.
    pub onset_line: Option<u64>,
    /// 1-based physical line of the first non-finite or overflowed field.
    pub crash_line: Option<u64>,
}

/// One labelled case of the catalogue.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Short name used on the command line.
    pub name: &'static str,
    /// One sentence: structure, scheme, what happens.
    pub description: &'static str,
    /// The label, computed by running the simulation.
    pub expected: Expected,
    build: fn() -> Setup,
    summary: Summary,
}

impl Scenario {
    /// A fresh run of this case, producing lines one at a time.
    pub fn run(&self) -> Run {
        Run::new((self.build)())
    }

    /// The run's setup (model, scheme, step, layout).
    pub fn setup(&self) -> Setup {
        (self.build)()
    }

    /// Write the whole history (deterministic: same bytes every time).
    pub fn write(&self, out: &mut dyn Write) -> io::Result<()> {
        self.run().write_all(out)
    }

    /// What the run found out about itself (computed with the label).
    pub fn summarize(&self) -> Summary {
        self.summary.clone()
    }
}

/// Label from a declared level and the run's own summary: the onset is the
/// first line past the limit, of a collapse or of the crash (critical), or
/// where the balance drifted (warning).
pub fn label(level: Level, s: &Summary) -> Expected {
    let onset_line = match level {
        Level::Ok => None,
        Level::Warning => s.drift_line,
        Level::Critical => [s.unstable_line, s.collapse_line, s.crash_line]
            .into_iter()
            .flatten()
            .min(),
    };
    Expected {
        level,
        onset_line,
        crash_line: s.crash_line,
    }
}

static LABELS: OnceLock<Vec<(Expected, Summary)>> = OnceLock::new();

fn labelled(c: &cases::Spec) -> (Expected, Summary) {
    let s = Run::new((c.build)()).summarize();
    (label(c.level, &s), s)
}

fn scenario(c: cases::Spec, (e, s): (Expected, Summary)) -> Scenario {
    Scenario {
        name: c.name,
        description: c.description,
        expected: e,
        build: c.build,
        summary: s,
    }
}

/// All labelled cases, in a fixed order. The labels are computed once per
/// process by running every case (a few seconds unoptimised).
pub fn catalogue() -> Vec<Scenario> {
    let specs = cases::specs();
    // One thread: tests of other parts that measure timing share the machine.
    let labels = LABELS.get_or_init(|| specs.iter().map(labelled).collect());
    specs
        .into_iter()
        .zip(labels.iter().cloned())
        .map(|(c, l)| scenario(c, l))
        .collect()
}

/// The case of that name, labelled by running that case alone (unless the
/// whole catalogue has been labelled already).
pub fn find(name: &str) -> Option<Scenario> {
    let specs = cases::specs();
    let i = specs.iter().position(|c| c.name == name)?;
    let l = match LABELS.get() {
        Some(all) => all[i].clone(),
        None => labelled(&specs[i]),
    };
    Some(scenario(specs[i], l))
}

/// Name of the default scenario of `rhoscope demo`.
pub const DEMO_SCENARIO: &str = "demo-tower-contact";
