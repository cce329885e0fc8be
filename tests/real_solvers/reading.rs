//! Reading what the real solvers wrote: `rhoscope columns` names the columns
//! and roles a practitioner expects, `scan --json` counts only data rows,
//! lists each new run as a segment, and every alarm carries a time.
//!
//! Formats followed: OpenSees `recorder Node -file/-xml ... -time` writes one
//! whitespace row per output with time first, and `-xml` wraps the same rows
//! in a `<Data>` element after `<TimeOutput>` and `<NodeOutput nodeTag=..>`
//! elements whose `<ResponseType>` is e.g. `D1` (OpenSees command manual,
//! "Node Recorder"); ASE's `MDLogger` writes `Time[ps] Etot[eV] Epot[eV]
//! Ekin[eV] T[K]`, `/N` per atom, and a `stress [GPa]` banner over six stress
//! columns (ase.md.logger); LAMMPS logs open with a banner and the echoed
//! input, then per `run` a thermo header of keywords (`Step Temp E_pair E_mol
//! TotEng Press` by default) over numeric rows, closed by `Loop time of`
//! (LAMMPS manual, `thermo_style`).

use super::{Case, columns, runs, scan};

fn names(cols: &[rhoscope::report::ColumnEntry]) -> Vec<&str> {
    cols.iter().map(|c| c.name.as_str()).collect()
}

fn assert_md_roles(c: &Case, cols: &[rhoscope::report::ColumnEntry]) {
    // The name as written, or with the per-atom `/N` kept.
    let role_of = |prefix: &str| {
        cols.iter()
            .find(|col| col.name == prefix || col.name.starts_with(&format!("{prefix}/")))
            .map(|col| col.role.as_str())
            .unwrap_or_else(|| panic!("{}: no column {prefix}: {:?}", c.file, names(cols)))
    };
    assert_eq!(role_of("Time"), "time", "{}", c.file);
    assert_eq!(role_of("Etot"), "total", "{}", c.file);
    assert_eq!(role_of("Epot"), "internal", "{}", c.file);
    assert_eq!(role_of("Ekin"), "kinetic", "{}", c.file);
    assert_eq!(role_of("T"), "probe", "{}", c.file);
}

#[test]
fn ase_logs_give_the_energy_roles() {
    let Some(r) = runs() else { return };
    let logs: Vec<&Case> = r
        .by_solver("ase")
        .into_iter()
        .filter(|c| !c.case.ends_with("peratom"))
        .collect();
    assert!(logs.len() >= 4);
    for c in logs {
        let cols = columns(&r.path(c));
        assert_md_roles(c, &cols);
    }
}

#[test]
fn ase_logs_count_rows_and_restarts() {
    let Some(r) = runs() else { return };
    for c in r.by_solver("ase") {
        let rep = scan(&r.path(c));
        assert_eq!(rep.rows, c.rows, "{}: data rows", c.file);
        assert_eq!(rep.skipped_rows, 0, "{}: {:?}", c.file, rep.skipped);
    }
    // A restart appends to the log and writes the header again.
    let rep = scan(&r.path(r.case("ase-cu-restart-larger-step")));
    assert_eq!(rep.segments.len(), 1, "{:?}", rep.segments);
    assert_eq!(rep.segments[0].reason, "new_header");
}
