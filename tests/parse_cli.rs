//! The reading shapes through the command line, as a user meets them:
//! `rhoscope columns` names the columns, their roles and where the names came
//! from; `scan --json` counts only real data rows, lists each run as a segment
//! and gives every alarm a time.

use assert_cmd::Command;
use rhoscope::report::ScanReport;

use super::parse_shapes::{headerless, particle_log, xml_recorder};

fn bin() -> Command {
    Command::cargo_bin("rhoscope").unwrap()
}

fn write(dir: &tempfile::TempDir, name: &str, bytes: &[u8]) -> std::path::PathBuf {
    let p = dir.path().join(name);
    std::fs::write(&p, bytes).unwrap();
    p
}

fn scan_json(path: &std::path::Path) -> ScanReport {
    let out = bin()
        .args(["scan", "--json", "--no-config"])
        .arg(path)
        .output()
        .unwrap();
    serde_json::from_slice(&out.stdout).unwrap()
}

fn columns_text(path: &std::path::Path) -> String {
    let out = bin()
        .args(["columns", "--no-config"])
        .arg(path)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn every_alarm_has_a_time(r: &ScanReport) {
    assert!(!r.alarms.is_empty());
    for a in &r.alarms {
        assert!(a.time.is_some(), "alarm without a time: {a:?}");
    }
}

#[test]
fn a_solver_log_through_columns_and_scan() {
    let dir = tempfile::tempdir().unwrap();
    let f = particle_log(true);
    let path = write(&dir, "md.log", &f.text.bytes());
    let text = columns_text(&path);
    assert!(
        text.contains(&format!("names: header at line {}", f.header1)),
        "{text}"
    );
    assert!(text.contains("E_pair"), "{text}");
    assert!(
        text.contains("text lines outside the table before it (16)"),
        "{text}"
    );
    assert!(
        text.contains("Step × 5e-3"),
        "time from the declared step size: {text}"
    );
    let r = scan_json(&path);
    assert_eq!(r.rows, f.rows as u64);
    assert_eq!(r.skipped_rows, 1, "only the warning inside the table");
    assert_eq!(r.skipped[0].line, f.warning);
    assert_eq!(r.text_lines_outside_table, f.outside);
    assert_eq!(r.segments.len(), 1);
    assert_eq!(r.segments[0].line, f.header2);
    assert_eq!(r.table.header_line, Some(f.header2));
    assert!(r.blowup.is_some());
    every_alarm_has_a_time(&r);
}

#[test]
fn a_headerless_recorder_through_columns_and_scan() {
    let dir = tempfile::tempdir().unwrap();
    let mut bytes = headerless(40, 3, true);
    bytes.extend(b"120 1.200000e-01 nan nan\n");
    let path = write(&dir, "node.out", &bytes);
    let text = columns_text(&path);
    assert!(text.contains("no header"), "{text}");
    assert!(
        text.contains("c1      -     step_number    inferred"),
        "{text}"
    );
    assert!(text.contains("every 3 solver steps"), "{text}");
    let r = scan_json(&path);
    assert_eq!(r.rows, 41);
    assert_eq!(r.skipped_rows, 0);
    every_alarm_has_a_time(&r);
    // --role overrides the inference, and says so.
    let out = bin()
        .args(["columns", "--no-config", "--role", "c2=probe"])
        .arg(&path)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("c2      -     probe          set by configuration"),
        "{text}"
    );
}

#[test]
fn an_xml_recorder_through_columns_and_scan() {
    let dir = tempfile::tempdir().unwrap();
    let (bytes, _) = xml_recorder(30);
    let mut text = String::from_utf8(bytes).unwrap();
    // The run blows up in its last row.
    let at = text.find("\t</Data>").unwrap();
    text.insert_str(at, "3.1e-1 nan 0 0 0\n");
    let path = write(&dir, "rec.xml", text.as_bytes());
    let cols = columns_text(&path);
    assert!(cols.contains("node 12 D2"), "{cols}");
    assert!(cols.contains("markup"), "{cols}");
    let r = scan_json(&path);
    assert_eq!(r.rows, 31);
    assert_eq!(r.skipped_rows, 0);
    assert_eq!(r.text_lines_outside_table, 0);
    every_alarm_has_a_time(&r);
}

#[test]
fn a_declared_scheme_is_used_and_the_flag_wins() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(
        &dir,
        "h.csv",
        b"# scheme: velocity Verlet\ntime,ke,ie\n0,1,0\n1,0.5,0.5\n",
    );
    let text = columns_text(&path);
    assert!(
        text.contains("scheme central-difference, declared by the file at line 1"),
        "{text}"
    );
    let out = bin()
        .args(["columns", "--no-config", "--scheme", "rk4"])
        .arg(&path)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("scheme rk4 from --scheme"), "{text}");
}

