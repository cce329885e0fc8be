"""Shared pieces of the real-solver drivers: the label of one run, the
labels.csv writer, and the readings every driver makes of the file its solver
wrote (which physical lines hold data rows, the first non-finite field).

A label says what the run did, from the solver's own state, in the terms
rhoscope is scored on (see `rhoscope evaluate --labels`):

- level: ok (healthy), warning (energy drift) or critical (numerical blow-up);
- onset_line: the first physical line (1-based, counting every line of the
  file) where the trouble has started;
- crash_line: the first line holding a non-finite or overflowed field, or the
  last line written when the solver stops with its own error;
- rows: how many data rows the file holds;
- basis: in words, what the label was decided from.
"""

import csv
import math
import os
import re
from dataclasses import dataclass
from typing import Callable, List, Optional

LEVELS = ("ok", "warning", "critical")


@dataclass
class Label:
    """The label of one generated file."""

    case: str
    file: str
    solver: str
    level: str
    onset_line: Optional[int]
    crash_line: Optional[int]
    basis: str
    # Data rows in the file as its solver wrote them (for the reading checks).
    rows: int = 0
    # The solver's time step, when the run has a fixed one the file may not
    # write (structural recorders); and omega_max * dt at the start, from the
    # solver's own eigen analysis.
    step_size: Optional[float] = None
    omega_max_dt: Optional[float] = None

    def __post_init__(self):
        if self.level not in LEVELS:
            raise ValueError(f"{self.case}: level '{self.level}' is not one of {LEVELS}")
        if self.level == "ok" and (self.onset_line or self.crash_line):
            raise ValueError(f"{self.case}: a healthy run has no onset or crash line")
        if self.level == "critical" and self.crash_line is None:
            raise ValueError(f"{self.case}: a blow-up needs its crash line")
        if (
            self.onset_line is not None
            and self.crash_line is not None
            and self.onset_line > self.crash_line
        ):
            raise ValueError(
                f"{self.case}: onset line {self.onset_line} after crash line {self.crash_line}"
            )


def expect(level: str, label: Label) -> Label:
    """The run was designed to end at `level`; a solver that behaves otherwise
    (another version, another platform) fails the generation loudly rather
    than quietly changing what the set tests."""
    if label.level != level:
        raise RuntimeError(f"{label.case}: designed as {level}, labelled {label.level} ({label.basis})")
    return label


def write_labels(directory: str, labels: List[Label]) -> str:
    """Write labels.csv into `directory`; return its path."""
    path = os.path.join(directory, "labels.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(
            ["case", "file", "solver", "level", "onset_line", "crash_line", "rows", "basis", "step_size", "omega_max_dt"]
        )
        for l in labels:
            w.writerow(
                [
                    l.case,
                    l.file,
                    l.solver,
                    l.level,
                    "" if l.onset_line is None else l.onset_line,
                    "" if l.crash_line is None else l.crash_line,
                    l.rows,
                    l.basis,
                    "" if l.step_size is None else repr(l.step_size),
                    "" if l.omega_max_dt is None else repr(l.omega_max_dt),
                ]
            )
    return path


_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eEdD][+-]?\d+)?$")


def field_value(text: str) -> float:
    """A printed field as a float: NaN and infinity spellings as such, a field
    of asterisks (too wide for its print format) as infinity, anything else
    that is not a number as NaN."""
    t = text.strip()
    if t and set(t) == {"*"}:
        return math.inf
    try:
        return float(t.replace("D", "E").replace("d", "e"))
    except ValueError:
        return math.nan


def is_bad(value: float) -> bool:
    """Not finite: a printed NaN or infinity, a value too large for double
    precision (IEEE 754 binary64, past 1.8e308) or a field of asterisks."""
    return not math.isfinite(value)


@dataclass
class Rows:
    """The data rows of a written file: their physical line numbers and
    values, in file order."""

    lines: List[int]
    values: List[List[float]]

    def first_bad_line(self) -> Optional[int]:
        """First line with a non-finite or overflowed (asterisk) field."""
        for line, row in zip(self.lines, self.values):
            if any(is_bad(v) for v in row):
                return line
        return None

    def line_at_time(self, t: float, time_col: int = 0) -> Optional[int]:
        """First data line whose time is at or past `t` (within a relative
        rounding of the printed digits)."""
        tol = 1e-6 * max(1.0, abs(t))
        for line, row in zip(self.lines, self.values):
            if row[time_col] >= t - tol:
                return line
        return None

    def column(self, i: int) -> List[float]:
        return [r[i] for r in self.values]


def read_rows(path: str, is_data: Callable[[str], bool]) -> Rows:
    """Split a text file into data rows, keeping physical line numbers; a line
    is a data row when `is_data(line)` says so."""
    lines, values = [], []
    with open(path, encoding="utf-8", errors="replace") as f:
        for n, text in enumerate(f, start=1):
            if is_data(text):
                lines.append(n)
                values.append([field_value(x) for x in text.split()])
    return Rows(lines, values)


