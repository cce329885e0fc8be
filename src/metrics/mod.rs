//! The state of every followed run in the Prometheus text exposition format
//! (version 0.0.4), for cluster monitoring: [`render`] builds the text from
//! fleet rows (pure), [`crate::outfile::write_atomic`] puts it in a file for the
//! node exporter's textfile collector, [`serve`] answers HTTP scrapes on a loopback
//! address. Names follow the format's conventions: one `# HELP` and one
//! `# TYPE` line per metric family, base units in names (`_seconds`,
//! `_bytes`, `_ratio`), `_total` on counters; every run is told apart by its
//! `run` label.

pub mod request;
pub mod serve;

use std::fmt::Write as _;

use crate::fleet::RunRow;

/// What the exposition needs besides the rows.
#[derive(Debug, Clone, Copy)]
pub struct Context {
    /// Monotonic seconds now (the rows' clock), for ages and forecasts.
    pub now_s: f64,
    /// Seconds without output after which a run counts as stalled.
    pub stall_after_s: f64,
    /// Simulated end time, for progress.
    pub end_time_s: Option<f64>,
}

/// Escape a label value: backslash, double quote and line feed.
pub fn escape_label(value: &str) -> String {
    let mut s = String::with_capacity(value.len());
    for c in value.chars() {
        match c {
            '\\' => s.push_str("\\\\"),
            '"' => s.push_str("\\\""),
            '\n' => s.push_str("\\n"),
            c => s.push(c),
        }
    }
    s
}

/// A sample value as the format writes it (`NaN`, `+Inf`, `-Inf` spelled out).
pub fn value(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        if v > 0.0 {
            "+Inf".into()
        } else {
            "-Inf".into()
        }
    } else {
        format!("{v}")
    }
}

type Getter = fn(&RunRow, &Context) -> Option<f64>;

struct Family {
    name: &'static str,
    kind: &'static str,
    help: &'static str,
    get: Getter,
}

fn families() -> [Family; 13] {
    [
        Family {
            name: "rhoscope_run_state",
            kind: "gauge",
            help: "State of the run as a monitoring-plugin code: 0 healthy, 1 warning, 2 critical, 3 unknown (waiting, stalled or unreadable).",
            get: |r, c| Some(f64::from(r.state(c.now_s, c.stall_after_s).plugin_code())),
        },
        Family {
            name: "rhoscope_run_stalled",
            kind: "gauge",
            help: "1 when the run's history has not grown for longer than the stall limit or has vanished, else 0.",
            get: |r, c| {
                Some(if r.stalled(c.now_s, c.stall_after_s) {
                    1.0
                } else {
                    0.0
                })
            },
        },
        Family {
            name: "rhoscope_run_rows_total",
            kind: "counter",
            help: "Data rows read from the run's history.",
            get: |r, _| Some(r.rows_total as f64),
        },
        Family {
            name: "rhoscope_run_skipped_lines_total",
            kind: "counter",
            help: "Lines of the run's history that could not be read as rows.",
            get: |r, _| Some(r.skipped_total as f64),
        },
        Family {
            name: "rhoscope_run_read_bytes_total",
            kind: "counter",
            help: "Bytes read from the run's history.",
            get: |r, _| Some(r.read_bytes_total as f64),
        },
        Family {
            name: "rhoscope_run_restarts_total",
            kind: "counter",
            help: "New segments of the run's history: truncation, replacement, a new header or time going back.",
            get: |r, _| Some(r.restarts_total as f64),
        },
        Family {
            name: "rhoscope_run_simulated_time_seconds",
            kind: "gauge",
            help: "Latest simulated time written by the run.",
            get: |r, _| r.sim_time_s,
        },
        Family {
            name: "rhoscope_run_progress_ratio",
            kind: "gauge",
            help: "Simulated time reached as a fraction of the end time.",
            get: |r, c| r.progress(c.end_time_s),
        },
        Family {
            name: "rhoscope_run_growth_per_step_ratio",
            kind: "gauge",
            help: "Estimated amplification per solver step (spectral radius of the fitted one-step map); above 1 errors grow. That of a growing mode the detectors confirmed, else the latest fit's when it shows no growth; absent while a fit claims a growth the checks did not confirm.",
            get: |r, _| r.growth_per_step(),
        },
        Family {
            name: "rhoscope_run_overflow_forecast_seconds",
            kind: "gauge",
            help: "Wall-clock seconds until the growing mode is forecast to overflow, when one is growing; NaN while its wall-clock pace is unknown (rows read from a backlog); absent once the run has blown up.",
            get: |r, c| {
                r.forecast_left_s(c.now_s)
                    .or(r.readouts.evidence.forecast_steps.map(|_| f64::NAN))
            },
        },
        Family {
            name: "rhoscope_run_overflow_forecast_steps",
            kind: "gauge",
            help: "Solver steps until the growing mode is forecast to overflow, when one is growing (absent once the run has blown up).",
            get: |r, _| r.readouts.evidence.forecast_steps,
        },
        Family {
            name: "rhoscope_run_last_output_age_seconds",
            kind: "gauge",
            help: "Seconds since new output was last read from the run's history.",
            get: |r, c| r.age_s(c.now_s),
        },
        Family {
            name: "rhoscope_run_alarms_total",
            kind: "counter",
            help: "Alarms raised on the run, by level.",
            get: |_, _| None,
        },
    ]
}

