//! Energy bookkeeping shared by the detectors: the balance error
//! (kinetic + internal + dissipated + artificial − external work) minus its
//! initial value, judged against the energy that moves. When the file writes
//! a total but not both kinetic and internal terms, the total (less external
//! work, if written) stands in for the sum. Sign conventions come from
//! `RoleMap::signs`.
//!
//! The scale is the largest of the running peak kinetic energy, the running
//! range (max − min) of each written term and the running peak external
//! work — never |E|: potential energy has an arbitrary zero (a particle
//! run's is large and negative, a body under gravity starts at 0 and goes
//! negative), so a balance judged against the sum can hide a drift or
//! invent one. Only when the file writes a total and nothing else is the
//! total's own magnitude the scale, and the reading says so.
//!
//! Reference for the form of the check: Belytschko, Liu & Moran, *Nonlinear
//! Finite Elements for Continua and Structures*, Wiley 2000, §6.2.3 (from
//! memory): |W_kin + W_int − W_ext| ≤ ε·max(W_ext, W_int, W_kin), ε ≈ 10⁻².

use super::closure::{Closing, Closure};
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

/// What the energy scale of a reading is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ScaleSource {
    /// The running peak of the kinetic energy (written, or the total less
    /// the other written terms).
    PeakKinetic,
    /// The running range of the written term in this column.
    TermRange(usize),
    /// The running peak of the external work.
    ExternalWork,
    /// The running peak |total|: the file writes no term that moves.
    TotalMagnitude,
}

/// One row's reading of the balance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BalanceReading {
    /// Balance error in energy units (current sum − initial sum).
    pub error: f64,
    /// Energy scale the error is judged against.
    pub scale: f64,
    /// What the scale is.
    pub source: ScaleSource,
    /// The running peak |sum of the stored terms| (or |total|): how large the
    /// written energies are, for forecasts of overflow.
    pub magnitude: f64,
    /// error / scale once the scale is established; `None` before.
    pub relative: Option<f64>,
}

/// (column, sign) pairs of one sum.
type Columns = Vec<(usize, f64)>;

/// Running minimum and maximum of one column.
#[derive(Debug, Clone, Copy)]
struct Range {
    col: usize,
    sign: f64,
    lo: f64,
    hi: f64,
}

impl Range {
    fn new((col, sign): (usize, f64)) -> Self {
        Self {
            col,
            sign,
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
        }
    }

    fn width(&self) -> f64 {
        if self.hi >= self.lo {
            self.hi - self.lo
        } else {
            0.0
        }
    }
}

