"""What a field visit leaves in the machine history: records of runs, masses and plans.

Pure values and the mapping from a solved visit (:func:`visit_record`); the
database that stores them is :mod:`placer.io.history`.
"""

from __future__ import annotations

import dataclasses
import json
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, fields
from datetime import datetime, timezone
from typing import Any

import numpy as np

from placer.errors import HistoryError
from placer.fieldresult import FieldResult
from placer.geometry import ANGLE_SENSES, ROTATIONS, PlaneGeometry
from placer.readings import AMPLITUDE_UNITS, MEASURES, PHASE_SENSES
from placer.residual import objective_of
from placer.session import RUN_KINDS

MASS_ROLES = ("trial", "fitted", "planned")
"""What a stored mass was: a trial weight, a part fitted for a run, or planned."""


@dataclass(frozen=True)
class MassRecord:
    """A mass on a correction plane, as stored.

    ``plane`` is 0-based; ``position`` the position number if it sat on one;
    ``angle_deg`` in the rotor's angle sense [°], ``radius_mm`` [mm],
    ``mass_g`` of one item [g], ``count`` items (negative in a planned trim:
    parts to take off); ``role`` one of
    :data:`MASS_ROLES`; ``removed_after`` whether it came off after its run.

    Parameters
    ----------
    plane : int
        Index of the plane (from 0).
    position : int or None
        Position number (from 1), or None for a mass placed by angle.
    angle_deg : float
        Angle [deg] in the rotor's angle sense.
    radius_mm : float
        Radius [mm].
    mass_g : float
        Mass of one item [g].
    item : str or None
        Catalogue item id; None for a trial weight.
    count : int
        Items; negative in a planned trim for parts to take off.
    role : str
        One of :data:`MASS_ROLES`.
    removed_after : bool
        Whether it came off after its run.
    """

    plane: int
    position: int | None
    angle_deg: float
    radius_mm: float
    mass_g: float
    item: str | None
    count: int
    role: str
    removed_after: bool


@dataclass(frozen=True)
class RunRecord:
    """One run: ``readings`` (amplitude, phase_deg) per channel as read, and
    ``phasors`` the same readings converted to the session's convention.

    Parameters
    ----------
    name : str
        The run's name.
    kind : str
        "reference", "trial" or "check".
    readings : tuple of (float, float)
        (amplitude [unit and measure], phase [deg] as read) per channel.
    phasors : tuple of complex
        The same readings as complex numbers, phases in the rotor's angle sense.
    masses : tuple of MassRecord
        Masses fitted for the run.
    """

    name: str
    kind: str
    readings: tuple[tuple[float, float], ...]
    phasors: tuple[complex, ...]
    masses: tuple[MassRecord, ...]


@dataclass(frozen=True, eq=False)
class VisitRecord:
    """Everything stored about one visit to a machine.

    ``started_at`` is ISO 8601 text; ``coefficients`` the influence
    coefficients, channels × planes [reading unit per g·mm], or None;
    ``condition`` their condition number; ``result`` a JSON-serialisable
    summary (it reads back as JSON gives it: lists for tuples);
    ``service_rpm`` the speed of the runs [r/min] and ``rotation`` the sense
    of rotation ("clockwise", "counterclockwise"), None when not known.
    Phasors and coefficients are in ``unit`` and ``measure``.  Equality
    compares the coefficient arrays element by element.  What a visit report
    needs beyond the runs and the plan (schema version 3): the sensors'
    weights, each plane's positions and catalogue, and ``setup`` (the rotor's
    name, mass and grade, the plane separation, norm, limit and part limit,
    the residual checks as entered); None (or empty) for a visit stored
    before.

    Parameters
    ----------
    machine_id : str
        The machine's tag.
    machine_name : str
        Its name.
    started_at : str
        When the visit took place, ISO 8601.
    session_file : str
        The session file it was read from.
    unit : str
        Amplitude unit of the phasors and coefficients.
    measure : str
        Amplitude measure: "peak", "peak-to-peak" or "rms".
    phase_sense : str
        "lag" or "lead", as the instrument counted.
    angle_sense : str
        Sense the angles and phasors are counted in.
    channel_names : tuple of str
        The sensors, in reading order.
    plane_names : tuple of str
        The planes, in order.
    runs : tuple of RunRecord
        The runs.
    coefficients : complex array (n_channels, n_planes) or None
        Influence coefficients [unit and measure per g·mm], stored read-only.
    condition : float or None
        Their condition number [1].
    coefficient_source : str
        Where they came from.
    planned : tuple of MassRecord
        The plan chosen (role "planned").
    result : dict
        A JSON-serialisable summary of the outcome.
    service_rpm : float or None
        Speed of the runs [r/min].
    rotation : str or None
        Sense of rotation.
    channel_weights : tuple of float or None
        Each sensor's weight in the fit; None when not stored.
    plane_geometries : tuple of (PlaneGeometry or None) or None
        Each plane's positions; None when not stored.
    catalog_names : tuple of (str or None) or None
        Each plane's catalogue name; None when not stored.
    setup : dict
        JSON-serialisable: the rotor and the session's settings (see above);
        empty when not stored.
    """

    machine_id: str
    machine_name: str
    started_at: str
    session_file: str
    unit: str
    measure: str
    phase_sense: str
    angle_sense: str
    channel_names: tuple[str, ...]
    plane_names: tuple[str, ...]
    runs: tuple[RunRecord, ...]
    coefficients: np.ndarray | None
    condition: float | None
    coefficient_source: str
    planned: tuple[MassRecord, ...]
    result: dict
    service_rpm: float | None = None
    rotation: str | None = None
    channel_weights: tuple[float, ...] | None = None
    plane_geometries: tuple[PlaneGeometry | None, ...] | None = None
    catalog_names: tuple[str | None, ...] | None = None
    setup: dict = dataclasses.field(default_factory=dict)

    def __post_init__(self) -> None:
        if self.coefficients is not None:
            matrix = np.array(self.coefficients, dtype=complex)
            matrix.setflags(write=False)
            object.__setattr__(self, "coefficients", matrix)
        for name in ("plane_geometries", "catalog_names"):
            value = getattr(self, name)
            if value is not None and all(v is None for v in value):
                object.__setattr__(self, name, None)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, VisitRecord):
            return NotImplemented
        for field in fields(self):
            mine, theirs = getattr(self, field.name), getattr(other, field.name)
            if field.name == "coefficients":
                if (mine is None) != (theirs is None):
                    return False
                if mine is not None and (mine.shape != theirs.shape
                                         or not np.array_equal(mine, theirs)):
                    return False
            elif mine != theirs:
                return False
        return True


