//! `rhoscope scan --plot`: the report image is produced for invented histories
//! and for every sample log, as SVG and PNG; the SVG parses with a general XML
//! parser and holds the expected series and markers; the PNG decodes.

use std::path::{Path, PathBuf};

use assert_cmd::cargo::cargo_bin_cmd;

/// An invented run: a fixed-free chain of six 1 kg masses joined by 1e4 N/m
/// springs, driven at the tip by a 2 Hz force, integrated by central
/// difference. The step starts at 80 % of the stability limit and is raised to
/// 103.5 % at step 3000 (a hand-edited restart), so the highest mode grows
/// until the values overflow. Written every second step.
pub fn unstable_chain_csv() -> String {
    let (n, m, k) = (6usize, 1.0f64, 1.0e4f64);
    // Highest frequency of the fixed-free chain: 2√(k/m)·sin((2n−1)π/(2(2n+1))).
    let w_max = 2.0
        * (k / m).sqrt()
        * ((2 * n - 1) as f64 * std::f64::consts::PI / (2.0 * (2 * n + 1) as f64)).sin();
    let dt_ok = 0.8 * 2.0 / w_max;
    let dt_bad = 1.035 * 2.0 / w_max;
    let mut u = vec![0.0f64; n];
    // A tiny sign-alternating start, as round-off would leave.
    for (i, ui) in u.iter_mut().enumerate() {
        *ui = 1e-9 * if i % 2 == 0 { 1.0 } else { -1.0 };
    }
    let mut v_half = vec![0.0f64; n];
    let force = |t: f64| 50.0 * (2.0 * std::f64::consts::PI * 2.0 * t).sin();
    let stretch = |u: &[f64], i: usize| if i == 0 { u[0] } else { u[i] - u[i - 1] };
    let accel = |u: &[f64], f_tip: f64| -> Vec<f64> {
        (0..n)
            .map(|i| {
                let right = if i + 1 < n { stretch(u, i + 1) } else { 0.0 };
                let f = if i + 1 == n { f_tip } else { 0.0 };
                (k * (right - stretch(u, i)) + f) / m
            })
            .collect()
    };
    let mut out = String::from(
        "step,time [s],dt [s],kinetic energy [J],internal energy [J],external work [J],\
         tip displacement [m],mid velocity [m/s]\n",
    );
    let (mut t, mut work) = (0.0f64, 0.0f64);
    for step in 0..20_000u32 {
        let dt = if step < 3000 { dt_ok } else { dt_bad };
        let a = accel(&u, force(t));
        let v_prev = v_half.clone();
        for i in 0..n {
            v_half[i] += dt * a[i];
        }
        // State at t: velocity as the mean of the half steps around it.
        let v_now: Vec<f64> = (0..n).map(|i| 0.5 * (v_prev[i] + v_half[i])).collect();
        let kinetic: f64 = v_now.iter().map(|v| 0.5 * m * v * v).sum();
        let internal: f64 = (0..n).map(|i| 0.5 * k * stretch(&u, i).powi(2)).sum();
        let blown = !(kinetic.is_finite() && internal.is_finite());
        if step % 2 == 0 || blown {
            out.push_str(&format!(
                "{step},{t:.9e},{dt:.6e},{kinetic:.9e},{internal:.9e},{work:.9e},{:.9e},{:.9e}\n",
                u[n - 1],
                v_now[n / 2]
            ));
        }
        if blown {
            break;
        }
        // Trapezoidal external work of the tip force over the step.
        let u_tip = u[n - 1];
        for i in 0..n {
            u[i] += dt * v_half[i];
        }
        work += 0.5 * (force(t) + force(t + dt)) * (u[n - 1] - u_tip);
        t += dt;
    }
    out
}

fn scan_with_plot(history: &Path, image: &Path) -> std::process::Output {
    cargo_bin_cmd!("rhoscope")
        .arg("scan")
        .arg(history)
        .arg("--plot")
        .arg(image)
        .output()
        .unwrap()
}

/// Every text element of an SVG document, parsed with a general XML parser.
fn svg_texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).unwrap();
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    doc.descendants()
        .filter(|n| n.tag_name().name() == "text")
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