def numeric_line(text: str) -> bool:
    """Every whitespace-separated field looks like a number (or a printed
    non-finite value), and there is at least one."""
    fields = text.split()
    if not fields:
        return False
    for x in fields:
        low = x.lower().lstrip("+-")
        if _NUMBER.match(x) or low in ("nan", "inf", "infinity") or set(x) == {"*"}:
            continue
        return False
    return True


def energy_scale(kinetic: List[float]) -> float:
    """Peak kinetic energy of the finite rows: the energy that moves. The
    potential energy of a particle system has an arbitrary zero, so it cannot
    be the scale (common practice, no source)."""
    finite = [abs(k) for k in kinetic if math.isfinite(k)]
    return max(finite) if finite else 0.0


# Energy rules of the particle-dynamics labels, as multiples of the energy
# scale: the peak kinetic energy of the first SCALE_ROWS rows, the energy that
# moves before anything can have gone wrong (a runaway's own kinetic energy
# must not set the yardstick it is measured by).
SCALE_ROWS = 20
DRIFT = 0.05  # a drift passes 5 % (the warning threshold rhoscope's own catalogue uses)
RUNAWAY = 10.0  # energy created from nothing, ten times what moves: a blow-up
CRASH = 100.0  # a runaway that stays finite is over at a hundred times


def md_label(
    case: str,
    file: str,
    solver: str,
    rows: Rows,
    etot: List[float],
    ekin: List[float],
    scheme: str,
    offending_line: Optional[int] = None,
    solver_error: Optional[str] = None,
    thermostat: Optional[str] = None,
) -> Label:
    """Label a particle-dynamics run from the energies its solver wrote.

    - critical: a field turns non-finite, the solver stops with its own error
      (`solver_error`), or the total energy rises past RUNAWAY times the
      energy scale above its first value. onset = `offending_line`, the first
      row written at the step size that ran away (the first row of the file,
      or the first after a restart with a larger step); crash = the first
      non-finite line, else the last line before the solver's error, else
      the first line past CRASH times the scale.
    - warning: |total energy - first value| passes DRIFT times the scale
      (onset there), in a run whose balance should close (no thermostat).
    - ok: otherwise, and every thermostatted run that does not run away: a
      thermostat exchanges energy with a bath that the log does not write
      (`thermostat` says which).

    Velocity Verlet conserves a nearby energy for steps well inside its
    limit omega*dt < 2 (Leimkuhler & Matthews, *Molecular Dynamics*, 2015,
    from memory); past it, or with close encounters that the step cannot
    resolve, the total energy climbs and the run falls apart.
    """
    e0 = next((e for e in etot if math.isfinite(e)), math.nan)
    scale = energy_scale(ekin[:SCALE_ROWS])
    if not scale > 0.0:
        raise RuntimeError(f"{case}: no kinetic energy in the first {SCALE_ROWS} rows to scale by")
    runaway, past_crash, drift = None, None, None
    worst = 0.0
    for line, e in zip(rows.lines, etot):
        if not math.isfinite(e):
            continue
        rel = (e - e0) / scale
        worst = max(worst, abs(rel))
        if rel > RUNAWAY and runaway is None:
            runaway = line
        if rel > CRASH and past_crash is None:
            past_crash = line
        if abs(rel) > DRIFT and drift is None:
            drift = line
    bad = rows.first_bad_line()
    how = f"{solver} {scheme}; energy scale: peak kinetic energy of the first {SCALE_ROWS} rows ({scale:.4g})"
    if bad is not None or solver_error is not None or runaway is not None:
        if offending_line is None:
            raise RuntimeError(f"{case}: ran away without a step change to date its onset")
        if bad is not None:
            crash, why = bad, "first line with a non-finite field"
        elif solver_error is not None:
            crash, why = rows.lines[-1], f"last line written before the solver's own error ({solver_error})"
        elif past_crash is not None:
            crash, why = past_crash, f"no non-finite field; first line where the total energy passed {CRASH:g}x the scale"
        else:
            crash, why = rows.lines[-1], "no non-finite field; last line of the run"
        rise = f"total energy rose {worst:.3g}x the scale" if runaway is not None else "no runaway in the energies"
        basis = f"{how}; {rise}; onset: first row at the step that ran away; crash: {why}"
        return Label(case, file, solver, "critical", offending_line, crash, basis, len(rows.lines))
    # Labels near the drift threshold would score noise: a run is labelled
    # healthy only well under it, and drifting only well past it.
    if thermostat is None and DRIFT / 2 < worst < 2 * DRIFT:
        raise RuntimeError(f"{case}: total energy change {worst:.3g}x the scale is too near the drift threshold to label")
    if thermostat is not None:
        basis = f"{how}; {thermostat}; no runaway (largest change {worst:.3g}x the scale)"
        return Label(case, file, solver, "ok", None, None, basis, len(rows.lines))
    if drift is not None:
        basis = f"{how}; total energy off its first value by {worst:.3g}x the scale (passes {DRIFT:g} at the onset), no runaway"
        return Label(case, file, solver, "warning", drift, None, basis, len(rows.lines))
    basis = f"{how}; total energy within {worst:.3g}x the scale of its first value"
    return Label(case, file, solver, "ok", None, None, basis, len(rows.lines))
