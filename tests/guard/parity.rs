//! Guard and scan give the same alarms, line for line, on the same bytes,
//! however the bytes arrive (whole, in odd chunks, split inside lines).

use std::fs;
use std::time::Duration;

use rhoscope::act::{Escalation, EscalationConfig, EventLog};
use rhoscope::alarm::Alarm;
use rhoscope::guard::{SuperviseOptions, supervise};
use rhoscope::pipeline::Pipeline;
use rhoscope::pipeline::drive::{FILE_SLICE_BYTES, drive_file};
use rhoscope::report::ScanReport;
use rhoscope::settings::Settings;
use rhoscope::source::{Event, Scripted, Step};

use super::support::*;

/// A history with two crashes separated by a restart, and a late column blow-up.
fn history() -> String {
    let mut s = format!("{HEADER}{}{}", healthy(300, 0.0), crashed(10, 0.3));
    s.push_str(&format!("{HEADER}{}", healthy(200, 0.0)));
    for i in 0..20 {
        let t = 0.2 + i as f64 * DT_S;
        s.push_str(&format!(
            "{t:.6},1.0e-3,inf
"
        ));
    }
    s
}

fn scan_alarms(bytes: &[u8]) -> Vec<Alarm> {
    let mut p = Pipeline::new(&Settings::default());
    let mut out: Vec<Alarm> = Vec::new();
    p.feed(bytes, None, &mut out);
    p.finish(&mut out);
    out
}

fn guard_alarms(bytes: &[u8], chunk: usize) -> Vec<Alarm> {
    let steps = bytes
        .chunks(chunk)
        .flat_map(|c| [Step::Event(Event::Data(c.to_vec())), Step::Quiet])
        .collect();
    let mut src = Scripted::new(steps);
    let mut p = Pipeline::new(&Settings::default());
    let mut esc = Escalation::new(EscalationConfig {
        actions: Vec::new(),
        grace: Duration::from_secs(1),
        on_warning: false,
        dry_run: false,
        file: "h.csv".into(),
    });
    let mut log = EventLog::open(None, false).unwrap();
    let opts = SuperviseOptions {
        idle_exit: None,
        pid: None,
        max_wait: Duration::from_millis(10),
    };
    supervise(&mut src, &mut p, &mut esc, &mut log, &opts).alarms
}

/// Line, detector and level. Messages may differ only where guard adds the
/// wall-clock forecast it can measure live and scan cannot.
fn key(a: &Alarm) -> (u64, String, rhoscope::finding::Level) {
    (a.line, a.detector.to_string(), a.level)
}

#[test]
fn the_same_alarms_whole_or_in_any_chunks() {
    let text = history();
    let want: Vec<_> = scan_alarms(text.as_bytes()).iter().map(key).collect();
    assert!(
        want.len() >= 2,
        "the history raises alarms in both segments: {want:?}"
    );
    for chunk in [1 << 20, 4096, 97, 13, 1] {
        let got: Vec<_> = guard_alarms(text.as_bytes(), chunk)
            .iter()
            .map(key)
            .collect();
        assert_eq!(got, want, "chunks of {chunk} bytes");
    }
}

#[test]
fn scan_and_guard_agree_on_a_file_written_live() {
    let dir = tempfile::tempdir().unwrap();
    let (input, out) = (dir.path().join("input.csv"), dir.path().join("history.csv"));
    // ×1.2 per row: a short run (about 3,900 rows) with a growth alarm and a crash.
    let (text, _) = blow_up(1.2);
    fs::write(&input, &text).unwrap();
    // No action: guard only logs, and ends when the writer is done.
    let mut g = Guard::start(dir.path(), &out, &["--idle-exit", "2s", "--poll", "200ms"]);
    let w = Writer::fast(&input, &out, &dir.path().join("never"));
    assert!(!w.stopped());
    assert_eq!(
        g.code(),
        2,
        "critical alarms were raised: {}",
        g.stderr_text()
    );
    let o = std::process::Command::new(BIN)
        .args(["scan", "--json", "--no-config"])
        .arg(&out)
        .output()
        .unwrap();
    let report: ScanReport = serde_json::from_slice(&o.stdout).unwrap();
    let scan: Vec<(u64, String, String)> = report
        .alarms
        .iter()
        .map(|a| {
            let level = serde_json::to_value(a.level).unwrap();
            (
                a.line,
                a.detector.clone(),
                level.as_str().unwrap().to_string(),
            )
        })
        .collect();
    let ev = g.events();
    let guard: Vec<(u64, String, String)> = of_kind(&ev, "alarm")
        .iter()
        .map(|a| {
            (
                a["line"].as_u64().unwrap(),
                a["detector"].as_str().unwrap().to_string(),
                a["level"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert!(scan.len() >= 2, "{scan:?}");
    assert_eq!(guard, scan);
}

/// Over a megabyte: `scan` reads it on two threads (the reader ahead of the
/// detectors, in 64 KiB batches), and so does guard's catch-up on 1 MiB
/// reads; both give the alarms of one thread fed the whole bytes.
#[test]
fn two_threads_give_the_alarms_of_one() {
    let text = format!("{HEADER}{}{}", healthy(30_000, 0.0), history());
    assert!(text.len() > 1 << 20, "{} bytes", text.len());
    let one = scan_alarms(text.as_bytes());
    assert!(one.len() >= 2, "{one:?}");
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("h.csv");
    fs::write(&path, &text).unwrap();
    let mut p = Pipeline::new(&Settings::default());
    let mut scanned: Vec<Alarm> = Vec::new();
    drive_file(
        &path,
        &mut p,
        &mut scanned,
        FILE_SLICE_BYTES,
        &mut |_, _| {},
    )
    .unwrap();
    assert_eq!(scanned, one);
    let want: Vec<_> = one.iter().map(key).collect();
    let got: Vec<_> = guard_alarms(text.as_bytes(), 1 << 20)
        .iter()
        .map(key)
        .collect();
    assert_eq!(got, want);
}