/// The exposition text for `rows`. Runs without a value for a metric (no time
/// column, no estimate yet) are left out of that metric rather than given a
/// made-up number.
pub fn render(rows: &[&RunRow], ctx: &Context) -> String {
    let mut out = String::with_capacity(256 + rows.len() * 900);
    let labels: Vec<String> = rows
        .iter()
        .map(|r| format!("run=\"{}\"", escape_label(&r.name)))
        .collect();
    let _ = writeln!(
        out,
        "# HELP rhoscope_runs Runs followed by this rhoscope process.\n# TYPE rhoscope_runs gauge\nrhoscope_runs {}",
        rows.len()
    );
    for fam in families() {
        let _ = writeln!(out, "# HELP {} {}", fam.name, fam.help);
        let _ = writeln!(out, "# TYPE {} {}", fam.name, fam.kind);
        if fam.name == "rhoscope_run_alarms_total" {
            for (r, l) in rows.iter().zip(&labels) {
                let _ = writeln!(
                    out,
                    "{}{{{l},level=\"warning\"}} {}",
                    fam.name, r.warnings_total
                );
                let _ = writeln!(
                    out,
                    "{}{{{l},level=\"critical\"}} {}",
                    fam.name, r.criticals_total
                );
            }
            continue;
        }
        for (r, l) in rows.iter().zip(&labels) {
            if let Some(v) = (fam.get)(r, ctx) {
                let _ = writeln!(out, "{}{{{l}}} {}", fam.name, value(v));
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::alarm::Alarm;
    use crate::finding::Level;
    use crate::pipeline::sink::Sink;
    use std::collections::HashSet;
    use std::path::PathBuf;

    fn ctx() -> Context {
        Context {
            now_s: 10.0,
            stall_after_s: 60.0,
            end_time_s: Some(2.0),
        }
    }

    fn rows() -> Vec<RunRow> {
        let mut a = RunRow::new("beam \"7\"\\x\nz".into(), PathBuf::from("a"));
        a.arriving(4.0, 100);
        a.rows_total = 12;
        a.sim_time_s = Some(0.5);
        a.alarm(&Alarm {
            level: Level::Critical,
            detector: "growth",
            line: 9,
            time: None,
            message: "m".into(),
            evidence: Default::default(),
        });
        let b = RunRow::new("waiting".into(), PathBuf::from("b"));
        vec![a, b]
    }

    // The text exposition format's rules as published with the format
    // ("Exposition formats", text-based format, version 0.0.4): each line is a
    // comment (`# HELP name text` / `# TYPE name kind`) or
    // `name{label="value",...} number`; HELP and TYPE at most once per family,
    // TYPE before its samples; label values escape \, " and line feed.
    #[test]
    fn every_family_has_one_help_and_type_before_its_samples() {
        let rs = rows();
        let refs: Vec<&RunRow> = rs.iter().collect();
        let text = render(&refs, &ctx());
        let mut helped = HashSet::new();
        let mut typed = HashSet::new();
        for line in text.lines() {
            if let Some(rest) = line.strip_prefix("# HELP ") {
                let name = rest.split(' ').next().unwrap();
                assert!(helped.insert(name.to_string()), "HELP twice: {name}");
            } else if let Some(rest) = line.strip_prefix("# TYPE ") {
                let mut it = rest.split(' ');
                let name = it.next().unwrap();
                let kind = it.next().unwrap();
                assert!(["gauge", "counter"].contains(&kind));
                assert_eq!(kind == "counter", name.ends_with("_total"), "{name}");
                assert!(typed.insert(name.to_string()), "TYPE twice: {name}");
            } else {
                let name = line.split(['{', ' ']).next().unwrap();
                assert!(typed.contains(name), "sample before its TYPE: {line}");
                let v = line.rsplit(' ').next().unwrap();
                assert!(
                    v.parse::<f64>().is_ok() || ["NaN", "+Inf", "-Inf"].contains(&v),
                    "{line}"
                );
                assert!(
                    name.bytes()
                        .all(|b| b.is_ascii_alphanumeric() || b == b'_' || b == b':')
                );
            }
        }
        assert_eq!(helped, typed);
        assert!(text.ends_with('\n'));
    }

    #[test]
    fn values_and_labels_are_written_as_the_format_wants() {
        let rs = rows();
        let refs: Vec<&RunRow> = rs.iter().collect();
        let text = render(&refs, &ctx());
        let l = r#"run="beam \"7\"\\x\nz""#;
        assert!(text.contains(&format!("rhoscope_run_state{{{l}}} 2\n")));
        assert!(text.contains(&format!("rhoscope_run_progress_ratio{{{l}}} 0.25\n")));
        assert!(text.contains(&format!("rhoscope_run_last_output_age_seconds{{{l}}} 6\n")));
        assert!(text.contains(&format!(
            "rhoscope_run_alarms_total{{{l},level=\"critical\"}} 1\n"
        )));
        assert!(text.contains("rhoscope_run_state{run=\"waiting\"} 3\n"));
        assert!(
            !text.contains("rhoscope_run_simulated_time_seconds{run=\"waiting\"}"),
            "no made-up value for a run without a time"
        );
        assert!(text.contains("rhoscope_runs 2\n"));
        assert_eq!(value(f64::INFINITY), "+Inf");
        assert_eq!(value(f64::NEG_INFINITY), "-Inf");
        assert_eq!(value(f64::NAN), "NaN");
        assert_eq!(value(1e-300).parse::<f64>().unwrap(), 1e-300);
    }

    #[test]
    fn a_forecast_without_a_pace_reads_unknown_not_zero() {
        let mut r = RunRow::new("r".into(), PathBuf::from("r"));
        r.arriving(4.0, 100);
        // From a backlog: steps known, the wall-clock pace not.
        // A confirmed growing mode: the readouts forecast only for one.
        let status = |evidence: crate::finding::Evidence| crate::detect::Status {
            growth_confirmed: evidence.growth_per_step.is_some(),
            evidence,
            ..Default::default()
        };
        r.take_status(&status(crate::finding::Evidence {
            growth_per_step: Some(1.05),
            forecast_steps: Some(625.0),
            ..Default::default()
        }));
        let text = render(&[&r], &ctx());
        assert!(text.contains("rhoscope_run_overflow_forecast_seconds{run=\"r\"} NaN\n"));
        assert!(text.contains("rhoscope_run_overflow_forecast_steps{run=\"r\"} 625\n"));
        // Live: 30 s forecast at t = 4 s reads 24 s at t = 10 s.
        r.take_status(&status(crate::finding::Evidence {
            growth_per_step: Some(1.05),
            forecast_steps: Some(625.0),
            forecast_wall_s: Some(30.0),
            ..Default::default()
        }));
        let text = render(&[&r], &ctx());
        assert!(text.contains("rhoscope_run_overflow_forecast_seconds{run=\"r\"} 24\n"));
        // No growing mode: no sample at all.
        r.take_status(&status(crate::finding::Evidence::default()));
        let text = render(&[&r], &ctx());
        assert!(!text.contains("rhoscope_run_overflow_forecast_seconds{"));
        assert!(!text.contains("rhoscope_run_overflow_forecast_steps{"));
    }
}
