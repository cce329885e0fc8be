//! Cost of the report image: `scan` alone against `scan --plot` (the same single
//! pass plus envelopes, status sampling and drawing), on an invented history of
//! damped oscillations written to a temporary file. Prints figures; asserts
//! nothing. Rows: RHOSCOPE_BENCH_ROWS (default 2,000,000).

use std::io::Write;
use std::time::Instant;

use rhoscope::report_plot::ImageFormat;
use rhoscope::scan::{scan_and_render, scan_file};
use rhoscope::settings::Settings;

fn write_history(path: &std::path::Path, rows: usize) -> std::io::Result<u64> {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path)?);
    writeln!(
        out,
        "step,time [s],dt [s],kinetic energy [J],internal energy [J],external work [J],probe a [m],probe b [m]"
    )?;
    let dt = 1.0e-5;
    for i in 0..rows {
        let t = i as f64 * dt;
        // Two modes ringing down under a slowly rising load (invented).
        let u = 1e-3 * (-3.0 * t).exp() * (2.0 * std::f64::consts::PI * 40.0 * t).sin();
        let w = 5e-4 * (2.0 * std::f64::consts::PI * 130.0 * t).cos();
        let kin = 50.0 + 40.0 * (2.0 * std::f64::consts::PI * 80.0 * t).cos();
        let int = 100.0 - kin + 10.0 * t;
        writeln!(
            out,
            "{i},{t:.9e},{dt:.6e},{kin:.9e},{int:.9e},{:.9e},{u:.9e},{w:.9e}",
            10.0 * t
        )?;
    }
    out.flush()?;
    Ok(std::fs::metadata(path)?.len())
}

fn main() -> anyhow::Result<()> {
    let rows: usize = std::env::var("RHOSCOPE_BENCH_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(2_000_000);
    let dir = tempfile::tempdir()?;
    let path = dir.path().join("history.csv");
    let bytes = write_history(&path, rows)?;
    let settings = Settings::default();
    let mb = bytes as f64 / 1e6;

    let t0 = Instant::now();
    let report = scan_file(&path, &settings, &mut |_, _| {})?;
    let scan_s = t0.elapsed().as_secs_f64();
    println!(
        "scan            {rows} rows, {mb:.0} MB: {scan_s:.2} s ({:.0} MB/s), status {:?}",
        mb / scan_s,
        report.status
    );
    for format in [ImageFormat::Svg, ImageFormat::Png] {
        let t0 = Instant::now();
        let (_, image) = scan_and_render(&path, &settings, &mut |_, _| {}, format)?;
        let s = t0.elapsed().as_secs_f64();
        println!(
            "scan --plot {:<4}{rows} rows: {s:.2} s ({:.2}× scan alone), image {} kB",
            format!("{format:?}").to_lowercase(),
            s / scan_s,
            image.len() / 1000
        );
    }
    Ok(())
}
