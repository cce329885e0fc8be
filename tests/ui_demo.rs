//! The README's first command, headless: the invented demo run goes unstable,
//! the guard raises a critical alarm, creates the stop file, and the demo
//! solver honours it before its history overflows.

use std::process::Command;

#[test]
fn headless_demo_is_stopped_before_it_overflows() {
    let tmp = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_rhoscope"))
        .args(["demo", "--headless"])
        .env("TMPDIR", tmp.path())
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("CRITICAL"), "{err}");
    assert!(err.contains("action touch"), "{err}");
    assert!(err.contains("saw the stop file"), "{err}");
    // The history it leaves holds no non-finite value: stopped before overflow.
    let dir = std::fs::read_dir(tmp.path())
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| {
            p.file_name()
                .is_some_and(|n| n.to_string_lossy().starts_with("rhoscope-demo-"))
        })
        .unwrap();
    let history = std::fs::read_to_string(dir.join("history.csv")).unwrap();
    assert!(dir.join("STOP").exists());
    let data = history.lines().filter(|l| !l.starts_with('#'));
    for line in data.skip(1) {
        for field in line.split(',') {
            let lower = field.trim().to_ascii_lowercase();
            assert!(
                !(lower.contains("nan") || lower.contains("inf") || lower.contains('*')),
                "non-finite field in '{line}'"
            );
        }
    }
}
