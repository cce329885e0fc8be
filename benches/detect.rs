//! Detector cost per row: a generated 14-column history (time, step size,
//! step, eight probes of a lightly damped six-mode structure with gauge noise,
//! kinetic, internal energy and external work) fed row by row through the
//! detector engine and the alarm book, fits included. Criterion reports
//! elements per second; the per-row figure is its inverse.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rhoscope::detect::{DetectSettings, replay};
use rhoscope::parse::roles::{EnergyTerm, Role, RoleMap};
use rhoscope::parse::{Column, Schema};

const ROWS: usize = 50_000;

/// Deterministic noise in [−1, 1] (64-bit LCG).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    }
}

fn layout() -> (Schema, RoleMap) {
    let mut roles = vec![Role::Time, Role::StepSize, Role::StepNumber];
    roles.extend([Role::Probe; 8]);
    roles.extend([
        Role::Energy(EnergyTerm::Kinetic),
        Role::Energy(EnergyTerm::Internal),
        Role::Energy(EnergyTerm::ExternalWork),
    ]);
    let schema = Schema {
        columns: (0..roles.len())
            .map(|i| Column {
                name: format!("c{i}"),
                unit: None,
            })
            .collect(),
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

fn history() -> Vec<Vec<f64>> {
    let mut noise = Lcg(3);
    let dt = 1e-4;
    (0..ROWS)
        .map(|n| {
            let t = n as f64 * dt * 10.0;
            let modes: Vec<f64> = (0..6)
                .map(|j| {
                    let w = 20.0 * (j + 1) as f64;
                    (-0.02 * t).exp() * (w * t + j as f64).sin() / (j + 1) as f64
                })
                .collect();
            let mut r = vec![t, dt, (n * 10) as f64];
            for p in 0..8 {
                let x: f64 = modes
                    .iter()
                    .enumerate()
                    .map(|(j, m)| m * ((p + 1) * (j + 1)) as f64 % 1.7)
                    .sum();
                r.push(x + 1e-4 * noise.next());
            }
            let e: f64 = modes.iter().map(|m| m * m).sum();
            r.extend([0.5 * e, 0.5 * e + 1.0, 0.0]);
            r
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let (schema, roles) = layout();
    let rows = history();
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
                rows.iter()
                    .enumerate()
                    .map(|(i, r)| (i as u64 + 2, r.as_slice())),
            );
            black_box((alarms, status))
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
