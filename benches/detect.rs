//! Detector cost per row: a generated 14-column history (time, step size,
//! step, eight probes of a lightly damped six-mode structure in free vibration
//! with gauge noise, and its kinetic, internal and dissipated energy, which
//! balance) fed row by row through the detector engine and the alarm book,
//! fits included. A healthy run is the common case, so this is the cost that
//! matters. Criterion reports elements per second; the per-row figure is its
//! inverse.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rhoscope::detect::{DetectSettings, modes, replay};
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};

#[path = "support/structure.rs"]
mod structure;

const ROWS: usize = 50_000;

fn layout() -> (Schema, RoleMap) {
    let mut roles = vec![Role::Time, Role::StepSize, Role::StepNumber];
    roles.extend([Role::Probe; 8]);
    roles.extend([
        Role::Energy(EnergyTerm::Kinetic),
        Role::Energy(EnergyTerm::Internal),
        Role::Energy(EnergyTerm::Dissipated),
    ]);
    let schema = Schema {
        columns: (0..roles.len())
            .map(|i| Column {
                name: structure::NAMES[i].to_owned(),
                unit: None,
            })
            .collect(),
        ..Schema::default()
    };
    let n = roles.len();
    (
        schema,
        RoleMap {
            roles,
            reasons: vec![String::new(); n],
            signs: vec![1.0; n],
        },
    )
}

/// Rows stored one after another, as the reader hands them over: a row
/// has just been parsed when the detectors see it, so it is in cache.
fn history() -> Vec<f64> {
    let mut s = structure::Structure::new();
    (0..ROWS).flat_map(|n| s.row(n)).collect()
}

fn bench(c: &mut Criterion) {
    let (schema, roles) = layout();
    let rows = history();
    let width = roles.roles.len();
    let settings = DetectSettings::default();
    let mut g = c.benchmark_group("detect");
    g.throughput(Throughput::Elements(ROWS as u64));
    g.sample_size(10);
    g.bench_function("engine_14_columns", |b| {
        b.iter(|| {
            let (alarms, status) = replay(
                &schema,
                &roles,
                &settings,
                rows.chunks_exact(width)
                    .enumerate()
                    .map(|(i, r)| (i as u64 + 2, r)),
            );
            black_box((alarms, status))
        })
    });
    // One fit alone: the newest 200 rows of the eight probes.
    let probes: Vec<f64> = rows[rows.len() - 200 * width..]
        .chunks_exact(width)
        .flat_map(|r| r[3..11].iter().copied())
        .collect();
    g.throughput(Throughput::Elements(1));
    g.bench_function("one_fit_200_rows_8_probes", |b| {
        b.iter(|| black_box(modes::analyse(black_box(&probes), 200, 8).map(|a| a.rank)))
    });
    g.finish();
}

criterion_group! {
    name = benches;
    // Plots need system fonts, which build machines often lack.
    config = Criterion::default().without_plots();
    targets = bench
}
criterion_main!(benches);
