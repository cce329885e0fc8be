//! Hand-made dashboard states for the UI tests: an invented run (a plate on
//! springs, 8 columns) fed through `AppState::update` in batches, healthy, in
//! warning, or going unstable, with detector estimates set by hand.

use std::time::Duration;

use rhoscope::alarm::Alarm;
use rhoscope::app::{AppState, Batch, Config, Item, Msg};
use rhoscope::detect::Status;
use rhoscope::finding::Evidence;
use rhoscope::finding::Level;
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};

/// Which state to build.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    Healthy,
    Warning,
    Critical,
}

const NAMES: [&str; 8] = [
    "time", "dt", "step", "ke", "ie", "wext", "tip_disp", "mid_vel",
];
const ROWS: u32 = 2_000;
const PER_BATCH: u32 = 100;
const DT_S: f64 = 1e-5;

pub fn config() -> Config {
    Config {
        file: "runs/plate-7/history.csv".into(),
        color: true,
        end_time_s: Some(0.05),
        wall_left_at_start: Some(Duration::from_secs(2 * 3600)),
        started_s: 0.0,
        actions: vec![
            "create the stop file runs/plate-7/STOP (the solver writes a restart and exits)".into(),
            "wait 60 s for the solver to exit".into(),
            "then send SIGTERM to process 4242 (checked to be the solver)".into(),
        ],
        auto_stop: false,
        retention_rows: 0,
        // Not the detectors' default, so that the panels are seen to use it.
        balance_warning: 0.04,
    }
}

fn schema_item() -> Item {
    let schema = Schema {
        columns: NAMES
            .iter()
            .map(|n| Column {
                name: (*n).into(),
                unit: None,
            })
            .collect(),
        ..Schema::default()
    };
    let roles = RoleMap {
        roles: vec![
            Role::Time,
            Role::StepSize,
            Role::StepNumber,
            Role::Energy(EnergyTerm::Kinetic),
            Role::Energy(EnergyTerm::Internal),
            Role::Energy(EnergyTerm::ExternalWork),
            Role::Probe,
            Role::Probe,
        ],
        reasons: vec![String::new(); 8],
        signs: vec![1.0; 8],
    };
    Item::Schema {
        line: 1,
        schema,
        roles,
    }
}

/// Row `i` of the invented run; the unstable mode starts at row 1,200 when `grow`.
fn row(i: u32, grow: bool) -> [f64; 8] {
    let t = f64::from(i) * DT_S;
    let w = 2.0 * std::f64::consts::PI * 200.0;
    let (c, s) = ((w * t).cos(), (w * t).sin());
    let mode = if grow && i > 1_200 {
        1e-3 * 1.01f64.powi((i - 1_200) as i32) * if i.is_multiple_of(2) { 1.0 } else { -1.0 }
    } else {
        0.0
    };
    [
        t,
        DT_S,
        f64::from(i),
        0.5 * (1.0 + c) + mode * mode,
        0.5 * (1.0 - c) + mode * mode,
        1.0,
        1e-3 * s + mode,
        0.2 * c,
    ]
}

