//! `rhoscope evaluate` and the blind catalogue: scored by default beside the
//! demo catalogue and reported apart, broken down by class; written to a
//! directory with a labels.csv that scores the same through `--labels`.

use std::fs;

use assert_cmd::Command;

fn bin() -> Command {
    Command::cargo_bin("rhoscope").unwrap()
}

/// A JSON Lines case, a headerless blow-up and a healthy CSV case with a
/// fast mode: three layouts, three extensions.
const CASES: [&str; 3] = [
    "names-multibody-jsonl",
    "headerless-every3-blowup",
    "names-fast-mode",
];

fn evaluate(args: &[&str]) -> (Option<i32>, String, String) {
    let out = bin().arg("evaluate").args(args).output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// The table rows (case, expected, got, onset, crash, first alarm, by,
/// lead) of a scored set's text.
fn rows(text: &str, names: &[&str]) -> Vec<Vec<String>> {
    names
        .iter()
        .map(|n| {
            text.lines()
                .find(|l| l.split_whitespace().next() == Some(n))
                .unwrap_or_else(|| panic!("no row for {n}: {text}"))
                .split_whitespace()
                .map(str::to_string)
                .collect()
        })
        .collect()
}

#[test]
fn the_default_run_reports_the_blind_set_apart_by_class() {
    let (code, text, err) = evaluate(&["--case", "names-fast-mode"]);
    assert!(matches!(code, Some(0 | 1)), "{err}");
    let demo = text.find("Demo catalogue").expect(&text);
    let blind = text.find("Blind catalogue").expect(&text);
    assert!(demo < blind, "{text}");
    // The blind case is scored in the blind table, not the demo one.
    assert!(text[blind..].contains("names-fast-mode"), "{text}");
    assert!(!text[..blind].contains("names-fast-mode"), "{text}");
    let by_class = text.find("By class").expect(&text);
    let energy = text[by_class..]
        .lines()
        .find(|l| l.starts_with("energy-names"))
        .expect(&text);
    assert_eq!(energy.split_whitespace().nth(1), Some("1"), "{text}");
}

#[test]
fn a_written_blind_set_scores_the_same_through_its_labels_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("blind");
    let mut args = vec!["--set", "blind"];
    for c in CASES {
        args.extend(["--case", c]);
    }
    let mut write = args.clone();
    write.extend(["--write", out.to_str().unwrap()]);
    let (code, _, err) = evaluate(&write);
    assert_eq!(code, Some(0), "{err}");
    let mut files: Vec<String> = fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    files.sort();
    assert_eq!(
        files,
        [
            "headerless-every3-blowup.txt",
            "labels.csv",
            "names-fast-mode.csv",
            "names-multibody-jsonl.jsonl",
        ]
    );
    let labels = fs::read_to_string(out.join("labels.csv")).unwrap();
    assert!(
        labels.starts_with("case,file,level,onset_line,crash_line\n"),
        "{labels}"
    );
    assert_eq!(labels.lines().count(), 1 + CASES.len(), "{labels}");

    // The files and their labels score exactly as the set in memory.
    let (_, in_memory, err) = evaluate(&args);
    assert!(in_memory.contains("Blind catalogue"), "{err}");
    let (_, from_files, err) = evaluate(&["--labels", out.join("labels.csv").to_str().unwrap()]);
    assert!(from_files.contains("Labelled runs in"), "{err}");
    assert_eq!(rows(&in_memory, &CASES), rows(&from_files, &CASES));

    // Writing again never overwrites: the error names the file.
    let (code, _, err) = evaluate(&write);
    assert_eq!(code, Some(3), "{err}");
    assert!(
        err.contains("headerless-every3-blowup.txt") || err.contains(".jsonl"),
        "{err}"
    );
    assert!(err.contains("never overwritten"), "{err}");
}

#[test]
fn write_needs_one_named_set() {
    let dir = tempfile::tempdir().unwrap();
    let (code, _, err) = evaluate(&["--write", dir.path().to_str().unwrap()]);
    assert_eq!(code, Some(3), "{err}");
    assert!(err.contains("--set"), "{err}");
    let (code, _, err) = evaluate(&[
        "--set",
        "blind",
        "--set",
        "catalogue",
        "--write",
        dir.path().to_str().unwrap(),
    ]);
    assert_eq!(code, Some(3), "{err}");
    assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 0);
}
