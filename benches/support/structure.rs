//! A healthy 14-column history shared by the benches: time, step size, step,
//! eight probes of a lightly damped six-mode structure in free vibration with
//! gauge noise, and its kinetic, internal and dissipated energy, which
//! balance. Ten solver steps per output.

/// Column names, as a solver would head them.
pub const NAMES: [&str; 14] = [
    "time", "dt", "step", "u1", "u2", "u3", "u4", "u5", "u6", "u7", "u8", "E_kin", "E_int",
    "E_damp",
];

/// The generator: deterministic noise and the modal constants.
pub struct Structure {
    noise: u64,
    e0: f64,
}

const DT: f64 = 1e-4;
const STEPS_PER_ROW: usize = 10;
/// Modal decay rate ζω (1/s), the same for every mode.
const DECAY: f64 = 0.02;

impl Structure {
    pub fn new() -> Self {
        // Unit modal masses: mode j holds ½ω_j²a_j² at t = 0.
        let e0 = (0..6)
            .map(|j| {
                let w = 20.0 * (j + 1) as f64;
                let a = 1.0 / (j + 1) as f64;
                0.5 * w * w * a * a
            })
            .sum();
        Self { noise: 3, e0 }
    }

    /// Deterministic noise in [−1, 1] (64-bit LCG).
    fn next_noise(&mut self) -> f64 {
        self.noise = self
            .noise
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.noise >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    }

    /// Output row `n`: x_j = a_j e^{−ζω t} sin(ω_j t + j); the modal energy
    /// lost, e0 (1 − e^{−2ζω t}), is the dissipated energy.
    pub fn row(&mut self, n: usize) -> [f64; 14] {
        let t = (n * STEPS_PER_ROW) as f64 * DT;
        let env = (-DECAY * t).exp();
        let mut r = [0.0; 14];
        r[0] = t;
        r[1] = DT;
        r[2] = (n * STEPS_PER_ROW) as f64;
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
            r[3 + p] = x + 1e-4 * self.next_noise();
        }
        r[11] = kin;
        r[12] = int;
        r[13] = self.e0 * (1.0 - env * env);
        r
    }
}
