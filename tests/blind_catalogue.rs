//! The blind catalogue (src/blind/, docs/blind-catalogue.md): every label
//! follows from its own run and file, every case is what the spec intends,
//! the set covers the spec's classes, and the frozen files are unchanged.

use std::sync::OnceLock;

use rhoscope::blind::label::{self, DRIFT_SHARE, RUNAWAY_MULTIPLE};
use rhoscope::blind::trace::Role;
use rhoscope::blind::write::{self, Delim};
use rhoscope::blind::{self, Case, Class, Layout, Trace, Verdict};
use sha2::{Digest, Sha256};

/// A case with the record and layout it was written from.
struct Built {
    case: Case,
    trace: Trace,
    layout: Layout,
}

/// Every case, run once for all the tests here: the same steps as
/// `blind::generate` (checked against it in `generation_is_deterministic`),
/// keeping the run's record for the checks that read the file back.
fn built() -> &'static [Built] {
    static BUILT: OnceLock<Vec<Built>> = OnceLock::new();
    BUILT.get_or_init(|| {
        blind::specs()
            .iter()
            .map(|spec| {
                let (trace, layout) = (spec.build)();
                let written = write::write(&trace, &layout);
                let case = Case {
                    name: spec.name,
                    class: spec.class,
                    intent: spec.intent,
                    label: label::label(&trace, &written),
                    measures: label::measure(&trace, &written),
                    rows: written.row_lines.len(),
                    extension: match layout.delim {
                        Delim::Comma => "csv",
                        Delim::Tab => "tsv",
                        Delim::Jsonl => "jsonl",
                        _ => "txt",
                    },
                    bytes: written.bytes,
                };
                Built {
                    case,
                    trace,
                    layout,
                }
            })
            .collect()
    })
}

fn cases() -> &'static [Case] {
    static CASES: OnceLock<Vec<Case>> = OnceLock::new();
    CASES.get_or_init(|| built().iter().map(|b| b.case.clone()).collect())
}

/// A field is bad as written: NaN or infinity in any spelling, asterisks,
/// or a number of magnitude ≥ 1e300 (C, Fortran `D`, letterless exponents).
fn bad_field(tok: &str) -> bool {
    let t = tok.trim_matches(|c| c == '"' || c == '{' || c == '}');
    let lower = t.to_ascii_lowercase();
    let lower = lower.trim_start_matches(['-', '+']);
    if matches!(lower, "nan" | "inf" | "infinity") || (!t.is_empty() && t.chars().all(|c| c == '*'))
    {
        return true;
    }
    number(t).is_some_and(|v| v.abs() >= 1e300)
}

fn number(t: &str) -> Option<f64> {
    let t = t.replace(['D', 'd'], "E");
    if let Ok(v) = t.parse::<f64>() {
        return Some(v);
    }
    // Fortran exponent without the letter: 0.1234+105.
    let cut = t.rfind(['+', '-']).filter(|&i| i > 0)?;
    let (m, e) = t.split_at(cut);
    Some(m.parse::<f64>().ok()? * 10f64.powi(e.parse::<i32>().ok()?))
}

fn tokens(line: &str) -> Vec<&str> {
    line.split(|c: char| c.is_whitespace() || c == ',' || c == ';' || c == ':')
        .filter(|t| !t.is_empty())
        .collect()
}

fn is_data(line: &str) -> bool {
    let toks = tokens(line);
    if line.trim_start().starts_with('{') {
        return toks.iter().skip(1).step_by(2).all(|t| {
            let t = t.trim_end_matches('}');
            number(t).is_some() || bad_field(t)
        });
    }
    !toks.is_empty() && toks.iter().all(|t| number(t).is_some() || bad_field(t))
}

/// The first line a reader of the file alone would call a crash: a data row
/// with a bad field, or a solver's error line.
fn first_crash_in_file(bytes: &[u8]) -> Option<u64> {
    let text = String::from_utf8_lossy(bytes);
    for (i, line) in text.lines().enumerate() {
        let l = line.trim_start();
        if l.starts_with("ERROR") || l.starts_with("***") {
            return Some(i as u64 + 1);
        }
        if is_data(line) && tokens(line).iter().any(|t| bad_field(t)) {
            return Some(i as u64 + 1);
        }
    }
    None
}

