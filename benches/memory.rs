//! Peak memory of watching a very long run: generates an invented history of
//! 10⁸ rows in memory (nothing is written to disk), feeds it in chunks through
//! the reader, the detectors and the dashboard's state, as `watch` does, and
//! prints the peak resident set size (VmHWM from /proc/self/status).
//! `RHOSCOPE_BENCH_ROWS` sets another row count.

use std::fmt::Write as _;
use std::time::Instant;

use rhoscope::app::{AppState, Batch, Config, Msg};
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;

const DEFAULT_ROWS: u64 = 100_000_000;
/// Rows generated per chunk fed to the pipeline (about 64 KiB of text).
const CHUNK_ROWS: u64 = 1_000;

fn peak_rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn main() {
    let rows: u64 = std::env::var("RHOSCOPE_BENCH_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(DEFAULT_ROWS);
    let mut pipeline = Pipeline::new(&Settings::default());
    let mut state = AppState::new(Config {
        file: "generated".into(),
        ..Config::default()
    });
    let start = Instant::now();
    let mut text = String::with_capacity(128 * CHUNK_ROWS as usize);
    text.push_str("time,dt,step,kinetic_energy,internal_energy,external_work,disp_a,vel_b\n");
    let dt = 1e-6;
    let w = 2.0 * std::f64::consts::PI * 120.0;
    let mut i = 0u64;
    let mut before = peak_rss_kib().unwrap_or(0);
    while i < rows {
        let end = (i + CHUNK_ROWS).min(rows);
        while i < end {
            let t = i as f64 * dt;
            let (s, c) = (w * t).sin_cos();
            let _ = writeln!(
                text,
                "{t:.9e},{dt:e},{i},{:.6e},{:.6e},1.0,{:.6e},{:.6e}",
                0.5 * (1.0 + c),
                0.5 * (1.0 - c),
                1e-3 * s,
                0.2 * c
            );
            i += 1;
        }
        let mut batch = Batch::default();
        pipeline.feed(
            text.as_bytes(),
            Some(start.elapsed().as_secs_f64()),
            &mut batch,
        );
        batch.status = Some(pipeline.status().clone());
        state.update(Msg::Data(Box::new(batch)));
        text.clear();
        if i == rows / 100 {
            before = peak_rss_kib().unwrap_or(0);
        }
    }
    let mut batch = Batch::default();
    pipeline.finish(&mut batch);
    state.update(Msg::Data(Box::new(batch)));
    let peak = peak_rss_kib().unwrap_or(0);
    println!(
        "memory: {rows} rows through reader, detectors and dashboard state in {:.1} s",
        start.elapsed().as_secs_f64()
    );
    println!(
        "memory: peak RSS {:.1} MB (after 1 % of the rows: {:.1} MB); target ≤ 100 MB",
        peak as f64 / 1024.0,
        before as f64 / 1024.0
    );
    println!(
        "memory: rows in state {}, events {}, envelope buckets bounded at {}",
        state.rows,
        state.events.len(),
        rhoscope::history::DEFAULT_ENVELOPE_BUCKETS
    );
}
