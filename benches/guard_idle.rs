//! Idle cost of `rhoscope guard`: CPU time used by the guard process while the
//! followed file does not change, as a share of one core. Read from
//! `/proc/PID/schedstat` (first field: nanoseconds on a CPU, proc(5)), falling
//! back to `/proc/PID/stat` utime + stime in clock ticks.
//!
//! Run with `cargo bench --bench guard_idle`.

use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");
const MEASURE: Duration = Duration::from_secs(15);

/// CPU seconds used so far by `pid`.
fn cpu_s(pid: u32) -> Option<f64> {
    if let Ok(s) = std::fs::read_to_string(format!("/proc/{pid}/schedstat"))
        && let Some(ns) = s
            .split_whitespace()
            .next()
            .and_then(|v| v.parse::<f64>().ok())
    {
        return Some(ns * 1e-9);
    }
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    let rest = &stat[stat.rfind(')')? + 1..];
    let f: Vec<&str> = rest.split_whitespace().collect();
    // Fields 14 and 15 (utime, stime) are the 12th and 13th after the name.
    let ticks: f64 = f.get(11)?.parse::<f64>().ok()? + f.get(12)?.parse::<f64>().ok()?;
    // Clock ticks per second: 100 on common Linux builds (from memory).
    Some(ticks / 100.0)
}

fn start(file: &std::path::Path, extra: &[&str]) -> Child {
    Command::new(BIN)
        .arg("guard")
        .arg(file)
        .args(["--no-config", "--quiet"])
        .args(extra)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start guard")
}

fn measure(name: &str, file: &std::path::Path, extra: &[&str]) {
    let mut child = start(file, extra);
    // Let it read the backlog and settle.
    std::thread::sleep(Duration::from_secs(2));
    let pid = child.id();
    let (Some(c0), t0) = (cpu_s(pid), Instant::now()) else {
        println!("{name}: cannot read CPU time");
        let _ = child.kill();
        let _ = child.wait();
        return;
    };
    std::thread::sleep(MEASURE);
    let c1 = cpu_s(pid).unwrap_or(c0);
    let wall = t0.elapsed().as_secs_f64();
    let _ = child.kill();
    let _ = child.wait();
    println!(
        "{name}: {:.4} % of one core ({:.1} ms CPU in {:.1} s)",
        100.0 * (c1 - c0) / wall,
        (c1 - c0) * 1e3,
        wall
    );
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    let file = dir.path().join("h.csv");
    let mut text = String::from("time,displacement,velocity\n");
    for i in 0..10_000 {
        let t = i as f64 * 1e-3;
        text.push_str(&format!(
            "{t:.6},{:.6e},{:.6e}\n",
            (31.4 * t).cos(),
            -(31.4 * t).sin()
        ));
    }
    std::fs::write(&file, text).expect("write history");
    measure("idle, notifications + 1 s poll (default)", &file, &[]);
    measure("idle, polling only, 1 s", &file, &["--no-notify"]);
    measure(
        "idle, polling only, 100 ms",
        &file,
        &["--no-notify", "--poll", "100ms"],
    );
}
