//! `rhoscope evaluate`: write each labelled demo case in memory, read it
//! through the same [`Pipeline`] as `scan`, and score the alarms against the
//! labels ([`crate::detect::score`]).

use crate::alarm::{Alarm, Level};
use crate::cli::evaluate::EvaluateArgs;
use crate::demo::{Run, Scenario, Setup, Summary};
use crate::detect::score::{self, CaseScore, Label, Totals};
use crate::pipeline::Pipeline;
use crate::settings::Settings;

/// Run `rhoscope evaluate`; returns the exit code.
pub fn run(args: EvaluateArgs) -> anyhow::Result<i32> {
    let mut cases = crate::demo::catalogue();
    if !args.cases.is_empty() {
        for name in &args.cases {
            if !cases.iter().any(|c| c.name == name) {
                let known: Vec<&str> = cases.iter().map(|c| c.name).collect();
                anyhow::bail!("unknown case '{name}' (known: {})", known.join(", "));
            }
        }
        cases.retain(|c| args.cases.iter().any(|n| n == c.name));
    }
    let mut scores = evaluate(&cases);
    let mut text = score::table(&scores);
    if args.variants {
        let v = evaluate_variants(&cases);
        text += "\nVariants (output interval ×2, ×3; other noise seeds):\n";
        text += &score::table(&v);
        scores.extend(v);
    }
    super::scan::print(&text)?;
    Ok(if Totals::of(&scores).targets_met() {
        0
    } else {
        1
    })
}

/// Alarms raised by the pipeline on the bytes of one history.
pub fn alarms_of(bytes: &[u8]) -> Vec<Alarm> {
    let mut pipeline = Pipeline::new(&Settings::default());
    let mut alarms: Vec<Alarm> = Vec::new();
    pipeline.feed(bytes, None, &mut alarms);
    pipeline.finish(&mut alarms);
    alarms
}

/// Score every scenario with its catalogue label.
pub fn evaluate(cases: &[Scenario]) -> Vec<CaseScore> {
    cases
        .iter()
        .map(|c| {
            let mut bytes = Vec::new();
            // Writing to memory cannot fail.
            let _ = c.write(&mut bytes);
            let e = c.expected;
            let label = Label {
                level: e.level,
                onset_line: e.onset_line,
                crash_line: e.crash_line,
            };
            score::score(c.name, label, &alarms_of(&bytes))
        })
        .collect()
}

/// Label of a variant from its own run summary, by the catalogue's rule.
fn relabel(level: Level, s: &Summary) -> Label {
    let e = crate::demo::label(level, s);
    Label {
        level: e.level,
        onset_line: e.onset_line,
        crash_line: e.crash_line,
    }
}

/// Variants not tuned on: output every 2 and 3 times as many steps, and a
/// different noise seed where the case has noise. Each is relabelled from its
/// own run.
pub fn evaluate_variants(cases: &[Scenario]) -> Vec<CaseScore> {
    let mut out = Vec::new();
    for c in cases {
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
            let summary = Run::new(setup.clone()).summarize();
            let label = relabel(c.expected.level, &summary);
            let mut bytes = Vec::new();
            let _ = Run::new(setup).write_all(&mut bytes);
            out.push(score::score(&name, label, &alarms_of(&bytes)));
        }
    }
    out
}
