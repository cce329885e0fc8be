//! The batch-job template (`examples/batch-job.sh`) run for real: the demo
//! writer stands in for the solver and a small script named like the
//! scheduler's cancel command, first on PATH, records what it was asked to do.

use std::fs;
use std::os::unix::fs::PermissionsExt;
use std::path::Path;
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// Put a stand-in cancel command in `bin`: it appends its arguments and the
/// alarm level guard passed to it to `record`.
fn stand_in_scheduler(bin: &Path, record: &Path) {
    fs::create_dir_all(bin).unwrap();
    let script = format!(
        "#!/bin/sh\necho \"cancel $* level=$RHOSCOPE_LEVEL detector=$RHOSCOPE_DETECTOR\" >> '{}'\n",
        record.display()
    );
    let p = bin.join("scancel");
    fs::write(&p, script).unwrap();
    fs::set_permissions(&p, fs::Permissions::from_mode(0o755)).unwrap();
}

fn run_job(dir: &Path, solver: &str) -> (std::process::Output, String) {
    let bin = dir.join("bin");
    let record = dir.join("scheduler.log");
    stand_in_scheduler(&bin, &record);
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/batch-job.sh");
    let path = format!(
        "{}:{}",
        bin.display(),
        std::env::var("PATH").unwrap_or_default()
    );
    let out = Command::new("bash")
        .arg(&script)
        .current_dir(dir)
        .env("PATH", path)
        .env("RHOSCOPE", BIN)
        .env("SOLVER_CMD", solver)
        .env("GRACE", "1s")
        .env("SLURM_JOB_ID", "4242")
        .output()
        .unwrap();
    let recorded = fs::read_to_string(&record).unwrap_or_default();
    (out, recorded)
}

#[test]
fn a_solver_that_ignores_the_stop_file_is_cancelled_through_the_scheduler() {
    let dir = tempfile::tempdir().unwrap();
    // Central difference past its limit (growth 1.2213 per step), written at
    // 300 lines/s; this stand-in solver does not poll for a stop file.
    let solver = format!("'{BIN}' demo --live history.csv --scenario cd-omega-2.01 --rate 300");
    let (out, recorded) = run_job(dir.path(), &solver);
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        dir.path().join("STOP").exists(),
        "stop file first\n{stderr}"
    );
    assert_eq!(
        recorded.lines().collect::<Vec<_>>(),
        ["cancel 4242 level=critical detector=growth"],
        "the scheduler asked once, with the job id and the alarm\n{stderr}"
    );
    assert!(
        stdout.contains("guard exit status 2"),
        "guard acted on a critical alarm\n{stdout}\n{stderr}"
    );
    let events = fs::read_to_string(dir.path().join("rhoscope-events.jsonl")).unwrap();
    let actions: Vec<serde_json::Value> = events
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .filter(|v: &serde_json::Value| v["event"] == "action")
        .collect();
    let done: Vec<&str> = actions
        .iter()
        .filter(|a| a["outcome"] == "done")
        .map(|a| a["action"].as_str().unwrap())
        .collect();
    assert_eq!(done.len(), 2, "stop file, then the cancel: {events}");
    assert!(
        done[0].starts_with("touch") && done[1].starts_with("run"),
        "{done:?}"
    );
}

#[test]
fn a_solver_that_honours_the_stop_file_ends_and_the_scheduler_is_never_asked() {
    let dir = tempfile::tempdir().unwrap();
    let solver = format!(
        "'{BIN}' demo --live history.csv --scenario cd-omega-2.01 --rate 300 --stop-file STOP"
    );
    let (out, recorded) = run_job(dir.path(), &solver);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(dir.path().join("STOP").exists());
    assert_eq!(recorded, "", "no cancel when the solver stopped by itself");
    assert!(stdout.contains("guard exit status 2"), "{stdout}");
    // The solver stopped well before its crash line (1,850 rows when run out).
    let lines = fs::read_to_string(dir.path().join("history.csv"))
        .unwrap()
        .lines()
        .count();
    assert!(lines < 1_850, "stopped early: {lines} lines");
}
