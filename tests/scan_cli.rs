//! `rhoscope scan` as scripts use it: the JSON contract parsed back into typed
//! values, and the exit codes of the monitoring-plugin convention
//! (0 ok, 1 warning, 2 critical, 3 unknown), common practice, no source.

use std::io::Write;

use assert_cmd::Command;
use rhoscope::finding::Level;
use rhoscope::report::ScanReport;

fn bin() -> Command {
    Command::cargo_bin("rhoscope").unwrap()
}

fn temp(content: &[u8]) -> tempfile::NamedTempFile {
    let mut f = tempfile::NamedTempFile::new().unwrap();
    f.write_all(content).unwrap();
    f
}

fn scan_json(content: &[u8]) -> (ScanReport, i32) {
    let f = temp(content);
    let out = bin()
        .args(["scan", "--json"])
        .arg(f.path())
        .output()
        .unwrap();
    let report: ScanReport = serde_json::from_slice(&out.stdout).unwrap();
    (report, out.status.code().unwrap())
}

#[test]
fn healthy_file_is_ok() {
    let (r, code) = scan_json(b"time,ke\n0,1\n0.1,1\n0.2,1\n");
    assert_eq!(code, 0);
    assert_eq!(r.status, Level::Ok);
    assert_eq!(r.rows, 3);
    assert!(r.alarms.is_empty() && r.blowup.is_none() && r.first_warning.is_none());
}

#[test]
fn blowup_is_critical_with_line_and_time() {
    let (r, code) = scan_json(b"# comment\ntime,ke\n\n0,1\n0.1,1e3\n0.2,-nan\n0.3,nan\n0.4,1,2\n");
    assert_eq!(code, 2);
    assert_eq!(r.status, Level::Critical);
    assert_eq!(r.rows, 4);
    assert_eq!(r.skipped_rows, 1);
    let b = r.blowup.unwrap();
    assert_eq!(b.line, 6);
    assert!((b.time.unwrap() - 0.2).abs() < 1e-15, "exact decimal parse");
    assert_eq!(r.first_critical, Some(b));
    assert_eq!(r.first_warning, Some(b));
    assert_eq!(r.alarms.len(), 1);
    assert_eq!(r.alarms[0].detector, "nonfinite");
}

#[test]
fn counter_overflow_is_a_warning_not_a_blowup() {
    let (r, code) = scan_json(b"step ke\n99998 1\n99999 1\n***** 1\n");
    assert_eq!(code, 1);
    assert_eq!(r.status, Level::Warning);
    assert!(r.blowup.is_none());
    assert_eq!(r.first_warning.unwrap().line, 4);
    assert!(r.first_critical.is_none());
}

#[test]
fn dead_column_is_reported_not_a_blowup() {
    let (r, code) = scan_json(b"t x y\n0 nan 1\n1 nan 1\n");
    assert_eq!(code, 1);
    assert!(r.blowup.is_none());
    assert_eq!(r.alarms[0].line, 2);
}

#[test]
fn non_finite_time_is_written_as_null() {
    let f = temp(b"time x\n0 1\ninf nan\n");
    let out = bin()
        .args(["scan", "--json"])
        .arg(f.path())
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // The time of the blow-up row is infinite; the last finite time is reported.
    assert_eq!(v["blowup"]["line"], 3);
    assert!(v["blowup"]["time"].is_number() || v["blowup"]["time"].is_null());
    for key in [
        "file",
        "rows",
        "skipped_rows",
        "status",
        "alarms",
        "first_warning",
        "first_critical",
        "blowup",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
}

#[test]
fn bad_input_table_exits_3() {
    let dir = tempfile::tempdir().unwrap();
    let empty = temp(b"");
    let header_only = temp(b"time,ke\n");
    let garbage = temp(&[
        0xff, 0xfe, 0x00, 0x13, 0x88, 0x9a, 0x10, 0x0a, 0xc3, 0x28, 0xff,
    ]);
    let cases: Vec<(std::path::PathBuf, &str)> = vec![
        (dir.path().join("missing.csv"), "cannot open"),
        (dir.path().to_path_buf(), "is a directory"),
        (empty.path().to_path_buf(), "empty"),
        (header_only.path().to_path_buf(), "no data row"),
        (garbage.path().to_path_buf(), "no data row"),
    ];
    for (path, words) in cases {
        let out = bin().arg("scan").arg(&path).output().unwrap();
        assert_eq!(out.status.code(), Some(3), "{}", path.display());
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(words), "{}: {err}", path.display());
        assert!(err.contains(&path.display().to_string()), "{err}");
        assert_eq!(err.trim().lines().count(), 1, "one line: {err}");
    }
}

