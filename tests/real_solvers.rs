//! Histories written by real solvers from the package registries, generated
//! at test time by `tests/solvers/generate.py` (never committed): OpenSees
//! (openseespy: central difference, ExplicitDifference, Newmark, HHT-α, its
//! `Node` recorders headerless, in XML and every k steps, labelled from its
//! own `eigen` against the central-difference limit ω·Δt = 2, Hughes, *The
//! Finite Element Method*, 1987, §9.1, from memory), ASE (velocity Verlet and
//! Langevin, its own MD logger) and LAMMPS (`fix nve`/`fix nvt`, its own log
//! with banner, echoed input and thermo tables), the last two labelled from the
//! energies they report. Each label's basis is written beside it in
//! `labels.csv`.
//!
//! The set is generated once per test process into cargo's scratch folder for
//! integration tests. Under `CI=true` a missing solver package fails the tests
//! with a message; elsewhere they are skipped with a printed notice. `.ci/run`
//! installs the packages.

mod detection;
mod reading;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

use rhoscope::report::{ColumnEntry, ScanReport};

/// One labelled run, as `labels.csv` lists it.
#[derive(Debug, Clone, serde::Deserialize)]
pub struct Case {
    pub case: String,
    pub file: String,
    pub solver: String,
    pub level: String,
    pub onset_line: Option<u64>,
    pub crash_line: Option<u64>,
    /// Data rows the solver wrote (counted by the driver with the solver's
    /// own layout in mind).
    pub rows: u64,
    pub basis: String,
    /// The solver's fixed time step, when the driver knows it.
    #[serde(default)]
    pub step_size: Option<f64>,
    /// ω_max·Δt at the start of the run, from the solver's own eigen analysis.
    #[serde(default)]
    pub omega_max_dt: Option<f64>,
}

/// The generated set.
pub struct Runs {
    pub dir: PathBuf,
    pub cases: Vec<Case>,
}

impl Runs {
    pub fn path(&self, c: &Case) -> PathBuf {
        self.dir.join(&c.file)
    }

    pub fn by_solver(&self, solver: &str) -> Vec<&Case> {
        self.cases.iter().filter(|c| c.solver == solver).collect()
    }

    pub fn case(&self, name: &str) -> &Case {
        self.cases
            .iter()
            .find(|c| c.case == name)
            .unwrap_or_else(|| panic!("no generated case named {name}"))
    }
}

static RUNS: OnceLock<Option<Runs>> = OnceLock::new();

/// The generated set, or None (after a printed notice) when a solver package
/// is missing outside CI.
pub fn runs() -> Option<&'static Runs> {
    RUNS.get_or_init(generate).as_ref()
}

fn unavailable(why: &str) -> Option<Runs> {
    crate::external::missing(&format!(
        "real-solver checks: {why} (.ci/run installs what they need)"
    ));
    None
}

fn generate() -> Option<Runs> {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("real-solvers");
    let _ = std::fs::remove_dir_all(&dir);
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/solvers/generate.py");
    let out = match Command::new("python3").arg(&script).arg(&dir).output() {
        Ok(out) => out,
        Err(e) => return unavailable(&format!("python3 could not be started: {e}")),
    };
    let stderr = String::from_utf8_lossy(&out.stderr);
    match out.status.code() {
        Some(0) => {}
        Some(4) => return unavailable(stderr.trim()),
        _ => panic!(
            "generating the real-solver runs failed ({}): {stderr}",
            out.status
        ),
    }
    eprint!("{stderr}");
    let labels = dir.join("labels.csv");
    let mut reader = csv::Reader::from_path(&labels)
        .unwrap_or_else(|e| panic!("reading {}: {e}", labels.display()));
    let cases: Vec<Case> = reader
        .deserialize()
        .collect::<Result<_, _>>()
        .unwrap_or_else(|e| panic!("parsing {}: {e}", labels.display()));
    assert!(!cases.is_empty(), "{} lists no run", labels.display());
    Some(Runs { dir, cases })
}

fn bin() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("rhoscope").unwrap()
}

/// `rhoscope columns --json FILE`.
pub fn columns(path: &Path) -> Vec<ColumnEntry> {
    let out = bin()
        .args(["columns", "--json"])
        .arg(path)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "columns {}: {}",
        path.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("columns --json {}: {e}", path.display()))
}

/// `rhoscope scan --json FILE`.
pub fn scan(path: &Path) -> ScanReport {
    scan_with(path, &[])
}

/// `rhoscope scan --json ARGS FILE`.
pub fn scan_with(path: &Path, args: &[&str]) -> ScanReport {
    let out = bin()
        .args(["scan", "--json"])
        .args(args)
        .arg(path)
        .output()
        .unwrap();
    serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "scan --json {}: {e}; stderr: {}",
            path.display(),
            String::from_utf8_lossy(&out.stderr)
        )
    })
}

#[test]
fn the_set_covers_each_solver_and_each_outcome() {
    let Some(r) = runs() else { return };
    for solver in ["opensees", "ase", "lammps"] {
        let n = r.by_solver(solver).len();
        assert!(n >= 5, "{solver}: only {n} runs");
    }
    let count = |level: &str| r.cases.iter().filter(|c| c.level == level).count();
    let (crit, warn, ok) = (count("critical"), count("warning"), count("ok"));
    assert!(
        crit >= 8 && warn >= 2 && ok >= 8,
        "{crit} blow-ups, {warn} drifts, {ok} healthy"
    );
    for c in &r.cases {
        assert!(
            r.path(c).is_file(),
            "{}: {} was not written",
            c.case,
            c.file
        );
        assert!(c.rows > 0, "{}: no data rows", c.case);
        assert!(!c.basis.is_empty(), "{}: no basis", c.case);
        match c.level.as_str() {
            "critical" => assert!(
                c.onset_line
                    .is_some_and(|o| c.crash_line.is_some_and(|k| o <= k)),
                "{}: a blow-up needs onset ≤ crash",
                c.case
            ),
            "warning" => assert!(c.onset_line.is_some() && c.crash_line.is_none()),
            "ok" => assert!(c.onset_line.is_none() && c.crash_line.is_none()),
            other => panic!("{}: unknown level {other}", c.case),
        }
    }
}
