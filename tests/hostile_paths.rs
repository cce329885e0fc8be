//! Output paths that would harm what rhoscope watches: every command refuses
//! them before it starts (exit 3, a message naming both paths), and the history
//! is left byte for byte as it was. Also the stop file against planted links.

use std::fs;
use std::os::unix::fs::symlink;
use std::path::Path;

use assert_cmd::Command;

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// A short healthy history with a blow-up at its end (so guard would act).
const HISTORY: &str = "time,x\n0,1\n0.001,0.5\n0.002,NaN\n";

fn rhoscope(dir: &Path) -> Command {
    let mut c = Command::new(BIN);
    c.current_dir(dir)
        .timeout(std::time::Duration::from_secs(60));
    c
}

/// Run and return (exit code, stderr).
fn refused(dir: &Path, args: &[&str]) -> (i32, String) {
    let out = rhoscope(dir).args(args).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn history(dir: &Path) -> std::path::PathBuf {
    let h = dir.join("h.csv");
    fs::write(&h, HISTORY).unwrap();
    h
}

#[test]
fn guard_refuses_the_history_as_stop_file_or_event_log() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    history(d);
    symlink("h.csv", d.join("alias.csv")).unwrap();
    for args in [
        vec!["guard", "h.csv", "--touch", "h.csv", "--idle-exit", "1s"],
        vec!["guard", "h.csv", "--events", "h.csv", "--idle-exit", "1s"],
        vec![
            "guard",
            "h.csv",
            "--events",
            "./alias.csv",
            "--idle-exit",
            "1s",
        ],
        vec![
            "guard",
            "alias.csv",
            "--touch",
            "h.csv",
            "--idle-exit",
            "1s",
        ],
    ] {
        let (code, err) = refused(d, &args);
        assert_eq!(code, 3, "{args:?}: {err}");
        assert!(err.contains("watched history"), "{args:?}: {err}");
        assert!(err.contains(args[1]) && err.contains(args[3]), "{err}");
        assert_eq!(fs::read_to_string(d.join("h.csv")).unwrap(), HISTORY);
    }
    // A history that does not exist yet is compared by its resolved name.
    let (code, err) = refused(
        d,
        &[
            "guard",
            "later.csv",
            "--touch",
            "./later.csv",
            "--idle-exit",
            "1s",
        ],
    );
    assert_eq!(code, 3, "{err}");
    assert!(!d.join("later.csv").exists());
}

#[test]
fn guard_refuses_a_stop_file_from_the_named_config_that_is_the_history() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    history(d);
    fs::write(d.join("g.toml"), "[actions]\ntouch = \"h.csv\"\n").unwrap();
    let (code, err) = refused(
        d,
        &["guard", "h.csv", "--config", "g.toml", "--idle-exit", "1s"],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("[actions] touch"), "{err}");
    assert_eq!(fs::read_to_string(d.join("h.csv")).unwrap(), HISTORY);
}

#[test]
fn guard_refuses_one_file_for_stop_and_events_and_a_linked_stop_file() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    history(d);
    let (code, err) = refused(
        d,
        &[
            "guard",
            "h.csv",
            "--touch",
            "x",
            "--events",
            "x",
            "--idle-exit",
            "1s",
        ],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("same file"), "{err}");
    fs::write(d.join("victim"), "keep").unwrap();
    symlink("victim", d.join("STOP")).unwrap();
    let (code, err) = refused(
        d,
        &["guard", "h.csv", "--touch", "STOP", "--idle-exit", "1s"],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("symbolic link"), "{err}");
    assert_eq!(fs::read_to_string(d.join("victim")).unwrap(), "keep");
}

#[test]
fn fleet_refuses_a_textfile_that_is_or_would_be_a_run() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for r in ["r1", "r2"] {
        fs::create_dir(d.join(r)).unwrap();
        fs::write(d.join(r).join("history.csv"), HISTORY).unwrap();
    }
    let (code, err) = refused(
        d,
        &[
            "fleet",
            "r*/history.csv",
            "--once",
            "--textfile",
            "r1/history.csv",
        ],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("r1/history.csv"), "{err}");
    assert_eq!(
        fs::read_to_string(d.join("r1/history.csv")).unwrap(),
        HISTORY
    );
    // A run that has not started yet: its history would be the metrics file.
    fs::create_dir(d.join("r3")).unwrap();
    let (code, err) = refused(
        d,
        &[
            "fleet",
            "r*/history.csv",
            "--once",
            "--textfile",
            "r3/history.csv",
        ],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("r*/history.csv"), "{err}");
    assert!(!d.join("r3/history.csv").exists());
    // A path outside the pattern is written.
    let out = rhoscope(d)
        .args([
            "fleet",
            "r*/history.csv",
            "--once",
            "--textfile",
            "fleet.prom",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2), "the runs end in NaN");
    assert!(
        fs::read_to_string(d.join("fleet.prom"))
            .unwrap()
            .contains("# TYPE")
    );
}

#[test]
fn scan_refuses_an_image_that_is_the_history() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::write(d.join("run.svg"), HISTORY).unwrap();
    let (code, err) = refused(d, &["scan", "run.svg", "--plot", "run.svg"]);
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("--plot"), "{err}");
    assert_eq!(fs::read_to_string(d.join("run.svg")).unwrap(), HISTORY);
}

#[test]
fn demo_refuses_a_stop_file_that_is_its_own_history() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let (code, err) = refused(
        d,
        &[
            "demo",
            "--live",
            "h.csv",
            "--stop-file",
            "./h.csv",
            "--rate",
            "0",
        ],
    );
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("same file"), "{err}");
}
