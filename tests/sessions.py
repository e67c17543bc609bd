"""Synthetic field-balancing sessions: machines made up from known influence
coefficients and unbalances, written out as session files (shared by the field tests)."""

from __future__ import annotations

import cmath
import math
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
WASHERS = {"M6": 1.02, "M8": 1.83, "M10": 3.57, "M12": 6.27, "M16": 11.30}
"""Masses of catalogs/washers-steel.toml [g], in catalogue order."""


def rect(a, deg):
    return cmath.rect(a, math.radians(deg))


# The synthetic machine the example visit's readings were made from (rounded to
# 0.01 mm/s and 1°): coefficients in mm/s per g·mm, unbalance in g·mm.
EXAMPLE_A = np.array([[rect(0.0021, 35), rect(0.0008, 95)],
                      [rect(0.0018, 120), rect(0.0006, 190)],
                      [rect(0.0007, 60), rect(0.0019, 20)]])
EXAMPLE_U = np.array([rect(2500, 40), rect(1800, 200)])


def unit_vector(position: int, positions: int, radius: float) -> complex:
    """radius·e^{iθ} of an equally spaced position (position 1 at 0°)."""
    return radius * cmath.exp(1j * math.radians(360.0 * (position - 1) / positions))


def pairs(v: np.ndarray, sense: str = "against rotation", scale: float = 1.0) -> str:
    """Readings as [amplitude, phase lag] pairs.  A phase lag counts against rotation
    (REFERENCES.md, angles), so with angles counted with rotation it is read as -θ."""
    sign = 1.0 if sense == "against rotation" else -1.0
    return "[" + ", ".join(
        f"[{abs(x) * scale:.12g}, {sign * math.degrees(cmath.phase(x)) % 360:.12g}]"
        for x in v) + "]"


def session_toml(a: np.ndarray, u0: np.ndarray, *, positions: int = 4, radius: float = 100.0,
                 capacity: int = 1, unit: str = "um", measure: str = "peak",
                 trials=((0, 20.0, 2, True), (1, 20.0, 1, True)), check=None,
                 norm: str = "rms", max_parts: int = 3, limit: float | None = None,
                 coefficients: str = "runs", rpm: float = 1500.0,
                 separation: float | None = None, sense: str = "against rotation",
                 scale: float = 1.0, noise: float = 0.0, machine: str = "T-1",
                 visit: str = "") -> str:
    """A session file of a synthetic machine: V = A·(U + masses on the rotor).

    ``trials`` are (plane index, mass_g, position, removed after); ``check`` a
    list of (plane index, position, item, count) fitted for one check run.
    ``scale`` multiplies every amplitude written (a unit or measure change).
    """
    rng = np.random.default_rng(0)
    n_planes = a.shape[1]

    def fmt(v):
        v = v + noise * (rng.normal(size=v.shape) + 1j * rng.normal(size=v.shape))
        return pairs(v, sense, scale)

    state = np.zeros(n_planes, dtype=complex)
    runs = [("reference", "", a @ u0)] if coefficients == "stored" or trials is not None else []
    for plane, mass, position, removed in trials or ():
        now = state.copy()
        now[plane] += mass * unit_vector(position, positions, radius)
        runs.append(("trial", f"trial = [{{ plane = {plane + 1}, mass_g = {mass}, "
                              f"position = {position} }}]\nremoved = {str(removed).lower()}",
                     a @ (u0 + now)))
        if not removed:
            state = now
    if check:
        now = state.copy()
        for plane, position, item, count in check:
            now[plane] += count * WASHERS[item] * unit_vector(position, positions, radius)
        fitted = ", ".join(f'{{ plane = {p + 1}, position = {j}, item = "{i}", count = {c} }}'
                           for p, j, i, c in check)
        runs.append(("check", f"fitted = [{fitted}]", a @ (u0 + now)))
    sensors = "".join(f'[[sensors]]\nname = "s{c + 1}"\n' for c in range(a.shape[0]))
    planes = "".join(f'[[planes]]\nname = "plane {p + 1}"\nradius_mm = {radius}\n'
                     f'positions = {positions}\ncapacity = {capacity}\n'
                     f'catalog = "washers-steel"\n' for p in range(n_planes))
    text = (f'[machine]\nid = "{machine}"\n{visit}\n[rotor]\nname = "test"\n'
            f'service_rpm = {rpm}\nangle_sense = "{sense}"\n'
            + (f"plane_separation_mm = {separation}\n" if separation else "")
            + f'[readings]\nunit = "{unit}"\nmeasure = "{measure}"\nphase = "lag"\n'
            + sensors + planes
            + f'[solve]\nnorm = "{norm}"\nmax_parts = {max_parts}\n'
              f'coefficients = "{coefficients}"\n'
            + (f"vibration_limit = {limit}\n" if limit is not None else ""))
    for kind, extra, v in runs:
        text += f'[[runs]]\nname = "{kind} {len(text)}"\nkind = "{kind}"\n{extra}\n' \
                f"readings = {fmt(v)}\n"
    return text


def write(tmp_path: Path, text: str, name: str = "visit.toml") -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


def synthetic(seed=2, channels=3, planes=2):
    rng = np.random.default_rng(seed)
    a = (rng.normal(size=(channels, planes)) + 1j * rng.normal(size=(channels, planes))) * 0.01
    return a, np.array([rect(900, 70), rect(600, 250)])[:planes]


def placement_problem(a, positions, radius, capacity, fitted=()):
    """The discrete problem written out independently of placer.fieldplan.

    Rows: every position of every plane, then one row per fitted group (taking
    one part off: minus its effect); columns: the washers, then one per fitted
    group.  Capacity of a position is reduced by the parts fitted on it.  A
    group's item is a washer's name, or a trial weight's mass [g] (left on).
    """
    n_planes = a.shape[1]
    masses = list(WASHERS.values())
    rows = n_planes * positions + len(fitted)
    effects = np.zeros((rows, len(masses) + len(fitted), a.shape[0]), dtype=complex)
    cap = np.full(rows, capacity)
    for p in range(n_planes):
        for j in range(positions):
            for k, m in enumerate(masses):
                effects[p * positions + j, k] = a[:, p] * m * unit_vector(j + 1, positions,
                                                                          radius)
    for f, (p, position, item, count) in enumerate(fitted):
        r = n_planes * positions + f
        mass = WASHERS[item] if isinstance(item, str) else float(item)
        effects[r, len(masses) + f] = -a[:, p] * mass * unit_vector(position, positions, radius)
        cap[r] = count
        cap[p * positions + position - 1] -= count
    stock = [60, 60, 50, 40, 30] + [c for *_, c in fitted]
    return effects, cap, stock
