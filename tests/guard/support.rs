//! Helpers: invented histories, a writer child process, the guard binary run
//! with a generous time limit, and the event log read back.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::time::{Duration, Instant};

/// The binary under test.
pub const BIN: &str = env!("CARGO_BIN_EXE_rhoscope");

/// Generous limit for any child: tests assert outcomes, not durations.
pub const LIMIT: Duration = Duration::from_secs(90);

/// Header of the invented histories.
pub const HEADER: &str = "time,displacement,velocity\n";

/// Output interval of the invented histories (simulated seconds).
pub const DT_S: f64 = 1e-3;

/// Rows of a lightly damped free vibration, x = e^(−ζωt)·cos(ω_d·t) (closed form
/// of the single-degree-of-freedom oscillator; ω = 2π·5 rad/s, ζ = 0.02), from
/// simulated time `t0_s`.
pub fn healthy(rows: usize, t0_s: f64) -> String {
    let omega = 2.0 * std::f64::consts::PI * 5.0;
    let zeta: f64 = 0.02;
    let wd = omega * (1.0 - zeta * zeta).sqrt();
    let mut s = String::with_capacity(rows * 40);
    for i in 0..rows {
        let t = t0_s + i as f64 * DT_S;
        let env = (-zeta * omega * t).exp();
        let x = env * (wd * t).cos();
        let v = env * (-zeta * omega * (wd * t).cos() - wd * (wd * t).sin());
        s.push_str(&format!("{t:.6},{x:.9e},{v:.9e}\n"));
    }
    s
}

/// Rows after a crash: the solver goes on printing NaN.
pub fn crashed(rows: usize, t0_s: f64) -> String {
    let mut s = String::new();
    for i in 0..rows {
        let t = t0_s + i as f64 * DT_S;
        s.push_str(&format!("{t:.6},NaN,NaN\n"));
    }
    s
}

/// A child that appends `input` to `out` line by line, `batch` lines then a
/// pause, and ends (status 0) as soon as `stop` exists; status 1 when it wrote
/// everything without being stopped. Perl is part of every Debian-like base
/// system; the line-by-line flush is what a line-buffered solver does.
pub struct Writer {
    child: Child,
}

const PUMP: &str = r#"
use strict; use warnings; use Time::HiRes qw(sleep);
my ($in, $out, $stop, $batch, $pause) = @ARGV;
open(my $i, '<', $in) or die "input: $!";
open(my $o, '>>', $out) or die "output: $!";
select((select($o), $| = 1)[0]);
my $n = 0;
while (my $l = <$i>) {
    exit 0 if -e $stop;
    print $o $l;
    sleep($pause) if ++$n % $batch == 0;
}
exit 1;
"#;

impl Writer {
    /// About `batch / pause` lines per second.
    pub fn start(input: &Path, out: &Path, stop: &Path, batch: usize, pause: Duration) -> Self {
        let child = Command::new("perl")
            .arg("-e")
            .arg(PUMP)
            .arg(input)
            .arg(out)
            .arg(stop)
            .arg(batch.to_string())
            .arg(pause.as_secs_f64().to_string())
            .stdin(Stdio::null())
            .spawn()
            .unwrap();
        Self { child }
    }

    /// About 20,000 lines per second.
    pub fn fast(input: &Path, out: &Path, stop: &Path) -> Self {
        Self::start(input, out, stop, 200, Duration::from_millis(10))
    }

    /// Wait for the end; true when it was stopped by the stop file.
    pub fn stopped(mut self) -> bool {
        let st = wait_child(&mut self.child);
        match st.code() {
            Some(0) => true,
            Some(1) => false,
            _ => panic!("writer failed: {st:?}"),
        }
    }
}

