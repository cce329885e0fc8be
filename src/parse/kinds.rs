//! What a column can mean: [`Role`] and [`EnergyTerm`], with the keys that
//! name them in configuration, flags and reports. Below both the naming
//! rules (`vocab.rs`) and the assignment of roles (`roles.rs`).

/// An energy term of the balance.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum EnergyTerm {
    Kinetic,
    Internal,
    ExternalWork,
    /// Damping, friction, plastic or other physical losses.
    Dissipated,
    /// Terms a solver adds: hourglass control, contact/penalty, added mass.
    Artificial,
    Total,
}

/// What a column means to the detectors.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Role {
    Time,
    StepSize,
    StepNumber,
    Energy(EnergyTerm),
    /// Nonlinear iterations per step (implicit runs).
    Iterations,
    /// Residual norm (implicit runs).
    Residual,
    /// Step cutbacks (implicit runs).
    Cutbacks,
    /// Any other numeric signal.
    Probe,
    /// Excluded by the user.
    Ignore,
}

/// Every role, with the key that names it in configuration and flags.
pub const ROLE_KEYS: &[(Role, &str)] = &[
    (Role::Time, "time"),
    (Role::StepSize, "step_size"),
    (Role::StepNumber, "step_number"),
    (Role::Energy(EnergyTerm::Kinetic), "kinetic"),
    (Role::Energy(EnergyTerm::Internal), "internal"),
    (Role::Energy(EnergyTerm::ExternalWork), "external_work"),
    (Role::Energy(EnergyTerm::Dissipated), "dissipated"),
    (Role::Energy(EnergyTerm::Artificial), "artificial"),
    (Role::Energy(EnergyTerm::Total), "total"),
    (Role::Iterations, "iterations"),
    (Role::Residual, "residual"),
    (Role::Cutbacks, "cutbacks"),
    (Role::Probe, "probe"),
    (Role::Ignore, "ignore"),
];

impl Role {
    /// The key naming this role in configuration, flags and reports.
    pub fn key(self) -> &'static str {
        ROLE_KEYS
            .iter()
            .find(|(r, _)| *r == self)
            .map_or("probe", |(_, k)| k)
    }

    /// The role named by `key` (as [`Role::key`] writes it).
    pub fn from_key(key: &str) -> Option<Role> {
        let key = key.trim().to_ascii_lowercase().replace(['-', ' '], "_");
        ROLE_KEYS.iter().find(|(_, k)| *k == key).map(|(r, _)| *r)
    }
}

impl EnergyTerm {
    /// The energy term named by `key` (`kinetic`, `internal`, `external_work`,
    /// `dissipated`, `artificial`, `total`).
    pub fn from_key(key: &str) -> Option<EnergyTerm> {
        match Role::from_key(key)? {
            Role::Energy(t) => Some(t),
            _ => None,
        }
    }
}
