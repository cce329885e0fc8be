//! A small deterministic random source for the blind catalogue: SplitMix64
//! (Steele, Lea, Flood, "Fast splittable pseudorandom number generators",
//! OOPSLA 2014) and Box–Muller normals. The same seed gives the same case on
//! every machine.

/// SplitMix64 state.
#[derive(Debug, Clone)]
pub struct Rng {
    state: u64,
    spare: Option<f64>,
}

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Rng {
        Rng {
            state: seed ^ 0x5DEE_CE66_D1CE_4E5B,
            spare: None,
        }
    }

    /// Next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal (Box–Muller, both values used).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        let r = (-2.0 * u1.ln()).sqrt();
        let phi = std::f64::consts::TAU * u2;
        self.spare = Some(r * phi.sin());
        r * phi.cos()
    }
}
