//! Ingest speed: a generated 14-column history of values like `1.234567890E-03`
//! read into f64 by the reader alone, and through the whole pipeline (reader +
//! detectors + alarm book). Before the criterion groups it prints the time that
//! `wc -l` takes on the same file, the floor for any line-oriented reader. A
//! third history, of a damped structure with its energies (see
//! `support/structure.rs`), is what the detectors usually see.
//!
//! Then, on the file as written: `scan` as the command runs it, and the
//! catch-up of `guard` on the same file as a backlog (the one follow loop over
//! a followed file, in the guard's 16 KiB slices); both read large runs of
//! bytes on two threads. Each prints the best wall-clock time of three and the
//! CPU time of the whole process (both threads) for that run.

use std::hint::black_box;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rhoscope::alarm::Alarm;
use rhoscope::parse::roles::RoleRules;
use rhoscope::parse::{ParseOptions, Reader, RowSink, Schema, SegmentReason, SkipReason};
use rhoscope::pipeline::Pipeline;
use rhoscope::pipeline::drive::Follow;
use rhoscope::scan::scan_file;
use rhoscope::settings::Settings;
use rhoscope::source::{FollowConfig, Follower};

#[path = "support/structure.rs"]
mod structure;

const COLUMNS: usize = 14;
const TARGET_BYTES: usize = 128 << 20;
const CHUNK: usize = 1 << 20;

/// Sums every value so that the parse cannot be optimised away.
#[derive(Default)]
struct Sum {
    rows: u64,
    total: f64,
}

impl RowSink for Sum {
    fn schema(&mut self, _line: u64, _schema: &Schema) {}
    fn row(&mut self, _line: u64, values: &[f64]) {
        self.rows += 1;
        self.total += values.iter().sum::<f64>();
    }
    fn segment(&mut self, _line: u64, _reason: SegmentReason) {}
    fn skipped(&mut self, _line: u64, _reason: SkipReason) {}
}

/// `1.234567890E-03`-style text: 10 significant digits, two-digit exponent.
fn sci(v: f64, out: &mut Vec<u8>) {
    let s = format!("{v:.9E}");
    let (mant, exp) = s.split_once('E').unwrap_or((&s, "0"));
    let e: i32 = exp.parse().unwrap_or(0);
    let sign = if e < 0 { '-' } else { '+' };
    let _ = write!(out, "{mant:>16}E{sign}{:02}", e.abs());
}

/// A deterministic history: a header and rows of decaying, oscillating values.
fn generate(sep: &str) -> Vec<u8> {
    let mut out = Vec::with_capacity(TARGET_BYTES + 4096);
    let names: Vec<String> = (0..COLUMNS).map(|i| format!("q{i}")).collect();
    out.extend(names.join(sep).as_bytes());
    out.push(b'\n');
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    let mut row = 0u64;
    while out.len() < TARGET_BYTES {
        for c in 0..COLUMNS {
            // xorshift64: a fixed, portable sequence.
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let noise = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            let t = row as f64 * 1e-4;
            let v =
                (1.0 + c as f64) * (t * (3.0 + c as f64)).sin() * 10f64.powi((c % 7) as i32 - 3)
                    + noise * 1e-6;
            if c > 0 {
                out.extend(sep.as_bytes());
            }
            sci(v, &mut out);
        }
        out.push(b'\n');
        row += 1;
    }
    out
}

/// The same size of history from the healthy damped structure of
/// `support/structure.rs` (time, step, probes and balancing energies),
/// whitespace-separated: what the detectors usually see.
fn generate_structure() -> Vec<u8> {
    let mut out = Vec::with_capacity(TARGET_BYTES + 4096);
    out.extend(structure::NAMES.join(" ").as_bytes());
    out.push(b'\n');
    let mut s = structure::Structure::new();
    let mut n = 0;
    while out.len() < TARGET_BYTES {
        for (c, v) in s.row(n).iter().enumerate() {
            if c > 0 {
                out.push(b' ');
            }
            sci(*v, &mut out);
        }
        out.push(b'\n');
        n += 1;
    }
    out
}

