//! Unit tests of the escalation with a hand-driven clock: order, grace, at most
//! once per action, dry run, failures, commands that hang, verified signals.

#![allow(clippy::unwrap_used)]

use std::os::unix::process::ExitStatusExt;
use std::path::PathBuf;
use std::process::Command;
use std::time::{Duration, Instant};

use super::*;
use crate::alarm::Alarm;
use crate::finding::Evidence;
use crate::finding::Level;

fn alarm(level: Level, line: u64) -> Alarm {
    Alarm {
        level,
        detector: "nonfinite",
        line,
        time: Some(1.25),
        message: "non-finite value".into(),
        evidence: Evidence::default(),
    }
}

fn config(actions: Vec<ActionSpec>) -> EscalationConfig {
    EscalationConfig {
        actions,
        grace: Duration::from_millis(200),
        on_warning: false,
        dry_run: false,
        file: PathBuf::from("/runs/a.csv"),
    }
}

fn ms(t0: Instant, n: u64) -> Instant {
    t0 + Duration::from_millis(n)
}

fn grew_at(t: Instant) -> Activity {
    Activity {
        last_growth: Some(t),
        pid_alive: None,
    }
}

#[test]
fn first_critical_fires_first_action_once_and_warnings_do_not() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let mut e = Escalation::new(config(vec![ActionSpec::Touch(stop.clone())]));
    let t0 = Instant::now();
    assert!(e.on_alarm(&alarm(Level::Warning, 5), t0).is_empty());
    assert!(!stop.exists());
    let r = e.on_alarm(&alarm(Level::Critical, 9), t0);
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].outcome.word(), "done");
    assert_eq!(r[0].alarm.line, 9);
    assert!(stop.exists());
    std::fs::remove_file(&stop).unwrap();
    assert!(e.on_alarm(&alarm(Level::Critical, 12), t0).is_empty());
    assert!(!stop.exists(), "each action fires at most once");
    assert!(e.finished() && e.acted() && !e.any_failed());
}

#[test]
fn on_warning_makes_warnings_trigger() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let mut cfg = config(vec![ActionSpec::Touch(stop.clone())]);
    cfg.on_warning = true;
    let mut e = Escalation::new(cfg);
    assert_eq!(
        e.on_alarm(&alarm(Level::Warning, 5), Instant::now()).len(),
        1
    );
    assert!(stop.exists());
}

#[test]
fn next_action_only_after_grace_and_only_while_the_run_writes() {
    let dir = tempfile::tempdir().unwrap();
    let (a, b, c) = (
        dir.path().join("a"),
        dir.path().join("b"),
        dir.path().join("c"),
    );
    let mut e = Escalation::new(config(vec![
        ActionSpec::Touch(a.clone()),
        ActionSpec::Touch(b.clone()),
        ActionSpec::Touch(c.clone()),
    ]));
    let t0 = Instant::now();
    e.on_alarm(&alarm(Level::Critical, 1), t0);
    assert!(a.exists() && !b.exists());
    assert_eq!(e.next_deadline(), Some(ms(t0, 200)));
    // Still inside the grace period: nothing, even though the file grows.
    assert!(e.tick(ms(t0, 150), &grew_at(ms(t0, 140))).is_empty());
    assert!(!b.exists());
    // Grace over, file grew in its second half: escalate to the second action.
    let r = e.tick(ms(t0, 210), &grew_at(ms(t0, 150)));
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].index, 1);
    assert!(b.exists() && !c.exists());
    // Grace over again, last growth before the second half: the run stopped.
    assert!(e.tick(ms(t0, 420), &grew_at(ms(t0, 250))).is_empty());
    assert!(!c.exists());
    assert!(e.finished());
    assert_eq!(e.next_deadline(), None);
}

#[test]
fn a_live_pid_counts_as_still_writing() {
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (dir.path().join("a"), dir.path().join("b"));
    let mut e = Escalation::new(config(vec![
        ActionSpec::Touch(a.clone()),
        ActionSpec::Touch(b.clone()),
    ]));
    let t0 = Instant::now();
    e.on_alarm(&alarm(Level::Critical, 1), t0);
    let alive = Activity {
        last_growth: None,
        pid_alive: Some(true),
    };
    assert_eq!(e.tick(ms(t0, 200), &alive).len(), 1);
    assert!(b.exists());
    assert!(e.finished());
}

