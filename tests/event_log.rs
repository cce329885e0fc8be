//! Many processes appending to one event log (as 40 guards of one job array
//! sharing `--events`): every line must stay one whole JSON record.

use std::path::Path;
use std::process::Command;

use rhoscope::act::{EventLog, Record};

const WRITERS: usize = 40;
const RECORDS: usize = 40;
/// Long messages make a torn record likely if a record took two writes.
const MESSAGE_BYTES: usize = 3000;
const CHILD_TEST: &str = "event_log::writer_child";

fn message(writer: usize, n: usize) -> String {
    let mut m = format!("writer {writer} record {n} ");
    while m.len() < MESSAGE_BYTES {
        m.push_str("0123456789");
    }
    m
}

/// The child's body: not a test of its own; the parent runs it in
/// [`forty_writers_keep_every_line_whole`] with the log path in the environment.
#[test]
#[ignore = "child process of forty_writers_keep_every_line_whole"]
fn writer_child() {
    let path = std::env::var_os("RHOSCOPE_TEST_EVENT_LOG").unwrap();
    let writer: usize = std::env::var("RHOSCOPE_TEST_WRITER")
        .unwrap()
        .parse()
        .unwrap();
    let mut log = EventLog::open(Some(Path::new(&path)), false).unwrap();
    for n in 0..RECORDS {
        log.note(&message(writer, n));
    }
}

#[test]
fn forty_writers_keep_every_line_whole() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("events.jsonl");
    let exe = std::env::current_exe().unwrap();
    let children: Vec<_> = (0..WRITERS)
        .map(|w| {
            Command::new(&exe)
                .args([CHILD_TEST, "--exact", "--ignored", "--test-threads=1"])
                .env("RHOSCOPE_TEST_EVENT_LOG", &path)
                .env("RHOSCOPE_TEST_WRITER", w.to_string())
                .stdout(std::process::Stdio::null())
                .spawn()
                .unwrap()
        })
        .collect();
    for mut c in children {
        assert!(c.wait().unwrap().success());
    }
    let text = std::fs::read_to_string(&path).unwrap();
    let mut seen = vec![vec![false; RECORDS]; WRITERS];
    let mut broken = 0;
    for line in text.lines() {
        let Ok(r) = serde_json::from_str::<Record>(line) else {
            broken += 1;
            continue;
        };
        let mut words = r.message.split(' ');
        let w: usize = words.nth(1).unwrap().parse().unwrap();
        let n: usize = words.nth(1).unwrap().parse().unwrap();
        assert_eq!(r.message, message(w, n), "record intact");
        seen[w][n] = true;
    }
    assert_eq!(broken, 0, "torn lines in {} lines", text.lines().count());
    assert!(
        seen.iter().flatten().all(|&s| s),
        "every record written once"
    );
    assert_eq!(text.lines().count(), WRITERS * RECORDS);
}