fn line(bytes: &[u8], n: u64) -> String {
    String::from_utf8_lossy(bytes)
        .lines()
        .nth(n as usize - 1)
        .unwrap_or_default()
        .to_string()
}

#[test]
fn every_label_agrees_with_the_spec_intent() {
    let wrong: Vec<String> = cases()
        .iter()
        .filter(|c| c.label.level != c.intent)
        .map(|c| {
            format!(
                "{}: intended {}, run says {:?}",
                c.name,
                c.intent.word(),
                c.label
            )
        })
        .collect();
    assert!(wrong.is_empty(), "{wrong:#?}");
}

#[test]
fn crash_lines_are_where_the_file_shows_the_crash() {
    for c in cases() {
        let in_file = first_crash_in_file(&c.bytes);
        match c.label.crash_line {
            None => assert_eq!(in_file, None, "{}: a healthy file with a crash", c.name),
            Some(crash) if c.measures.runaway_row.is_some() => {
                // A finite runaway: the crash is the row where the energy
                // error passed 100× the first kinetic energy, read back here.
                assert!(is_data(&line(&c.bytes, crash)), "{}", c.name);
                assert!(in_file.is_none_or(|f| f >= crash), "{}", c.name);
            }
            Some(crash) => assert_eq!(in_file, Some(crash), "{}", c.name),
        }
    }
}

#[test]
fn onsets_are_data_rows_before_the_crash() {
    for c in cases() {
        let l = c.label;
        match l.level {
            Verdict::Ok => assert_eq!((l.onset_line, l.crash_line), (None, None), "{}", c.name),
            Verdict::Warning => {
                let on = l.onset_line.unwrap();
                assert!(is_data(&line(&c.bytes, on)), "{}", c.name);
                assert_eq!(l.crash_line, None, "{}", c.name);
            }
            Verdict::Critical => {
                let (on, crash) = (l.onset_line.unwrap(), l.crash_line.unwrap());
                assert!(
                    on < crash,
                    "{}: onset {on} not before crash {crash}",
                    c.name
                );
                assert!(is_data(&line(&c.bytes, on)), "{}: line {on}", c.name);
            }
        }
    }
}

#[test]
fn healthy_cases_keep_a_margin_and_drifts_drift_clearly() {
    // The label rule draws the line at 5 % of the energy scale; the spec asks
    // healthy runs to stay under 2 % and drifting ones to pass 10 %.
    for c in cases() {
        let d = c.measures.max_drift;
        match c.label.level {
            Verdict::Ok => assert!(d < 0.02, "{}: drift {d}", c.name),
            Verdict::Warning => assert!(d > 0.10, "{}: drift {d}", c.name),
            Verdict::Critical => {}
        }
    }
}

#[test]
fn step_cuts_recover_and_the_collapse_does_not() {
    for c in cases().iter().filter(|c| c.class == Class::StepCut) {
        let m = c.measures;
        if c.label.level == Verdict::Ok {
            assert!(
                m.step_ratio <= 1e-2,
                "{}: deepest cut {}",
                c.name,
                m.step_ratio
            );
            assert!(m.collapse_row.is_none(), "{}", c.name);
        } else {
            assert!(
                m.step_ratio <= 1e-5 && m.collapse_row.is_some(),
                "{}",
                c.name
            );
        }
    }
    let rk = cases()
        .iter()
        .find(|c| c.name == "cut-contact-rk-adaptive")
        .unwrap();
    assert!(
        (1e-4..=1e-3).contains(&rk.measures.step_ratio),
        "{}",
        rk.measures.step_ratio
    );
}

#[test]
fn short_spans_crash_within_fifty_rows_of_their_onset() {
    for c in cases()
        .iter()
        .filter(|c| c.class == Class::ShortSpan && c.label.level == Verdict::Critical)
    {
        let (on, crash) = (c.label.onset_line.unwrap(), c.label.crash_line.unwrap());
        let rows = String::from_utf8_lossy(&c.bytes)
            .lines()
            .skip(on as usize - 1)
            .take((crash - on) as usize)
            .filter(|l| is_data(l))
            .count();
        assert!((12..=50).contains(&rows), "{}: {rows} rows", c.name);
    }
}