fn write_file(name: &str, bytes: &[u8]) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"));
    let path = dir.join(name);
    if let Err(e) = std::fs::write(&path, bytes) {
        eprintln!("cannot write {}: {e}", path.display());
    }
    path
}

/// Best of three runs of `wc -l` on the file (it is in the page cache by then).
fn time_wc(path: &PathBuf, bytes: usize) {
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let start = Instant::now();
        let ok = std::process::Command::new("wc")
            .arg("-l")
            .arg(path)
            .output()
            .is_ok_and(|o| o.status.success());
        if !ok {
            eprintln!("wc -l not available");
            return;
        }
        best = best.min(start.elapsed().as_secs_f64());
    }
    println!(
        "wc -l {}: {:.3} s for {:.1} MB = {:.2} GB/s",
        path.display(),
        best,
        bytes as f64 / 1e6,
        bytes as f64 / best / 1e9
    );
}

fn read_all(bytes: &[u8]) -> Sum {
    let mut r = Reader::new(&ParseOptions::default(), &RoleRules::default());
    let mut sum = Sum::default();
    for chunk in bytes.chunks(CHUNK) {
        r.feed(chunk, &mut sum);
    }
    r.finish(&mut sum);
    sum
}

/// CPU time this thread has run, from Linux's `/proc/thread-self/schedstat`
/// (first field, nanoseconds). On a machine shared with other work, wall-clock
/// time overstates the cost; this is the time on one core.
fn thread_cpu_s() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: f64 = text.split_whitespace().next()?.parse().ok()?;
    Some(ns * 1e-9)
}

/// Read the data `passes` times and print bytes per CPU-second.
fn cpu_throughput(label: &str, data: &[u8], passes: usize, mut f: impl FnMut(&[u8]) -> f64) {
    let (Some(t0), wall) = (thread_cpu_s(), Instant::now()) else {
        return;
    };
    let mut acc = 0.0;
    for _ in 0..passes {
        acc += f(black_box(data));
    }
    black_box(acc);
    let Some(t1) = thread_cpu_s() else { return };
    let bytes = (data.len() * passes) as f64;
    println!(
        "{label}: {:.2} GB/s per CPU-second ({:.2} GB/s wall clock)",
        bytes / (t1 - t0) / 1e9,
        bytes / wall.elapsed().as_secs_f64() / 1e9
    );
}

fn pipeline_all(data: &[u8]) -> f64 {
    let mut p = Pipeline::new(&Settings::default());
    let mut alarms: Vec<Alarm> = Vec::new();
    for chunk in data.chunks(CHUNK) {
        p.feed(chunk, None, &mut alarms);
    }
    p.finish(&mut alarms);
    p.rows() as f64
}

/// CPU time of the whole process (every thread), from `/proc/self/stat`
/// (user + system, in clock ticks of 1/100 s on Linux).
fn process_cpu_s() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/self/stat").ok()?;
    let after = text.rsplit_once(')')?.1;
    let f: Vec<&str> = after.split_whitespace().collect();
    let user: f64 = f.get(11)?.parse().ok()?;
    let system: f64 = f.get(12)?.parse().ok()?;
    Some((user + system) / 100.0)
}

