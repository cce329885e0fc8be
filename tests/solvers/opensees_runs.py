"""Structural runs written by OpenSees (the `openseespy` package) in its own
recorder formats, each labelled from OpenSees's own eigen analysis.

Every model is invented: a six-storey shear frame, a steel truss footbridge
and a pallet-rack column, with lumped masses. The files are what the
solver's `Node` recorders write: headerless whitespace rows with time first
(`-file ... -time`), the same wrapped in XML (`-xml`), and output every k
steps (`-dT`).

Labels:
- Central difference (and OpenSees's ExplicitDifference, the same scheme
  with damping taken explicitly) is stable for an undamped mode while
  omega*dt <= 2 (Hughes, *The Finite Element Method*, 1987, section 9.1,
  from memory). The largest omega comes from `eigen -fullGenLapack` on the
  current stiffness, rerun whenever the driver changes the structure (a
  stop engaging). onset = first written line at a time where
  omega_max*dt > 2.
- crash = first written line with a non-finite or overflowed field, or the
  last line written when the analysis returns its own error.
- Newmark average acceleration (gamma = 1/2, beta = 1/4) and HHT-alpha
  (alpha in [2/3, 1]) are unconditionally stable for linear systems
  (Newmark, 1959, J. Eng. Mech. Div. 85; Hilber, Hughes & Taylor, 1977,
  Earthquake Eng. Struct. Dyn. 5, from memory): their runs are labelled
  healthy when the response stays bounded, which the driver checks.
"""

import math
import os
from typing import Callable, List, Optional

import openseespy.opensees as ops

from labels import Label, expect, numeric_line, read_rows

CD_LIMIT = 2.0
SOLVER = "opensees"


# --------------------------------------------------------------------------
# Models


class Model:
    """A built OpenSees model: its free degrees of freedom, the nodes worth
    recording, and the element tags of stops the driver may engage."""

    def __init__(self, ndof: int, record_nodes: List[int], dofs: List[int]):
        self.ndof = ndof
        self.record_nodes = record_nodes
        self.dofs = dofs


def begin(ndm: int, ndf: int):
    ops.wipe()
    ops.logFile(os.devnull, "-noEcho")
    ops.model("basic", "-ndm", ndm, "-ndf", ndf)


def shear_frame(stop_gap: Optional[float] = None, stop_k: float = 0.0, pounding: Optional[tuple] = None) -> Model:
    """Six-storey shear frame: floor masses (t) and storey stiffnesses (kN/m)
    of an invented office block. Optional: a shear key at the roof that the
    driver engages when the roof drift reaches `stop_gap` (element 90,
    stiffness parameter 1); a compression-only contact with the next building
    at the roof (`pounding = (gap_m, k)`, element 91)."""
    begin(1, 1)
    masses = [62.0, 60.0, 60.0, 58.0, 55.0, 40.0]
    ks = [9.0e4, 8.4e4, 7.8e4, 7.0e4, 6.0e4, 4.6e4]
    ops.node(0, 0.0)
    ops.fix(0, 1)
    for i, m in enumerate(masses, start=1):
        ops.node(i, 0.0)
        ops.mass(i, m)
    for i, k in enumerate(ks, start=1):
        ops.uniaxialMaterial("Elastic", i, k)
        ops.element("zeroLength", i, i - 1, i, "-mat", i, "-dir", 1)
    ops.node(100, 0.0)
    ops.fix(100, 1)
    if stop_gap is not None:
        # Zero force at the engaging drift: the key's spring starts from there.
        ops.uniaxialMaterial("Elastic", 50, 1.0e-9)
        ops.uniaxialMaterial("InitStrainMaterial", 51, 50, -stop_gap)
        ops.element("zeroLength", 90, 100, 6, "-mat", 51, "-dir", 1)
        ops.parameter(1, "element", 90, "E")
    if pounding is not None:
        gap, k = pounding
        # ElasticPPGap: compression-only with a negative gap; the roof moving
        # towards the neighbour (negative drift) closes it.
        ops.uniaxialMaterial("ElasticPPGap", 60, k, -1.0e12, -gap)
        ops.element("zeroLength", 91, 100, 6, "-mat", 60, "-dir", 1)
    return Model(6, list(range(1, 7)), [1])


