//! Energy bookkeeping shared by the detectors: the balance error
//! (kinetic + internal + dissipated + artificial − external work) minus its
//! initial value, relative to the energy scale max(running peak of
//! kinetic + internal, running peak of external work). When only a total-energy
//! column is written, the total (less external work, if written) stands in for
//! the sum of terms. Sign conventions come from `RoleMap::signs`.
//!
//! Reference for the form of the check: Belytschko, Liu & Moran, *Nonlinear
//! Finite Elements for Continua and Structures*, Wiley 2000, §6.2.3 (from
//! memory): |W_kin + W_int − W_ext| ≤ ε·max(W_ext, W_int, W_kin), ε ≈ 10⁻².

use crate::parse::roles::{EnergyTerm, Role, RoleMap};

/// Rows with an energy scale before relative errors are judged.
const ROWS_TO_ESTABLISH: u32 = 10;

/// How the balance is formed from the columns present.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BalanceForm {
    /// From the individual terms (kinetic and/or internal present).
    Terms,
    /// From a total-energy column.
    Total,
}

/// One row's reading of the balance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BalanceReading {
    /// Balance error in energy units (current sum − initial sum).
    pub error: f64,
    /// Energy scale the error is judged against.
    pub scale: f64,
    /// error / scale once the scale is established; `None` before.
    pub relative: Option<f64>,
}

/// Running energy balance of one segment.
#[derive(Debug, Clone)]
pub struct EnergyBalance {
    /// (column, sign) of terms that add to the stored/dissipated energy.
    stored: Vec<(usize, f64)>,
    /// (column, sign) of external-work columns.
    work: Vec<(usize, f64)>,
    /// (column, sign) of kinetic and internal columns (the scale), or the total.
    scale_cols: Vec<(usize, f64)>,
    form: BalanceForm,
    initial: Option<f64>,
    peak_stored: f64,
    peak_work: f64,
    rows_scaled: u32,
    found: Vec<EnergyTerm>,
}

impl EnergyBalance {
    /// A balance from the energy columns of `roles`, or `None` when neither
    /// kinetic/internal terms nor a total are written.
    pub fn new(roles: &RoleMap) -> Option<Self> {
        let sign = |i: usize| roles.signs.get(i).copied().unwrap_or(1.0);
        let cols = |t: EnergyTerm| -> Vec<(usize, f64)> {
            roles
                .all(Role::Energy(t))
                .into_iter()
                .map(|i| (i, sign(i)))
                .collect()
        };
        let kin = cols(EnergyTerm::Kinetic);
        let int = cols(EnergyTerm::Internal);
        let dis = cols(EnergyTerm::Dissipated);
        let art = cols(EnergyTerm::Artificial);
        let ext = cols(EnergyTerm::ExternalWork);
        let tot = cols(EnergyTerm::Total);
        let mut found = Vec::new();
        for (t, c) in [
            (EnergyTerm::Kinetic, &kin),
            (EnergyTerm::Internal, &int),
            (EnergyTerm::Dissipated, &dis),
            (EnergyTerm::Artificial, &art),
            (EnergyTerm::ExternalWork, &ext),
            (EnergyTerm::Total, &tot),
        ] {
            if !c.is_empty() {
                found.push(t);
            }
        }
        let (form, stored, scale_cols) = if !kin.is_empty() || !int.is_empty() {
            let scale: Vec<_> = kin.iter().chain(int.iter()).copied().collect();
            let stored: Vec<_> = scale
                .iter()
                .chain(dis.iter())
                .chain(art.iter())
                .copied()
                .collect();
            (BalanceForm::Terms, stored, scale)
        } else if !tot.is_empty() {
            (BalanceForm::Total, tot.clone(), tot)
        } else {
            return None;
        };
        Some(Self {
            stored,
            work: ext,
            scale_cols,
            form,
            initial: None,
            peak_stored: 0.0,
            peak_work: 0.0,
            rows_scaled: 0,
            found,
        })
    }

    /// How the balance is formed.
    pub fn form(&self) -> BalanceForm {
        self.form
    }

    /// Terms written in the file.
    pub fn found(&self) -> &[EnergyTerm] {
        &self.found
    }

    /// Terms of the full balance that the file does not write.
    pub fn missing(&self) -> Vec<EnergyTerm> {
        let all = match self.form {
            BalanceForm::Terms => &[
                EnergyTerm::Kinetic,
                EnergyTerm::Internal,
                EnergyTerm::Dissipated,
                EnergyTerm::Artificial,
                EnergyTerm::ExternalWork,
            ][..],
            BalanceForm::Total => &[EnergyTerm::Total, EnergyTerm::ExternalWork][..],
        };
        all.iter()
            .filter(|t| !self.found.contains(t))
            .copied()
            .collect()
    }

    /// Update with one row; `None` when an energy value is not finite.
    pub fn update(&mut self, values: &[f64]) -> Option<BalanceReading> {
        let get = |&(i, s): &(usize, f64)| values.get(i).map(|v| v * s);
        let mut sum = 0.0;
        for c in &self.stored {
            sum += get(c)?;
        }
        let mut work = 0.0;
        for c in &self.work {
            work += get(c)?;
        }
        let mut scale_now = 0.0;
        for c in &self.scale_cols {
            scale_now += get(c)?;
        }
        let balance = sum - work;
        if !balance.is_finite() || !scale_now.is_finite() {
            return None;
        }
        let initial = *self.initial.get_or_insert(balance);
        self.peak_stored = self.peak_stored.max(scale_now.abs());
        self.peak_work = self.peak_work.max(work.abs());
        let scale = self.peak_stored.max(self.peak_work);
        if scale > 0.0 {
            self.rows_scaled = self.rows_scaled.saturating_add(1);
        }
        let error = balance - initial;
        let relative = (self.rows_scaled >= ROWS_TO_ESTABLISH).then(|| error / scale);
        Some(BalanceReading {
            error,
            scale,
            relative,
        })
    }
}

/// Short name of an energy term for messages.
pub fn term_name(t: EnergyTerm) -> &'static str {
    match t {
        EnergyTerm::Kinetic => "kinetic",
        EnergyTerm::Internal => "internal",
        EnergyTerm::ExternalWork => "external work",
        EnergyTerm::Dissipated => "dissipated",
        EnergyTerm::Artificial => "artificial",
        EnergyTerm::Total => "total",
    }
}