fn polyline_count(svg: &str) -> usize {
    let doc = roxmltree::Document::parse(svg).unwrap();
    doc.descendants()
        .filter(|n| n.tag_name().name() == "polyline")
        .count()
}

#[test]
fn unstable_run_image_shows_series_and_markers() {
    let dir = tempfile::tempdir().unwrap();
    let history = dir.path().join("chain.csv");
    std::fs::write(&history, unstable_chain_csv()).unwrap();
    let svg_path = dir.path().join("report.svg");
    let out = scan_with_plot(&history, &svg_path);
    assert_eq!(
        out.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    let texts = svg_texts(&svg);
    let has = |s: &str| texts.iter().any(|t| t.contains(s));
    for series in [
        "kinetic energy",
        "internal energy",
        "external work",
        "tip displacement",
        "mid velocity",
        "time step Δt",
    ] {
        assert!(has(series), "no legend entry '{series}' in {texts:?}");
    }
    for panel in [
        "Energies",
        "Energy-balance error",
        "Time step",
        "Growth per solver step",
        "Probes",
    ] {
        assert!(has(panel), "no panel '{panel}'");
    }
    assert!(has("ρ = 1"), "growth panel lacks the ρ = 1 guide");
    assert!(has("CRITICAL"), "verdict missing");
    assert!(has("first NaN/Inf"), "crash marker missing");
    assert!(
        texts.iter().any(|t| t.starts_with("C1 ")),
        "no labelled critical alarm in {texts:?}"
    );
    assert!(has("time [s]"), "x axis lacks its unit");
    assert!(polyline_count(&svg) >= 6, "series lines missing");

    let png_path = dir.path().join("report.png");
    let out = scan_with_plot(&history, &png_path);
    assert_eq!(out.status.code(), Some(2));
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(&png_path).unwrap(),
    ));
    let reader = decoder.read_info().unwrap();
    let info = reader.info();
    assert_eq!((info.width, info.height), rhoscope::report_plot::PAGE_PX);
}

#[test]
fn bad_image_name_is_a_usage_error_and_reads_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let history = dir.path().join("chain.csv");
    std::fs::write(&history, "time,kinetic energy\n0,1\n").unwrap();
    let out = scan_with_plot(&history, &dir.path().join("report.jpeg"));
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains(".svg or .png"));
}

fn sample_logs() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-logs");
    let mut logs: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|d| {
            d.filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_none_or(|e| e != "md"))
                // The catalogue of expected labels is not a history.
                .filter(|p| p.file_stem().is_none_or(|s| s != "labels"))
                .filter(|p| p.is_file())
                .collect()
        })
        .unwrap_or_default();
    logs.sort();
    logs
}

#[test]
fn every_sample_log_gets_an_image() {
    let dir = tempfile::tempdir().unwrap();
    let logs = sample_logs();
    assert!(!logs.is_empty(), "no sample logs found");
    for log in logs {
        let stem = log.file_stem().unwrap().to_string_lossy().to_string();
        for ext in ["svg", "png"] {
            let image = dir.path().join(format!("{stem}.{ext}"));
            let out = scan_with_plot(&log, &image);
            assert!(
                matches!(out.status.code(), Some(0..=2)),
                "{}: {}",
                log.display(),
                String::from_utf8_lossy(&out.stderr)
            );
            let bytes = std::fs::read(&image).unwrap();
            if ext == "svg" {
                let texts = svg_texts(std::str::from_utf8(&bytes).unwrap());
                assert!(
                    texts.iter().any(|t| t.contains("Energies")),
                    "{}",
                    log.display()
                );
                // The badge states the same verdict as the exit code (0 ok, 1 warning, 2 critical).
                let verdict = match out.status.code() {
                    Some(0) => "OK",
                    Some(1) => "WARNING",
                    _ => "CRITICAL",
                };
                assert!(
                    texts.iter().any(|t| t == verdict),
                    "{}: no '{verdict}' badge in {texts:?}",
                    log.display()
                );
                // A critical verdict comes with at least one labelled critical alarm marker.
                if out.status.code() == Some(2) {
                    assert!(
                        texts.iter().any(|t| t.starts_with("C1")),
                        "{}: no critical alarm marker in {texts:?}",
                        log.display()
                    );
                }
            } else {
                assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{}", log.display());
            }
        }
    }
}
