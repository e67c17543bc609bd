"""What a field visit leaves in the machine history: records of runs, masses and plans.

Pure values and the mapping from a solved visit (:func:`visit_record`); the
database that stores them is :mod:`placer.io.history`.
"""

from __future__ import annotations

import json
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, fields
from datetime import datetime, timezone

import numpy as np

from placer.errors import HistoryError
from placer.fieldplan import FieldResult

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
    compares the coefficient arrays element by element.

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

    def __post_init__(self) -> None:
        if self.coefficients is not None:
            matrix = np.array(self.coefficients, dtype=complex)
            matrix.setflags(write=False)
            object.__setattr__(self, "coefficients", matrix)

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
    """

    id: int
    started_at: str
    coefficient_source: str
    condition: float | None
    runs: int
    planned: tuple[MassRecord, ...]
    result: dict


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
        return when.strftime("%Y-%m-%d %H:%M")
    return when.astimezone(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")


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
    try:
        datetime.fromisoformat(record.started_at)
    except (TypeError, ValueError):
        raise bad("started_at", "an ISO 8601 date and time",
                  f"is {record.started_at!r}") from None
    n_channels, n_planes = len(record.channel_names), len(record.plane_names)
    for r, run in enumerate(record.runs):
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
    if record.service_rpm is not None and not (math.isfinite(record.service_rpm)
                                               and record.service_rpm > 0):
        raise bad("service_rpm", "a speed above zero or None", f"is {record.service_rpm!r}")
    if record.condition is not None and math.isnan(record.condition):
        raise bad("condition", "a number or None", "is NaN")
    try:
        json.dumps(record.result)
    except (TypeError, ValueError) as exc:
        raise bad("result", "a JSON-serialisable dict", str(exc)) from None


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
    speed, so that a later visit can convert them or refuse them.

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
                "vibration_before": float(max(abs(v) for v in result.vibration_now))
                if s.norm == "max" else float(sum(abs(v) ** 2 for v in result.vibration_now)
                                              ** 0.5),
                "vibration_after": result.chosen.objective,
                "correction_gmm": [[float(w.real), float(w.imag)] for w in result.correction_gmm],
                "vibration_limit": s.vibration_limit,
                "within_limit": result.within_limit,
                "warnings": list(result.warnings)},
        service_rpm=s.rotor.service_rpm, rotation=s.rotor.rotation)
