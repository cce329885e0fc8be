//! Column roles, detected by name: time, step size, step number, energy terms,
//! implicit-solver diagnostics; every other numeric column is a probe.

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

/// The role of every column of a schema, with the reason it was chosen and the
/// sign with which an energy term enters the balance.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RoleMap {
    pub roles: Vec<Role>,
    /// One short sentence per column: why this role (matched word, override).
    pub reasons: Vec<String>,
    /// +1 or −1 per column: the sign convention applied to energy terms (1 elsewhere).
    pub signs: Vec<f64>,
}

impl RoleMap {
    /// Index of the first column with `role`.
    pub fn find(&self, role: Role) -> Option<usize> {
        self.roles.iter().position(|r| *r == role)
    }
    /// Indices of all columns with `role`.
    pub fn all(&self, role: Role) -> Vec<usize> {
        self.roles
            .iter()
            .enumerate()
            .filter(|(_, r)| **r == role)
            .map(|(i, _)| i)
            .collect()
    }
}