def footbridge(bearing_stops: Optional[List[tuple]] = None, corotational: bool = True) -> Model:
    """Warren-truss footbridge, 8 panels of 2.5 m, 2 m deep, steel members.
    Optional vertical stops under the midspan bottom nodes that the driver
    engages (element tags 200+i, parameters 10+i) — a deck landing on
    temporary props. Members are corotational trusses (large rotations)
    unless `corotational` is False (small-displacement trusses)."""
    begin(2, 2)
    panels, length, depth = 8, 2.5, 2.0
    e_steel = 2.1e8  # kN/m2
    area_chord, area_web = 3.0e-3, 1.2e-3
    # Bottom nodes 1..9, top nodes 11..18 (mid-panel).
    for i in range(panels + 1):
        ops.node(1 + i, i * length, 0.0)
    for i in range(panels):
        ops.node(11 + i, (i + 0.5) * length, depth)
    ops.fix(1, 1, 1)
    ops.fix(panels + 1, 0, 1)
    deck_mass = 1.6  # t per bottom node (deck, finishes)
    for i in range(panels + 1):
        m = deck_mass * (0.5 if i in (0, panels) else 1.0)
        ops.mass(1 + i, m, m)
    for i in range(panels):
        ops.mass(11 + i, 0.4, 0.4)
    ops.uniaxialMaterial("Elastic", 1, e_steel)
    kind = "corotTruss" if corotational else "Truss"
    tag = 1
    for i in range(panels):
        ops.element(kind, tag, 1 + i, 2 + i, area_chord, 1)
        tag += 1
    for i in range(panels - 1):
        ops.element(kind, tag, 11 + i, 12 + i, area_chord, 1)
        tag += 1
    for i in range(panels):
        ops.element(kind, tag, 1 + i, 11 + i, area_web, 1)
        ops.element(kind, tag + 1, 11 + i, 2 + i, area_web, 1)
        tag += 2
    for j, (node, gap) in enumerate(bearing_stops or []):
        ground = 300 + j
        x = ops.nodeCoord(node)[0]
        ops.node(ground, x, 0.0)
        ops.fix(ground, 1, 1)
        ops.uniaxialMaterial("Elastic", 400 + j, 1.0e-9)
        ops.uniaxialMaterial("InitStrainMaterial", 410 + j, 400 + j, gap)
        ops.element("zeroLength", 200 + j, ground, node, "-mat", 410 + j, "-dir", 2)
        ops.parameter(10 + j, "element", 200 + j, "E")
    ndof = 2 * (panels + 1) - 3 + 2 * panels
    return Model(ndof, [3, 5, 7, 15], [1, 2])


def rack_column() -> Model:
    """Pallet-rack upright as a chain of 10 beam levels (1-D, sway only),
    light upper levels and stiff lower bays."""
    begin(1, 1)
    ops.node(0, 0.0)
    ops.fix(0, 1)
    for i in range(1, 11):
        ops.node(i, 0.0)
        ops.mass(i, 1.2 if i < 8 else 0.5)
        k = 4.0e3 if i < 4 else 2.5e3
        ops.uniaxialMaterial("Elastic", i, k)
        ops.element("zeroLength", i, i - 1, i, "-mat", i, "-dir", 1)
    return Model(10, [2, 5, 8, 10], [1])


# --------------------------------------------------------------------------
# Solver state


def stiffness_for(model: Model, param: int, dt: float, target: float) -> float:
    """The stiffness of parameter `param` that puts omega_max*dt at `target`,
    by bisection on OpenSees's eigen analysis (log scale); the parameter is
    left at a negligible value afterwards."""
    lo, hi = 1.0, 1.0e9
    for _ in range(60):
        mid = math.sqrt(lo * hi)
        ops.updateParameter(param, mid)
        if omega_max(model) * dt > target:
            hi = mid
        else:
            lo = mid
    ops.updateParameter(param, 1.0e-9)
    return math.sqrt(lo * hi)


