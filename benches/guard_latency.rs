//! Latency from a line being appended to the alarm being raised, as guard sees
//! it: a `Follower` thread reads the file and feeds the shared pipeline; the
//! main thread appends one non-finite row to a file that is being followed and
//! waits for the alarm. Measured with kernel notifications as the wake-up hint,
//! and with polling alone at 100 ms. Prints median, 90th percentile and maximum.
//!
//! Run with `cargo bench --bench guard_latency`.

use std::fs::OpenOptions;
use std::io::Write;
use std::sync::mpsc;
use std::time::{Duration, Instant};

use rhoscope::alarm::Alarm;
use rhoscope::finding::Level;
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;
use rhoscope::source::{Event, FollowConfig, Follower, Source};

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants) for the
/// phase of each append relative to the poll cycle.
struct Lcg(u64);

impl Lcg {
    fn next_unit(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn trial(notify: bool, poll: Duration, phase: Duration) -> Option<Duration> {
    let dir = tempfile::tempdir().ok()?;
    let path = dir.path().join("h.csv");
    let mut text = String::from("time,displacement,velocity\n");
    for i in 0..200 {
        let t = i as f64 * 1e-3;
        text.push_str(&format!(
            "{t:.6},{:.6e},{:.6e}\n",
            (31.4 * t).cos(),
            -(31.4 * t).sin()
        ));
    }
    std::fs::write(&path, &text).ok()?;
    let (tx, rx) = mpsc::channel::<Instant>();
    let (ready_tx, ready_rx) = mpsc::channel::<()>();
    let follow_path = path.clone();
    let reader = std::thread::spawn(move || {
        let mut f = Follower::new(
            &follow_path,
            FollowConfig {
                poll_interval: poll,
                notify,
                ..FollowConfig::default()
            },
        );
        let mut p = Pipeline::new(&Settings::default());
        let mut told = false;
        let deadline = Instant::now() + Duration::from_secs(20);
        let started = Instant::now();
        while Instant::now() < deadline {
            match f.poll() {
                Ok(Some(Event::Data(d))) => {
                    let mut alarms: Vec<Alarm> = Vec::new();
                    let arrival = started.elapsed().as_secs_f64();
                    p.feed(&d, Some(arrival), &mut alarms);
                    if alarms.iter().any(|a| a.level == Level::Critical) {
                        let _ = tx.send(Instant::now());
                        return;
                    }
                }
                Ok(Some(_)) => {}
                Ok(None) => {
                    if !told {
                        told = true;
                        let _ = ready_tx.send(());
                    }
                    f.wait(poll);
                }
                Err(_) => return,
            }
        }
    });
    ready_rx.recv_timeout(Duration::from_secs(20)).ok()?;
    std::thread::sleep(phase);
    let t0 = Instant::now();
    {
        let mut f = OpenOptions::new().append(true).open(&path).ok()?;
        f.write_all(b"0.200000,NaN,NaN\n").ok()?;
    }
    let t1 = rx.recv_timeout(Duration::from_secs(20)).ok()?;
    let _ = reader.join();
    Some(t1.duration_since(t0))
}

fn report(name: &str, mut v: Vec<Duration>) {
    v.sort();
    if v.is_empty() {
        println!("{name}: no successful trial");
        return;
    }
    let q = |f: f64| v[((v.len() - 1) as f64 * f).round() as usize];
    println!(
        "{name}: n = {}, median {:.3} ms, p90 {:.3} ms, max {:.3} ms",
        v.len(),
        q(0.5).as_secs_f64() * 1e3,
        q(0.9).as_secs_f64() * 1e3,
        v[v.len() - 1].as_secs_f64() * 1e3
    );
}

fn main() {
    let mut rng = Lcg(0x5eed);
    let notify_poll = Duration::from_secs(1);
    let mut with_notify = Vec::new();
    for _ in 0..40 {
        let phase = Duration::from_secs_f64(0.05 + 0.1 * rng.next_unit());
        if let Some(d) = trial(true, notify_poll, phase) {
            with_notify.push(d);
        }
    }
    report("append → alarm, notifications on (poll 1 s)", with_notify);

    let poll = Duration::from_millis(100);
    let mut polling = Vec::new();
    for _ in 0..40 {
        let phase = Duration::from_secs_f64(poll.as_secs_f64() * rng.next_unit());
        if let Some(d) = trial(false, poll, phase) {
            polling.push(d);
        }
    }
    report("append → alarm, polling only every 100 ms", polling);
}
