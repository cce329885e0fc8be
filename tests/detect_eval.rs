//! The detectors on the labelled demo catalogue, read through the same
//! pipeline as `scan` (see `rhoscope evaluate`).

use rhoscope::evaluate::score::{CaseScore, MIN_LEAD, Totals, table};
use rhoscope::evaluate::{demo, score_set};

fn scores(set: rhoscope::evaluate::Set) -> Vec<CaseScore> {
    score_set(&set).expect("demo sets are in memory").cases
}

fn evaluate() -> Vec<CaseScore> {
    scores(demo::catalogue(None).expect("the catalogue builds"))
}

#[test]
fn every_blowup_detected_before_its_crash_and_every_drift_warned() {
    let scores = evaluate();
    let t = Totals::of(&scores);
    let text = table(&scores, MIN_LEAD);
    assert!(
        t.blowups >= 10 && t.drifts >= 3 && t.healthy >= 10,
        "{text}"
    );
    assert_eq!(t.detected, t.blowups, "{text}");
    assert_eq!(t.drifts_warned, t.drifts, "{text}");
}

/// The full targets: every blow-up detected before its crash line and none
/// called critical before its onset, no false critical, no healthy case
/// warned, every drift case warned, and a median lead of at least 0.95.
#[test]
fn all_targets() {
    let scores = evaluate();
    let t = Totals::of(&scores);
    assert!(t.targets_met(MIN_LEAD), "{}", table(&scores, MIN_LEAD));
}

/// The same catalogue with every output interval doubled and tripled and
/// other noise seeds: histories the thresholds were not set on. The lead
/// shrinks (fewer rows between onset and crash), but nothing may be missed,
/// called before its onset, and nothing healthy may be called critical or
/// warned.
#[test]
fn variants_detected_without_false_critical() {
    let scores = scores(demo::variants(None).expect("the variants build"));
    let t = Totals::of(&scores);
    let text = table(&scores, MIN_LEAD);
    assert!(t.blowups >= 20 && t.healthy >= 20, "{text}");
    assert_eq!(t.detected, t.blowups, "{text}");
    assert_eq!(t.false_critical, 0, "{text}");
    assert_eq!(t.early, 0, "{text}");
    assert_eq!(t.healthy_warned, 0, "{text}");
    assert_eq!(t.drifts_warned, t.drifts, "{text}");
}

/// The blind catalogue (written from docs/blind-catalogue.md alone, frozen
/// before tuning): what the detectors meet there today, and no less. The
/// targets are those of `all_targets`; still missed: two gradual-onset
/// blow-ups and two headerless ones caught only at their crash, four healthy
/// runs warned by a balance that an unassigned column closes (the warning
/// names it) and a thermostat run whose file does not write the thermostat's
/// energy; median lead 0.71.
#[test]
fn blind_catalogue_figures() {
    let scores = scores(rhoscope::evaluate::blind::set(None).expect("the blind set builds"));
    let t = Totals::of(&scores);
    let text = table(&scores, MIN_LEAD);
    assert!(t.blowups >= 18 && t.healthy >= 26, "{text}");
    assert_eq!(t.false_critical, 0, "{text}");
    assert_eq!(t.early, 0, "{text}");
    assert_eq!(t.drifts_warned, t.drifts, "{text}");
    assert!(t.detected >= 14, "{text}");
    assert!(t.healthy_warned <= 5, "{text}");
    assert!(t.median_lead.is_some_and(|m| m >= 0.70), "{text}");
}