/// Running energy balance of one segment.
#[derive(Debug, Clone)]
pub struct EnergyBalance {
    /// (column, sign) of terms that add to the stored/dissipated energy.
    stored: Vec<(usize, f64)>,
    /// (column, sign) of external-work columns.
    work: Vec<(usize, f64)>,
    /// (column, sign) of the kinetic terms, written.
    kinetic: Vec<(usize, f64)>,
    /// With the total form and no kinetic column: the total's columns, and
    /// the other terms' columns, whose difference is the kinetic energy.
    derived_kinetic: Option<(Columns, Columns)>,
    /// Running range of every written term except the total.
    ranges: Vec<Range>,
    /// (column, sign) of the total, for the magnitude (and the scale when
    /// nothing else is written).
    total: Vec<(usize, f64)>,
    form: BalanceForm,
    initial: Option<f64>,
    peak_kinetic: f64,
    peak_work: f64,
    peak_magnitude: f64,
    rows_scaled: u32,
    found: Vec<EnergyTerm>,
    /// Fits of the error on the columns that have no role.
    closure: Closure,
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
        // The terms when both kinetic and internal energy are written (or
        // when no total is); otherwise the solver's own total, since a sum of
        // some of the terms (a pair energy without the kinetic energy) is no
        // balance at all.
        let terms_complete = !kin.is_empty() && !int.is_empty();
        let form = if !tot.is_empty() && !terms_complete {
            BalanceForm::Total
        } else if !kin.is_empty() || !int.is_empty() {
            BalanceForm::Terms
        } else {
            return None;
        };
        let others: Vec<(usize, f64)> = int
            .iter()
            .chain(dis.iter())
            .chain(art.iter())
            .copied()
            .collect();
        let stored = match form {
            BalanceForm::Terms => kin.iter().chain(others.iter()).copied().collect(),
            BalanceForm::Total => tot.clone(),
        };
        let derived_kinetic = (form == BalanceForm::Total && kin.is_empty() && !int.is_empty())
            .then(|| (tot.clone(), others.clone()));
        let ranges = kin
            .iter()
            .chain(others.iter())
            .copied()
            .map(Range::new)
            .collect();
        Some(Self {
            stored,
            work: ext,
            kinetic: kin,
            derived_kinetic,
            ranges,
            total: tot,
            form,
            initial: None,
            peak_kinetic: 0.0,
            peak_work: 0.0,
            peak_magnitude: 0.0,
            rows_scaled: 0,
            found,
            closure: Closure::new(roles.all(Role::Probe)),
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

    /// A column with no role that would close the balance, if one does
    /// (see [`Closure`]).
    pub fn closing(&self) -> Option<Closing> {
        self.closure.best()
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
        let sum_of = |cols: &[(usize, f64)]| -> Option<f64> {
            let mut sum = 0.0;
            for c in cols {
                sum += get(c)?;
            }
            Some(sum)
        };
        let sum = sum_of(&self.stored)?;
        let work = sum_of(&self.work)?;
        let kinetic = match &self.derived_kinetic {
            Some((total, others)) => sum_of(total)? - sum_of(others)?,
            None => sum_of(&self.kinetic)?,
        };
        let magnitude = if self.total.is_empty() {
            sum
        } else {
            sum_of(&self.total)?
        };
        let balance = sum - work;
        if !balance.is_finite() || !kinetic.is_finite() || !magnitude.is_finite() {
            return None;
        }
        for r in &mut self.ranges {
            let v = values.get(r.col).map(|v| v * r.sign)?;
            if !v.is_finite() {
                return None;
            }
            r.lo = r.lo.min(v);
            r.hi = r.hi.max(v);
        }
        let initial = *self.initial.get_or_insert(balance);
        self.peak_kinetic = self.peak_kinetic.max(kinetic.abs());
        self.peak_work = self.peak_work.max(work.abs());
        self.peak_magnitude = self.peak_magnitude.max(magnitude.abs());
        let (mut scale, mut source) = (self.peak_kinetic, ScaleSource::PeakKinetic);
        for r in &self.ranges {
            if r.width() > scale {
                (scale, source) = (r.width(), ScaleSource::TermRange(r.col));
            }
        }
        if self.peak_work > scale {
            (scale, source) = (self.peak_work, ScaleSource::ExternalWork);
        }
        if self.ranges.is_empty() && self.derived_kinetic.is_none() && self.kinetic.is_empty() {
            (scale, source) = (self.peak_magnitude.max(scale), ScaleSource::TotalMagnitude);
        }
        if scale > 0.0 {
            self.rows_scaled = self.rows_scaled.saturating_add(1);
        }
        let error = balance - initial;
        self.closure.update(error, values);
        let relative = (self.rows_scaled >= ROWS_TO_ESTABLISH).then(|| error / scale);
        Some(BalanceReading {
            error,
            scale,
            source,
            magnitude: self.peak_magnitude,
            relative,
        })
    }
}

/// The scale of a reading in words, for messages: `peak kinetic energy
/// 12.3`, `range of "E_pair" 1.21`, `peak external work 4.6`, `peak |total|
/// 44.4 (no term that moves is written)`.
pub fn describe_scale(reading: &BalanceReading, names: &[String]) -> String {
    let v = reading.scale;
    match reading.source {
        ScaleSource::PeakKinetic => format!("peak kinetic energy {v:.4}"),
        ScaleSource::TermRange(c) => match names.get(c) {
            Some(n) => format!("range of \"{n}\" {v:.4}"),
            None => format!("range of column {} {v:.4}", c + 1),
        },
        ScaleSource::ExternalWork => format!("peak external work {v:.4}"),
        ScaleSource::TotalMagnitude => {
            format!("peak |total| {v:.4}: no term that moves is written")
        }
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
