//! What the tests do when an outside tool they check against (tmux, a Python
//! reference library, a solver package) is missing: under CI (`CI=true`,
//! which `.ci/run` sets) that is a failure, because a check that quietly does
//! not run proves nothing; elsewhere the test prints why and returns early.

/// True when the tests run under CI.
pub fn on_ci() -> bool {
    std::env::var("CI").is_ok_and(|v| v == "true")
}

/// Report a missing outside tool: panics under CI, else prints a notice and
/// returns true (the caller then returns without checking).
pub fn missing(why: &str) -> bool {
    assert!(!on_ci(), "required under CI but missing: {why}");
    eprintln!("SKIPPED: {why}");
    true
}
