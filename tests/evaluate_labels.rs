//! `rhoscope evaluate --labels`: a labelled directory scored through the same
//! pipeline and table as the built-in sets, with errors that name the file and
//! the line.

use std::fs;

use assert_cmd::Command;

fn bin() -> Command {
    Command::cargo_bin("rhoscope").unwrap()
}

/// Two hand-written histories: one turns NaN at line 5 with nothing before it
/// (onset on the crash line), one stays flat.
fn labelled_dir() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("nan.csv"),
        "time,x\n0,1\n0.1,1\n0.2,1\nnan,nan\n",
    )
    .unwrap();
    fs::write(dir.path().join("flat.csv"), "time,x\n0,1\n0.1,1\n0.2,1\n").unwrap();
    fs::write(
        dir.path().join("labels.csv"),
        "case,file,level,onset_line,crash_line,basis\n\
         nan-out-of-nowhere,nan.csv,critical,5,5,\"a NaN, unannounced\"\n\
         flat,flat.csv,ok,,,constant\n",
    )
    .unwrap();
    dir
}

#[test]
fn scores_a_labelled_directory_with_the_same_table() {
    let dir = labelled_dir();
    let labels = dir.path().join("labels.csv");
    let out = bin()
        .args(["evaluate", "--labels"])
        .arg(&labels)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{text}");
    assert!(text.contains("Labelled runs in"), "{text}");
    let row = |name: &str| {
        text.lines()
            .find(|l| l.starts_with(name))
            .unwrap_or_else(|| panic!("no row for {name}: {text}"))
            .split_whitespace()
            .collect::<Vec<_>>()
    };
    assert_eq!(row("nan-out-of-nowhere")[1..3], ["critical", "critical"]);
    assert_eq!(row("flat")[1..3], ["ok", "ok"]);
    assert!(
        text.contains("blow-ups detected before crash: 1/1"),
        "{text}"
    );
    // Only the labelled set is scored when --labels is given alone.
    assert!(!text.contains("catalogue"), "{text}");
    // --case selects within the labelled set.
    let one = bin()
        .args(["evaluate", "--case", "flat", "--labels"])
        .arg(&labels)
        .output()
        .unwrap();
    let one = String::from_utf8_lossy(&one.stdout);
    assert!(
        one.contains("flat") && !one.contains("nan-out-of-nowhere"),
        "{one}"
    );
}

#[test]
fn a_bad_labels_file_is_a_usage_error_naming_the_line() {
    let dir = tempfile::tempdir().unwrap();
    let labels = dir.path().join("labels.csv");
    fs::write(&labels, "file,level\na.csv,ok\nb.csv,broken\n").unwrap();
    let out = bin()
        .args(["evaluate", "--labels"])
        .arg(&labels)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("labels.csv") && err.contains("line 3"),
        "{err}"
    );
    let missing = bin()
        .args(["evaluate", "--labels"])
        .arg(dir.path().join("none.csv"))
        .output()
        .unwrap();
    assert_eq!(missing.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("none.csv"));
}
