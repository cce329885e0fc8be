//! Fleet scale: many histories followed from one process, each growing by a
//! few lines per second, as on a cluster running a parameter study. A child
//! process (this same binary, re-run as the writer) appends to every file so
//! that the CPU measured from /proc is the follower's alone. Prints CPU as a
//! share of one core and resident memory (current and peak).
//!
//! Environment: FLEET_RUNS (default 500), FLEET_LINES_PER_S (per run, default
//! 10), FLEET_SECS (measured seconds, default 30), FLEET_NOTIFY (1/0, default 1),
//! FLEET_POLL_MS (default 3000).

use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use rhoscope::fleet::{Fleet, FleetConfig, RunState};
use rhoscope::settings::ReadSpec;

fn env_num(name: &str, default: f64) -> f64 {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// One history row of run `i` at output `n`: an undamped oscillator (energy
/// balance holds), or for every 50th run one growing by 0.05 % per output.
fn row(i: usize, n: u64) -> String {
    let dt = 1e-4;
    let t = n as f64 * dt;
    let w = 2.0 * std::f64::consts::PI * (50.0 + i as f64);
    let amp = if i % 50 == 7 {
        1.0005f64.powf(n as f64)
    } else {
        1.0
    };
    let x = amp * (w * t).cos();
    let v = -amp * w * (w * t).sin();
    let ke = 0.5 * v * v;
    let ie = 0.5 * w * w * x * x;
    format!(
        "{t:.6e},{dt:.3e},{ke:.9e},{ie:.9e},0.0,{x:.9e},{:.9e},{v:.9e}\n",
        0.5 * x
    )
}

fn writer(dir: &Path, runs: usize, rate: f64, secs: f64) {
    let mut files: Vec<File> = (0..runs)
        .map(|i| {
            let p = dir.join(format!("r{i:04}")).join("history.csv");
            OpenOptions::new()
                .append(true)
                .open(p)
                .expect("open history")
        })
        .collect();
    let period = Duration::from_secs_f64(1.0 / rate);
    let start = Instant::now();
    let mut n: u64 = 200;
    while start.elapsed().as_secs_f64() < secs {
        let tick = Instant::now();
        for (i, f) in files.iter_mut().enumerate() {
            let _ = f.write_all(row(i, n).as_bytes());
        }
        n += 1;
        std::thread::sleep(period.saturating_sub(tick.elapsed()));
    }
}

/// Process CPU seconds (user + system) from /proc/self/stat.
fn cpu_s() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let after = stat.rsplit(')').next().unwrap_or("");
    let f: Vec<&str> = after.split_whitespace().collect();
    // Fields 14 and 15 of proc(5) are utime and stime; after the ')' they are 12th and 13th.
    let ticks: f64 = f.get(11).and_then(|v| v.parse().ok()).unwrap_or(0.0)
        + f.get(12).and_then(|v| v.parse().ok()).unwrap_or(0.0);
    ticks / 100.0
}

/// Resident memory now and its peak, in MB, from /proc/self/status.
fn rss_mb() -> (f64, f64) {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let get = |key: &str| {
        status
            .lines()
            .find(|l| l.starts_with(key))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|v| v.parse::<f64>().ok())
            .unwrap_or(0.0)
            / 1024.0
    };
    (get("VmRSS:"), get("VmHWM:"))
}

fn main() {
    let runs = env_num("FLEET_RUNS", 500.0) as usize;
    let rate = env_num("FLEET_LINES_PER_S", 10.0);
    let secs = env_num("FLEET_SECS", 30.0);
    let notify = env_num("FLEET_NOTIFY", 1.0) > 0.5;
    let poll = Duration::from_millis(env_num("FLEET_POLL_MS", 3000.0) as u64);
    if let Ok(dir) = std::env::var("FLEET_WRITER_DIR") {
        writer(Path::new(&dir), runs, rate, secs);
        return;
    }
    let dir = tempfile::tempdir().expect("temp dir");
    for i in 0..runs {
        let d = dir.path().join(format!("r{i:04}"));
        std::fs::create_dir_all(&d).expect("run dir");
        let mut text = String::from(
            "time,time_step,kinetic_energy,internal_energy,external_work,disp_1,disp_2,vel_1\n",
        );
        for n in 0..200 {
            text.push_str(&row(i, n));
        }
        std::fs::write(d.join("history.csv"), text).expect("history");
    }
    let warm = 6.0 + poll.as_secs_f64();
    let exe: PathBuf = std::env::current_exe().expect("own path");
    let mut child = Command::new(exe)
        .env("FLEET_WRITER_DIR", dir.path())
        .env("FLEET_SECS", format!("{}", secs + warm + 2.0))
        .stdout(Stdio::null())
        .spawn()
        .expect("writer");

    let t0 = Instant::now();
    let pattern = format!("{}/*/history.csv", dir.path().display());
    let cfg = FleetConfig {
        poll_interval: poll,
        notify,
        ..FleetConfig::default()
    };
    let mut fleet = Fleet::new(vec![pattern], ReadSpec::default(), cfg, t0);
    let run_for = |fleet: &mut Fleet, d: f64| {
        let end = Instant::now() + Duration::from_secs_f64(d);
        while Instant::now() < end {
            fleet.step(Instant::now());
            fleet.wait(Duration::from_millis(500), Duration::from_millis(50));
        }
    };
    run_for(&mut fleet, warm);
    let rows_before: u64 = fleet.rows().map(|r| r.rows_total).sum();
    let (c0, w0) = (cpu_s(), Instant::now());
    run_for(&mut fleet, secs);
    let (c1, w1) = (cpu_s(), Instant::now());
    let rows_after: u64 = fleet.rows().map(|r| r.rows_total).sum();
    let _ = child.wait();
    let (rss, peak) = rss_mb();
    let wall = (w1 - w0).as_secs_f64();
    let now_s = fleet.secs(Instant::now());
    let count = |want: RunState| {
        fleet
            .rows()
            .filter(|r| r.state(now_s, 600.0) == want)
            .count()
    };
    let (crit, warn, healthy) = (
        count(RunState::Critical),
        count(RunState::Warning),
        count(RunState::Healthy),
    );
    println!(
        "fleet: {} runs x {rate} lines/s, poll {:?}, notifications {}",
        fleet.len(),
        poll,
        if fleet.notified() { "on" } else { "off" }
    );
    println!(
        "  rows read while measured: {} ({:.0} rows/s over {wall:.1} s)",
        rows_after - rows_before,
        (rows_after - rows_before) as f64 / wall
    );
    println!(
        "  CPU {:.2} % of one core; memory {rss:.1} MB resident, peak {peak:.1} MB",
        100.0 * (c1 - c0) / wall
    );
    println!(
        "  at the end: {crit} critical, {warn} warning, {healthy} healthy \
         (every 50th run grows by design)"
    );
}
