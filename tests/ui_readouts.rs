//! The readouts agree with the alarms, on real runs of the demo's simulations
//! (their own labels say what each run is): runs that lose energy and stay
//! stable never show a growth per step above 1 — on the dashboard, in the
//! many-run table or in the metrics — and a run whose growth the detectors
//! alarm on shows it confirmed, at the alarm's level, until it blows up, after
//! which no forecast is shown. With the scheme known, a growth alarm says
//! the largest stable step for its mode, checked against the closed form of
//! central difference.

use rhoscope::alarm::Alarm;
use rhoscope::app::{AppState, Batch, Config, Msg};
use rhoscope::finding::Level;
use rhoscope::fleet::RunRow;
use rhoscope::metrics::{Context, render};
use rhoscope::pipeline::Pipeline;
use rhoscope::pipeline::sink::Sink;
use rhoscope::readout::{NEAR_ONE_PER_STEP, Standing};
use rhoscope::settings::Settings;

/// Bytes handed to the pipeline at a time, as the dashboard's data thread
/// does with a file that grows (a few dozen rows per slice).
const SLICE: usize = 2_000;

/// The demo case's history.
fn history(case: &str) -> Vec<u8> {
    let mut out = Vec::new();
    rhoscope::demo::find(case)
        .unwrap_or_else(|| panic!("no demo case {case}"))
        .write(&mut out)
        .unwrap();
    out
}

/// What the dashboard and a fleet row read of `case` after every slice: the
/// dashboard's state is handed each slice's batch, as its data thread does.
fn follow(case: &str, mut each: impl FnMut(&AppState, &RunRow, &[Alarm])) {
    let bytes = history(case);
    let mut pipeline = Pipeline::new(&Settings::default());
    let mut state = AppState::new(Config::default());
    let mut row = RunRow::new(case.into(), case.into());
    for slice in bytes.chunks(SLICE) {
        let mut b = Batch::default();
        pipeline.feed(slice, None, &mut b);
        for item in &b.items {
            if let rhoscope::app::Item::Alarm(a) = item {
                row.alarm(a);
            }
        }
        b.status = Some(pipeline.status().clone());
        b.arrival_s = Some(0.0);
        row.take_status(pipeline.status());
        let alarms: Vec<Alarm> = b
            .items
            .iter()
            .filter_map(|i| match i {
                rhoscope::app::Item::Alarm(a) => Some(a.clone()),
                _ => None,
            })
            .collect();
        state.update(Msg::Data(Box::new(b)));
        each(&state, &row, &alarms);
    }
}

fn metrics_of(row: &RunRow) -> String {
    render(
        &[row],
        &Context {
            now_s: 0.0,
            stall_after_s: 600.0,
            end_time_s: None,
        },
    )
}

#[test]
fn runs_that_lose_energy_never_read_a_growth_above_one() {
    // Labelled by the demo catalogue: stable runs whose written balance loses
    // energy (an unrecorded dashpot, backward Euler's numerical damping, a
    // contact that leaks energy).
    for case in [
        "hidden-damper",
        "backward-euler-decay",
        "under-resolved-contact",
    ] {
        let mut slices = 0;
        follow(case, |s, row, _| {
            slices += 1;
            let limit = 1.0 + NEAR_ONE_PER_STEP;
            let shown = s.readouts.growth_per_step();
            assert!(
                shown.is_none_or(|r| r <= limit),
                "{case}: the dashboard reads ρ {shown:?} at line {}",
                s.last_line
            );
            assert!(
                row.growth_per_step().is_none_or(|r| r <= limit),
                "{case}: the many-run table reads {:?}",
                row.growth_per_step()
            );
            for line in metrics_of(row).lines() {
                if let Some(v) = line
                    .strip_prefix("rhoscope_run_growth_per_step_ratio{")
                    .and_then(|l| l.split_once("} "))
                {
                    let v: f64 = v.1.parse().unwrap();
                    assert!(v <= limit, "{case}: the metric reads {v}");
                }
            }
            assert_eq!(s.readouts.growth_level, Level::Ok, "{case}");
        });
        assert!(slices > 5, "{case}: too short to say anything");
    }
}

