//! The dashboard's armed actions do not wait on drawing: the dashboard's loop
//! runs with a frame that never ends (a draw function that blocks), the data
//! thread follows a real file, a NaN row arrives, and the stop file is created
//! and, the run still writing after the grace period, the signal reaches a
//! real child process on time.

use std::fs::{self, OpenOptions};
use std::io::Write;
use std::os::unix::process::ExitStatusExt;
use std::path::PathBuf;
use std::process::{Child, Command};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, sync_channel};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use nix::sys::signal::Signal;
use ratatui::Terminal;
use ratatui::backend::TestBackend;

use rhoscope::act::{ActionSpec, Escalation, EscalationConfig, EventLog, ProcessId};
use rhoscope::app::feed::Feed;
use rhoscope::app::run::{Pacing, run};
use rhoscope::app::stopper::{Armed, Stopper, TICK};
use rhoscope::app::{AppState, Config, Key, Msg};
use rhoscope::settings::Settings;
use rhoscope::source::{FollowConfig, Follower};

/// Grace between the stop file and the signal.
const GRACE: Duration = Duration::from_secs(1);
/// Slack for a loaded test machine on top of the grace period; the stuck
/// frame lasts far longer than grace + slack.
const SLACK: Duration = Duration::from_secs(4);

/// One row of a lightly damped free vibration x = e^(−ζωt)·cos(ωt) (closed
/// form of the single-degree-of-freedom oscillator, ω = 2π·5 rad/s, ζ = 0.02).
fn row(i: u32) -> String {
    let t = f64::from(i) * 1e-3;
    let w = 2.0 * std::f64::consts::PI * 5.0;
    let x = (-0.02 * w * t).exp() * (w * t).cos();
    format!("{t:.6},{x:.9e}\n")
}

/// Appends healthy rows every 20 ms, a NaN row once `crash` is set (noting
/// when), and goes on writing — a solver that does not poll the stop file —
/// until `done`.
fn writer(
    file: PathBuf,
    crash: Arc<AtomicBool>,
    done: Arc<AtomicBool>,
    crashed_at: Arc<Mutex<Option<Instant>>>,
) -> std::thread::JoinHandle<()> {
    std::thread::spawn(move || {
        let mut f = OpenOptions::new().append(true).open(&file).unwrap();
        let mut i = 100;
        while !done.load(Ordering::Relaxed) {
            let mut text = String::new();
            for _ in 0..5 {
                text.push_str(&row(i));
                i += 1;
            }
            if crash.load(Ordering::Relaxed) {
                let mut at = crashed_at.lock().unwrap();
                if at.is_none() {
                    text.push_str(&format!("{:.6},NaN\n", f64::from(i) * 1e-3));
                    i += 1;
                    *at = Some(Instant::now());
                }
            }
            f.write_all(text.as_bytes()).unwrap();
            std::thread::sleep(Duration::from_millis(20));
        }
    })
}

