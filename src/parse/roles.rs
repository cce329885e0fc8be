//! Column roles: time, step size, step number, energy terms, implicit-solver
//! diagnostics; every other numeric column is a probe. A role comes from the
//! user's override, else from what the reader inferred (values, markup), else
//! from the column's name (`vocab.rs`). What a role can be is `kinds.rs`.

pub use super::kinds::{EnergyTerm, ROLE_KEYS, Role};
pub use super::vocab::{detect, normalize};

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

/// User choices that override name matching: roles by column name, and the sign
/// with which each energy term enters the balance (codes differ on the sign of
/// external work and on what "total" includes).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RoleRules {
    /// Column name (matched like detection: case, spacing, underscores ignored) → role.
    pub overrides: Vec<(String, Role)>,
    /// Sign per energy term; terms not listed enter with +1.
    pub signs: Vec<(EnergyTerm, f64)>,
}

impl RoleRules {
    /// The sign applied to `term`.
    pub fn sign(&self, term: EnergyTerm) -> f64 {
        self.signs
            .iter()
            .rev()
            .find(|(t, _)| *t == term)
            .map_or(1.0, |(_, s)| *s)
    }
}

/// Assign a role to every column of `schema`: overrides first, then what the
/// reader inferred, then name matching. Only the first column matched by name to
/// time, step size or step number gets that role; later ones become probes. Among
/// named energy columns, parts of the potential energy (`E_pair`, `E_mol`) give
/// way to a column that holds all of it (`PotEng`), and a second total to the
/// first (or to a conserved total), so that nothing is counted twice.
pub fn assign(schema: &crate::parse::Schema, rules: &RoleRules) -> RoleMap {
    let mut map = RoleMap::default();
    let mut by_name = Vec::new();
    for col in &schema.columns {
        let norm = normalize(&col.name);
        let over = rules
            .overrides
            .iter()
            .rev()
            .find(|(n, _)| normalize(n) == norm)
            .map(|(_, r)| *r);
        let inferred = schema.inferred.iter().find(|x| x.column == map.roles.len());
        let (mut role, mut why) = match (over, inferred) {
            (Some(r), _) => (r, "set by configuration".to_owned()),
            (None, Some(x)) => (x.role, x.reason.clone()),
            (None, None) => detect(&col.name, col.unit.as_deref()),
        };
        by_name.push(over.is_none() && inferred.is_none());
        let single = matches!(role, Role::Time | Role::StepSize | Role::StepNumber);
        if single && over.is_none() && map.roles.contains(&role) {
            why = format!("{why}, but an earlier column already has this role: probe");
            role = Role::Probe;
        }
        map.roles.push(role);
        map.reasons.push(why);
    }
    no_double_counting(schema, &by_name, &mut map);
    map.signs = map
        .roles
        .iter()
        .map(|r| match r {
            Role::Energy(term) => rules.sign(*term),
            _ => 1.0,
        })
        .collect();
    map
}