@dataclass(frozen=True)
class MachineSummary:
    """A machine in the history: its number of visits and the last one's start.

    Parameters
    ----------
    id : str
        The machine's tag.
    name : str
        Its name.
    visits : int
        Visits stored.
    last_visit : str or None
        Start of the latest visit, ISO 8601; None when there is none.
    """

    id: str
    name: str
    visits: int
    last_visit: str | None


@dataclass(frozen=True)
class VisitSummary:
    """One line of a machine's history.

    Parameters
    ----------
    id : int
        The visit's number in the database.
    started_at : str
        When it took place, ISO 8601.
    coefficient_source : str
        Where its coefficients came from.
    condition : float or None
        Their condition number [1].
    runs : int
        Runs stored.
    planned : tuple of MassRecord
        The plan chosen.
    result : dict
        The stored summary of the outcome.
    kept : tuple of MassRecord
        Masses fitted for the runs that stayed on (trial weights left on,
        check-run parts), for what is on the rotor after the visit.
    saved_at : str or None
        When it was saved, ISO 8601 in UTC; None for a visit saved before
        placer kept the time (schema version 4).
    """

    id: int
    started_at: str
    coefficient_source: str
    condition: float | None
    runs: int
    planned: tuple[MassRecord, ...]
    result: dict
    kept: tuple[MassRecord, ...] = ()
    saved_at: str | None = None


@dataclass(frozen=True)
class LastSaved:
    """The visit saved last in a history database, so that a technician can check a save.

    Parameters
    ----------
    visit_id : int
        Its number in the database.
    machine_id : str
        Its machine.
    started_at : str
        When the visit took place, ISO 8601.
    saved_at : str or None
        When it was saved, ISO 8601 in UTC; None for a visit saved before
        placer kept the time.
    """

    visit_id: int
    machine_id: str
    started_at: str
    saved_at: str | None


def utc_label(started_at: str) -> str:
    """A stored visit time for people: ``2026-11-02 10:15 UTC``, or the date alone.

    Times with an offset are shown in UTC; a time without one (written by
    hand into a file) is shown as stored, without a zone.

    Parameters
    ----------
    started_at : str
        ISO 8601 text, as stored.

    Returns
    -------
    str
        The label; the text itself when it is not ISO 8601.
    """
    try:
        when = datetime.fromisoformat(started_at)
    except (TypeError, ValueError):
        return str(started_at)
    if len(started_at.strip()) == 10:
        return when.date().isoformat()
    if when.tzinfo is None:
        return when.isoformat(sep=" ", timespec="minutes")  # %Y drops year 1's zeros
    try:
        return when.astimezone(timezone.utc).replace(tzinfo=None).isoformat(
            sep=" ", timespec="minutes") + " UTC"
    except OverflowError:  # its UTC time falls outside years 1 to 9999
        return str(started_at)