#[test]
fn usage_errors_exit_3_and_help_exits_0() {
    bin().args(["scan"]).assert().code(3);
    bin().args(["scan", "--no-such-flag", "x"]).assert().code(3);
    bin().args(["scan", "--help"]).assert().code(0);
    bin().arg("--help").assert().code(0);
}

#[test]
fn closed_pipe_does_not_panic() {
    // `scan --json | head -c 10`: the shell closes the pipe early.
    let mut text = b"time,ke\n".to_vec();
    for i in 0..20_000 {
        text.extend(format!("{i},{}\n", 1.0 + f64::from(i)).as_bytes());
    }
    text.extend(b"20000,nan\n");
    let f = temp(&text);
    let out = std::process::Command::new("sh")
        .arg("-c")
        .arg(format!(
            "{} scan --json {} | head -c 10",
            assert_cmd::cargo::cargo_bin("rhoscope").display(),
            f.path().display()
        ))
        .output()
        .unwrap();
    assert_eq!(out.stdout.len(), 10);
    assert!(!String::from_utf8_lossy(&out.stderr).contains("panicked"));
}

#[test]
fn text_report_names_the_blowup() {
    let f = temp(b"time ke\n0 1\n1 inf\n");
    let out = bin().arg("scan").arg(f.path()).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("CRITICAL") && text.contains("line 3"),
        "{text}"
    );
}

#[test]
fn config_beside_history_and_unknown_keys() {
    let dir = tempfile::tempdir().unwrap();
    let hist = dir.path().join("h.txt");
    std::fs::write(&hist, "t q\n0 1\n1 2\n").unwrap();
    std::fs::write(
        dir.path().join("rhoscope.toml"),
        "[roles]\nq = \"dissipated\"\n",
    )
    .unwrap();
    let out = bin()
        .args(["columns", "--json"])
        .arg(&hist)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let cols: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(cols[1]["role"], "dissipated");
    std::fs::write(
        dir.path().join("rhoscope.toml"),
        "[roles]\nq = \"dissipated\"\nspeed = 3\n",
    )
    .unwrap();
    let out = bin().arg("scan").arg(&hist).output().unwrap();
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("speed"));
    // --no-config ignores the file.
    bin()
        .args(["scan", "--no-config"])
        .arg(&hist)
        .assert()
        .code(0);
}

#[test]
fn non_fatal_bad_lines_are_counted_with_their_lines() {
    let mut text = b"time [s],disp [\xb5m]\n0,1\n1,2,3\n".to_vec();
    text.extend(std::iter::repeat_n(b'7', (1 << 20) + 10));
    text.extend(b"\n2,3\n");
    let (r, code) = scan_json(&text);
    assert_eq!(code, 0);
    assert_eq!(r.rows, 2);
    assert_eq!(r.skipped_rows, 2);
    let lines: Vec<u64> = r.skipped.iter().map(|s| s.line).collect();
    assert_eq!(lines, [1, 3, 4]);
    assert_eq!(r.columns[1].unit.as_deref(), Some("\u{b5}m"));
}

#[test]
fn cli_definition_is_consistent() {
    use clap::CommandFactory;
    rhoscope::cli::Cli::command().debug_assert();
}

#[test]
fn declared_scheme_is_checked_and_named_in_errors() {
    let f = temp(b"time,x\n0,1\n1,2\n");
    for (args, words) in [
        (vec!["--scheme", "leapfrog-ish"], "unknown scheme"),
        (vec!["--scheme", "newmark"], "needs --beta"),
    ] {
        let out = bin()
            .arg("scan")
            .arg(f.path())
            .args(&args)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(3), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("--scheme") && err.contains(words), "{err}");
    }
    let dir = tempfile::tempdir().unwrap();
    let cfg = dir.path().join("r.toml");
    std::fs::write(&cfg, "[thresholds]\nscheme = \"hht:alpha=0.2\"\n").unwrap();
    let out = bin()
        .arg("scan")
        .arg(f.path())
        .arg("--config")
        .arg(&cfg)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("thresholds.scheme"), "{err}");
    let ok = bin()
        .arg("scan")
        .arg(f.path())
        .args(["--scheme", "newmark:beta=0.25,gamma=0.5"])
        .output()
        .unwrap();
    assert_eq!(ok.status.code(), Some(0), "{ok:?}");
}