def frequencies(model: Model) -> List[float]:
    """Circular frequencies (rad/s) from OpenSees's own eigen analysis of the
    current stiffness and the lumped masses (all modes, LAPACK). The analysis
    must be defined first: OpenSees runs eigen once without one, not twice."""
    values = ops.eigen("-fullGenLapack", model.ndof)
    return sorted(math.sqrt(max(v, 0.0)) for v in values)


def omega_max(model: Model) -> float:
    return frequencies(model)[-1]


def analysis(integrator: tuple):
    ops.constraints("Plain")
    ops.numberer("Plain")
    ops.system("FullGeneral")
    explicit = integrator[0] in ("CentralDifference", "ExplicitDifference")
    if explicit:
        ops.algorithm("Linear")
    else:
        ops.test("NormDispIncr", 1.0e-9, 25)
        ops.algorithm("Newton")
    ops.integrator(*integrator)
    ops.analysis("Transient")


def record(model: Model, path: str, xml: bool = False, every_dt: Optional[float] = None, response: str = "disp"):
    args = ["Node", "-xml" if xml else "-file", path, "-time"]
    if every_dt is not None:
        args += ["-dT", every_dt]
    args += ["-node", *model.record_nodes, "-dof", *model.dofs, response]
    ops.recorder(*args)


def path_series(tag: int, dt: float, values: List[float], factor: float = 1.0):
    ops.timeSeries("Path", tag, "-dt", dt, "-values", *values, "-factor", factor)


def gust_values(n: int, dt: float, seed: float, rise_s: float = 2.0) -> List[float]:
    """An invented lateral load history: a ramp over `rise_s` (a storm
    building up), then the sum of four incommensurate sines (0.35..2.9 Hz)."""
    out = []
    for i in range(n):
        t = i * dt
        ramp = min(1.0, t / rise_s)
        s = (
            0.6 * math.sin(2.2 * t + seed)
            + 0.3 * math.sin(6.1 * t + 2 * seed)
            + 0.2 * math.sin(11.3 * t + 0.5)
            + 0.1 * math.sin(18.2 * t + seed / 3)
        )
        out.append(ramp * (1.0 + 0.5 * s))
    return out


def ground_record(n: int, dt: float) -> List[float]:
    """An invented ground acceleration (m/s2): a 1.6 Hz and 3.7 Hz pair under a
    rise-hold-decay envelope, peaking near 2.5 m/s2."""
    out = []
    for i in range(n):
        t = i * dt
        env = min(1.0, t / 1.5) * math.exp(-max(0.0, t - 4.0) / 2.5)
        out.append(env * (1.8 * math.sin(2 * math.pi * 1.6 * t) + 1.1 * math.sin(2 * math.pi * 3.7 * t + 0.7)))
    return out


# --------------------------------------------------------------------------
# Running and labelling


class Stepper:
    """Steps the analysis one step at a time, so the driver can engage stops
    and rerun eigen at the moment the structure changes."""

    def __init__(self, model: Model, dt: float, limit: float = CD_LIMIT):
        self.model = model
        self.dt = dt
        self.limit = limit
        self.unstable_from: Optional[float] = None
        self.error_time: Optional[float] = None
        self.events: List[str] = []
        self.steps = 0
        self.bad_steps = 0
        # omega_max * dt at the first eigen analysis.
        self.first_wdt: Optional[float] = None

    def check(self, why: str):
        """Rerun eigen now; note the time omega_max*dt first passes 2."""
        w = omega_max(self.model)
        wdt = w * self.dt
        if self.first_wdt is None:
            self.first_wdt = wdt
        t = ops.getTime()
        self.events.append(f"{why} at t={t:.4g} s: omega_max*dt={wdt:.4f}")
        if wdt > self.limit and self.unstable_from is None:
            self.unstable_from = t + self.dt  # the next step is the first taken past it
        return wdt

    def step(self) -> bool:
        """One step; False when the analysis reports its own error."""
        r = ops.analyze(1, self.dt)
        self.steps += 1
        if r != 0:
            self.error_time = ops.getTime()
            return False
        u = ops.nodeDisp(self.model.record_nodes[-1], self.model.dofs[-1])
        if not math.isfinite(u):
            self.bad_steps += 1
        return True

    def run(self, max_steps: int, after_bad: int = 0, each: Optional[Callable[[], None]] = None):
        """Step until max_steps, or until `after_bad` steps past the first
        non-finite state (0: run on), or the solver's error."""
        while self.steps < max_steps:
            if not self.step():
                return
            if each is not None:
                each()
            if after_bad and self.bad_steps > after_bad:
                return


