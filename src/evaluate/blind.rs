//! The blind catalogue ([`crate::blind`]) as a labelled set: histories
//! written from `docs/blind-catalogue.md` alone and frozen before the
//! detectors were tuned, each labelled by its own run. Kept apart from the
//! demo catalogue so the two sets' figures are never mixed; [`by_class`]
//! breaks its scores down by the failure class each case was written for.

use super::score::{CaseScore, Totals};
use super::{Case, Filter, Input, Label, Set, SetScore, selected};
use crate::blind::{self, Class, Verdict};
use crate::finding::Level;
use crate::settings::Settings;

/// Name of the blind set.
pub const BLIND: &str = "blind";

/// The level the scorer expects for a blind verdict.
pub fn level(v: Verdict) -> Level {
    match v {
        Verdict::Ok => Level::Ok,
        Verdict::Warning => Level::Warning,
        Verdict::Critical => Level::Critical,
    }
}

/// The score label of a blind label.
pub fn label(l: blind::Label) -> Label {
    Label {
        level: level(l.level),
        onset_line: l.onset_line,
        crash_line: l.crash_line,
    }
}

/// The names of the blind cases.
pub fn names() -> Vec<String> {
    blind::specs().iter().map(|s| s.name.to_string()).collect()
}

/// The blind set (the cases `filter` selects), generated in memory.
pub fn set(filter: Filter) -> anyhow::Result<Set> {
    let cases = blind::specs()
        .iter()
        .filter(|s| selected(filter, s.name))
        .map(|s| {
            let c = blind::generate(s);
            Case {
                name: c.name.to_string(),
                input: Input::Bytes(c.bytes),
                label: label(c.label),
            }
        })
        .collect();
    Ok(Set {
        name: BLIND.into(),
        title: "Blind catalogue (written from docs/blind-catalogue.md alone, frozen before tuning)"
            .into(),
        settings: Settings::default(),
        cases,
        min_lead: super::score::MIN_LEAD,
    })
}

/// Did the first alarm at the case's level come before its onset line?
pub fn before_onset(c: &CaseScore) -> bool {
    matches!((c.first_alarm_line, c.expected.onset_line), (Some(a), Some(o)) if a < o)
}

/// The blind set's scores per failure class, as a table: cases, blow-ups
/// detected before their crash, false critical alarms, healthy cases warned,
/// drift cases warned, first alarms before the onset line, median lead.
pub fn by_class(scored: &SetScore) -> String {
    let specs = blind::specs();
    let class_of = |name: &str| specs.iter().find(|s| s.name == name).map(|s| s.class);
    let mut classes: Vec<Class> = specs.iter().map(|s| s.class).collect();
    classes.sort();
    classes.dedup();
    let frac = |a: usize, b: usize| {
        if b == 0 {
            "-".to_string()
        } else {
            format!("{a}/{b}")
        }
    };
    let mut s = format!(
        "{:<17} {:>5} {:>9} {:>9} {:>8} {:>7} {:>8} {:>6}\n",
        "class", "cases", "detected", "false cr", "healthy", "drifts", "early", "lead"
    );
    let mut row = |name: &str, cases: &[CaseScore]| {
        let t = Totals::of(cases);
        let early = cases.iter().filter(|c| before_onset(c)).count();
        s += &format!(
            "{:<17} {:>5} {:>9} {:>9} {:>8} {:>7} {:>8} {:>6}\n",
            name,
            cases.len(),
            frac(t.detected, t.blowups),
            t.false_critical,
            frac(t.healthy_warned, t.healthy),
            frac(t.drifts_warned, t.drifts),
            early,
            t.median_lead.map_or("-".to_string(), |m| format!("{m:.2}")),
        );
    };
    for class in classes {
        let cases: Vec<CaseScore> = scored
            .cases
            .iter()
            .filter(|c| class_of(&c.name) == Some(class))
            .cloned()
            .collect();
        if !cases.is_empty() {
            row(class.word(), &cases);
        }
    }
    row("all", &scored.cases);
    format!(
        "By class (detected: blow-ups critical before their crash; healthy: ok cases\n\
         warned; drifts: drift cases warned; early: first alarm before the onset line):\n{s}"
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::evaluate::score::score;

    #[test]
    fn a_filtered_blind_set_keeps_its_labels() {
        let names = ["names-fast-mode".to_string()];
        let s = set(Some(&names)).expect("in memory");
        assert_eq!(s.cases.len(), 1);
        let c = blind::case("names-fast-mode").expect("listed");
        assert_eq!(s.cases[0].label, label(c.label));
        assert_eq!(super::names().len(), blind::specs().len());
    }

    #[test]
    fn the_class_table_counts_each_case_in_its_class() {
        let blow = Label {
            level: Level::Critical,
            onset_line: Some(10),
            crash_line: Some(30),
        };
        let calm = Label {
            level: Level::Ok,
            onset_line: None,
            crash_line: None,
        };
        // Names from the spec's drift and step-cut classes; no alarms raised.
        let scored = SetScore {
            name: BLIND.into(),
            title: String::new(),
            min_lead: crate::evaluate::score::MIN_LEAD,
            cases: vec![
                score("collapse-crushed-bar", blow, &[]),
                score("cut-contact-implicit", calm, &[]),
            ],
        };
        let t = by_class(&scored);
        let line = |w: &str| {
            t.lines()
                .find(|l| l.starts_with(w))
                .unwrap_or_else(|| panic!("{w}: {t}"))
                .split_whitespace()
                .collect::<Vec<_>>()
        };
        assert_eq!(
            line("step-cut"),
            ["step-cut", "2", "0/1", "0", "0/1", "-", "0", "0.00"]
        );
        assert_eq!(line("all")[1], "2");
        assert!(!t.lines().any(|l| l.starts_with("drift ")), "{t}");
    }
}
