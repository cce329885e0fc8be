"""Particle runs written by ASE (the `ase` package): its VelocityVerlet and
Langevin integrators and its own MD logger (`Time[ps] Etot[eV] Epot[eV]
Ekin[eV] T[K]`, optionally per atom and with the stress banner), labelled
from the energies ASE reports (see `labels.md_label`).

The system is an invented one: 32 copper atoms in a periodic fcc cell with
ASE's EMT potential, started from a Maxwell-Boltzmann draw with a fixed seed.
Step sizes: 4 fs conserves energy; around 20-26 fs the total energy moves by
several per cent and stays; at 30 fs it climbs and runs away (the harmonic
limit from ASE's own Hessian, `ase.vibrations`, is about 41 fs, but close
encounters at 500-600 K need less).
"""

import os
import warnings
from typing import List

import numpy as np
from ase import units
from ase.calculators.emt import EMT
from ase.lattice.cubic import FaceCenteredCubic
from ase.md.langevin import Langevin
from ase.md.logger import MDLogger
from ase.md.velocitydistribution import MaxwellBoltzmannDistribution, Stationary
from ase.md.verlet import VelocityVerlet

from labels import Label, expect, md_label, numeric_line, read_rows

SOLVER = "ase"


def crystal(temperature_k: float, seed: int):
    atoms = FaceCenteredCubic("Cu", size=(2, 2, 2), pbc=True)
    atoms.calc = EMT()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        MaxwellBoltzmannDistribution(atoms, temperature_K=temperature_k, rng=np.random.default_rng(seed))
    Stationary(atoms)
    return atoms


def log_to(dyn, atoms, path: str, every: int, stress: bool = False, peratom: bool = False):
    """ASE's own MD logger, appending as ASE does by default (a restart
    writes its header again)."""
    logger = MDLogger(dyn, atoms, path, header=True, stress=stress, peratom=peratom, mode="a")
    dyn.attach(logger, interval=every)
    return logger


def energies(path: str):
    """Rows of an ASE MD log with the total (column 2) and kinetic (column 4)
    energies; a header line starts each segment."""
    rows = read_rows(path, numeric_line)
    return rows, rows.column(1), rows.column(3)


def header_lines(path: str) -> List[int]:
    with open(path) as f:
        return [n for n, text in enumerate(f, start=1) if text.startswith("Time[ps]")]


def nve(out: str, case: str, dt_fs: float, steps: int, every: int, temperature_k: float = 500.0, **log) -> Label:
    file = case + ".log"
    path = os.path.join(out, file)
    atoms = crystal(temperature_k, 7)
    dyn = VelocityVerlet(atoms, dt_fs * units.fs)
    logger = log_to(dyn, atoms, path, every, **log)
    dyn.run(steps)
    logger.close()
    rows, etot, ekin = energies(path)
    return md_label(
        case, file, SOLVER, rows, etot, ekin, f"velocity Verlet, dt = {dt_fs:g} fs, {temperature_k:g} K start", offending_line=rows.lines[0]
    )


def restart_larger_step(out: str) -> Label:
    """A healthy NVE run at 4 fs, then a restart from its last state with the
    step raised to 30 fs: the log gets a second header, and the run climbs."""
    case = "ase-cu-restart-larger-step"
    file = case + ".log"
    path = os.path.join(out, file)
    atoms = crystal(500.0, 11)
    first = VelocityVerlet(atoms, 4.0 * units.fs)
    logger = log_to(first, atoms, path, 2)
    first.run(400)
    logger.close()
    second = VelocityVerlet(atoms, 30.0 * units.fs)
    logger = log_to(second, atoms, path, 2)
    second.run(400)
    logger.close()
    rows, etot, ekin = energies(path)
    restart = header_lines(path)[1]
    onset = next(l for l in rows.lines if l > restart)
    return md_label(case, file, SOLVER, rows, etot, ekin, "velocity Verlet, 4 fs then 30 fs after a restart", offending_line=onset)


def langevin_heating(out: str) -> Label:
    """Langevin dynamics heating the crystal from 300 K towards 1000 K: the
    total energy rises, paid by the thermostat."""
    case = "ase-cu-langevin-heating"
    file = case + ".log"
    path = os.path.join(out, file)
    atoms = crystal(300.0, 5)
    dyn = Langevin(
        atoms, 4.0 * units.fs, temperature_K=1000.0, friction=0.01 / units.fs, fixcm=False, rng=np.random.default_rng(3)
    )
    logger = log_to(dyn, atoms, path, 2)
    dyn.run(600)
    logger.close()
    rows, etot, ekin = energies(path)
    return md_label(
        case, file, SOLVER, rows, etot, ekin, "Langevin (BBK-type), dt = 4 fs", offending_line=rows.lines[0], thermostat="Langevin thermostat towards 1000 K"
    )


def generate(out: str) -> List[Label]:
    """Write every ASE run into `out`; return their labels."""
    return [
        expect("ok", nve(out, "ase-cu-nve", 4.0, 600, 2)),
        expect("ok", nve(out, "ase-cu-nve-stress", 5.0, 600, 3, stress=True)),
        expect("ok", langevin_heating(out)),
        expect("warning", nve(out, "ase-cu-nve-drift", 20.0, 600, 2, temperature_k=600.0)),
        expect("warning", nve(out, "ase-cu-nve-drift-peratom", 26.0, 600, 2, peratom=True)),
        expect("critical", nve(out, "ase-cu-nve-step-too-large", 30.0, 500, 2)),
        expect("critical", restart_larger_step(out)),
    ]
