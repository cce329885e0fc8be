//! The contract scripts rely on: `guard FILE --touch STOP --idle-exit D` creates
//! STOP on the first critical alarm while the file is written and exits 2; exits
//! 0 after the idle time when there was none; 3 on usage and input errors.

use std::fs;

use super::support::*;

#[test]
fn a_run_that_crashes_while_writing_is_stopped_and_guard_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let (input, out, stop) = (
        dir.path().join("input.csv"),
        dir.path().join("history.csv"),
        dir.path().join("STOP"),
    );
    // 1 s of healthy output at ~20,000 lines/s, then a solver that goes on
    // printing NaN for 10 s more unless stopped.
    let text = format!("{HEADER}{}{}", healthy(20_000, 0.0), crashed(200_000, 20.0));
    fs::write(&input, &text).unwrap();
    // The writer first, so that a slow start of it on a busy machine cannot
    // pass for an idle file; guard then reads a backlog and follows live.
    let w = Writer::fast(&input, &out, &stop);
    eventually("the history to appear", || out.exists());
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--touch", stop.to_str().unwrap(), "--idle-exit", "3s"],
    );
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(stop.exists());
    assert!(w.stopped(), "the writer saw the stop file");
    let written = line_count(&out);
    assert!(written < 220_001, "stopped before the end: {written} lines");
    let ev = g.events();
    let alarms = of_kind(&ev, "alarm");
    assert_eq!(alarms[0]["level"], "critical");
    assert_eq!(
        alarms[0]["line"], 20_002,
        "first NaN row: header + 20,000 rows + 1"
    );
    let actions = of_kind(&ev, "action");
    assert_eq!(actions.len(), 1);
    assert_eq!(actions[0]["outcome"], "done");
    assert!(actions[0]["action"].as_str().unwrap().starts_with("touch "));
}

#[test]
fn a_blow_up_written_at_20000_lines_per_s_is_stopped_before_its_crash_line() {
    let dir = tempfile::tempdir().unwrap();
    let (input, out, stop) = (
        dir.path().join("input.csv"),
        dir.path().join("history.csv"),
        dir.path().join("STOP"),
    );
    // ×1.01 per row: about 70,000 rows from onset to overflow.
    let (text, crash_line) = blow_up(1.01);
    fs::write(&input, &text).unwrap();
    // Guard first, ready before the run starts (a slow start of guard on a busy
    // machine is not what is measured), with an idle limit longer than the
    // writer's start-up can take.
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--touch", stop.to_str().unwrap(), "--idle-exit", "30s"],
    );
    eventually("guard to be ready", || {
        of_kind(&g.events(), "note").iter().any(|n| {
            n["message"]
                .as_str()
                .unwrap_or("")
                .contains("following live")
        })
    });
    let w = Writer::fast(&input, &out, &stop);
    assert_eq!(g.code(), 2, "{}", g.stderr_text());
    assert!(w.stopped(), "the writer saw the stop file");
    let written = line_count(&out);
    assert!(
        written < crash_line,
        "stopped at line {written}, before the crash at line {crash_line}"
    );
    assert!(!fs::read_to_string(&out).unwrap().contains("NaN"));
    let ev = g.events();
    let first = of_kind(&ev, "alarm")
        .into_iter()
        .find(|a| a["level"] == "critical")
        .cloned()
        .unwrap();
    assert_ne!(
        first["detector"], "nonfinite",
        "caught by a detector ahead of the crash"
    );
}

#[test]
fn a_healthy_run_is_never_stopped_and_guard_exits_0_when_idle() {
    let dir = tempfile::tempdir().unwrap();
    let (input, out, stop) = (
        dir.path().join("input.csv"),
        dir.path().join("history.csv"),
        dir.path().join("STOP"),
    );
    fs::write(&input, format!("{HEADER}{}", healthy(20_000, 0.0))).unwrap();
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--touch", stop.to_str().unwrap(), "--idle-exit", "1500ms"],
    );
    let w = Writer::fast(&input, &out, &stop);
    assert!(!w.stopped(), "the writer wrote everything");
    assert_eq!(g.code(), 0, "{}", g.stderr_text());
    assert!(!stop.exists());
    assert!(of_kind(&g.events(), "action").is_empty());
    assert_eq!(line_count(&out), 20_001);
}

#[test]
fn usage_and_input_errors_exit_3() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("h.csv");
    let run = |args: &[&str]| {
        std::process::Command::new(BIN)
            .arg("guard")
            .args(args)
            .output()
            .unwrap()
    };
    let fs_ = f.to_str().unwrap();
    for args in [
        vec![fs_, "--signal", "TERM"],
        vec![fs_, "--idle-exit", "soon"],
        vec![fs_, "--grace", "3 weeks"],
        vec![dir.path().to_str().unwrap()],
        vec![fs_, "--signal", "NOPE", "--pid", "2"],
    ] {
        let o = run(&args);
        assert_eq!(o.status.code(), Some(3), "{args:?}: {o:?}");
        assert!(!o.stderr.is_empty());
    }
}

#[test]
fn a_stop_file_left_over_is_warned_about_at_start() {
    let dir = tempfile::tempdir().unwrap();
    let (out, stop) = (dir.path().join("h.csv"), dir.path().join("STOP"));
    fs::write(&stop, "").unwrap();
    append(&out, &format!("{HEADER}{}", healthy(10, 0.0)));
    let mut g = Guard::start(
        dir.path(),
        &out,
        &["--touch", stop.to_str().unwrap(), "--idle-exit", "300ms"],
    );
    assert_eq!(g.code(), 0);
    assert!(
        g.stderr_text().contains("already exists"),
        "{}",
        g.stderr_text()
    );
}

#[test]
fn help_shows_examples_exit_codes_and_cautions() {
    let o = std::process::Command::new(BIN)
        .args(["guard", "--help"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    let text = String::from_utf8(o.stdout).unwrap();
    for want in [
        "--touch",
        "--signal",
        "--pid",
        "--run",
        "--grace",
        "--idle-exit",
        "Exit codes",
        "advice",
    ] {
        assert!(text.contains(want), "help lacks {want}");
    }
}
