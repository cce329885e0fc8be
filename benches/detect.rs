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
        Role::Energy(EnergyTerm::Dissipated),
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

/// Rows stored one after another, as the reader hands them over: a row
/// has just been parsed when the detectors see it, so it is in cache.
fn history() -> Vec<f64> {
    let mut noise = Lcg(3);
    let dt = 1e-4;
    // Modal decay rate ζω = 0.02 1/s for every mode; x_j = a_j e^{−0.02 t} sin(ω_j t + j),
    // unit modal masses, so the modal energy ½ω_j²a_j² e^{−0.04 t} is lost to damping.
    let decay = 0.02;
    let e0: f64 = (0..6)
        .map(|j| {
            let w = 20.0 * (j + 1) as f64;
            let a = 1.0 / (j + 1) as f64;
            0.5 * w * w * a * a
        })
        .sum();
    (0..ROWS)
        .map(|n| {
            let t = n as f64 * dt * 10.0;
            let env = (-decay * t).exp();
            let mut r = vec![t, dt, (n * 10) as f64];
            let (mut kin, mut int) = (0.0, 0.0);
            let mut modes = [0.0; 6];
            for (j, m) in modes.iter_mut().enumerate() {
                let w = 20.0 * (j + 1) as f64;
                let a = env / (j + 1) as f64;
                let phase = w * t + j as f64;
                *m = a * phase.sin();
                // Light damping: the velocity is ω a cos to first order in ζ.
                kin += 0.5 * (w * a * phase.cos()).powi(2);
                int += 0.5 * (w * a * phase.sin()).powi(2);
            }
            for p in 0..8 {
                let x: f64 = modes
                    .iter()
                    .enumerate()
                    .map(|(j, m)| m * ((p + 1) * (j + 1)) as f64 % 1.7)
                    .sum();
                r.push(x + 1e-4 * noise.next());
            }
            r.extend([kin, int, e0 * (1.0 - env * env)]);
            r
        })
        .collect::<Vec<_>>()
        .concat()
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