def finish(
    stepper: Stepper, case: str, file: str, path: str, scheme: str, intended: str, bound: float = 1.0
) -> Label:
    """Close the recorders and label the written file. A run within its
    scheme's limit must also stay within `bound` (m) — a physical check, so
    that a run that grows for another reason is never labelled healthy."""
    ops.wipe()
    rows = read_rows(path, numeric_line)
    if not rows.lines:
        raise RuntimeError(f"{case}: OpenSees wrote no data rows to {path}")
    crash = rows.first_bad_line()
    crash_basis = "first line with a non-finite or overflowed field"
    if crash is None and stepper.error_time is not None:
        crash = rows.lines[-1]
        crash_basis = f"last line written: the analysis returned its own error at t={stepper.error_time:.4g} s"
    history = "; ".join(stepper.events)
    if stepper.unstable_from is not None:
        onset = rows.line_at_time(stepper.unstable_from)
        level = "critical"
        if crash is None:
            raise RuntimeError(
                f"{case}: past the central-difference limit ({history}) but no crash within {stepper.steps} steps"
            )
        basis = (
            f"OpenSees {scheme}; eigen -fullGenLapack: {history}; past the limit omega*dt = 2 "
            f"(Hughes 1987, section 9.1, from memory) from t={stepper.unstable_from:.4g} s; crash: {crash_basis}"
        )
    else:
        onset = None
        if crash is not None:
            raise RuntimeError(f"{case}: a run within its scheme's limit overflowed at line {crash} ({history})")
        peak = max(abs(v) for r in rows.values for v in r[1:])
        if peak > bound:
            raise RuntimeError(f"{case}: a run within its scheme's limit reached {peak:.3g} m, past {bound} m")
        intended += f"; peak recorded displacement {peak:.3g} m"
        level = "ok"
        basis = f"OpenSees {scheme}; eigen -fullGenLapack: {history}; {intended}"
    return Label(
        case,
        file,
        SOLVER,
        level,
        onset,
        crash if level == "critical" else None,
        basis,
        len(rows.lines),
        step_size=stepper.dt,
        omega_max_dt=stepper.first_wdt,
    )



# --------------------------------------------------------------------------
# The cases. Each builds its model, defines the analysis (so that eigen can
# run as often as needed), applies its loads, records, and runs.


def suffix(every: int) -> str:
    return "" if every == 1 else f"-every{every}"


def every_dt(every: int, dt: float) -> Optional[float]:
    """The recorder's -dT for output every `every` steps (a hair under, so
    rounding of the time never skips a step)."""
    return None if every == 1 else every * dt * 0.999


def run_case(
    m: Model,
    dt: float,
    steps: int,
    path: str,
    scheme: str,
    intended: str = "",
    limit: float = CD_LIMIT,
    after_bad: int = 0,
    each: Optional[Callable[[Stepper], Callable[[], None]]] = None,
    events: tuple = (),
) -> Label:
    """Step the defined analysis, rerunning eigen at the start and whenever
    `each` (built for this stepper) changes the structure; label the file."""
    s = Stepper(m, dt, limit)
    s.events.extend(events)
    s.check("start")
    s.run(steps, after_bad=after_bad, each=each(s) if each is not None else None)
    file = os.path.basename(path)
    return finish(s, file.rsplit(".", 1)[0], file, path, scheme, intended)


