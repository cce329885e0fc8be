//! The actions through the command line: escalation order and grace, refusals
//! of PID 1 and of other users' processes, a verified signal, commands that fail
//! or hang, dry run.

use std::fs;
use std::os::unix::process::ExitStatusExt;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Duration;

use super::support::*;

/// A file that already has a header and healthy rows, plus a writer child that
/// appends NaN rows (a crashed solver) for about `secs` seconds, ignoring any
/// stop file except `stop`.
fn crashing_run(dir: &Path, stop: &Path, secs: usize) -> (std::path::PathBuf, Writer) {
    let (input, out) = (dir.join("input.csv"), dir.join("history.csv"));
    fs::write(&out, format!("{HEADER}{}", healthy(100, 0.0))).unwrap();
    fs::write(&input, crashed(2_000 * secs, 0.1)).unwrap();
    // ~2,000 lines/s: slow enough that the run outlives the grace periods.
    let w = Writer::start(&input, &out, stop, 20, Duration::from_millis(10));
    (out, w)
}

#[test]
fn escalation_goes_in_order_while_the_run_keeps_writing() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let mark = dir.path().join("cancelled");
    // The writer ignores STOP (it watches another name), like a solver that does not poll.
    let (out, w) = crashing_run(dir.path(), &dir.path().join("never"), 30);
    let run = format!(
        "echo \"$RHOSCOPE_DETECTOR $RHOSCOPE_LINE\" > '{}'",
        mark.display()
    );
    let mut g = Guard::start(
        dir.path(),
        &out,
        &[
            "--touch",
            stop.to_str().unwrap(),
            "--run",
            &run,
            "--grace",
            "200ms",
        ],
    );
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
    let line = fs::read_to_string(&mark).unwrap();
    assert!(line.starts_with("nonfinite 102"), "{line}");
    let ev = g.events();
    let acts: Vec<(String, String)> = of_kind(&ev, "action")
        .iter()
        .map(|a| {
            (
                a["action"]
                    .as_str()
                    .unwrap()
                    .split(' ')
                    .next()
                    .unwrap()
                    .to_string(),
                a["outcome"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    let want = [("touch", "done"), ("run", "started"), ("run", "done")];
    let want: Vec<(String, String)> = want
        .iter()
        .map(|(a, b)| (a.to_string(), b.to_string()))
        .collect();
    assert_eq!(acts, want);
    // Stop the writer (it would otherwise run its 30 s).
    fs::write(dir.path().join("never"), "").unwrap();
    let _ = w.stopped();
}

#[test]
fn no_next_step_when_the_run_stopped_within_the_grace_period() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let mark = dir.path().join("cancelled");
    let (out, w) = crashing_run(dir.path(), &stop, 30);
    let run = format!("touch '{}'", mark.display());
    let mut g = Guard::start(
        dir.path(),
        &out,
        &[
            "--touch",
            stop.to_str().unwrap(),
            "--run",
            &run,
            "--grace",
            "1s",
        ],
    );
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(w.stopped());
    assert!(
        !mark.exists(),
        "the command is not run when the stop file sufficed"
    );
    assert_eq!(of_kind(&g.events(), "action").len(), 1);
}

#[test]
fn pid_1_is_refused_at_start() {
    let dir = tempfile::tempdir().unwrap();
    let o = Command::new(BIN)
        .args(["guard"])
        .arg(dir.path().join("h.csv"))
        .args(["--signal", "TERM", "--pid", "1"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("PID 1"));
}

#[test]
fn another_users_process_is_refused_at_start() {
    use std::os::unix::process::CommandExt;
    let me = nix::unistd::geteuid().as_raw();
    // As root, start a process under another user; otherwise pick one from /proc.
    let mut own_child = None;
    let pid: u32 = if me == 0 {
        let c = Command::new("sleep")
            .arg("60")
            .uid(65_534)
            .gid(65_534)
            .spawn()
            .unwrap();
        let id = c.id();
        own_child = Some(c);
        id
    } else {
        fs::read_dir("/proc")
            .unwrap()
            .filter_map(|e| e.ok())
            .filter_map(|e| e.file_name().to_str()?.parse::<u32>().ok())
            .find(|&p| {
                p > 1
                    && fs::metadata(format!("/proc/{p}"))
                        .map(|m| std::os::unix::fs::MetadataExt::uid(&m) != me)
                        .unwrap_or(false)
            })
            .expect("some process of another user")
    };
    let dir = tempfile::tempdir().unwrap();
    let o = Command::new(BIN)
        .arg("guard")
        .arg(dir.path().join("h.csv"))
        .args(["--signal", "TERM", "--pid", &pid.to_string()])
        .output()
        .unwrap();
    if let Some(mut c) = own_child {
        let _ = c.kill();
        let _ = c.wait();
    }
    assert_eq!(o.status.code(), Some(3));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("belongs to user"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
}

#[test]
fn the_solver_process_gets_the_signal_and_guard_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let mut solver = Command::new("sleep")
        .arg("120")
        .stdin(Stdio::null())
        .spawn()
        .unwrap();
    let (out, w) = crashing_run(dir.path(), &dir.path().join("STOP"), 30);
    let mut g = Guard::start(
        dir.path(),
        &out,
        &[
            "--signal",
            "SIGTERM",
            "--pid",
            &solver.id().to_string(),
            "--touch",
            dir.path().join("STOP").to_str().unwrap(),
            "--grace",
            "200ms",
        ],
    );
    // Order is stop file, then signal: the writer stops at STOP, but the
    // process given with --pid is alive, so the run counts as still going.
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    let st = wait_child(&mut solver);
    assert_eq!(st.signal(), Some(15));
    assert!(w.stopped());
}

#[test]
fn a_failing_command_is_reported_and_guard_exits_4() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let (out, w) = crashing_run(dir.path(), &stop, 30);
    let mut g = Guard::start(dir.path(), &out, &["--run", "exit 5"]);
    assert_eq!(g.code(), 4, "{}", g.stderr_text());
    let ev = g.events();
    let acts = of_kind(&ev, "action");
    assert_eq!(acts.last().unwrap()["outcome"], "failed");
    fs::write(&stop, "").unwrap();
    let _ = w.stopped();
}

#[test]
fn a_hanging_command_is_killed_at_its_limit_and_reported() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let (out, w) = crashing_run(dir.path(), &stop, 30);
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--run", "sleep 60", "--run-limit", "500ms"],
    );
    assert_eq!(g.code(), 4, "{}", g.stderr_text());
    let ev = g.events();
    assert_eq!(
        of_kind(&ev, "action").last().unwrap()["outcome"],
        "timed out"
    );
    fs::write(&stop, "").unwrap();
    let _ = w.stopped();
}

#[test]
fn dry_run_touches_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let (out, w) = crashing_run(dir.path(), &dir.path().join("never"), 2);
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--touch", stop.to_str().unwrap(), "--dry-run"],
    );
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(!stop.exists());
    assert_eq!(of_kind(&g.events(), "action")[0]["outcome"], "dry run");
    assert!(!w.stopped());
}