#[test]
fn escapes_in_names_never_reach_the_terminal() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(
        &dir,
        "h.csv",
        b"time,\x1b]0;owned\x07ke\x1b[2J\n0,1\n1,nan\n",
    );
    let guard = ["guard", "--dry-run", "--idle-exit", "300ms"];
    for args in [
        &["columns"][..],
        &["scan"][..],
        &["scan", "--json"][..],
        &guard[..],
    ] {
        let out = bin()
            .args(args)
            .arg("--no-config")
            .arg(&path)
            .output()
            .unwrap();
        for stream in [&out.stdout, &out.stderr] {
            assert!(
                !stream.contains(&0x1b),
                "{args:?}: {}",
                String::from_utf8_lossy(stream)
            );
        }
    }
}

/// A UTF-32 file (its byte-order mark, Unicode Standard §23.8) is refused with
/// the reason, by `scan` and `columns` alike, rather than "no data row" alone.
#[test]
fn a_refused_encoding_is_named_in_the_error() {
    let dir = tempfile::tempdir().unwrap();
    let mut bytes = b"\xFF\xFE\x00\x00".to_vec();
    for ch in "time,ke\n0,1\n1,2\n".chars() {
        bytes.extend_from_slice(&(ch as u32).to_le_bytes());
    }
    let path = write(&dir, "wide.csv", &bytes);
    for cmd in ["scan", "columns"] {
        let out = bin()
            .args([cmd, "--no-config"])
            .arg(&path)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(3), "{cmd}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains("wide.csv") && err.contains("UTF-32") && err.contains("convert it"),
            "{cmd}: {err}"
        );
    }
}

