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

use super::{Case, Runs, bin, columns, runs, scan, scan_with};
use rhoscope::report::ColumnEntry;

/// Roles of the columns, in order.
fn roles(cols: &[ColumnEntry]) -> Vec<&str> {
    cols.iter().map(|c| c.role.as_str()).collect()
}

/// Cases whose file name ends with `suffix`.
fn with_suffix<'a>(r: &'a Runs, suffix: &str) -> Vec<&'a Case> {
    r.cases
        .iter()
        .filter(|c| c.file.ends_with(suffix))
        .collect()
}

fn names(cols: &[ColumnEntry]) -> Vec<&str> {
    cols.iter().map(|c| c.name.as_str()).collect()
}

fn assert_md_roles(c: &Case, cols: &[ColumnEntry]) {
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
    // Per atom (`MDLogger(peratom=True)`) the same terms are written as
    // `Etot/N[eV] Epot/N[eV] Ekin/N[eV]`, and keep their roles.
    let logs = r.by_solver("ase");
    assert!(logs.len() >= 5);
    assert!(logs.iter().any(|c| c.case.ends_with("peratom")));
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

#[test]
fn headerless_recorders_read_time_first() {
    let Some(r) = runs() else { return };
    let files = with_suffix(r, ".out");
    assert!(!files.is_empty());
    for c in files {
        let cols = columns(&r.path(c));
        let roles = roles(&cols);
        assert_eq!(
            roles[0], "time",
            "{}: the recorder's first column is time ({:?})",
            c.file, cols[0]
        );
        assert_eq!(
            roles.iter().filter(|&&x| x == "time").count(),
            1,
            "{}: one time column ({roles:?})",
            c.file
        );
    }
}

#[test]
fn xml_recorders_are_named_from_their_markup() {
    let Some(r) = runs() else { return };
    let files = with_suffix(r, ".xml");
    assert!(!files.is_empty());
    for c in files {
        let cols = columns(&r.path(c));
        assert_eq!(roles(&cols)[0], "time", "{}: {cols:?}", c.file);
        // The frame's recorders list nodes 1..6, dof 1: six displacement columns.
        assert_eq!(cols.len(), 7, "{}: {:?}", c.file, names(&cols));
        for (i, col) in cols[1..].iter().enumerate() {
            let n = col.name.to_lowercase();
            let node = (i + 1).to_string();
            assert!(
                n.contains("d1") && n.split(|ch: char| !ch.is_ascii_digit()).any(|t| t == node),
                "{}: column {} should name node {node} and D1, got {:?}",
                c.file,
                i + 2,
                col.name
            );
        }
    }
}

#[test]
fn recorder_files_count_only_data_rows() {
    let Some(r) = runs() else { return };
    for c in r.by_solver("opensees") {
        let rep = scan(&r.path(c));
        assert_eq!(rep.rows, c.rows, "{}: data rows", c.file);
        assert_eq!(
            rep.skipped_rows, 0,
            "{}: nothing in a recorder file is a bad row ({:?})",
            c.file, rep.skipped
        );
    }
}

#[test]
fn ase_stress_banner_does_not_name_columns() {
    let Some(r) = runs() else { return };
    let c = r.case("ase-cu-nve-stress");
    let cols = columns(&r.path(c));
    assert_eq!(cols.len(), 11, "{:?}", names(&cols));
    for col in &cols[5..] {
        assert!(
            !col.name.contains("--") && !col.name.eq_ignore_ascii_case("stress"),
            "a banner word became a column name: {:?}",
            names(&cols)
        );
        assert_eq!(col.role, "probe", "{col:?}");
    }
}

#[test]
fn lammps_logs_find_the_thermo_table() {
    let Some(r) = runs() else { return };
    let custom = columns(&r.path(r.case("lmp-lj-nve")));
    assert_eq!(
        names(&custom),
        [
            "Step", "Time", "Temp", "KinEng", "PotEng", "TotEng", "Press"
        ]
    );
    assert_eq!(
        roles(&custom),
        [
            "step_number",
            "time",
            "probe",
            "kinetic",
            "internal",
            "total",
            "probe"
        ]
    );
    let default = columns(&r.path(r.case("lmp-lj-nve-default-thermo")));
    assert_eq!(
        names(&default),
        ["Step", "Temp", "E_pair", "E_mol", "TotEng", "Press"]
    );
    let role = |n: &str| {
        default
            .iter()
            .find(|c| c.name == n)
            .map(|c| c.role.as_str())
            .unwrap()
    };
    assert_eq!(role("Step"), "step_number");
    assert_eq!(role("Temp"), "probe");
    assert_eq!(role("E_pair"), "internal");
    assert_eq!(role("TotEng"), "total");
}

#[test]
fn lammps_logs_count_rows_and_runs() {
    let Some(r) = runs() else { return };
    for c in r.by_solver("lammps") {
        let rep = scan(&r.path(c));
        assert_eq!(rep.rows, c.rows, "{}: thermo rows", c.file);
        assert_eq!(
            rep.skipped_rows, 0,
            "{}: banner, echoed input and run statistics are outside the table: {:?}",
            c.file, rep.skipped
        );
    }
    for name in [
        "lmp-lj-equilibrate-then-nve",
        "lmp-lj-second-run-larger-step",
    ] {
        let rep = scan(&r.path(r.case(name)));
        assert_eq!(
            rep.segments.len(),
            1,
            "{name}: the second run is a new segment: {:?}",
            rep.segments
        );
    }
}

/// The LAMMPS logs written with the default thermo table (no time column).
const DEFAULT_THERMO: [&str; 2] = ["lmp-lj-nve-default-thermo", "lmp-lj-nve-step-too-large"];

#[test]
fn every_alarm_carries_a_time() {
    let Some(r) = runs() else { return };
    let mut alarms = 0;
    for c in &r.cases {
        let rep = scan(&r.path(c));
        alarms += rep.alarms.len();
        for a in &rep.alarms {
            assert!(
                a.time.is_some(),
                "{}: alarm at line {} has no time: {}",
                c.file,
                a.line,
                a.message
            );
        }
    }
    assert!(alarms >= 10, "only {alarms} alarms over the set");
}

/// The default thermo table has `Step` but no time; the log echoes
/// `timestep 0.026` before the run, so an alarm's time is its row's step
/// times that (LAMMPS manual, `timestep` and `thermo_style one`). The test
/// reads the step size and the row's step from the log itself.
#[test]
fn lammps_default_thermo_time_is_step_times_the_echoed_timestep() {
    let Some(r) = runs() else { return };
    let mut checked = 0;
    for name in DEFAULT_THERMO {
        let path = r.path(r.case(name));
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        let dt: f64 = lines
            .iter()
            .find_map(|l| l.trim().strip_prefix("timestep "))
            .unwrap_or_else(|| panic!("{name}: no timestep line"))
            .trim()
            .parse()
            .unwrap();
        // The healthy run may raise none; the run with too large a step does.
        let rep = scan(&path);
        for a in &rep.alarms {
            let row = lines[a.line as usize - 1];
            let step: f64 = row.split_whitespace().next().unwrap().parse().unwrap();
            let t = a
                .time
                .unwrap_or_else(|| panic!("{name}: line {} has no time", a.line));
            assert!(
                (t - step * dt).abs() <= 1e-9 * (step * dt).abs().max(1.0),
                "{name}: line {}: time {t}, step {step} × {dt}",
                a.line
            );
            checked += 1;
        }
    }
    assert!(checked >= 2);
}

/// Spectral radius of central difference on the undamped oscillator past its
/// limit: the roots of λ² − (2 − Ω²)λ + 1 = 0, so ρ = |b| + √(b² − 1) with
/// b = 1 − Ω²/2, for Ω = ω·Δt > 2 (Hughes, *The Finite Element Method*, 1987,
/// §9.1, from memory).
fn central_difference_rho(omega_dt: f64) -> f64 {
    let b = 1.0 - omega_dt * omega_dt / 2.0;
    b.abs() + (b * b - 1.0).max(0.0).sqrt()
}

/// OpenSees recorders write time but no step counter, so the stride of an
/// every-k file is unknown until the solver's step is given: with
/// `--step-size` the note names the k the recorder was set to, and the growth
/// per solver step of a run past the limit from its first step is the closed
/// form at the ω_max·Δt of OpenSees's own eigen analysis.
#[test]
fn a_given_step_size_gives_the_stride_and_growth_per_step() {
    let Some(r) = runs() else { return };
    let mut checked = 0;
    for c in r.by_solver("opensees") {
        let (Some(dt), Some(w)) = (c.step_size, c.omega_max_dt) else {
            panic!("{}: labels.csv gives no step size or ω_max·Δt", c.case)
        };
        let every: u32 = c
            .case
            .rsplit_once("-every")
            .map_or(1, |(_, k)| k.parse().unwrap());
        let path = r.path(c);
        let dt_arg = format!("{dt:e}");
        if every > 1 {
            let out = bin()
                .args(["columns", "--step-size", &dt_arg])
                .arg(&path)
                .output()
                .unwrap();
            let text = String::from_utf8_lossy(&out.stdout);
            assert!(
                text.contains(&format!("output every {every} solver steps")),
                "{}: {text}",
                c.case
            );
        }
        // Past the limit from the start, with no event changing ω_max.
        if c.level != "critical" || w < 2.02 || c.basis.contains("engaged") {
            continue;
        }
        let rep = scan_with(&path, &["--step-size", &dt_arg]);
        let growth = rep
            .alarms
            .iter()
            .find_map(|a| a.evidence.growth_per_step)
            .unwrap_or_else(|| panic!("{}: no growth estimate: {:?}", c.case, rep.alarms));
        let want = central_difference_rho(w);
        assert!(
            (growth / want - 1.0).abs() < 0.02,
            "{}: growth ×{growth:.4} per step, closed form ×{want:.4} at ω·Δt = {w}",
            c.case
        );
        checked += 1;
    }
    assert!(
        checked >= 3,
        "only {checked} runs past the limit from the start"
    );
}