def frame_loads(dt: float, n: int, seed: float, factor: float, rise_s: float = 2.0):
    path_series(1, dt, gust_values(n, dt, seed, rise_s), factor=factor)
    ops.pattern("Plain", 1, 1)
    for f in range(1, 7):
        ops.load(f, f / 6.0)


def frame_past_limit(out: str, every: int) -> Label:
    """Central difference with a step past the limit of the frame's highest
    mode from the first step."""
    case = f"os-frame6-cd-past-limit{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    m = shear_frame()
    analysis(("CentralDifference",))
    dt = 2.04 / omega_max(m)
    n = 4000
    frame_loads(dt, n, 0.4, 30.0)
    record(m, path, every_dt=every_dt(every, dt))
    return run_case(m, dt, n, path, "central difference", after_bad=30 * every)


def frame_latch(out: str, xml: bool, every: int) -> Label:
    """The roof meets the next building as a storm builds up, and a shear key
    engages and holds: the frame is stiffer, and the step that was safe is
    past the limit."""
    case = "os-frame6-cd-latch" + suffix(every)
    file = case + (".xml" if xml else ".out")
    path = os.path.join(out, file)
    gap = 0.011
    m = shear_frame(stop_gap=gap)
    analysis(("CentralDifference",))
    dt = 1.7 / omega_max(m)
    k_key = stiffness_for(m, 1, dt, 2.03)
    n = 60000
    frame_loads(dt, n, 1.3, 40.0, rise_s=40.0)
    record(m, path, xml=xml, every_dt=every_dt(every, dt))

    def watch(s: Stepper):
        engaged = [False]

        def each():
            if not engaged[0] and ops.nodeDisp(6, 1) >= gap:
                ops.updateParameter(1, k_key)
                engaged[0] = True
                s.check("roof shear key engaged")

        return each

    return run_case(m, dt, n, path, "central difference", after_bad=30 * every, each=watch)


def bridge_slightly_past(out: str, every: int) -> Label:
    """Central difference a hair past the limit: slow growth of the highest
    mode under a large response to a group crossing (small-displacement
    trusses, so the growth stays exponential up to the overflow)."""
    case = f"os-bridge-cd-slightly-past{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    m = footbridge(corotational=False)
    analysis(("CentralDifference",))
    dt = 2.0001 / omega_max(m)
    n = 400000
    vals = [(1.0 + 0.4 * math.sin(2 * math.pi * 2.0 * i * dt)) * min(1.0, i * dt) for i in range(n)]
    path_series(1, dt, vals, factor=-3.0)
    ops.pattern("Plain", 1, 1)
    for node in (4, 5, 6):
        ops.load(node, 0.0, 1.0)
    record(m, path, every_dt=every_dt(every, dt))
    return run_case(m, dt, n, path, "central difference", after_bad=30 * every)


def bridge_gradual(out: str, every: int) -> Label:
    """The sagging deck lands on a soft temporary prop first (just past the
    limit); a maintenance vehicle arriving later pushes it onto a stiff one
    (firmly past): a gradual onset."""
    case = f"os-bridge-cd-gradual{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    gaps = [0.005, 0.012]
    m = footbridge(bearing_stops=[(5, gaps[0]), (3, gaps[1])])
    analysis(("CentralDifference",))
    dt = 1.9 / omega_max(m)
    k_soft = stiffness_for(m, 10, dt, 2.0002)
    ops.updateParameter(10, k_soft)
    k_stiff = stiffness_for(m, 11, dt, 2.3)
    ops.updateParameter(10, 1.0e-9)
    n = int(40.0 / dt)
    path_series(1, dt, [min(1.0, i * dt / 3.0) for i in range(n)], factor=-40.0)
    ops.pattern("Plain", 1, 1)
    for node in (3, 4, 5, 6, 7):
        ops.load(node, 0.0, 1.0)
    path_series(2, dt, [min(1.0, max(0.0, i * dt - 5.0)) for i in range(n)], factor=-120.0)
    ops.pattern("Plain", 2, 2)
    for node in (2, 3, 4):
        ops.load(node, 0.0, 1.0)
    record(m, path, every_dt=every_dt(every, dt))
    props = [(10, 5, gaps[0], k_soft), (11, 3, gaps[1], k_stiff)]

    def watch(s: Stepper):
        stage = [0]

        def each():
            if stage[0] < len(props):
                param, node, gap, k = props[stage[0]]
                if -ops.nodeDisp(node, 2) >= gap:
                    ops.updateParameter(param, k)
                    stage[0] += 1
                    s.check(f"prop under node {node} engaged")

        return each

    return run_case(m, dt, n, path, "central difference", after_bad=30 * every, each=watch)


