//! Drives the fleet view (`rhoscope watch` on a quoted pattern) in a real
//! terminal: three generated runs — one kept growing, one blowing up (a demo
//! case), one written once and then silent — must show as rows worst first,
//! with the silent one flagged as stalled; j moves, Enter opens the selected
//! run's dashboard and Esc comes back; a run started later joins; q quits and
//! the terminal comes back. At 80×24 and 200×60. Needs tmux, like `ui_tmux`.

use std::io::Write;
use std::path::Path;
use std::process::Command;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread::JoinHandle;
use std::time::Duration;

use crate::tmux_support::{Tmux, rows_text, skip, write_history};

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// Appends rows to a history every 250 ms until dropped.
struct Appender {
    stop: Arc<AtomicBool>,
    handle: Option<JoinHandle<()>>,
}

impl Appender {
    fn start(path: &Path, from: u32) -> Appender {
        let stop = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&stop);
        let path = path.to_path_buf();
        let handle = std::thread::spawn(move || {
            let mut n = from;
            while !flag.load(Ordering::Relaxed) {
                let mut f = std::fs::OpenOptions::new()
                    .append(true)
                    .open(&path)
                    .unwrap();
                f.write_all(rows_text(n, 20).as_bytes()).unwrap();
                n += 20;
                std::thread::sleep(Duration::from_millis(250));
            }
        });
        Appender {
            stop,
            handle: Some(handle),
        }
    }
}

impl Drop for Appender {
    fn drop(&mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

/// `dir/<name>/history.csv`, its directory created.
fn run_file(dir: &Path, name: &str) -> std::path::PathBuf {
    let d = dir.join(name);
    std::fs::create_dir_all(&d).unwrap();
    d.join("history.csv")
}

/// Line number and text of the screen line whose words include `name`.
fn line_of<'a>(screen: &'a str, name: &str) -> Option<(usize, &'a str)> {
    screen
        .lines()
        .enumerate()
        .find(|(_, l)| l.split_whitespace().any(|w| w == name))
}

/// True when the three runs are listed worst first with the expected states.
fn sorted_with_states(s: &str) -> bool {
    match (
        line_of(s, "diverging"),
        line_of(s, "silent"),
        line_of(s, "steady"),
    ) {
        (Some((a, la)), Some((b, lb)), Some((c, lc))) => {
            a < b
                && b < c
                && la.contains("✖ CRITICAL")
                && lb.contains("⏸ STALLED")
                && lc.contains("✔ OK")
        }
        _ => false,
    }
}

fn fleet_view_at(tag: &str, cols: u16, rows: u16) {
    if skip() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let steady = run_file(dir.path(), "steady");
    write_history(&steady, 600);
    // Labels from the demo catalogue (`rhoscope demo --list`): the first is
    // expected critical, the second healthy.
    for (case, name) in [("cd-omega-2.01", "diverging"), ("chain-ramp-ok", "silent")] {
        let st = Command::new(BIN)
            .args(["demo", "--write", case])
            .arg(run_file(dir.path(), name))
            .status()
            .unwrap();
        assert!(st.success());
    }
    let _growing = Appender::start(&steady, 600);
    let cmd = format!(
        "{BIN} watch '{}/*/history.csv' --no-config --poll 1s --stall-after 3s --end-time 1.0; \
         echo WATCH-EXIT=$?; sleep 30",
        dir.path().display()
    );
    let tm = Tmux::start(tag, cols, rows, &cmd);

    let s = tm.wait_for("three runs worst first", sorted_with_states);
    assert!(s.contains("3 runs"), "{s}");
    assert!(s.contains("growth/step"), "{s}");
    let wide = cols >= 110;
    assert_eq!(s.contains("alarm or note"), wide, "{s}");
    let (_, top) = line_of(&s, "diverging").unwrap();
    assert!(top.trim_start().starts_with('>'), "worst run selected: {s}");

    // j moves to the stalled run; Enter opens its dashboard.
    tm.keys(&["j"]);
    tm.wait_for("selection on the stalled run", |s| {
        line_of(s, "silent").is_some_and(|(_, l)| l.trim_start().starts_with('>'))
    });
    tm.keys(&["Enter"]);
    let s = tm.wait_for("the run's dashboard", |s| {
        s.contains("growth per step") && s.contains("silent/history.csv")
    });
    assert!(!s.contains("3 runs"), "the fleet table is gone: {s}");

    // Esc comes back to the fleet view, which went on following meanwhile.
    tm.keys(&["Escape"]);
    let s = tm.wait_for("back in the fleet view", |s| {
        s.contains("back from") && sorted_with_states(s)
    });
    assert!(s.contains("silent/history.csv"), "{s}");

    // A run that starts later joins (the patterns are expanded every 10 s).
    write_history(&run_file(dir.path(), "latecomer"), 300);
    let s = tm.wait_for_within("the new run", Duration::from_secs(40), |s| {
        line_of(s, "latecomer").is_some() && s.contains("4 runs")
    });
    assert!(sorted_with_states(&s), "{s}");

    tm.keys(&["q"]);
    let s = tm.wait_for("exit", |s| s.contains("WATCH-EXIT="));
    assert!(s.contains("WATCH-EXIT=0"), "{s}");
    assert!(s.contains("rhoscope watch: 4 runs followed"), "{s}");
    // Back on the normal screen: the table is gone.
    assert!(!s.contains("growth/step"), "{s}");
    assert!(tm.alive());
}

#[test]
fn fleet_view_sorts_flags_opens_and_quits_at_80x24() {
    fleet_view_at("fleet-small", 80, 24);
}

#[test]
fn fleet_view_sorts_flags_opens_and_quits_at_200x60() {
    fleet_view_at("fleet-large", 200, 60);
}