#[test]
fn an_alarmed_growth_reads_confirmed_at_the_alarms_level_and_a_blow_up_ends_the_forecast() {
    // Central difference at ω·Δt = 2.01 for the highest mode: a growth alarm,
    // then the blow-up (labelled critical by the catalogue).
    let mut alarmed = false;
    let mut blown = false;
    follow("cd-omega-2.01", |s, row, alarms| {
        if alarms
            .iter()
            .any(|a| a.detector == "growth" && a.level == Level::Critical)
        {
            alarmed = true;
        }
        if alarms
            .iter()
            .any(|a| a.detector == "nonfinite" && a.level == Level::Critical)
        {
            blown = true;
        }
        let r = &s.readouts;
        if alarmed && !blown {
            assert_eq!(r.growth, Standing::Confirmed, "line {}", s.last_line);
            assert_eq!(r.growth_level, Level::Critical, "line {}", s.last_line);
            assert!(r.growth_per_step().is_some_and(|g| g > 1.0));
        }
        if blown {
            assert!(r.blow_up.is_some() && row.readouts.blow_up.is_some());
            assert_eq!(r.evidence.forecast_steps, None);
            assert_eq!(row.forecast_left_s(0.0), None);
        }
    });
    assert!(alarmed && blown, "the case no longer alarms and blows up");
}

/// Ω = ω·Δt of an undamped central-difference mode growing by `rho` per
/// step: its characteristic equation λ² − (2 − Ω²)λ + 1 = 0 has the roots ρ
/// and 1/ρ past the limit, so Ω² = 2 + ρ + 1/ρ (Hughes, The Finite Element
/// Method, 1987, §9.1, from memory; ρ(2.01) = 1.221301 reproduced from the
/// amplification matrix).
fn cd_omega_dt(rho: f64) -> f64 {
    (2.0 + rho + 1.0 / rho).sqrt()
}

#[test]
fn a_known_scheme_gives_the_alarm_a_stable_step_in_the_message_the_json_and_on_screen() {
    // The clearance-stop chain declares "# scheme: central difference; fixed
    // step …" and writes its step in a dt column.
    for case in ["chain-stop-cd", "cd-omega-2.01"] {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("h.txt");
        std::fs::write(&file, history(case)).unwrap();
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_rhoscope"))
            .args(["scan", "--json"])
            .arg(&file)
            .output()
            .unwrap();
        let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let alarm = report["alarms"]
            .as_array()
            .unwrap()
            .iter()
            .find(|a| a["detector"] == "growth" && a["level"] == "critical")
            .unwrap_or_else(|| panic!("{case}: no growth alarm"));
        let ev = &alarm["evidence"];
        let rho = ev["growth_per_step"].as_f64().unwrap();
        let suggested = ev["suggested_dt"]["seconds"].as_f64().unwrap();
        let basis = ev["suggested_dt"]["basis"].as_str().unwrap();
        // The step the run used, from its dt column at the alarm's line.
        let text = String::from_utf8(history(case)).unwrap();
        let line = alarm["line"].as_u64().unwrap() as usize;
        let dt: f64 = text
            .lines()
            .nth(line - 1)
            .unwrap()
            .split(|c: char| c == ',' || c.is_whitespace())
            .filter(|f| !f.is_empty())
            .nth(1)
            .unwrap()
            .parse()
            .unwrap();
        // 0.9 of the mode's limit 2/ω, with ω = Ω/Δt from the closed form.
        let expected = 0.9 * 2.0 * dt / cd_omega_dt(rho);
        // Tolerance: the detector inverts ρ(Ω) by bisection to f64
        // resolution; the dt column is printed to 9 digits.
        assert!(
            ((suggested - expected) / expected).abs() < 1e-6,
            "{case}: suggested {suggested}, expected {expected}"
        );
        assert!(suggested < dt, "{case}");
        assert!(
            basis.contains("central-difference") && basis.contains("safety 0.9"),
            "{basis}"
        );
        if case == "cd-omega-2.01" {
            // Written every step, its mode flips sign every row: aliased.
            assert!(basis.contains("Nyquist"), "{basis}");
        }
        let message = alarm["message"].as_str().unwrap();
        assert!(message.contains("Remedy (central-difference)"), "{message}");
        assert!(
            message.contains("rhoscope limits --scheme central-difference --omega"),
            "{message}"
        );
        // The dashboard shows it in its readouts while the mode is confirmed.
        let mut shown = false;
        follow(case, |s, _, _| {
            if s.readouts.growth == Standing::Confirmed
                && let Some(d) = &s.readouts.evidence.suggested_dt
            {
                shown = true;
                let mut term =
                    ratatui::Terminal::new(ratatui::backend::TestBackend::new(200, 60)).unwrap();
                term.draw(|f| rhoscope::ui::render(s, f)).unwrap();
                let screen = term.backend().to_string();
                assert!(
                    screen.contains(&format!(
                        "Δt ≤ {}",
                        rhoscope::ui::format::num(Some(d.seconds), 3)
                    )),
                    "{screen}"
                );
            }
        });
        assert!(shown, "{case}: the dashboard never showed the step");
    }
}