/// Run `f` three times; print the best wall-clock time, the CPU time of that
/// run (all threads, and the caller's thread, which runs the detectors) and
/// the load average. On a machine shared with other work the wall clock
/// overstates the cost; the larger of the two threads' CPU times is what the
/// run takes with two free cores.
fn time_whole(label: &str, bytes: usize, mut f: impl FnMut() -> anyhow::Result<u64>) {
    let mut best = (f64::INFINITY, f64::NAN, f64::NAN);
    for _ in 0..3 {
        let (cpu0, own0, start) = (process_cpu_s(), thread_cpu_s(), Instant::now());
        match f() {
            Ok(rows) => {
                black_box(rows);
            }
            Err(e) => {
                eprintln!("{label} failed: {e:#}");
                return;
            }
        }
        let wall = start.elapsed().as_secs_f64();
        let diff = |a: Option<f64>, b: Option<f64>| match (a, b) {
            (Some(a), Some(b)) => b - a,
            _ => f64::NAN,
        };
        let (cpu, own) = (diff(cpu0, process_cpu_s()), diff(own0, thread_cpu_s()));
        if wall < best.0 {
            best = (wall, cpu, own);
        }
    }
    let (wall, cpu, own) = best;
    let other = (cpu - own).max(0.0);
    let load = std::fs::read_to_string("/proc/loadavg").unwrap_or_default();
    println!(
        "{label}: {wall:.3} s = {:.2} GB/s wall clock; CPU {cpu:.2} s in all, {own:.2} s detectors' \
         thread, {other:.2} s reader's; with two free cores ≈ {:.2} GB/s (load average {})",
        bytes as f64 / wall / 1e9,
        bytes as f64 / own.max(other) / 1e9,
        load.split_whitespace()
            .take(3)
            .collect::<Vec<_>>()
            .join(" ")
    );
}

/// `scan` of the file as the command runs it.
fn scan_rows(path: &Path) -> anyhow::Result<u64> {
    let report = scan_file(path, &Settings::default(), &mut |_, _| {})?;
    Ok(report.rows)
}

/// Guard's catch-up: follow the file and read it as a backlog until caught up.
fn catch_up_rows(path: &Path) -> anyhow::Result<u64> {
    let cfg = FollowConfig {
        notify: false,
        ..FollowConfig::default()
    };
    let mut source = Follower::new(path, cfg);
    let mut pipeline = Pipeline::new(&Settings::default());
    let mut alarms: Vec<Alarm> = Vec::new();
    let t0 = Instant::now();
    // The guard feeds 16 KiB between checkpoints (guard::FEED_SLICE_BYTES).
    let mut follow = Follow::new(t0, 16 * 1024);
    while !follow.caught_up() {
        follow.poll(&mut source, &mut pipeline, &mut alarms, Instant::now());
    }
    Ok(pipeline.rows())
}

fn bench(c: &mut Criterion) {
    for label in ["whitespace", "comma", "structure"] {
        let data = match label {
            "comma" => generate(","),
            "structure" => generate_structure(),
            _ => generate(" "),
        };
        let path = write_file(&format!("ingest-{label}.txt"), &data);
        time_wc(&path, data.len());
        let check = read_all(&data);
        println!(
            "{label}: {} rows of {COLUMNS} columns, {} bytes",
            check.rows,
            data.len()
        );
        cpu_throughput(&format!("{label} reader"), &data, 5, |d| read_all(d).total);
        cpu_throughput(&format!("{label} pipeline"), &data, 5, pipeline_all);
        time_whole(&format!("{label} scan"), data.len(), || scan_rows(&path));
        time_whole(&format!("{label} guard catch-up"), data.len(), || {
            catch_up_rows(&path)
        });
        let mut g = c.benchmark_group(format!("ingest/{label}"));
        g.throughput(Throughput::Bytes(data.len() as u64));
        g.sample_size(10);
        g.bench_function("reader", |b| {
            b.iter(|| black_box(read_all(black_box(&data)).total))
        });
        g.bench_function("pipeline", |b| {
            b.iter(|| black_box(pipeline_all(black_box(&data))))
        });
        g.bench_function("scan", |b| b.iter(|| black_box(scan_rows(&path).ok())));
        g.bench_function("guard catch-up", |b| {
            b.iter(|| black_box(catch_up_rows(&path).ok()))
        });
        g.finish();
    }
}

criterion_group! {
    name = benches;
    // No plots: the report charts need system fonts that a build host may lack.
    config = Criterion::default().without_plots();
    targets = bench
}
criterion_main!(benches);