#[test]
fn dry_run_does_nothing_but_reports() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    let mark = dir.path().join("ran");
    let mut cfg = config(vec![
        ActionSpec::Touch(stop.clone()),
        ActionSpec::Run {
            command: format!("touch '{}'", mark.display()),
            time_limit: Duration::from_secs(10),
        },
    ]);
    cfg.dry_run = true;
    let mut e = Escalation::new(cfg);
    let t0 = Instant::now();
    let r = e.on_alarm(&alarm(Level::Critical, 3), t0);
    assert_eq!(r[0].outcome.word(), "dry run");
    let r = e.tick(ms(t0, 300), &grew_at(ms(t0, 250)));
    assert_eq!(r[0].outcome.word(), "dry run");
    assert!(!stop.exists() && !mark.exists());
    assert!(e.finished() && !e.any_failed());
}

#[test]
fn a_failed_action_is_reported_and_the_next_fires_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("missing-dir").join("STOP");
    let good = dir.path().join("STOP");
    let mut e = Escalation::new(config(vec![
        ActionSpec::Touch(bad),
        ActionSpec::Touch(good.clone()),
    ]));
    let r = e.on_alarm(&alarm(Level::Critical, 3), Instant::now());
    assert_eq!(r.len(), 2);
    assert_eq!(r[0].outcome.word(), "failed");
    assert_eq!(r[1].outcome.word(), "done");
    assert!(good.exists());
    assert!(e.any_failed() && e.finished());
}

#[test]
fn a_hanging_command_is_killed_at_its_limit_and_reported() {
    let mut e = Escalation::new(config(vec![ActionSpec::Run {
        command: "sleep 30".into(),
        time_limit: Duration::from_millis(100),
    }]));
    let r = e.on_alarm(&alarm(Level::Critical, 3), Instant::now());
    assert_eq!(r[0].outcome.word(), "started");
    assert!(!e.finished(), "waits for the command");
    let r = e.tick(
        Instant::now() + Duration::from_secs(5),
        &Activity::default(),
    );
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].outcome.word(), "timed out");
    assert!(e.finished() && e.any_failed());
}

#[test]
fn a_failing_command_is_reported() {
    let mut e = Escalation::new(config(vec![ActionSpec::Run {
        command: "exit 3".into(),
        time_limit: Duration::from_secs(30),
    }]));
    e.on_alarm(&alarm(Level::Critical, 3), Instant::now());
    let deadline = Instant::now() + Duration::from_secs(30);
    let r = loop {
        let r = e.tick(Instant::now(), &Activity::default());
        if !r.is_empty() || Instant::now() > deadline {
            break r;
        }
        std::thread::sleep(Duration::from_millis(10));
    };
    assert_eq!(r[0].outcome.word(), "failed");
    assert!(e.any_failed());
}

fn sleeper() -> std::process::Child {
    Command::new("sleep").arg("30").spawn().unwrap()
}

#[test]
fn the_verified_process_gets_the_signal() {
    let mut child = sleeper();
    let target = ProcessId::capture(i64::from(child.id())).unwrap();
    let mut e = Escalation::new(config(vec![ActionSpec::Signal {
        signal: parse_signal("TERM").unwrap(),
        target,
    }]));
    let r = e.on_alarm(&alarm(Level::Critical, 3), Instant::now());
    assert_eq!(r[0].outcome.word(), "done", "{:?}", r[0].outcome);
    let status = child.wait().unwrap();
    assert_eq!(status.signal(), Some(15));
}

#[test]
fn an_ended_process_is_refused_not_signalled() {
    let mut child = sleeper();
    let target = ProcessId::capture(i64::from(child.id())).unwrap();
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(!target.alive());
    let mut e = Escalation::new(config(vec![ActionSpec::Signal {
        signal: parse_signal("15").unwrap(),
        target,
    }]));
    let r = e.on_alarm(&alarm(Level::Critical, 3), Instant::now());
    assert_eq!(r[0].outcome.word(), "refused");
    assert!(e.any_failed());
}

#[test]
fn stop_file_already_there_is_a_warning_at_start() {
    let dir = tempfile::tempdir().unwrap();
    let stop = dir.path().join("STOP");
    std::fs::write(&stop, b"").unwrap();
    let e = Escalation::new(config(vec![ActionSpec::Touch(stop)]));
    let w = e.warnings_at_start();
    assert_eq!(w.len(), 1);
    assert!(w[0].contains("already exists"));
}

#[test]
fn with_no_action_alarms_are_only_logged_and_it_never_finishes() {
    let mut e = Escalation::new(config(Vec::new()));
    assert!(
        e.on_alarm(&alarm(Level::Critical, 3), Instant::now())
            .is_empty()
    );
    assert!(e.acted());
    assert!(!e.finished(), "guard goes on logging alarms");
}