fn evidence(kind: Kind, i: u32) -> Evidence {
    let frac = f64::from(i) / f64::from(ROWS);
    match kind {
        Kind::Healthy => Evidence {
            growth_per_step: Some(0.99998 + 1e-5 * (f64::from(i) * 0.01).sin()),
            balance_error: Some(2e-4 * frac),
            frequency_hz: Some(200.0),
            ..Evidence::default()
        },
        Kind::Warning => Evidence {
            growth_per_step: Some(0.9999 + 5e-4 * frac),
            growth_rate_per_s: Some(38.0 * frac),
            frequency_hz: Some(200.0),
            balance_error: Some(0.07 * frac),
            ..Evidence::default()
        },
        Kind::Critical => {
            let growing = i > 1_200;
            Evidence {
                growth_per_step: Some(if growing { 1.01 } else { 0.99998 }),
                growth_per_output: Some(if growing { 1.01 } else { 0.99998 }),
                growth_rate_per_s: growing.then_some(995.0),
                frequency_hz: Some(if growing { 50_000.0 } else { 200.0 }),
                balance_error: Some(if growing {
                    0.004 * f64::from(i - 1_200)
                } else {
                    1e-4
                }),
                forecast_steps: growing.then(|| 70_000.0 - 10.0 * f64::from(i)),
                forecast_time: growing.then_some(0.52),
                forecast_wall_s: growing.then(|| 3_600.0 - f64::from(i)),
                onset_line: growing.then_some(1_202),
                onset_time: growing.then_some(0.012),
                stability_margin: growing.then_some(-0.005),
                suggested_dt: growing.then(|| rhoscope::finding::SuggestedDt {
                    seconds: 9.0e-6,
                    basis: "central-difference: limit ω·Δt = 2".into(),
                }),
            }
        }
    }
}

/// The detectors' status after row `i`: a confirmed mode once the unstable
/// one grows, the latest fit's estimate before; each detector's level as its
/// alarms below raise it.
fn status(kind: Kind, i: u32) -> Status {
    let levels = match kind {
        Kind::Warning if i >= 1_600 => vec![("energy", Level::Warning)],
        Kind::Critical if i >= 1_900 => {
            vec![("growth", Level::Critical), ("energy", Level::Critical)]
        }
        Kind::Critical if i >= 1_400 => vec![("growth", Level::Warning)],
        _ => vec![],
    };
    Status {
        evidence: evidence(kind, i),
        growth_confirmed: kind == Kind::Critical && i > 1_200,
        levels,
    }
}

fn alarm(level: Level, detector: &'static str, line: u64, message: &str) -> Item {
    Item::Alarm(Alarm {
        level,
        detector,
        line,
        time: Some((line - 2) as f64 * DT_S),
        message: message.into(),
        evidence: Evidence::default(),
    })
}

/// A batch holding one alarm of `level` and nothing else.
pub fn alarm_batch(level: Level) -> Batch {
    let mut b = Batch::default();
    b.items
        .push(alarm(level, "growth", 10, "growth per step 1.2 above 1"));
    b
}

/// The state after the whole invented run was read in batches.
pub fn state(kind: Kind) -> AppState {
    state_with(kind, config())
}

/// As [`state`], with a given configuration.
pub fn state_with(kind: Kind, config: Config) -> AppState {
    let mut s = AppState::new(config);
    let mut first = true;
    let mut i = 0;
    let mut batch_no = 0.0;
    while i < ROWS {
        let mut b = Batch::default();
        if first {
            b.items.push(schema_item());
            first = false;
        }
        for _ in 0..PER_BATCH {
            b.push_row(u64::from(i) + 2, &row(i, kind == Kind::Critical));
            i += 1;
        }
        if kind == Kind::Warning && i == 1_600 {
            b.items.push(alarm(
                Level::Warning,
                "energy",
                1_601,
                "energy balance error +5.6 % (energy created)",
            ));
        }
        if kind == Kind::Critical && i == 1_400 {
            b.items.push(alarm(
                Level::Warning,
                "growth",
                1_390,
                "growth per step 1.0100 above 1 since line 1,202",
            ));
        }
        if kind == Kind::Critical && i == 1_900 {
            b.items.push(alarm(
                Level::Critical,
                "energy",
                1_885,
                "energy balance error +274 % and growing exponentially (energy created)",
            ));
            b.items.push(alarm(
                Level::Critical,
                "growth",
                1_890,
                "growth per step 1.0100 for 700 steps; overflow in 51,000 steps",
            ));
        }
        b.status = Some(status(kind, i));
        b.arrival_s = Some(batch_no);
        batch_no += 1.0;
        s.update(Msg::Data(Box::new(b)));
    }
    s
}
