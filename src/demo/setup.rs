//! What defines one demo run (model, scheme, step rule, output stride, layout,
//! columns, probes, noise, restart) and what the run finds out about itself
//! ([`Summary`]: its labels and the hash of its bytes).

use super::integrate::Scheme;
use super::layout::{ColumnName, Layout};
use super::model::Model;

/// How the step size is chosen.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepRule {
    /// A fixed step.
    Fixed { dt_s: f64 },
    /// dt = safety·2/ω_max of the current tangent, recomputed every step, capped at `dt_max_s`
    /// and at `max_growth` times the step before (a controller that cuts at
    /// once but lets the step grow back gradually; infinite for no limit).
    Adaptive {
        safety: f64,
        dt_max_s: f64,
        max_growth: f64,
    },
}

/// What a probe samples.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    Displacement,
    Velocity,
}

/// A probe: one DOF's displacement or velocity, with its column name.
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    pub dof: usize,
    pub quantity: Quantity,
    pub name: ColumnName,
}

/// Which columns are written (time is always written).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Columns {
    /// Time, step size, step number, probes, energies.
    All,
    /// Time and energies.
    EnergyOnly,
    /// Time and probes.
    ProbesOnly,
}

/// A restart from an earlier checkpoint, as a user resubmitting a run would do.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Restart {
    /// Step at which the run is interrupted.
    pub at_step: u64,
    /// Step of the checkpoint it resumes from (earlier, so time goes back).
    pub from_step: u64,
    /// The step size is multiplied by this on resuming.
    pub dt_factor: f64,
    /// The resumed run writes its header again.
    pub header_again: bool,
}

/// Seeded measurement noise added to printed probe values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Noise {
    pub seed: u64,
    /// Standard deviation of the noise (probe units).
    pub sigma: f64,
}

/// Everything that defines one run.
#[derive(Debug, Clone)]
pub struct Setup {
    /// First comment line.
    pub title: String,
    pub model: Model,
    pub scheme: Scheme,
    pub step: StepRule,
    pub u0: Vec<f64>,
    pub v0: Vec<f64>,
    pub t_end_s: f64,
    pub max_steps: u64,
    /// A row every `every` steps (the first and a crashing row are always written).
    pub every: u64,
    pub layout: Layout,
    pub columns: Columns,
    pub probes: Vec<Probe>,
    pub noise: Option<Noise>,
    pub restart: Option<Restart>,
    /// The solver gives up (writes the row and an error comment) when the step
    /// falls below this, as solvers do when elements distort.
    pub dt_min_s: Option<f64>,
    /// Stop at the first row whose printed values or state are non-finite (true),
    /// or only once the state holds a NaN (false), as a solver whose only check is
    /// for NaN.
    pub stop_on_printed_overflow: bool,
}

/// What the run found out about itself once finished.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Summary {
    /// Lines written.
    pub lines: u64,
    /// Data rows written.
    pub rows: u64,
    /// First line at or after the step where ω_max·dt first exceeded the scheme's limit.
    pub unstable_line: Option<u64>,
    /// First line of the stretch, lasting to the end of the run, where the
    /// step stayed below a tenth of its first value (a cut that recovers is
    /// not a collapse).
    pub collapse_line: Option<u64>,
    /// First line holding a non-finite or overflowed field.
    pub crash_line: Option<u64>,
    /// Largest |balance error| relative to the energy scale, over rows where the
    /// scale had reached a tenth of its final value (the written columns only).
    pub max_balance_rel: f64,
    /// Balance error at the last finite row (same measure).
    pub final_balance_rel: f64,
    /// First line where |balance error| passed 5 % of the (established) scale.
    pub drift_line: Option<u64>,
    /// Smallest step over the first step.
    pub min_dt_ratio: f64,
    /// FNV-1a hash of the written bytes (lines with their newlines), for
    /// checking that a rewrite gives the same file.
    pub bytes_hash: u64,
}

/// FNV-1a over `bytes`, continuing from `h` (Fowler, Noll & Vo; offset basis
/// 0xcbf29ce484222325, prime 0x100000001b3).
pub fn fnv1a(mut h: u64, bytes: &[u8]) -> u64 {
    for b in bytes {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// FNV-1a offset basis.
pub const FNV_OFFSET: u64 = 0xcbf2_9ce4_8422_2325;
