//! `rhoscope fleet` on generated runs: the table worst first, the exit code of
//! the worst state, and a metrics file that a general-purpose parser accepts.

use std::fs;
use std::path::Path;
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// Write demo cases into `dir/<case>/history.csv`.
fn study(dir: &Path, cases: &[&str]) {
    for c in cases {
        let d = dir.join(c);
        fs::create_dir_all(&d).unwrap();
        let st = Command::new(BIN)
            .args(["demo", "--write", c])
            .arg(d.join("history.csv"))
            .status()
            .unwrap();
        assert!(st.success());
    }
}

fn fleet_once(dir: &Path, extra: &[&str]) -> std::process::Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(["fleet", "*/history.csv", "--once", "--end-time", "5"])
        .args(extra)
        .output()
        .unwrap()
}

#[test]
fn once_lists_runs_worst_first_and_exits_with_the_worst_state() {
    let dir = tempfile::tempdir().unwrap();
    study(
        dir.path(),
        &["chain-ramp-ok", "cd-omega-2.01", "hidden-damper"],
    );
    let out = fleet_once(dir.path(), &[]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(2), "{text}");
    let order: Vec<(&str, &str)> = text
        .lines()
        .skip(1)
        .map(|l| {
            let mut f = l.split_whitespace();
            (f.next().unwrap(), f.next().unwrap())
        })
        .collect();
    // Labels from the demo catalogue (`rhoscope demo --list`).
    assert_eq!(
        order,
        [
            ("CRITICAL", "cd-omega-2.01"),
            ("WARNING", "hidden-damper"),
            ("OK", "chain-ramp-ok")
        ]
    );
    let none = Command::new(BIN)
        .current_dir(dir.path())
        .args(["fleet", "nothing/*.csv", "--once"])
        .output()
        .unwrap();
    assert_eq!(none.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&none.stderr).contains("no file matches"));
}

/// Check the metrics file with the Python `prometheus_client` library's text
/// parser (`prometheus_client.parser.text_string_to_metric_families`, from the
/// Python package index), which raises on any line that breaks the format.
const PARSE: &str = r#"
import sys
from prometheus_client.parser import text_string_to_metric_families
fams = {f.name: f for f in text_string_to_metric_families(open(sys.argv[1]).read())}
state = {s.labels["run"]: float(s.value) for s in fams["rhoscope_run_state"].samples}
rows = {s.labels["run"]: float(s.value) for s in fams["rhoscope_run_rows"].samples if s.name.endswith("_total")}
print(fams["rhoscope_run_rows"].type, fams["rhoscope_run_state"].type)
print(sorted(state.items()))
print(sorted(rows.items()))
print(len(fams))
"#;

fn python_with_client() -> bool {
    Command::new("python3")
        .args(["-c", "import prometheus_client.parser"])
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false)
}

#[test]
fn metrics_file_parses_with_the_python_reference_parser() {
    if !python_with_client()
        && crate::external::missing(
            "python3 with prometheus_client is not available here \
             (pip install prometheus_client; .ci/run installs it)",
        )
    {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    study(dir.path(), &["chain-ramp-ok", "cd-omega-2.01"]);
    // A run whose name needs escaping in a label value.
    let odd = dir.path().join("odd \"q\" \\ run");
    fs::create_dir_all(&odd).unwrap();
    fs::write(odd.join("history.csv"), "time,x\n0,1\n0.001,0.99\n").unwrap();
    let prom = dir.path().join("out.prom");
    let out = fleet_once(dir.path(), &["--textfile", prom.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let py = Command::new("python3")
        .args(["-c", PARSE])
        .arg(&prom)
        .output()
        .unwrap();
    let got = String::from_utf8_lossy(&py.stdout);
    assert!(
        py.status.success(),
        "the parser rejected the file: {}",
        String::from_utf8_lossy(&py.stderr)
    );
    let lines: Vec<&str> = got.lines().collect();
    assert_eq!(lines[0], "counter gauge");
    assert_eq!(
        lines[1],
        r#"[('cd-omega-2.01', 2.0), ('chain-ramp-ok', 0.0), ('odd "q" \\ run', 0.0)]"#
    );
    // Row counts from `rhoscope demo --list` runs of these cases (crash line
    // minus the header for the critical one) and the two hand-written rows.
    assert!(
        lines[2].contains("('odd \"q\" \\\\ run', 2.0)"),
        "{}",
        lines[2]
    );
    assert_eq!(lines[3], "14", "every family of the exposition");
}
