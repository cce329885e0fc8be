//! A blow-up read from a backlog (guard or fleet started on a run already
//! written): the overflow forecast is given in steps and simulated time, and
//! its wall time is said to be unknown — never "0 s", since rows read faster
//! than the solver wrote them say nothing of its pace.

use std::fs;
use std::path::Path;
use std::process::Command;
use std::time::Duration;

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// A run of the demo catalogue that blows up (labelled critical there:
/// central difference at omega*dt = 2.01, past the limit of 2), written whole.
fn blown_run(dir: &Path) {
    let d = dir.join("r1");
    fs::create_dir_all(&d).unwrap();
    let st = Command::new(BIN)
        .args(["demo", "--write", "cd-omega-2.01"])
        .arg(d.join("history.csv"))
        .status()
        .unwrap();
    assert!(st.success());
}

#[test]
fn guard_on_a_backlog_forecasts_in_steps_and_time_with_wall_time_unknown() {
    let dir = tempfile::tempdir().unwrap();
    blown_run(dir.path());
    let out = assert_cmd::Command::new(BIN)
        .current_dir(dir.path())
        .args([
            "guard",
            "r1/history.csv",
            "--idle-exit",
            "1s",
            "--poll",
            "100ms",
        ])
        .timeout(Duration::from_secs(60))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    let growth = err
        .lines()
        .find(|l| l.contains("[growth]") && l.contains("overflow in about"))
        .unwrap_or_else(|| panic!("no growth alarm with a forecast:\n{err}"));
    assert!(growth.contains(" steps, near t = "), "{growth}");
    assert!(growth.contains("wall time unknown"), "{growth}");
    assert!(!growth.contains("s wall clock"), "{growth}");
}

#[test]
fn fleet_metrics_on_a_backlog_say_unknown_not_zero() {
    let dir = tempfile::tempdir().unwrap();
    blown_run(dir.path());
    // Its first 1,000 lines: growing for hundreds of rows, not yet overflowed
    // (a forecast is only shown before a blow-up).
    let h = dir.path().join("r1/history.csv");
    let text = fs::read_to_string(&h).unwrap();
    let head: Vec<&str> = text.lines().take(1000).collect();
    fs::write(&h, head.join("\n") + "\n").unwrap();
    let prom = dir.path().join("m.prom");
    let out = Command::new(BIN)
        .current_dir(dir.path())
        .args(["fleet", "*/history.csv", "--once", "--textfile"])
        .arg(&prom)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(2),
        "critical run: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    let text = fs::read_to_string(&prom).unwrap();
    let sample = |name: &str| {
        text.lines()
            .find(|l| l.starts_with(&format!("{name}{{run=\"r1\"}} ")))
            .and_then(|l| l.rsplit(' ').next())
            .map(str::to_owned)
    };
    assert_eq!(
        sample("rhoscope_run_overflow_forecast_seconds").as_deref(),
        Some("NaN"),
        "{text}"
    );
    let steps: f64 = sample("rhoscope_run_overflow_forecast_steps")
        .unwrap_or_else(|| panic!("no step forecast:\n{text}"))
        .parse()
        .unwrap();
    assert!(steps.is_finite() && steps >= 0.0, "{steps}");
    // The table gives steps where the wall time is unknown.
    let table = String::from_utf8_lossy(&out.stdout);
    let row = table.lines().find(|l| l.contains(" r1 ")).unwrap();
    assert!(row.contains(" step"), "{row}");
}
