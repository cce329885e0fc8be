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
