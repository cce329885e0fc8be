//! Cost of one dashboard frame at 200×60 and at 80×24, drawn from a state that
//! holds a long run (most of it only as the min/max envelope), and the cost of
//! downsampling one column to a chart's width.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use ratatui::Terminal;
use ratatui::backend::TestBackend;

use rhoscope::alarm::Alarm;
use rhoscope::app::{AppState, Batch, Config, Item, Msg};
use rhoscope::detect::Status;
use rhoscope::finding::Evidence;
use rhoscope::finding::Level;
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};

/// Rows of the invented run fed to the state (ten times the full-resolution window).
const ROWS: u32 = 200_000;
const PER_BATCH: u32 = 500;

fn state() -> AppState {
    let names = [
        "time", "dt", "step", "ke", "ie", "wext", "probe_a", "probe_b",
    ];
    let roles = vec![
        Role::Time,
        Role::StepSize,
        Role::StepNumber,
        Role::Energy(EnergyTerm::Kinetic),
        Role::Energy(EnergyTerm::Internal),
        Role::Energy(EnergyTerm::ExternalWork),
        Role::Probe,
        Role::Probe,
    ];
    let mut s = AppState::new(Config {
        file: "bench/history.csv".into(),
        color: true,
        end_time_s: Some(10.0),
        actions: vec!["create the stop file bench/STOP".into()],
        ..Config::default()
    });
    let mut i = 0u32;
    let mut first = true;
    while i < ROWS {
        let mut b = Batch::default();
        if first {
            b.items.push(Item::Schema {
                line: 1,
                schema: Schema {
                    columns: names
                        .iter()
                        .map(|n| Column {
                            name: (*n).into(),
                            unit: None,
                        })
                        .collect(),
                    ..Schema::default()
                },
                roles: RoleMap {
                    roles: roles.clone(),
                    reasons: vec![String::new(); 8],
                    signs: vec![1.0; 8],
                },
            });
            first = false;
        }
        for _ in 0..PER_BATCH {
            let t = f64::from(i) * 1e-5;
            let c = (2.0 * std::f64::consts::PI * 50.0 * t).cos();
            b.push_row(
                u64::from(i) + 2,
                &[
                    t,
                    1e-5,
                    f64::from(i),
                    0.5 + 0.5 * c,
                    0.5 - 0.5 * c,
                    1.0,
                    c,
                    -c,
                ],
            );
            i += 1;
        }
        if i == 150_000 {
            b.items.push(Item::Alarm(Alarm {
                level: Level::Critical,
                detector: "growth",
                line: 150_001,
                time: Some(1.5),
                message: "growth per step 1.01 above 1".into(),
                evidence: Evidence::default(),
            }));
        }
        b.status = Some(Status {
            evidence: Evidence {
                growth_per_step: Some(1.0 + 1e-7 * f64::from(i).sqrt()),
                balance_error: Some(1e-4 * f64::from(i) / f64::from(ROWS)),
                forecast_steps: Some(1e6),
                ..Evidence::default()
            },
            growth_confirmed: i >= 150_000,
            levels: vec![(
                "growth",
                if i >= 150_000 {
                    Level::Critical
                } else {
                    Level::Ok
                },
            )],
        });
        b.arrival_s = Some(f64::from(i / PER_BATCH));
        s.update(Msg::Data(Box::new(b)));
    }
    s
}

fn frames(c: &mut Criterion) {
    let s = state();
    for (w, h) in [(200u16, 60u16), (80, 24)] {
        let mut term = Terminal::new(TestBackend::new(w, h)).expect("test backend");
        c.bench_function(&format!("frame {w}x{h}, 200k-row run"), |b| {
            b.iter(|| {
                term.draw(|f| rhoscope::ui::render(black_box(&s), f))
                    .expect("draw");
            })
        });
    }
    let (lo, hi) = s.table.x_range().expect("rows");
    c.bench_function("downsample one column to 2x130 points", |b| {
        b.iter(|| black_box(s.table.points(3, lo, hi, 130)))
    });
}

criterion_group! {
    name = benches;
    // No plots: the machine may have no fonts for them, and the figures are what matter.
    config = Criterion::default().without_plots();
    targets = frames
}
criterion_main!(benches);