#[test]
fn the_set_covers_the_spec() {
    let all = cases();
    assert!((40..=60).contains(&all.len()), "{} cases", all.len());
    let calm = all
        .iter()
        .filter(|c| c.label.level != Verdict::Critical)
        .count();
    let share = calm as f64 / all.len() as f64;
    assert!(
        (0.4..=0.65).contains(&share),
        "healthy or drifting: {share}"
    );
    for class in [
        Class::EnergyNames,
        Class::StepCut,
        Class::ViolentPhysical,
        Class::BuriedMode,
        Class::Headerless,
        Class::FiniteRunaway,
        Class::ShortSpan,
        Class::GradualOnset,
        Class::Drift,
    ] {
        let n = all.iter().filter(|c| c.class == class).count();
        assert!(n >= 3, "{}: {n} cases", class.word());
    }
    for c in all {
        assert!(
            c.rows <= 6000 && c.bytes.len() <= 1 << 20,
            "{}: {} rows",
            c.name,
            c.rows
        );
    }
    let mut names: Vec<&str> = all.iter().map(|c| c.name).collect();
    names.sort_unstable();
    names.dedup();
    assert_eq!(names.len(), all.len(), "duplicate case names");
}

#[test]
fn generation_is_deterministic() {
    for name in ["names-fast-mode", "headerless-every3-blowup"] {
        let again = blind::case(name).unwrap();
        let first = cases().iter().find(|c| c.name == name).unwrap();
        assert_eq!(again.bytes, first.bytes, "{name}");
        assert_eq!(again.label, first.label, "{name}");
        assert_eq!(again.measures, first.measures, "{name}");
        assert_eq!(
            (again.rows, again.extension),
            (first.rows, first.extension),
            "{name}"
        );
    }
}

/// The fields of a line as the layout wrote them, if it is a data row of
/// `n` columns (every field a number or a bad field).
fn fields(line: &str, layout: &Layout, n: usize) -> Option<Vec<String>> {
    let parts: Vec<String> = match layout.delim {
        Delim::Comma => line.split(',').map(str::to_string).collect(),
        Delim::Semicolon => line.split(';').map(str::to_string).collect(),
        Delim::Tab => line.split('\t').map(str::to_string).collect(),
        Delim::Spaces => line.split_whitespace().map(str::to_string).collect(),
        Delim::Fixed => {
            let w = layout.width;
            if w == 0 || line.len() != n * w || !line.is_ascii() {
                return None;
            }
            (0..n)
                .map(|i| line[i * w..(i + 1) * w].to_string())
                .collect()
        }
        Delim::Jsonl => line
            .trim()
            .strip_prefix('{')?
            .strip_suffix('}')?
            .split(", ")
            .map(|kv| kv.split_once(": ").map(|(_, v)| v.to_string()))
            .collect::<Option<Vec<_>>>()?,
    };
    let parts: Vec<String> = parts.iter().map(|p| p.trim().to_string()).collect();
    let ok = parts.len() == n && parts.iter().all(|p| number(p).is_some() || bad_field(p));
    ok.then_some(parts)
}

