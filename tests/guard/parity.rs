//! Guard and scan give the same alarms, line for line, on the same bytes,
//! however the bytes arrive (whole, in odd chunks, split inside lines).

use std::time::Duration;

use rhoscope::act::{Escalation, EscalationConfig, EventLog, SuperviseOptions, supervise};
use rhoscope::alarm::Alarm;
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;
use rhoscope::source::{Event, Scripted, Step};

use super::support::*;

/// A history with two crashes separated by a restart, and a late column blow-up.
fn history() -> String {
    let mut s = format!("{HEADER}{}{}", healthy(300, 0.0), crashed(10, 0.3));
    s.push_str(&format!("{HEADER}{}", healthy(200, 0.0)));
    for i in 0..20 {
        let t = 0.2 + i as f64 * DT_S;
        s.push_str(&format!("{t:.6},1.0e-3,inf\n"));
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
        idle_exit: Some(Duration::from_millis(50)),
        pid: None,
        max_wait: Duration::from_millis(10),
    };
    supervise(&mut src, &mut p, &mut esc, &mut log, &opts).alarms
}

fn key(a: &Alarm) -> (u64, &'static str, rhoscope::alarm::Level, String) {
    (a.line, a.detector, a.level, a.message.clone())
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
