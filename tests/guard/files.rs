//! The followed file changing under guard: truncation, replacement, deletion,
//! and restarts appended after an old crash.

use std::fs;
use std::time::Duration;

use super::support::*;

fn wait_for_note(g: &Guard, words: &str) {
    eventually(words, || {
        of_kind(&g.events(), "note")
            .iter()
            .any(|n| n["message"].as_str().unwrap_or("").contains(words))
    });
}

fn guard_with_stop(dir: &std::path::Path, file: &std::path::Path) -> (Guard, std::path::PathBuf) {
    let stop = dir.join("STOP");
    let g = Guard::start(
        dir,
        file,
        &[
            "--touch",
            stop.to_str().unwrap(),
            "--idle-exit",
            "4s",
            "--poll",
            "100ms",
        ],
    );
    (g, stop)
}

#[test]
fn truncation_mid_run_starts_a_new_segment_and_its_crash_is_acted_on() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(&f, &format!("{HEADER}{}", healthy(500, 0.0)));
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    wait_for_note(&g, "following live");
    std::thread::sleep(Duration::from_millis(300));
    fs::OpenOptions::new()
        .write(true)
        .open(&f)
        .unwrap()
        .set_len(0)
        .unwrap();
    append(&f, &format!("{HEADER}{}", healthy(5, 0.0)));
    wait_for_note(&g, "truncated");
    append(&f, &crashed(5, 0.005));
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
    let ev = g.events();
    assert_eq!(
        of_kind(&ev, "alarm")[0]["line"],
        7,
        "line counted in the new file"
    );
}

#[test]
fn replacement_by_rename_is_read_from_its_start_and_healthy_data_stops_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(&f, &format!("{HEADER}{}", healthy(500, 0.0)));
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    wait_for_note(&g, "following live");
    let tmp = dir.path().join("h.csv.new");
    // A different run (starts later), not a longer copy of the same bytes.
    fs::write(&tmp, format!("{HEADER}{}", healthy(800, 1.0))).unwrap();
    fs::rename(&tmp, &f).unwrap();
    wait_for_note(&g, "replaced");
    assert_eq!(g.code(), 0, "{}", g.stderr_text());
    assert!(!stop.exists());
    assert!(of_kind(&g.events(), "alarm").is_empty());
}

#[test]
fn deletion_keeps_what_was_read_and_a_recreated_file_is_followed() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(&f, &format!("{HEADER}{}", healthy(200, 0.0)));
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    wait_for_note(&g, "following live");
    fs::remove_file(&f).unwrap();
    wait_for_note(&g, "gone");
    append(&f, &format!("{HEADER}{}", healthy(3, 0.0)));
    wait_for_note(&g, "replaced");
    append(&f, &crashed(3, 0.003));
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
    assert_eq!(of_kind(&g.events(), "alarm")[0]["line"], 5);
}

#[test]
fn an_old_crash_before_a_restart_in_the_backlog_stops_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    // Crashed run, then the solver restarted from t = 0 and appended a new header.
    append(
        &f,
        &format!(
            "{HEADER}{}{}{HEADER}{}",
            healthy(100, 0.0),
            crashed(20, 0.1),
            healthy(300, 0.0)
        ),
    );
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    std::thread::sleep(Duration::from_millis(500));
    append(&f, &healthy(100, 0.3));
    assert_eq!(g.code(), 0, "{}", g.stderr_text());
    assert!(!stop.exists());
    let ev = g.events();
    assert_eq!(of_kind(&ev, "alarm").len(), 1, "the old crash is logged");
    assert!(of_kind(&ev, "action").is_empty());
}

#[test]
fn a_restart_appended_live_after_a_crash_in_the_backlog_stops_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(
        &f,
        &format!("{HEADER}{}{}", healthy(100, 0.0), crashed(20, 0.1)),
    );
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    wait_for_note(&g, "already in the file");
    append(&f, &format!("{HEADER}{}", healthy(300, 0.0)));
    assert_eq!(g.code(), 0, "{}", g.stderr_text());
    assert!(!stop.exists());
    assert!(of_kind(&g.events(), "action").is_empty());
}

#[test]
fn a_crash_in_the_backlog_is_acted_on_when_the_run_writes_on() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(
        &f,
        &format!("{HEADER}{}{}", healthy(100, 0.0), crashed(20, 0.1)),
    );
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    wait_for_note(&g, "already in the file");
    append(&f, &crashed(5, 0.12));
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
}

#[test]
fn a_finished_crashed_file_is_logged_but_stops_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    append(
        &f,
        &format!("{HEADER}{}{}", healthy(100, 0.0), crashed(3, 0.1)),
    );
    let stop = dir.path().join("STOP");
    let mut g = Guard::start(
        dir.path(),
        &f,
        &["--touch", stop.to_str().unwrap(), "--idle-exit", "500ms"],
    );
    assert_eq!(g.code(), 0, "{}", g.stderr_text());
    assert!(!stop.exists());
    assert_eq!(of_kind(&g.events(), "alarm").len(), 1);
}

#[test]
fn guard_waits_for_a_file_that_does_not_exist_yet() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("later.csv");
    let (mut g, stop) = guard_with_stop(dir.path(), &f);
    std::thread::sleep(Duration::from_millis(300));
    append(&f, &format!("{HEADER}{}", healthy(10, 0.0)));
    wait_for_note(&g, "the file is there");
    append(&f, &crashed(2, 0.01));
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
}