def check_record(record: VisitRecord) -> None:
    """Refuse a record the schema cannot hold faithfully (before any writing).

    Parameters
    ----------
    record : VisitRecord
        The record to be written.

    Raises
    ------
    HistoryError
        Naming the record's key and what was expected.
    """
    def bad(key: str, expected: str, detail: str = "is not stored") -> HistoryError:
        return HistoryError(detail, key=key, expected=expected)

    if not record.machine_id:
        raise bad("machine_id", "a machine id")
    for name, allowed in (("unit", tuple(AMPLITUDE_UNITS)), ("measure", tuple(MEASURES)),
                          ("phase_sense", (*PHASE_SENSES, "none")),
                          ("angle_sense", ANGLE_SENSES), ("rotation", (None, *ROTATIONS))):
        if getattr(record, name) not in allowed:
            raise bad(name, " or ".join(str(a) for a in allowed),
                      f"is {getattr(record, name)!r}")
    try:
        datetime.fromisoformat(record.started_at)
    except (TypeError, ValueError):
        raise bad("started_at", "an ISO 8601 date and time",
                  f"is {record.started_at!r}") from None
    n_channels, n_planes = len(record.channel_names), len(record.plane_names)
    for r, run in enumerate(record.runs):
        if run.kind not in RUN_KINDS:
            raise bad(f"runs[{r}].kind", " or ".join(RUN_KINDS), f"is {run.kind!r}")
        if len(run.readings) != n_channels or len(run.phasors) != n_channels:
            raise bad(f"runs[{r}].readings", f"{n_channels} readings and phasors, one per channel",
                      f"has {len(run.readings)} readings and {len(run.phasors)} phasors")
        values = [v for pair in run.readings for v in pair]
        values += [part for z in map(complex, run.phasors) for part in (z.real, z.imag)]
        if not all(math.isfinite(v) for v in values):
            raise bad(f"runs[{r}].readings", "finite numbers", "holds NaN or infinity")
        _check_masses(run.masses, n_planes, f"runs[{r}].masses", bad)
    _check_masses(record.planned, n_planes, "planned", bad)
    if record.coefficients is not None:
        if record.coefficients.shape != (n_channels, n_planes):
            raise bad("coefficients", f"{n_channels} × {n_planes} (channels × planes)",
                      f"has shape {record.coefficients.shape}")
        if not np.all(np.isfinite(record.coefficients)):
            raise bad("coefficients", "finite numbers", "holds NaN or infinity")
    if record.channel_weights is not None and (
            len(record.channel_weights) != n_channels
            or not all(math.isfinite(w) and w > 0 for w in record.channel_weights)):
        raise bad("channel_weights", f"{n_channels} weights above zero, one per channel")
    for name in ("plane_geometries", "catalog_names"):
        value = getattr(record, name)
        if value is not None and len(value) != n_planes:
            raise bad(name, f"{n_planes} entries, one per plane", f"has {len(value)}")
    if record.service_rpm is not None and not (math.isfinite(record.service_rpm)
                                               and record.service_rpm > 0):
        raise bad("service_rpm", "a speed above zero or None", f"is {record.service_rpm!r}")
    if record.condition is not None and math.isnan(record.condition):
        raise bad("condition", "a number or None", "is NaN")
    for name in ("result", "setup"):
        try:
            json.dumps(getattr(record, name), allow_nan=False)
        except (TypeError, ValueError) as exc:
            raise bad(name, "a JSON-serialisable dict of finite numbers", str(exc)) from None


def _check_masses(masses: Sequence[MassRecord], n_planes: int, key: str,
                  bad: Callable[..., HistoryError]) -> None:
    for k, mass in enumerate(masses):
        if mass.role not in MASS_ROLES:
            raise bad(f"{key}[{k}].role", " or ".join(MASS_ROLES), f"is {mass.role!r}")
        if not 0 <= mass.plane < n_planes:
            raise bad(f"{key}[{k}].plane", f"0 to {n_planes - 1}", f"is {mass.plane}")
        if not all(math.isfinite(v) for v in (mass.angle_deg, mass.radius_mm, mass.mass_g)):
            raise bad(f"{key}[{k}]", "finite angle_deg, radius_mm and mass_g",
                      "holds NaN or infinity")