def rack(out: str, past: bool, every: int) -> Label:
    """A transport shock on a pallet-rack upright (half-sine base pulse, then
    free vibration), with OpenSees's ExplicitDifference."""
    case = f"os-rack-explicitdiff-{'past' if past else 'below'}-limit{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    m = rack_column()
    analysis(("ExplicitDifference",))
    dt = (2.03 if past else 1.95) / omega_max(m)
    n = 9000
    vals = [math.sin(math.pi * i * dt / 0.08) if i * dt < 0.08 else 0.0 for i in range(n)]
    path_series(1, dt, vals, factor=25.0)
    ops.pattern("UniformExcitation", 1, 1, "-accel", 1)
    record(m, path, every_dt=every_dt(every, dt))
    return run_case(
        m,
        dt,
        n,
        path,
        "ExplicitDifference (central difference, damping taken explicitly; undamped here)",
        "omega_max*dt below 2: within the limit; the shock rings the undamped upright",
        after_bad=30 * every,
    )


def frame_newmark_large_step(out: str) -> Label:
    """Newmark average acceleration with a step far past the explicit limit,
    under an invented ground motion."""
    case = "os-frame6-newmark-large-step"
    file = case + ".out"
    path = os.path.join(out, file)
    m = shear_frame()
    analysis(("Newmark", 0.5, 0.25))
    w = frequencies(m)
    dt = 4.0 / w[-1]
    n = int(30.0 / dt)
    path_series(1, dt, ground_record(n, dt))
    ops.pattern("UniformExcitation", 1, 1, "-accel", 1)
    ops.rayleigh(0.0, 0.0, 0.0, 2 * 0.02 / w[0])
    record(m, path)
    return run_case(
        m,
        dt,
        n,
        path,
        "Newmark average acceleration",
        "unconditionally stable (Newmark 1959, from memory); ground motion, 2 % stiffness-proportional damping",
        limit=math.inf,
    )


def frame_sudden_load(out: str) -> Label:
    """A sudden roof load on the undamped frame, central difference within its
    limit: violent ringing, no growth."""
    case = "os-frame6-cd-sudden-load"
    file = case + ".out"
    path = os.path.join(out, file)
    m = shear_frame()
    analysis(("CentralDifference",))
    dt = 1.9 / omega_max(m)
    n = 12000
    vals = [0.0 if i * dt < 1.0 else 1.0 for i in range(n)]
    path_series(1, dt, vals, factor=150.0)
    ops.pattern("Plain", 1, 1)
    ops.load(6, 1.0)
    ops.load(3, 0.5)
    record(m, path)
    return run_case(
        m, dt, n, path, "central difference", "omega_max*dt = 1.9 < 2: within the limit; a sudden roof load rings the undamped frame"
    )


