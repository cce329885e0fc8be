//! Drives `rhoscope watch` in a real terminal (tmux, on a private server
//! socket): starts it on an invented history, reads the screen, presses keys,
//! appends rows, confirms a stop by hand and checks the stop file, quits and
//! checks the terminal came back. Needs tmux (`.ci/run` installs it); set
//! RHOSCOPE_SKIP_TMUX=1 to skip where tmux cannot run.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;

use crate::tmux_support::{Tmux, rows_text, skip, write_history};

fn history(dir: &Path) -> PathBuf {
    let p = dir.join("history.csv");
    write_history(&p, 600);
    p
}

fn command(file: &Path, extra: &str) -> String {
    format!(
        "{} watch '{}' --no-config --poll 200ms --end-time 1.0 {extra}; echo WATCH-EXIT=$?; sleep 30",
        env!("CARGO_BIN_EXE_rhoscope"),
        file.display()
    )
}

#[test]
fn watch_draws_reads_keys_and_quits_cleanly_at_80x24() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let file = history(dir.path());
    let tm = Tmux::start("small", 80, 24, &command(&file, ""));
    let s = tm.wait_for("600 rows", |s| s.contains("rows 600"));
    assert!(s.contains("✔ OK"), "{s}");
    assert!(s.contains("growth per step"), "{s}");
    assert!(s.contains("stop: not armed"), "{s}");

    // New rows appear without a key press.
    let mut f = std::fs::OpenOptions::new()
        .append(true)
        .open(&file)
        .unwrap();
    f.write_all(rows_text(600, 400).as_bytes()).unwrap();
    drop(f);
    tm.wait_for("1,000 rows", |s| s.contains("rows 1,000"));

    tm.keys(&["?"]);
    let s = tm.wait_for("help", |s| s.contains("help — any key closes"));
    assert!(s.contains("acknowledge"), "{s}");
    tm.keys(&["Escape"]);
    tm.wait_for("help closed", |s| !s.contains("help — any key closes"));

    tm.keys(&["X"]);
    tm.wait_for("nothing armed", |s| s.contains("No stop action is armed"));
    tm.keys(&["y"]);
    tm.wait_for("dialog closed", |s| !s.contains("No stop action is armed"));
    assert!(!tm.screen().contains("stop cancelled"));

    tm.keys(&["q"]);
    let s = tm.wait_for("exit", |s| s.contains("WATCH-EXIT="));
    assert!(s.contains("WATCH-EXIT=0"), "{s}");
    assert!(s.contains("rhoscope watch: 1000 rows"), "{s}");
    // Back on the normal screen: the dashboard is gone.
    assert!(!s.contains("growth per step"), "{s}");
    assert!(tm.alive());
}

#[test]
fn stop_by_hand_needs_yes_and_creates_the_stop_file_once_at_200x60() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let file = history(dir.path());
    let stop = dir.path().join("STOP");
    let extra = format!("--touch '{}' --by-key-only", stop.display());
    let tm = Tmux::start("large", 200, 60, &command(&file, &extra));
    let s = tm.wait_for("600 rows", |s| s.contains("rows 600"));
    assert!(s.contains("stop: armed (1, by key)"), "{s}");

    tm.keys(&["X"]);
    // Wait for the whole dialog: a capture can fall in the middle of a frame.
    let s = tm.wait_for("confirmation", |s| {
        s.contains("Stop the run? This will") && s.contains("nothing is done")
    });
    assert!(s.contains(&stop.display().to_string()), "{s}");
    assert!(s.contains("An alarm is advice"), "{s}");
    assert!(s.contains("last checkpoint"), "{s}");
    tm.keys(&["n"]);
    tm.wait_for("cancelled", |s| s.contains("stop cancelled"));
    assert!(!stop.exists(), "N must not create the stop file");

    tm.keys(&["X"]);
    tm.wait_for("confirmation", |s| s.contains("Stop the run? This will"));
    tm.keys(&["y"]);
    tm.wait_for("actions taken", |s| s.contains("stop: actions taken"));
    assert!(stop.exists(), "y must create the stop file");

    tm.keys(&["X"]);
    tm.wait_for("already taken", |s| s.contains("already taken once"));
    tm.keys(&["Escape"]);
    tm.wait_for("dialog closed", |s| !s.contains("already taken once"));
    tm.keys(&["q"]);
    let s = tm.wait_for("exit", |s| s.contains("WATCH-EXIT="));
    assert!(s.contains("stop actions taken"), "{s}");
}

#[test]
fn sighup_restores_the_terminal() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let file = history(dir.path());
    let tm = Tmux::start("hup", 80, 24, &command(&file, ""));
    tm.wait_for("600 rows", |s| s.contains("rows 600"));
    // The dashboard is the one child of the pane's shell: signal it by its id.
    let out = Command::new("tmux")
        .args([
            "-L",
            &tm.socket,
            "display-message",
            "-p",
            "-t",
            "w",
            "#{pane_pid}",
        ])
        .output()
        .unwrap();
    let shell = String::from_utf8_lossy(&out.stdout).trim().to_string();
    let out = Command::new("pgrep").args(["-P", &shell]).output().unwrap();
    let child = String::from_utf8_lossy(&out.stdout).trim().to_string();
    assert!(
        !child.is_empty() && !child.contains('\n'),
        "child of {shell}: {child:?}"
    );
    let ok = Command::new("kill")
        .args(["-HUP", &child])
        .status()
        .unwrap();
    assert!(ok.success());
    let s = tm.wait_for("exit", |s| s.contains("WATCH-EXIT="));
    assert!(s.contains("SIGHUP received"), "{s}");
    assert!(!s.contains("growth per step"), "{s}");
}