/// A recorder that writes time alone (output every 3 steps of 1e-3 here): the
/// stride is unknown and said so until the solver's step is given, with
/// `--step-size` or `input.step_size`; the flag wins over the file; a step
/// that does not divide the time per row is named as suspect; a step size that
/// is not a positive number is refused, naming where it came from.
#[test]
fn a_given_step_size_gives_the_stride_of_a_time_only_recorder() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(&dir, "node.out", &headerless(40, 3, false));
    let columns = |args: &[&str]| {
        let out = bin().arg("columns").args(args).arg(&path).output().unwrap();
        (
            out.status.code(),
            String::from_utf8_lossy(&out.stdout).into_owned(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    let (_, text, _) = columns(&["--no-config"]);
    assert!(
        text.contains("the output stride is unknown") && text.contains("--step-size"),
        "{text}"
    );
    let (_, text, _) = columns(&["--no-config", "--step-size", "1e-3"]);
    assert!(
        text.contains(
            "output every 3 solver steps (3.0000e-3 of time per row ÷ the step size 1e-3 given with --step-size)"
        ),
        "{text}"
    );
    let (_, text, _) = columns(&["--no-config", "--step-size", "7e-4"]);
    assert!(
        text.contains("output every 4.29 solver steps") && text.contains("not a whole number"),
        "{text}"
    );
    let cfg = write(&dir, "read.toml", b"[input]\nstep_size = 1.5e-3\n");
    let (_, text, _) = columns(&["--config", cfg.to_str().unwrap()]);
    assert!(text.contains("output every 2 solver steps"), "{text}");
    let (_, text, _) = columns(&["--config", cfg.to_str().unwrap(), "--step-size", "1e-3"]);
    assert!(text.contains("output every 3 solver steps"), "{text}");
    for bad in ["0", "-1e-3", "nan"] {
        let (code, _, err) = columns(&["--no-config", &format!("--step-size={bad}")]);
        assert_eq!(code, Some(3), "{bad}");
        assert!(
            err.contains("--step-size") && err.contains("positive"),
            "{bad}: {err}"
        );
    }
    let cfg = write(&dir, "bad.toml", b"[input]\nstep_size = 0.0\n");
    let (code, _, err) = columns(&["--config", cfg.to_str().unwrap()]);
    assert_eq!(code, Some(3));
    assert!(err.contains("input.step_size"), "{err}");
}

/// A header with time but no step counter (a molecular-dynamics logger): the
/// note says the stride is unknown; a `dt = …` line of the file gives it.
#[test]
fn a_time_only_header_says_where_its_stride_comes_from() {
    let dir = tempfile::tempdir().unwrap();
    let rows: String = (0..20)
        .map(|i| format!("{:.4} {:.4}\n", f64::from(i) * 0.01, f64::from(i).sin()))
        .collect();
    let plain = write(&dir, "md.log", format!("Time[ps] x\n{rows}").as_bytes());
    let text = columns_text(&plain);
    assert!(text.contains("the output stride is unknown"), "{text}");
    let declared = write(
        &dir,
        "md-dt.log",
        format!("dt = 0.002 ps\nTime[ps] x\n{rows}").as_bytes(),
    );
    let text = columns_text(&declared);
    assert!(
        text.contains("no step counter: the output stride is the time per row ÷ the step size 2e-3 declared at line 1"),
        "{text}"
    );
}

/// A step size given with the flag and another declared by the file: `columns`
/// says which one is used, whether or not the reader needed it for the time or
/// the stride.
#[test]
fn a_given_step_size_and_a_declared_one_say_which_is_used() {
    let dir = tempfile::tempdir().unwrap();
    let columns = |path: &std::path::Path, args: &[&str]| {
        let out = bin()
            .args(["columns", "--no-config"])
            .args(args)
            .arg(path)
            .output()
            .unwrap();
        String::from_utf8_lossy(&out.stdout).into_owned()
    };
    let rows: String = (0..20)
        .map(|i| format!("{i} {}\n", f64::from(i).sin()))
        .collect();
    // Step counter, no time: the step size makes the time.
    let log = write(
        &dir,
        "md.log",
        format!("timestep 0.005\nStep x\n{rows}").as_bytes(),
    );
    let text = columns(&log, &[]);
    assert!(
        text.contains("Step × 5e-3, the step size 5e-3 declared at line 1"),
        "{text}"
    );
    let text = columns(&log, &["--step-size", "2e-3"]);
    assert!(
        text.contains("Step × 2e-3, the step size 2e-3 given with --step-size")
            && text.contains("the file's declared step size 5e-3 gives way to the one given"),
        "{text}"
    );
    // Time and step columns: the step size is not needed, but the choice is said.
    let rows: String = (0..20)
        .map(|i| format!("{},{i},1\n", f64::from(i) * 1e-3))
        .collect();
    let csv = write(
        &dir,
        "h.csv",
        format!("# dt = 1e-3\ntime,step,x\n{rows}").as_bytes(),
    );
    let text = columns(&csv, &[]);
    assert!(
        text.contains("the file declares a step size of 1e-3"),
        "{text}"
    );
    let text = columns(&csv, &["--step-size", "2e-3"]);
    assert!(
        text.contains("the step size 2e-3 given with --step-size (or input.step_size) comes before the file's declared 1e-3"),
        "{text}"
    );
}

/// Central difference on two uncoupled modes, the high one past its limit
/// (Ω = 2.02) from rounding-level amplitude, written every `every` steps of
/// 1e-3 as time and two probes, without a step counter.
fn central_difference_recorder(omega_dt: f64, every: u32) -> Vec<u8> {
    let low = 0.05_f64;
    let (mut a, mut a0) = (1e-12_f64, -1e-12_f64);
    let (mut b, mut b0) = (1.0_f64, low.cos());
    let mut text = String::new();
    for n in 1..200_000u32 {
        (a, a0) = ((2.0 - omega_dt * omega_dt) * a - a0, a);
        (b, b0) = ((2.0 - low * low) * b - b0, b);
        if n % every == 1 {
            let t = f64::from(n) * 1e-3;
            text += &format!("{t:.6e} {:.6e} {:.6e}\n", b + a, 0.5 * b - a);
        }
        if a.abs() > 1e300 {
            break;
        }
    }
    text.into_bytes()
}

/// With the step given, growth is per solver step: the closed form of central
/// difference past its limit, ρ = |b| + √(b² − 1), b = 1 − Ω²/2 (Hughes,
/// *The Finite Element Method*, 1987, §9.1, from memory), not ρ³ per row.
#[test]
fn a_given_step_size_turns_growth_per_row_into_growth_per_step() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(&dir, "every3.out", &central_difference_recorder(2.02, 3));
    let b = 1.0 - 2.02_f64.powi(2) / 2.0;
    let rho = b.abs() + (b * b - 1.0).sqrt();
    let growth = |args: &[&str]| {
        let out = bin()
            .args(["scan", "--json", "--no-config"])
            .args(args)
            .arg(&path)
            .output()
            .unwrap();
        let r: ScanReport = serde_json::from_slice(&out.stdout).unwrap();
        let a = r
            .alarms
            .iter()
            .find(|a| a.detector == "growth")
            .unwrap_or_else(|| panic!("no growth alarm: {:?}", r.alarms));
        (
            a.evidence.growth_per_output.unwrap(),
            a.evidence.growth_per_step.unwrap(),
        )
    };
    let (per_row, _) = growth(&[]);
    assert!(
        (per_row / rho.powi(3) - 1.0).abs() < 0.01,
        "{per_row} per row"
    );
    let (_, per_step) = growth(&["--step-size", "1e-3"]);
    assert!(
        (per_step / rho - 1.0).abs() < 0.01,
        "{per_step} per step, closed form {rho}"
    );
}
