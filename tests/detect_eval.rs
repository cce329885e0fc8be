//! The detectors on the labelled demo catalogue, read through the same
//! pipeline as `scan` (see `rhoscope evaluate`).

use rhoscope::commands::evaluate::evaluate;
use rhoscope::detect::score::{Totals, table};

#[test]
fn every_blowup_detected_before_its_crash_and_every_drift_warned() {
    let scores = evaluate(&rhoscope::demo::catalogue());
    let t = Totals::of(&scores);
    let text = table(&scores);
    assert!(
        t.blowups >= 10 && t.drifts >= 3 && t.healthy >= 10,
        "{text}"
    );
    assert_eq!(t.detected, t.blowups, "{text}");
    assert_eq!(t.drifts_warned, t.drifts, "{text}");
}

/// The full targets: every blow-up detected before its crash line, no false
/// critical, at most one healthy case warned, every drift case warned, and a
/// median lead of at least 0.95.
#[test]
#[ignore = "not met yet: see the evaluation figures in README \"Detectors and their thresholds\""]
fn all_targets() {
    let scores = evaluate(&rhoscope::demo::catalogue());
    let t = Totals::of(&scores);
    assert!(t.targets_met(), "{}", table(&scores));
}