/// See [`assign`]: parts of the potential energy and extra totals become probes.
fn no_double_counting(schema: &crate::parse::Schema, by_name: &[bool], map: &mut RoleMap) {
    let name = |i: usize| schema.columns[i].name.as_str();
    let roles = map.roles.clone();
    let named = |i: usize, t: EnergyTerm| by_name[i] && roles[i] == Role::Energy(t);
    let n = roles.len();
    let internal: Vec<usize> = (0..n).filter(|&i| named(i, EnergyTerm::Internal)).collect();
    let whole = internal
        .iter()
        .copied()
        .find(|&i| !super::vocab::is_energy_part(name(i)));
    if let Some(w) = whole {
        for &i in internal
            .iter()
            .filter(|&&i| super::vocab::is_energy_part(name(i)))
        {
            map.roles[i] = Role::Probe;
            map.reasons[i] = format!(
                "a part of the potential energy, which \"{}\" holds whole: a probe",
                name(w)
            );
        }
    }
    let totals: Vec<usize> = (0..n).filter(|&i| named(i, EnergyTerm::Total)).collect();
    let keep = totals
        .iter()
        .copied()
        .find(|&i| {
            super::vocab::tokens(name(i))
                .iter()
                .any(|t| t.contains("conserv"))
        })
        .or(totals.first().copied());
    if let Some(k) = keep {
        for &i in totals.iter().filter(|&&i| i != k) {
            map.roles[i] = Role::Probe;
            map.reasons[i] = format!(
                "another total energy; the balance uses \"{}\": a probe",
                name(k)
            );
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parse::Schema;
    use crate::parse::header::split_unit;

    fn role(name: &str) -> Role {
        let c = split_unit(name);
        detect(&c.name, c.unit.as_deref()).0
    }

    #[test]
    fn plain_words() {
        assert_eq!(role("Time [s]"), Role::Time);
        assert_eq!(role("time_step"), Role::StepSize);
        assert_eq!(role("dt"), Role::StepSize);
        assert_eq!(role("Step"), Role::StepNumber);
        assert_eq!(
            role("kinetic energy (J)"),
            Role::Energy(EnergyTerm::Kinetic)
        );
        assert_eq!(role("Strain-Energy"), Role::Energy(EnergyTerm::Internal));
        assert_eq!(role("W_ext"), Role::Energy(EnergyTerm::ExternalWork));
        assert_eq!(
            role("hourglass energy"),
            Role::Energy(EnergyTerm::Artificial)
        );
        assert_eq!(
            role("friction energy"),
            Role::Energy(EnergyTerm::Dissipated)
        );
        assert_eq!(role("Total Energy"), Role::Energy(EnergyTerm::Total));
        assert_eq!(role("newton iterations"), Role::Iterations);
        assert_eq!(role("residual norm"), Role::Residual);
        assert_eq!(role("wall time [s]"), Role::Probe);
        assert_eq!(role("disp node 12 [µm]"), Role::Probe);
        assert_eq!(role("TimeStep"), Role::StepSize);
        assert_eq!(role("contact force"), Role::Probe);
        assert_eq!(role("E_damp [J]"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("E_hg"), Role::Energy(EnergyTerm::Artificial));
        assert_eq!(role("Edamp"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("e_interface"), Role::Energy(EnergyTerm::Artificial));
        assert_eq!(role("visc energy"), Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(role("edge"), Role::Probe);
        assert_eq!(role("u_x"), Role::Probe);
        assert_eq!(role("plastic strain"), Role::Probe);
        assert_eq!(
            role("total kinetic energy"),
            Role::Energy(EnergyTerm::Kinetic)
        );
    }

    /// Energy columns as structural, multibody and particle codes name them
    /// (issue 13, failure class 1), each beside a healthy name of another code
    /// that must stay a probe.
    #[test]
    fn energy_vocabulary_and_what_it_must_not_capture() {
        use EnergyTerm::*;
        let energy = [
            ("damping", Dissipated),
            ("DAMP", Dissipated),
            ("D_damp", Dissipated),
            ("damping_dissipation", Dissipated),
            ("contact_dissipation", Dissipated),
            ("Ecouple", Dissipated),
            ("thermostat work", Dissipated),
            ("strain", Internal),
            ("potential", Internal),
            ("PE", Internal),
            ("SE", Internal),
            ("W_int", Internal),
            ("Elastic", Internal),
            ("KinEng", Kinetic),
            ("Ekin", Kinetic),
            ("EKin", Kinetic),
            ("KE", Kinetic),
            ("Ekin_1", Kinetic),
            ("PotEng", Internal),
            ("Epot[eV]", Internal),
            ("E_pair", Internal),
            ("E_mol", Internal),
            ("TotEng", Total),
            ("Etot[eV]", Total),
            ("Etot/N [eV]", Total),
            ("Ekin/N", Kinetic),
            ("Econserve", Total),
            ("contact energy", Artificial),
            ("E_contact", Artificial),
            ("hourglass_dissipation", Artificial),
            ("KE_total", Kinetic),
            ("total_KE", Kinetic),
            ("PE_sum", Internal),
            ("IE_total", Internal),
        ];
        for (name, term) in energy {
            assert_eq!(role(name), Role::Energy(term), "{name}");
        }
        let probes = [
            "contact_force",
            "step_time",
            "potential_drop",
            "electric potential",
            "damping_ratio",
            "damping coefficient",
            "strain_rate",
            "strain_1",
            "plastic strain",
            "kinematic viscosity",
            "viscosity",
            "friction coefficient",
            "total mass",
            "external force",
            "pair",
            "Temp",
            "T[K]",
            "T (degC)",
            "thermostat temperature",
            "Press",
            "Volume",
            "CPU",
            "kin_visc",
            "atoms",
            // Short forms beside a word of another quantity.
            "KE_max",
            "PE_ratio",
            "ie_count",
            "pe_rank",
            "se_x",
        ];
        for name in probes {
            assert_eq!(role(name), Role::Probe, "{name}");
        }
        assert_eq!(role("Time[ps]"), Role::Time);
        assert_eq!(role("Step"), Role::StepNumber);
    }

    #[test]
    fn parts_and_second_totals_are_not_counted_twice() {
        let schema = Schema {
            columns: [
                "Step",
                "Temp",
                "E_pair",
                "E_mol",
                "TotEng",
                "PotEng",
                "Econserve",
            ]
            .iter()
            .map(|n| split_unit(n))
            .collect(),
            ..Schema::default()
        };
        let map = assign(&schema, &RoleRules::default());
        assert_eq!(map.roles[2], Role::Probe, "{}", map.reasons[2]);
        assert_eq!(map.roles[3], Role::Probe);
        assert_eq!(map.roles[5], Role::Energy(EnergyTerm::Internal));
        assert_eq!(map.roles[4], Role::Probe, "{}", map.reasons[4]);
        assert_eq!(map.roles[6], Role::Energy(EnergyTerm::Total));
        // Without a whole potential energy, the parts are its terms.
        let schema = Schema {
            columns: ["Step", "Temp", "E_pair", "E_mol", "TotEng", "Press"]
                .iter()
                .map(|n| split_unit(n))
                .collect(),
            ..Schema::default()
        };
        let map = assign(&schema, &RoleRules::default());
        assert_eq!(map.roles[2], Role::Energy(EnergyTerm::Internal));
        assert_eq!(map.roles[3], Role::Energy(EnergyTerm::Internal));
        assert_eq!(map.roles[4], Role::Energy(EnergyTerm::Total));
        assert_eq!(map.roles[1], Role::Probe);
    }

    #[test]
    fn overrides_and_signs() {
        let schema = Schema {
            columns: ["t", "ext work", "Q"]
                .iter()
                .map(|n| split_unit(n))
                .collect(),
            ..Schema::default()
        };
        let rules = RoleRules {
            overrides: vec![("q".into(), Role::Energy(EnergyTerm::Dissipated))],
            signs: vec![(EnergyTerm::ExternalWork, -1.0)],
        };
        let map = assign(&schema, &rules);
        assert_eq!(map.roles[0], Role::Time);
        assert_eq!(map.roles[2], Role::Energy(EnergyTerm::Dissipated));
        assert_eq!(map.signs[1], -1.0);
        assert_eq!(map.reasons[2], "set by configuration");
    }
}
