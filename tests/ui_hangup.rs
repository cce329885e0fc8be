//! No view survives its terminal: `rhoscope watch` runs in a private tmux
//! server — one run, many runs, and a run opened from the many-run view with
//! Enter — and the window is killed (its terminal hung up, as when an SSH
//! connection drops); the process must be gone within a second. Keys and
//! resizes still work before that, so the views are really reading the terminal.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use crate::tmux_support::{Tmux, skip, write_history};

/// How long a view may outlive its terminal.
const GONE_WITHIN: Duration = Duration::from_secs(1);

/// True while `pid` runs (a zombie waiting for its parent has ended).
fn running(pid: u32) -> bool {
    match std::fs::read_to_string(format!("/proc/{pid}/stat")) {
        Ok(stat) => stat
            .rsplit_once(')')
            .and_then(|(_, rest)| rest.split_whitespace().next())
            .is_some_and(|state| state != "Z" && state != "X"),
        Err(_) => false,
    }
}

/// Start `args` in tmux through a shell that records its pid and execs it.
fn start(dir: &Path, tag: &str, args: &str) -> (Tmux, u32) {
    let pid_file = dir.join(format!("{tag}.pid"));
    let cmd = format!(
        "sh -c 'echo $$ > {}; exec {} {args}'",
        pid_file.display(),
        env!("CARGO_BIN_EXE_rhoscope")
    );
    let tm = Tmux::start(tag, 100, 30, &cmd);
    let deadline = Instant::now() + Duration::from_secs(10);
    loop {
        if let Some(pid) = std::fs::read_to_string(&pid_file)
            .ok()
            .and_then(|s| s.trim().parse().ok())
        {
            return (tm, pid);
        }
        assert!(Instant::now() < deadline, "no pid from the shell");
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// Kill the tmux window (its terminal closes, its processes get SIGHUP) and
/// expect `pid` to be gone within [`GONE_WITHIN`].
fn hang_up_and_expect_exit(tm: &Tmux, pid: u32, what: &str) {
    let t = Instant::now();
    let ok = Command::new("tmux")
        .args(["-L", &tm.socket, "kill-window", "-t", "w"])
        .status()
        .unwrap();
    assert!(ok.success());
    while running(pid) && t.elapsed() < GONE_WITHIN + Duration::from_secs(5) {
        std::thread::sleep(Duration::from_millis(10));
    }
    let took = t.elapsed();
    if running(pid) {
        let _ = Command::new("kill")
            .args(["-KILL", &pid.to_string()])
            .status();
        panic!("{what}: still running {took:?} after its terminal closed");
    }
    assert!(took <= GONE_WITHIN, "{what}: ended only after {took:?}");
}

fn runs(dir: &Path) {
    for name in ["a", "b"] {
        let d = dir.join(name);
        std::fs::create_dir_all(&d).unwrap();
        write_history(&d.join("history.csv"), 400);
    }
}

#[test]
fn one_run_view_ends_with_its_terminal() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("h.csv");
    write_history(&file, 400);
    let (tm, pid) = start(dir.path(), "hup-one", &format!("watch {}", file.display()));
    tm.wait_for("the dashboard", |s| s.contains("rows 400"));
    // It reads keys: the help opens and closes.
    tm.keys(&["?"]);
    tm.wait_for("the help", |s| s.contains("any key closes"));
    tm.keys(&["x"]);
    tm.wait_for("the help closed", |s| !s.contains("any key closes"));
    hang_up_and_expect_exit(&tm, pid, "the one-run view");
}

#[test]
fn many_run_view_ends_with_its_terminal() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    runs(dir.path());
    let pattern = format!("\"{}/*/history.csv\"", dir.path().display());
    let (tm, pid) = start(dir.path(), "hup-many", &format!("watch {pattern}"));
    tm.wait_for("the table", |s| s.contains("2 runs"));
    hang_up_and_expect_exit(&tm, pid, "the many-run view");
}

#[test]
fn a_run_opened_from_the_many_run_view_ends_with_its_terminal() {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    runs(dir.path());
    let pattern = format!("\"{}/*/history.csv\"", dir.path().display());
    let (tm, pid) = start(dir.path(), "hup-drill", &format!("watch {pattern}"));
    tm.wait_for("the table", |s| s.contains("2 runs"));
    // Enter, Esc back, and Enter again: the drill-down the report was about.
    tm.keys(&["Enter"]);
    tm.wait_for("a run's dashboard", |s| s.contains("growth per step"));
    tm.keys(&["Escape"]);
    tm.wait_for("back in the table", |s| s.contains("2 runs"));
    tm.keys(&["Enter"]);
    tm.wait_for("a run's dashboard", |s| s.contains("growth per step"));
    hang_up_and_expect_exit(&tm, pid, "the drill-down");
}
