"""Session files (TOML) of a field-balancing visit -> :class:`placer.session.Session`.

Format (see examples/exhaust-fan-visit.toml)::

    [machine]   id = "WM-0417", name = "..."
    [visit]     date = 2026-11-02 or 2026-11-02T10:15:00Z (optional; TOML date, or date
                and time with its offset; default: when placer is run, in UTC)
    [rotor]     as in a job, plus rotation = "clockwise" (when angles are
                clockwise/counterclockwise) and plane_separation_mm (or _in)
    [readings]  unit = "mm/s" | "in/s" | "um" | "mils"; measure = "peak" |
                "peak-to-peak" | "rms"; phase = "lag" | "lead" | "none"
                ("none": a meter without a phase reference; every run's readings are
                amplitudes, readings = [4.1], and the session is the four-run method:
                one sensor, one plane, a reference run and three or more trial runs with
                the same trial mass at different angles, each removed after its run)
    [[sensors]] name, weight (optional, default 1); readings taken at more than one
                speed are entered as one sensor per speed ("DE horizontal 900 r/min"),
                with a reading in every run
    [[planes]]  as in a job, without correction or tolerance
    [[runs]]    name, kind = "reference" | "trial" | "check",
                readings = [[amplitude, phase_deg], ...] one pair per sensor,
                trial = [{ plane = 1, mass_g = 20.0, position = 3 }]   (or angle_deg;
                mass_oz instead of mass_g, radius_mm or radius_in to override the radius)
                removed = true    (trial weights taken off after the run; default)
                fitted = [{ plane = 1, position = 5, item = "M12", count = 1 }]   (check runs:
                the parts on the rotor for that run; a trim plan may take them off)
    [solve]     norm = "max" | "rms"; max_parts = 4; coefficients = "runs" | "stored"
                ("stored": no trial runs, rotor.service_rpm required);
                vibration_limit = 1.0 (optional, in the session's unit and measure:
                fewest parts predicted at or below it, every sensor's amplitude compared)
    [[residual_checks]]  after balancing, a known trial mass in turn at six or more
                equally spaced positions of one plane (placer.residualcheck):
                plane = 1, sensor = "drive end horizontal" (default: the first),
                mass_g = 8.0, positions = [1, 2, 3, 4, 5, 6, 7, 8] or angles_deg = [...],
                radius_mm (default: the positions' radius), amplitudes = [...] one
                reading per position in the session's unit and measure; the limit:
                limit_gmm, or journal_load_kg (6350·W/N with rotor.service_rpm), else
                the plane's share of the rotor's U_per (grade, mass_kg, service_rpm)

A trial weight left on (removed = false) at a position takes room there like a
fitted part, and the plan may take it off.
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path

import numpy as np

from placer.catalog import Catalog
from placer.errors import InputError, SessionError
from placer.geometry import ROTATIONS, polar
from placer.io.inputs import read_toml
from placer.io.jobfile import GEOMETRY_KEYS, plane_geometry, rotor_of
from placer.io.sizes import check_count
from placer.io.tables import Table, quantity_key, shown
from placer.limits import (
    DEFAULT_MAX_PARTS,
    MAX_PARTS_LIMIT,
    MAX_PLANES,
    MAX_RUNS,
    MAX_SENSORS,
    MAX_TRIAL_RUNS,
)
from placer.readings import MEASURES, PHASE_SENSES, canonical_unit, phase_in_rotor_sense
from placer.residualcheck import ResidualCheck
from placer.session import (
    FIELD_NORMS,
    RUN_KINDS,
    Channel,
    FieldPlane,
    PlacedMass,
    Run,
    Session,
)
from placer.units import LENGTH_UNITS, MASS_UNITS

FIELD_PLANE_KEYS = GEOMETRY_KEYS
"""Keys of a session's [[planes]]: a job plane's positions and catalogue, without a
correction or tolerance."""
TRIAL_KEYS = ("plane", *(quantity_key("mass", u) for u in MASS_UNITS), "position", "angle_deg",
              *(quantity_key("radius", u) for u in LENGTH_UNITS))
"""Keys of a trial weight: its mass in g or oz, its position or angle, its radius in mm or in."""


def read_session(path: Path) -> Session:
    """Read and check a session file, with its catalogues.

    Parameters
    ----------
    path : Path
        The session file (TOML, see the module docstring).

    Returns
    -------
    Session
        The visit, readings converted to phasors in the rotor's angle sense.

    Raises
    ------
    SessionError
        Naming the file, the key and what was expected.
    CatalogError
        For a catalogue it names that is missing or bad.
    """
    path = Path(path)
    file = str(path)
    root = Table(read_toml(path, SessionError, "session file"), file, "", SessionError)
    root.allow_only(("machine", "visit", "rotor", "readings", "sensors", "planes", "runs",
                     "solve", "residual_checks"))
    machine = root.sub("machine", required=True)
    machine.allow_only(("id", "name"))
    machine_id = machine.text("id", required=True).strip()
    if not machine_id:
        raise machine.fail("id", "is empty", "a machine tag such as \"WM-0417\"")
    visit_date = _visit_date(root.sub("visit"))
    rotor_table = root.sub("rotor", required=True)
    rotor = rotor_of(rotor_table, ("plane_separation_mm", "plane_separation_in"))
    rotation = rotor.rotation
    if rotor.angle_sense in ROTATIONS and rotation is None:
        raise rotor_table.fail("rotation", "missing",
                               "the sense of rotation, as the angles are "
                               f"{rotor.angle_sense} (clockwise or counterclockwise)")
    separation, _ = rotor_table.quantity("plane_separation", LENGTH_UNITS, positive=True)

    readings = root.sub("readings", required=True)
    readings.allow_only(("unit", "measure", "phase"))
    unit_text = readings.text("unit", required=True)
    unit = canonical_unit(unit_text)
    if unit is None:
        raise readings.fail("unit", f"is '{unit_text}'", "um, mils, mm/s or in/s")
    measure = readings.text("measure", required=True)
    if measure not in MEASURES:
        raise readings.fail("measure", f"is '{measure}'", "peak, peak-to-peak or rms")
    phase = readings.text("phase", required=True)
    if phase not in PHASE_SENSES + (NO_PHASE,):
        raise readings.fail("phase", f"is '{phase}'",
                            "lag, lead, or none (a meter without a phase reference)")

    channels = []
    sensor_tables = root.tables("sensors", required=True)
    plane_tables = root.tables("planes", required=True)
    run_tables = root.tables("runs", required=True)
    trials = sum(t.data.get("kind") == "trial" for t in run_tables)
    for count, limit, noun, key in ((len(sensor_tables), MAX_SENSORS, "sensors", "sensors"),
                                    (len(plane_tables), MAX_PLANES, "planes", "planes"),
                                    (len(run_tables), MAX_RUNS, "runs", "runs"),
                                    (trials, MAX_TRIAL_RUNS, "trial runs", "runs")):
        check_count(count, limit, noun, file=file, key=key, error=SessionError)
    for t in sensor_tables:
        t.allow_only(("name", "weight"))
        channels.append(Channel(t.text("name", default=t.path),
                                t.number("weight", default=1.0, positive=True)))
    names = [c.name for c in channels]
    if len(set(names)) != len(names):
        raise root.fail("sensors", "two sensors have the same name", "a distinct name each")

    catalogs: dict[Path, Catalog] = {}
    planes = []
    for t in plane_tables:
        t.allow_only(FIELD_PLANE_KEYS)
        geometry, catalog = plane_geometry(t, path.parent, catalogs)
        planes.append(FieldPlane(geometry, catalog))

    solve = root.sub("solve") or Table({}, file, "solve", SessionError)
    solve.allow_only(("norm", "max_parts", "coefficients", "vibration_limit"))
    norm = solve.text("norm", default="max")
    if norm not in FIELD_NORMS:
        raise solve.fail("norm", f"is '{norm}'", "max (largest reading) or rms (sum of squares)")
    coefficients = solve.text("coefficients", default="runs")
    if coefficients not in ("runs", "stored"):
        raise solve.fail("coefficients", f"is '{coefficients}'", "runs or stored")

    if coefficients == "stored" and rotor.service_rpm is None:
        raise rotor_table.fail("service_rpm", "missing",
                               "the speed of the runs [r/min], checked against the stored "
                               "coefficients' speed (coefficients = \"stored\")")
    convert = _Converter(phase, rotor.angle_sense, rotation)
    runs = tuple(_run(t, convert, len(channels), planes) for t in run_tables)
    _check_runs(root, runs, len(planes), coefficients)
    _check_fitted(root, runs, planes)
    if phase == NO_PHASE:
        _check_amplitude_only(root, runs, channels, planes, coefficients)
    checks = tuple(_residual_check(t, planes, names)
                   for t in root.tables("residual_checks") or ())
    return Session(
        machine_id=machine_id, machine_name=machine.text("name", default=machine_id),
        rotor=rotor, plane_separation_mm=separation, unit=unit,
        measure=measure, phase_sense=phase, channels=tuple(channels), planes=tuple(planes),
        runs=runs, norm=norm,
        max_parts=solve.integer("max_parts", default=DEFAULT_MAX_PARTS, minimum=1,
                                  maximum=MAX_PARTS_LIMIT),
        coefficients=coefficients, source=file,
        vibration_limit=solve.number("vibration_limit", positive=True), visit_date=visit_date,
        residual_checks=checks)


def _visit_date(visit: Table | None) -> str | None:
    """[visit] date as ISO 8601 text: a date, or a date and time converted to UTC."""
    if visit is None:
        return None
    visit.allow_only(("date",))
    if not visit.has("date"):
        return None
    value = visit.data["date"]
    expected = "a date (2026-11-02) or a date and time with its offset (2026-11-02T10:15:00Z)"
    if isinstance(value, str):
        try:
            value = (dt.date.fromisoformat(value) if len(value.strip()) == 10
                     else dt.datetime.fromisoformat(value))
        except ValueError:
            raise visit.fail("date", f"is '{shown(value)}'", expected) from None
    if isinstance(value, dt.datetime):
        if value.tzinfo is None:
            raise visit.fail("date", "has a time but no offset", expected)
        try:
            return value.astimezone(dt.timezone.utc).isoformat(timespec="seconds")
        except OverflowError:  # 0001-01-01T00:30:00+01:00 is in year 0 in UTC
            raise visit.fail("date", f"is {value.isoformat()}, outside the years 1 to 9999 "
                             "in UTC", expected) from None
    if isinstance(value, dt.date):
        return value.isoformat()
    raise visit.fail("date", f"is {type(value).__name__}", expected)


NO_PHASE = "none"
"""[readings] phase of a meter without a phase reference: amplitudes only."""


class _Converter:
    """Readings as read -> amplitude in the session's measure, phase in the rotor's angle sense."""

    def __init__(self, phase: str, rotor_sense: str, rotation: str | None):
        self.phase, self.sense, self.rotation = phase, rotor_sense, rotation

    def __call__(self, amplitude: float, phase_deg: float) -> complex:
        if self.phase == NO_PHASE:
            return complex(amplitude, 0.0)
        angle = phase_in_rotor_sense(phase_deg, self.phase, self.sense, self.rotation)
        return polar(amplitude, angle)


def _run(t: Table, convert: _Converter, n_channels: int, planes: list[FieldPlane]) -> Run:
    t.allow_only(("name", "kind", "readings", "trial", "removed", "fitted"))
    kind = t.text("kind", required=True)
    if kind not in RUN_KINDS:
        raise t.fail("kind", f"is '{kind}'", "reference, trial or check")
    values = t.array("readings", required=True)
    if len(values) != n_channels:
        raise t.fail("readings", f"has {len(values)} readings for {n_channels} sensors",
                     "one [amplitude, phase_deg] pair per sensor, in sensor order")
    raw, phasors = [], []
    for i, pair in enumerate(values, start=1):
        key = f"readings[{i}]"
        if convert.phase == NO_PHASE:
            if isinstance(pair, list):
                raise t.fail(key, "is a list", "an amplitude alone, as [readings] phase = "
                             "\"none\" (no phase reference)")
            amplitude, phase = t.check_number(key, pair, non_negative=True), 0.0
        else:
            if not isinstance(pair, list) or len(pair) != 2:
                raise t.fail(key, "is not a pair", "[amplitude, phase_deg]")
            amplitude = t.check_number(key + "[1]", pair[0], non_negative=True)
            phase = t.check_number(key + "[2]", pair[1])
        raw.append((amplitude, phase))
        phasors.append(convert(amplitude, phase))
    added = []
    if kind == "trial":
        if t.has("fitted"):
            raise t.fail("fitted", "given on a trial run", "trial = [...] on trial runs")
        for i, w in enumerate(t.array("trial", required=True) or [], start=1):
            added.append(_mass(Table(w, t.file, f"{t.key('trial')}[{i}]", t.error), planes,
                               trial=True))
        if not added:
            raise t.fail("trial", "is empty", "the trial weight(s) fitted for this run")
        removed = t.data.get("removed", True)
        if not isinstance(removed, bool):
            raise t.fail("removed", "is not true/false", "true (taken off after the run) or false")
    else:
        for bad in ("trial", "removed"):
            if t.has(bad):
                raise t.fail(bad, f"given on a {kind} run", "trial weights on trial runs only")
        removed = False
        if kind == "check":
            for i, w in enumerate(t.array("fitted") or [], start=1):
                added.append(_mass(Table(w, t.file, f"{t.key('fitted')}[{i}]", t.error),
                                   planes, trial=False))
        elif t.has("fitted"):
            raise t.fail("fitted", "given on a reference run", "fitted = [...] on check runs")
    return Run(name=t.text("name", default=kind), kind=kind, readings=np.array(phasors),
               raw=tuple(raw), added=tuple(added), removed_after=removed)


def _mass(w: Table, planes: list[FieldPlane], trial: bool) -> PlacedMass:
    keys = TRIAL_KEYS if trial else ("plane", "position", "item", "count")
    w.allow_only(keys)
    plane_no = w.integer("plane", required=True, minimum=1, maximum=len(planes))
    plane = planes[plane_no - 1]
    geometry = plane.geometry
    if trial:
        mass, _ = w.quantity("mass", MASS_UNITS, required=True, positive=True)
        item, count = None, 1
    else:
        item = w.text("item", required=True)
        try:
            found = plane.catalog.items[plane.catalog.item_index(item)]
        except KeyError:
            raise w.fail("item", f"'{item}' is not in catalogue '{plane.catalog.name}'",
                         "an item id of the plane's catalogue") from None
        mass, count = found.mass_g, w.integer("count", default=1, minimum=1)
    position = w.integer("position", minimum=1, maximum=geometry.n_positions)
    if position is not None and w.has("angle_deg"):
        raise w.fail("angle_deg", "given together with 'position'", "one of the two")
    if position is not None:
        angle = geometry.angles_deg[position - 1]
        radius = geometry.radii_mm[position - 1]
    elif trial and w.has("angle_deg"):
        angle = w.number("angle_deg") % 360.0
        radius = w.quantity("radius", LENGTH_UNITS, positive=True)[0] or geometry.radii_mm[0]
    else:
        raise w.fail("position", "missing", "position = N" + (" or angle_deg" if trial else ""))
    if trial and position is not None:
        radius = w.quantity("radius", LENGTH_UNITS, positive=True, default=radius)[0]
    if not math.isfinite(angle):
        raise w.fail("angle_deg", "is not finite", "a number")
    return PlacedMass(plane=plane_no - 1, mass_g=mass, angle_deg=angle, radius_mm=radius,
                      position=position, item=item, count=count)


def _check_runs(root: Table, runs: tuple[Run, ...], n_planes: int, coefficients: str) -> None:
    if runs[0].kind != "reference":
        raise root.fail("runs[1].kind", f"is '{runs[0].kind}'", "the first run to be the reference")
    if any(r.kind == "reference" for r in runs[1:]):
        raise root.fail("runs", "has more than one reference run", "one reference run, first")
    trials = [r for r in runs if r.kind == "trial"]
    if coefficients == "stored" and trials:
        first = next(i for i, r in enumerate(runs, start=1) if r.kind == "trial")
        raise root.fail(f"runs[{first}].kind", "is a trial run, but [solve] coefficients = "
                        "\"stored\" takes the coefficients from the history",
                        "no trial runs with stored coefficients, or coefficients = \"runs\"")
    if coefficients == "runs" and len(trials) < n_planes:
        raise root.fail("runs", f"has {len(trials)} trial runs for {n_planes} planes",
                        "a trial run per plane, or [solve] coefficients = \"stored\"")
    seen_check = False
    for i, r in enumerate(runs, start=1):
        if r.kind == "check":
            seen_check = True
        elif r.kind == "trial" and seen_check:
            raise root.fail(f"runs[{i}].kind", "is a trial run after a check run",
                            "trial runs before check runs")


def _check_fitted(root: Table, runs: tuple[Run, ...], planes: list[FieldPlane]) -> None:
    """Parts fitted for the check runs, and trial weights left on their positions, must fit
    those positions (capacity, not blocked)."""
    on: dict[tuple[int, int], int] = {}
    for i, run in enumerate(runs, start=1):
        for k, mass in enumerate(run.added, start=1):
            if run.kind == "check":
                key, what = f"runs[{i}].fitted[{k}].count", "part(s)"
            elif run.kind == "trial" and not run.removed_after and mass.position is not None \
                    and math.isclose(mass.radius_mm, planes[mass.plane].geometry.radii_mm[
                        mass.position - 1], rel_tol=1e-9):
                key, what = f"runs[{i}].trial[{k}].position", "part(s), trial weights left on"
            else:
                continue
            place = (mass.plane, mass.position)
            on[place] = on.get(place, 0) + mass.count
            room = int(planes[mass.plane].geometry.capacities()[mass.position - 1])
            if on[place] > room:
                raise root.fail(key, f"puts {on[place]} {what} on position {mass.position} of "
                                f"plane {mass.plane + 1}, which takes {room}",
                                "no more parts on a position than its capacity (0 if blocked)")


def _check_amplitude_only(root: Table, runs: tuple[Run, ...], channels: list[Channel],
                          planes: list[FieldPlane], coefficients: str) -> None:
    """A session without a phase reference is the four-run method: check its shape."""
    why = "the four-run method without a phase reference ([readings] phase = \"none\")"
    if len(channels) != 1:
        raise root.fail("sensors", f"has {len(channels)} sensors",
                        f"one sensor for {why}")
    if len(planes) != 1:
        raise root.fail("planes", f"has {len(planes)} planes", f"one plane for {why}")
    if coefficients != "runs":
        raise root.fail("solve.coefficients", f"is '{coefficients}'",
                        f"\"runs\" for {why}: stored coefficients carry a phase")
    trials = [(i, r) for i, r in enumerate(runs, start=1) if r.kind == "trial"]
    for i, run in enumerate(runs, start=1):
        if run.kind == "check":
            raise root.fail(f"runs[{i}].kind", "is a check run",
                            f"a reference run and trial runs only for {why}")
    for i, run in trials:
        if len(run.added) != 1 or not run.removed_after:
            raise root.fail(f"runs[{i}].trial", "does not hold one trial weight taken off "
                            "after the run", f"one trial weight per run, removed, for {why}")
    moments = {round(run.added[0].mass_g * run.added[0].radius_mm, 9) for _, run in trials}
    if len(moments) > 1:
        raise root.fail("runs", "has trial weights of different mass or radius",
                        f"the same trial mass at the same radius in every trial run, for {why}")
    angles = {round(run.added[0].angle_deg % 360.0, 6) for _, run in trials}
    if len(trials) < 3 or len(angles) < 3:
        raise root.fail("runs", f"has the trial weight at {len(angles)} different angle(s)",
                        f"three or more trial runs at different angles (0°, 120°, 240°) for "
                        f"{why}")


def _residual_check(t: Table, planes: list[FieldPlane], sensors: list[str]) -> ResidualCheck:
    """One [[residual_checks]] table."""
    t.allow_only(("plane", "sensor", "mass_g", "radius_mm", "positions", "angles_deg",
                  "amplitudes", "journal_load_kg", "limit_gmm"))
    plane = t.integer("plane", required=True, minimum=1, maximum=len(planes)) - 1
    geometry = planes[plane].geometry
    sensor = 0
    if t.has("sensor"):
        name = t.text("sensor")
        if name not in sensors:
            raise t.fail("sensor", f"is '{name}'", "one of the sensors: " + ", ".join(sensors))
        sensor = sensors.index(name)
    if t.has("positions") == t.has("angles_deg"):
        raise t.fail("positions", "and angles_deg are both given" if t.has("positions")
                     else "missing", "positions = [1, 2, ...] or angles_deg = [...], not both")
    if t.has("positions"):
        numbers = [t.check_integer(f"positions[{k}]", v, minimum=1,
                                   maximum=geometry.n_positions)
                   for k, v in enumerate(t.array("positions", required=True), start=1)]
        angles = [geometry.angles_deg[n - 1] for n in numbers]
        radius = geometry.radii_mm[numbers[0] - 1] if numbers else geometry.radii_mm[0]
    else:
        angles = [t.check_number(f"angles_deg[{k}]", v)
                  for k, v in enumerate(t.array("angles_deg", required=True), start=1)]
        radius = geometry.radii_mm[0]
    amplitudes = [t.check_number(f"amplitudes[{k}]", v, non_negative=True)
                  for k, v in enumerate(t.array("amplitudes", required=True), start=1)]
    try:
        return ResidualCheck(plane, sensor, t.number("mass_g", required=True, positive=True),
                             t.number("radius_mm", positive=True) or radius, tuple(angles),
                             tuple(amplitudes), t.number("journal_load_kg", positive=True),
                             t.number("limit_gmm", positive=True))
    except SessionError:
        raise
    except InputError as exc:
        raise t.fail(exc.key or "amplitudes", exc.detail, exc.expected or "") from None