fn wait_exit(child: &mut Child, until: Instant) -> Option<std::process::ExitStatus> {
    while Instant::now() < until {
        if let Some(st) = child.try_wait().unwrap() {
            return Some(st);
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    None
}

#[test]
fn an_armed_dashboard_signals_on_time_while_its_frame_is_stuck() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("history.csv");
    let stop = dir.path().join("STOP");
    let mut text = String::from("time,displacement\n");
    (0..100).for_each(|i| text.push_str(&row(i)));
    fs::write(&file, text).unwrap();

    let mut target = Command::new("sleep").arg("60").spawn().unwrap();
    let pid = ProcessId::capture(i64::from(target.id())).unwrap();
    let cfg = EscalationConfig {
        actions: vec![
            ActionSpec::Touch(stop.clone()),
            ActionSpec::Signal {
                signal: Signal::SIGTERM,
                target: pid,
            },
        ],
        grace: GRACE,
        on_warning: false,
        dry_run: false,
        file: file.clone(),
    };
    let log = Arc::new(Mutex::new(EventLog::open(None, false).unwrap()));
    let armed = Armed::new(Escalation::new(cfg), Some(pid), log, file.clone());

    let (tx, rx) = sync_channel(4);
    let stopper = Stopper::spawn(Box::new(armed), tx.clone(), TICK);
    let to_actions = stopper.handle();
    let feed = Feed::spawn(
        Follower::new(
            file.clone(),
            FollowConfig {
                poll_interval: Duration::from_millis(50),
                notify: false,
                ..FollowConfig::default()
            },
        ),
        Settings::default(),
        tx.clone(),
        Instant::now(),
        Duration::from_millis(50),
        Box::new(move |a| to_actions.alarm(a)),
    );

    // The loop's frame blocks from the first draw until released.
    let (release_tx, release_rx) = mpsc::channel::<()>();
    let stuck = Arc::new(AtomicBool::new(false));
    let in_frame = Arc::clone(&stuck);
    let handle = stopper.handle();
    let ui = std::thread::spawn(move || {
        let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
        let mut state = AppState::new(Config {
            file: "history.csv".into(),
            actions: vec!["create STOP".into(), "send SIGTERM".into()],
            auto_stop: true,
            ..Config::default()
        });
        let mut draw = |s: &AppState, f: &mut ratatui::Frame| {
            if !in_frame.swap(true, Ordering::SeqCst) {
                let _ = release_rx.recv();
            }
            rhoscope::ui::render(s, f);
        };
        run(
            &mut term,
            &mut state,
            &rx,
            &handle,
            Pacing::default(),
            &mut draw,
        )
        .unwrap();
        state
    });

    let crash = Arc::new(AtomicBool::new(false));
    let done = Arc::new(AtomicBool::new(false));
    let crashed_at = Arc::new(Mutex::new(None));
    let w = writer(
        file.clone(),
        Arc::clone(&crash),
        Arc::clone(&done),
        Arc::clone(&crashed_at),
    );
    // The first frame is stuck before the run crashes.
    let deadline = Instant::now() + Duration::from_secs(20);
    while !stuck.load(Ordering::SeqCst) && Instant::now() < deadline {
        std::thread::sleep(Duration::from_millis(10));
    }
    assert!(stuck.load(Ordering::SeqCst), "the loop never drew");
    std::thread::sleep(Duration::from_millis(300));
    crash.store(true, Ordering::Relaxed);
    while crashed_at.lock().unwrap().is_none() {
        std::thread::sleep(Duration::from_millis(10));
    }
    let t_crash = crashed_at.lock().unwrap().unwrap();

    let status = wait_exit(&mut target, t_crash + GRACE + SLACK);
    let took = t_crash.elapsed();
    let still_stuck = release_tx.send(()).is_ok() && stuck.load(Ordering::SeqCst);
    done.store(true, Ordering::Relaxed);
    w.join().unwrap();
    // Let the loop catch up with the data and the reports before quitting.
    std::thread::sleep(Duration::from_secs(1));
    let _ = tx.send(Msg::Key(Key::Char('q')));
    let state = ui.join().unwrap();
    feed.stop();
    stopper.stop();
    if status.is_none() {
        let _ = target.kill();
        let _ = target.wait();
    }

    assert!(stop.exists(), "the stop file was not created");
    let status = status.unwrap_or_else(|| panic!("no signal within {took:?} of the crash"));
    assert_eq!(status.signal(), Some(Signal::SIGTERM as i32), "{status:?}");
    assert!(
        took >= GRACE,
        "the signal came before the grace period: {took:?}"
    );
    assert!(still_stuck, "the frame was released before the signal");
    // Once drawing resumes, the reports of both steps reach the screen's state.
    assert!(
        matches!(&state.stop, rhoscope::app::StopState::Done { ok: true, report } if report.len() == 2),
        "{:?}",
        state.stop
    );
}

/// A source that hands out some rows, then fails the way a bug would.
struct Faulty(u32);

impl rhoscope::source::Source for Faulty {
    fn poll(&mut self) -> std::io::Result<Option<rhoscope::source::Event>> {
        self.0 += 1;
        match self.0 {
            1 => Ok(Some(rhoscope::source::Event::Data(
                "time,displacement\n0.0,1.0\n0.001,0.9\n"
                    .as_bytes()
                    .to_vec(),
            ))),
            _ => panic!("an invented fault in the data thread"),
        }
    }
    fn wait(&mut self, max: Duration) {
        std::thread::sleep(max);
    }
}

#[test]
fn a_panic_in_the_data_thread_ends_the_dashboard_with_101() {
    let (tx, rx) = sync_channel(16);
    let feed = Feed::spawn(
        Faulty(0),
        Settings::default(),
        tx,
        Instant::now(),
        Duration::from_millis(10),
        Box::new(|_| {}),
    );
    let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
    let mut state = AppState::new(Config::default());
    let t = Instant::now();
    // The loop ends by itself: no key, no signal.
    run(
        &mut term,
        &mut state,
        &rx,
        &rhoscope::app::stopper::StopHandle::none(),
        Pacing::default(),
        &mut rhoscope::ui::render,
    )
    .unwrap();
    feed.stop();
    assert!(t.elapsed() < Duration::from_secs(10), "{:?}", t.elapsed());
    assert_eq!(state.rows, 2, "the rows before the fault were shown");
    let fatal = state.fatal.clone().unwrap_or_default();
    assert!(
        fatal.contains("data thread") && fatal.contains("an invented fault"),
        "{fatal}"
    );
    assert_eq!(rhoscope::commands::watch::exit_code(&state), 101);
}