def visit_record(result: FieldResult, started_at: str | None = None) -> VisitRecord:
    """Everything of the visit worth keeping: runs, readings, coefficients, plan, result.

    The visit's time is the session's ``[visit] date`` if given, else
    ``started_at``, else now (UTC).  Readings and coefficients are kept in the
    session's unit and measure, with its angle sense, sense of rotation and
    speed, so that a later visit can convert them or refuse them; with the
    sensors' weights, the planes' positions and the session's settings, so
    that the visit report can be printed again from the record alone.  The
    result's vibration figures are physical amplitudes (the largest reading
    before and after); the weighted objective the plan minimised is kept
    beside them, labelled.

    Parameters
    ----------
    result : FieldResult
        The solved visit.
    started_at : str or None
        When the visit started, ISO 8601, used when the session gives no date.

    Returns
    -------
    VisitRecord
        The record, its plan's parts to take off with negative counts.
    """
    s = result.session
    runs = []
    for run in s.runs:
        masses = tuple(MassRecord(plane=m.plane, position=m.position, angle_deg=m.angle_deg,
                                  radius_mm=m.radius_mm, mass_g=m.mass_g, item=m.item,
                                  count=m.count, role="trial" if run.kind == "trial" else "fitted",
                                  removed_after=run.removed_after) for m in run.added)
        runs.append(RunRecord(name=run.name, kind=run.kind, readings=run.raw,
                              phasors=tuple(complex(v) for v in run.readings), masses=masses))
    planned = tuple(MassRecord(plane=p, position=part.position, angle_deg=part.angle_deg,
                               radius_mm=part.radius_mm, mass_g=part.mass_g, item=part.item,
                               count=-part.count if part.action == "remove" else part.count,
                               role="planned", removed_after=False)
                    for p, part in result.chosen.parts)
    weights = np.array([c.weight for c in s.channels])
    before = float(np.max(np.abs(result.vibration_now)))
    rotor = s.rotor
    setup: dict[str, Any] = {
        "rotor_name": rotor.name, "mass_kg": rotor.mass_kg, "grade_mm_s": rotor.grade_mm_s,
        "plane_separation_mm": s.plane_separation_mm, "norm": s.norm,
        "vibration_limit": s.vibration_limit, "max_parts": s.max_parts,
        "residual_checks": [residual_check_setup(r) for r in result.residual_checks]}
    return VisitRecord(
        machine_id=s.machine_id, machine_name=s.machine_name,
        started_at=s.visit_date or started_at
        or datetime.now(timezone.utc).isoformat(timespec="seconds"),
        session_file=s.source, unit=s.unit, measure=s.measure, phase_sense=s.phase_sense,
        angle_sense=s.rotor.angle_sense, channel_names=tuple(c.name for c in s.channels),
        plane_names=tuple(p.geometry.name for p in s.planes), runs=tuple(runs),
        coefficients=result.coefficients.matrix, condition=result.coefficients.condition,
        coefficient_source=result.coefficient_source, planned=planned,
        result={"basis": result.basis, "norm": s.norm,
                "vibration_before": before, "vibration_after": result.chosen.largest,
                "figures": "largest reading",
                "objective_before": objective_of(result.vibration_now, weights, s.norm),
                "objective_after": result.chosen.objective,
                "correction_gmm": [[float(w.real), float(w.imag)] for w in result.correction_gmm],
                "vibration_limit": s.vibration_limit,
                "within_limit": result.within_limit,
                "data_ok": result.data_ok,
                "checks": [{"subject": c.subject, "passed": c.passed, "finding": c.finding,
                            "action": c.action} for c in result.checks],
                "residual_checks": [{"plane": r.check.plane, "residual_gmm": r.residual_gmm,
                                     "limit_gmm": r.limit_gmm, "within": r.within}
                                    for r in result.residual_checks],
                "warnings": list(result.warnings)},
        service_rpm=s.rotor.service_rpm, rotation=s.rotor.rotation,
        channel_weights=tuple(float(c.weight) for c in s.channels),
        plane_geometries=tuple(p.geometry for p in s.planes),
        catalog_names=tuple(p.catalog.name for p in s.planes), setup=setup)


def residual_check_setup(result: Any) -> dict[str, Any]:
    """A residual check as the record keeps it: the check as entered and its limit.

    Parameters
    ----------
    result : ResidualCheckResult
        The check's result (:mod:`placer.residualcheck`).

    Returns
    -------
    dict
        plane, sensor (indices from 0), mass_g, radius_mm, angles_deg,
        amplitudes, journal_load_kg, limit_gmm (as entered), and the limit
        judged against with its source.
    """
    c = result.check
    return {"plane": c.plane, "sensor": c.sensor, "mass_g": c.mass_g, "radius_mm": c.radius_mm,
            "angles_deg": list(c.angles_deg), "amplitudes": list(c.amplitudes),
            "journal_load_kg": c.journal_load_kg, "limit_gmm": c.limit_gmm,
            "judged_limit_gmm": result.limit_gmm, "limit_source": result.limit_source}