def frame_pounding(out: str) -> Label:
    """Compression-only contact with the next building at the roof: repeated
    impacts, with the step chosen below the limit of the frame in contact."""
    case = "os-frame6-cd-pounding"
    file = case + ".xml"
    path = os.path.join(out, file)
    k_contact, gap = 6.0e5, 0.004
    # The frame with the contact closed: a linear spring of the contact's
    # stiffness at the roof.
    closed = shear_frame()
    ops.uniaxialMaterial("Elastic", 70, k_contact)
    ops.element("zeroLength", 92, 100, 6, "-mat", 70, "-dir", 1)
    analysis(("CentralDifference",))
    w_closed = omega_max(closed)
    m = shear_frame(pounding=(gap, k_contact))
    analysis(("CentralDifference",))
    # A contact step well under the linear limit: near the limit, impacts
    # pump energy into the frame (the contact switching inside a step) even
    # though omega_max*dt < 2 (common practice, no source).
    dt = 1.0 / w_closed
    n = int(80.0 / dt)
    frame_loads(dt, n, 2.1, -60.0)
    record(m, path, xml=True)
    return run_case(
        m,
        dt,
        n,
        path,
        "central difference",
        "omega_max*dt below 1 with the contact open or closed; the roof pounds on the next building",
        events=(f"contact closed: omega_max*dt={w_closed * dt:.4f}",),
    )


def bridge_drop(out: str, every: int) -> Label:
    """A 1.2 t pallet dropped 5 cm onto the deck: a contact impact, integrated
    with Newmark average acceleration and Newton iterations."""
    case = f"os-bridge-newmark-drop{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    m = footbridge()
    ops.node(500, 10.0, 0.0)
    ops.fix(500, 1, 0)
    ops.mass(500, 1.2, 1.2)
    ops.uniaxialMaterial("ElasticPPGap", 80, 4.0e5, -1.0e12, -0.05)
    ops.element("zeroLength", 95, 5, 500, "-mat", 80, "-dir", 2)
    m.ndof += 1
    analysis(("Newmark", 0.5, 0.25))
    w = omega_max(m)
    dt = 3.0 / w
    n = int(4.0 / dt)
    ops.timeSeries("Constant", 1)
    ops.pattern("Plain", 1, 1)
    ops.load(500, 0.0, -1.2 * 9.81)
    ops.rayleigh(0.0, 0.0, 0.0, 2 * 0.01 / w)
    record(m, path, every_dt=every_dt(every, dt))
    return run_case(
        m,
        dt,
        n,
        path,
        "Newmark average acceleration with Newton",
        "unconditionally stable (Newmark 1959, from memory); a dropped load strikes the deck",
        limit=math.inf,
    )


def frame_resonance(out: str, every: int) -> Label:
    """A harmonic roof load at the first natural frequency: the response grows
    linearly, then settles where damping balances it (physical growth)."""
    case = f"os-frame6-hht-resonance{suffix(every)}"
    file = case + ".out"
    path = os.path.join(out, file)
    m = shear_frame()
    analysis(("HHT", 0.9))
    w = frequencies(m)
    dt = (math.pi / 4) / w[-1]
    period = 2 * math.pi / w[0]
    ops.timeSeries("Trig", 1, 0.0, 1.0e6, period, "-factor", 20.0)
    ops.pattern("Plain", 1, 1)
    ops.load(6, 1.0)
    ops.rayleigh(2 * 0.01 * w[0], 0.0, 0.0, 0.0)
    record(m, path, every_dt=every_dt(every, dt))
    return run_case(
        m,
        dt,
        int(60 * period / dt),
        path,
        "HHT-alpha (alpha = 0.9)",
        "unconditionally stable (Hilber, Hughes & Taylor 1977, from memory); resonant load, 1 % mass-proportional damping",
        limit=math.inf,
    )


def generate(out: str) -> List[Label]:
    """Write every OpenSees run into `out`; return their labels."""
    return [
        expect("critical", frame_past_limit(out, 1)),
        expect("critical", frame_past_limit(out, 5)),
        expect("critical", frame_latch(out, xml=True, every=1)),
        expect("critical", frame_latch(out, xml=False, every=10)),
        expect("critical", bridge_slightly_past(out, 20)),
        expect("critical", bridge_gradual(out, 2)),
        expect("critical", rack(out, past=True, every=3)),
        expect("ok", rack(out, past=False, every=3)),
        expect("ok", frame_newmark_large_step(out)),
        expect("ok", frame_sudden_load(out)),
        expect("ok", frame_pounding(out)),
        expect("ok", bridge_drop(out, 2)),
        expect("ok", frame_resonance(out, 2)),
    ]