#[test]
fn balance_labels_follow_from_the_numbers_in_the_file() {
    // The drift and runaway parts of the label rule (docs/blind-catalogue.md,
    // rules 1 and 4) recomputed from the numbers as printed, on the lines
    // where they are printed: the labels do not hang on digits the file does
    // not carry, and name the right lines.
    let mut checked = 0;
    for b in built() {
        let (c, trace) = (&b.case, &b.trace);
        let n = trace.columns.len();
        let text = String::from_utf8_lossy(&c.bytes);
        let data: Vec<(u64, Vec<String>)> = text
            .lines()
            .enumerate()
            .filter_map(|(i, l)| fields(l, &b.layout, n).map(|f| (i as u64 + 1, f)))
            .collect();
        assert_eq!(data.len(), c.rows, "{}: data rows read back", c.name);
        let roles: Vec<Role> = trace.columns.iter().map(|col| col.role).collect();
        let sign = |r: Role| match r {
            Role::Kinetic | Role::Internal | Role::Dissipated => Some(1.0),
            Role::External => Some(-1.0),
            _ => None,
        };
        if !roles.iter().any(|&r| sign(r).is_some()) {
            continue;
        }
        let good = data
            .iter()
            .position(|(_, f)| f.iter().any(|t| bad_field(t)))
            .unwrap_or(data.len());
        let value = |i: usize, j: usize| number(&data[i].1[j]).unwrap();
        let thermo: Vec<f64> = trace.rows().map(|r| r.thermostat_work).collect();
        let balance = |i: usize| {
            let mut sum = 0.0;
            for (j, &r) in roles.iter().enumerate() {
                sum += sign(r).map_or(0.0, |s| s * value(i, j));
            }
            if trace.thermostat {
                sum - thermo[i]
            } else {
                sum
            }
        };
        let mut scale: f64 = 0.0;
        for (j, &r) in roles.iter().enumerate() {
            if sign(r).is_none() || good == 0 {
                continue;
            }
            let col: Vec<f64> = (0..good).map(|i| value(i, j)).collect();
            let (lo, hi) = col
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
                    (lo.min(v), hi.max(v))
                });
            scale = scale.max(hi - lo);
            if r == Role::Kinetic {
                scale = scale.max(hi);
            }
        }
        if good == 0 || scale <= 0.0 {
            continue;
        }
        checked += 1;
        let e: Vec<f64> = (0..good).map(|i| balance(i) - balance(0)).collect();
        let drift = e.iter().fold(0.0f64, |m, v| m.max(v.abs())) / scale;
        assert!(
            (drift - c.measures.max_drift).abs() <= 1e-3 * c.measures.max_drift.max(1e-2),
            "{}: drift {drift} from the file, {} from the run",
            c.name,
            c.measures.max_drift
        );
        let first_drift = e
            .iter()
            .position(|v| v.abs() > DRIFT_SHARE * scale)
            .map(|i| data[i].0);
        match c.label.level {
            Verdict::Ok => assert!(drift < 0.02, "{}: drift {drift}", c.name),
            Verdict::Warning => assert_eq!(first_drift, c.label.onset_line, "{}", c.name),
            Verdict::Critical => {
                let ke0: f64 = (0..n)
                    .filter(|&j| roles[j] == Role::Kinetic)
                    .map(|j| value(0, j))
                    .sum();
                if c.measures.runaway_row.is_some() && !trace.thermostat {
                    let runaway = e
                        .iter()
                        .position(|&v| v > RUNAWAY_MULTIPLE * ke0)
                        .map(|i| data[i].0);
                    assert_eq!(
                        runaway.map(|l| l.min(c.label.crash_line.unwrap())),
                        c.label.crash_line,
                        "{}: the runaway read from the file",
                        c.name
                    );
                }
            }
        }
    }
    // Every case that writes energies is checked (35 of the 50 at the freeze).
    assert!(checked >= 30, "only {checked} cases write energies");
}

#[test]
fn the_frozen_files_are_unchanged() {
    let root = env!("CARGO_MANIFEST_DIR");
    let spec = std::fs::read_to_string(format!("{root}/docs/blind-catalogue.md")).unwrap();
    let listed: Vec<(String, String)> = spec
        .lines()
        .filter_map(|l| {
            let (hash, path) = l.trim().split_once("  ")?;
            let ok = hash.len() == 64
                && hash.chars().all(|c| c.is_ascii_hexdigit())
                && path.starts_with("src/blind/");
            ok.then(|| (hash.to_string(), path.to_string()))
        })
        .collect();
    assert!(listed.len() >= 10, "{} frozen files listed", listed.len());
    for (hash, path) in &listed {
        let bytes = std::fs::read(format!("{root}/{path}")).unwrap();
        let got = format!("{:x}", Sha256::digest(&bytes));
        assert_eq!(
            &got, hash,
            "{path} changed after the freeze: add cases in new files"
        );
    }
    // Every file of the module is listed (frozen, or an addition).
    for entry in std::fs::read_dir(format!("{root}/src/blind")).unwrap() {
        let name = entry.unwrap().file_name().into_string().unwrap();
        let path = format!("src/blind/{name}");
        assert!(
            listed.iter().any(|(_, p)| *p == path),
            "{path} is not listed in the spec"
        );
    }
}
