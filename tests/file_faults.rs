//! Faults of the file being read: a named pipe where a history should be, a
//! file that shrinks under a scan, a configuration lying beside the history.

use std::fs;
use std::path::Path;
use std::time::Duration;

use assert_cmd::Command;
use rhoscope::alarm::Alarm;
use rhoscope::pipeline::Pipeline;
use rhoscope::pipeline::drive::{FILE_SLICE_BYTES, drive_file};
use rhoscope::pipeline::sink::{Note, Sink};
use rhoscope::report::ReportBuilder;
use rhoscope::settings::Settings;

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

fn rhoscope(dir: &Path) -> Command {
    let mut c = Command::new(BIN);
    c.current_dir(dir).timeout(Duration::from_secs(60));
    c
}

#[test]
fn a_named_pipe_is_refused_at_once_not_waited_on() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("h.csv");
    nix::unistd::mkfifo(&fifo, nix::sys::stat::Mode::S_IRWXU).unwrap();
    for args in [
        vec!["guard", "h.csv", "--idle-exit", "1s"],
        vec!["watch", "h.csv"],
    ] {
        let cmd = args[0];
        let out = rhoscope(dir.path()).args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(3), "{cmd}: {err}");
        assert!(err.contains("named pipe"), "{cmd}: {err}");
    }
}

/// Notes a reading was told, beside nothing else.
#[derive(Default)]
struct Notes(Vec<Note>);

impl Sink for Notes {
    fn alarm(&mut self, _a: &Alarm) {}
    fn note(&mut self, note: &Note) {
        self.0.push(note.clone());
    }
}

fn history(rows: usize) -> String {
    let mut text = String::from("time,x\n");
    for i in 0..rows {
        text.push_str(&format!("{i},{}\n", i % 13));
    }
    text
}

#[test]
fn a_file_that_shrinks_during_a_scan_is_noted() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("h.csv");
    // Larger than one read (FILE_READ_BYTES, 4 MiB), so the scan reads again
    // after the cut.
    let text = history(1_000_000);
    assert!(text.len() > 2 * rhoscope::pipeline::drive::FILE_READ_BYTES);
    fs::write(&p, &text).unwrap();
    let size = text.len() as u64;
    let mut pipeline = Pipeline::new(&Settings::default());
    let mut notes = Notes::default();
    let mut cut = false;
    // After the first read, someone truncates the file to a few lines.
    let mut on_read = |_: u64, _: u64| {
        if !cut {
            cut = true;
            fs::OpenOptions::new()
                .write(true)
                .open(&p)
                .unwrap()
                .set_len(100)
                .unwrap();
        }
    };
    let read = drive_file(
        &p,
        &mut pipeline,
        &mut notes,
        FILE_SLICE_BYTES,
        &mut on_read,
    )
    .unwrap();
    assert!(read < size, "{read} of {size}");
    assert_eq!(
        notes.0,
        [Note::Shrank {
            size_at_start: size,
            read
        }]
    );
    assert!(notes.0[0].describe().contains("shrank during scan"));

    // The report carries it; a file read whole has no note.
    let mut report = ReportBuilder::default();
    report.note(&notes.0[0]);
    let report = report.finish("h.csv", 1, 0, 1);
    assert!(
        report.notes[0].contains("shrank during scan"),
        "{:?}",
        report.notes
    );
    let mut whole = Notes::default();
    fs::write(&p, &text).unwrap();
    let mut pipeline = Pipeline::new(&Settings::default());
    drive_file(
        &p,
        &mut pipeline,
        &mut whole,
        FILE_SLICE_BYTES,
        &mut |_, _| {},
    )
    .unwrap();
    assert!(whole.0.is_empty(), "{:?}", whole.0);
}

#[test]
fn a_configuration_beside_the_history_is_named_on_stderr_and_in_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::write(d.join("h.csv"), "time,x\n0,1\n0.001,2\n0.002,NaN\n").unwrap();
    // A configuration that ignores the only data column hides the blow-up:
    // the user must at least be told it was applied.
    fs::write(d.join("rhoscope.toml"), "[roles]\nx = \"ignore\"\n").unwrap();
    let out = rhoscope(d)
        .args(["scan", "h.csv", "--json"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.matches("found beside the history").count(), 1, "{err}");
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["config"], "rhoscope.toml");
    assert!(
        report["notes"][0]
            .as_str()
            .unwrap()
            .contains("rhoscope.toml")
    );

    let out = rhoscope(d)
        .args(["scan", "h.csv", "--json", "--no-config"])
        .output()
        .unwrap();
    assert!(!String::from_utf8_lossy(&out.stderr).contains("beside"));
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(report["config"].is_null());
    assert_eq!(out.status.code(), Some(2), "the blow-up is seen without it");

    let out = rhoscope(d)
        .args(["guard", "h.csv", "--idle-exit", "1s", "--poll", "100ms"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("found beside the history"), "{err}");
}