/// Wait for a child within [`LIMIT`]; kill it and fail the test beyond.
pub fn wait_child(child: &mut Child) -> ExitStatus {
    let deadline = Instant::now() + LIMIT;
    loop {
        if let Some(st) = child.try_wait().unwrap() {
            return st;
        }
        if Instant::now() > deadline {
            let _ = child.kill();
            let _ = child.wait();
            panic!("child did not end within {LIMIT:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// A running guard with its event log and stderr captured in files.
pub struct Guard {
    pub child: Child,
    pub events: PathBuf,
    pub stderr: PathBuf,
}

impl Guard {
    /// Start `rhoscope guard FILE ARGS... --events DIR/events.jsonl`.
    pub fn start(dir: &Path, file: &Path, args: &[&str]) -> Self {
        let events = dir.join("events.jsonl");
        let stderr = dir.join("guard.stderr");
        let child = Command::new(BIN)
            .arg("guard")
            .arg(file)
            .args(args)
            .arg("--events")
            .arg(&events)
            .arg("--no-config")
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(fs::File::create(&stderr).unwrap())
            .spawn()
            .unwrap();
        Self {
            child,
            events,
            stderr,
        }
    }

    /// Wait for the exit code.
    pub fn code(&mut self) -> i32 {
        wait_child(&mut self.child).code().unwrap_or(-1)
    }

    /// The event log, one JSON value per line.
    pub fn events(&self) -> Vec<serde_json::Value> {
        read_events(&self.events)
    }

    pub fn stderr_text(&self) -> String {
        fs::read_to_string(&self.stderr).unwrap_or_default()
    }
}

/// Read a JSON Lines event log.
pub fn read_events(p: &Path) -> Vec<serde_json::Value> {
    fs::read_to_string(p)
        .unwrap_or_default()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

/// Events of one kind (`alarm`, `action`, `note`).
pub fn of_kind<'a>(ev: &'a [serde_json::Value], kind: &str) -> Vec<&'a serde_json::Value> {
    ev.iter().filter(|e| e["event"] == kind).collect()
}

/// Append text to a file (creating it).
pub fn append(p: &Path, text: &str) {
    use std::io::Write;
    let mut f = fs::OpenOptions::new()
        .create(true)
        .append(true)
        .open(p)
        .unwrap();
    f.write_all(text.as_bytes()).unwrap();
}

/// Number of lines in a file.
pub fn line_count(p: &Path) -> usize {
    fs::read(p)
        .unwrap_or_default()
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
}

/// Poll `cond` until true (within [`LIMIT`]).
pub fn eventually(what: &str, mut cond: impl FnMut() -> bool) {
    let deadline = Instant::now() + LIMIT;
    while !cond() {
        assert!(Instant::now() < deadline, "timed out waiting for {what}");
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// The damped vibration of [`healthy`] plus a sign-alternating parasitic mode
/// that grows by `rho` per row from 1e-6 — the signature of an explicit
/// scheme past its step limit (its amplification eigenvalue is real and negative
/// beyond ωΔt = 2; Belytschko, Liu, Moran, Nonlinear Finite Elements, 2000, §6.3,
/// from memory) — until it overflows; the last row is the crash (NaN).
/// Returns the text and the crash row's line number.
pub fn blow_up(rho: f64) -> (String, usize) {
    let omega = 2.0 * std::f64::consts::PI * 5.0;
    let zeta: f64 = 0.02;
    let wd = omega * (1.0 - zeta * zeta).sqrt();
    let mut s = String::from(HEADER);
    let mut line = 1;
    let mut par: f64 = 1e-6;
    for i in 0.. {
        let t = i as f64 * DT_S;
        line += 1;
        if par.abs() > 1e300 {
            s.push_str(&format!("{t:.6},NaN,NaN\n"));
            break;
        }
        let env = (-zeta * omega * t).exp();
        let x = env * (wd * t).cos() + par;
        let v = env * (-zeta * omega * (wd * t).cos() - wd * (wd * t).sin()) + 50.0 * par;
        s.push_str(&format!("{t:.6},{x:.9e},{v:.9e}\n"));
        par *= -rho;
    }
    (s, line)
}
