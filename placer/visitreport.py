"""What a visit report shows, read from a visit's record alone.

``placer field --sheet`` and ``placer history --visit N --sheet`` print the
same report because both build it here from a :class:`placer.records.VisitRecord`
(the first from the record about to be saved).  Everything derived is
worked out again from what the record holds: the vibration the plan starts
from, the prediction after it, the static and couple parts, the verdict on
the trial runs, the four-run construction, the residual checks, and what is
on the rotor when the technician leaves.  A visit stored before schema
version 3 has no positions, weights or settings: its report says what it
cannot show.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

import numpy as np

from placer.fourrun import FourRunSolution, four_run_checks, solve_four_run
from placer.geometry import PlaneGeometry
from placer.influence import StaticCouple, least_squares_correction, static_couple
from placer.plan import FittedPart
from placer.records import MassRecord, VisitRecord, utc_label
from placer.residualcheck import ResidualCheck, ResidualCheckResult, residual_check
from placer.session import PlacedMass, Run, carried_masses
from placer.trialruns import (
    DataCheck,
    TrialVerdict,
    conditioning_check,
    judge_runs,
    trial_check,
)

ORIGINS = ("trial weight left on", "fitted for a check run", "new")
"""Where a part on the rotor after the visit came from."""


@dataclass(frozen=True)
class RotorPart:
    """Parts on the rotor when the technician leaves.

    Parameters
    ----------
    plane : int
        Index of the plane (from 0).
    position : int or None
        Position number (from 1); None for a trial weight placed by angle.
    angle_deg : float
        Its angle [deg], in the rotor's angle sense.
    radius_mm : float
        Its radius [mm].
    mass_g : float
        Mass of one part [g].
    label : str
        The catalogue item, or "trial 20 g" for a trial weight.
    count : int
        How many, above zero.
    origin : str
        One of :data:`ORIGINS`.
    """

    plane: int
    position: int | None
    angle_deg: float
    radius_mm: float
    mass_g: float
    label: str
    count: int
    origin: str


@dataclass(frozen=True)
class ReportPlane:
    """One correction plane in the report.

    Parameters
    ----------
    name : str
        The plane's name.
    geometry : PlaneGeometry or None
        Its positions; None for a visit stored without them.
    catalog : str or None
        Its catalogue's name; None when not stored.
    correction_gmm : complex
        The continuous correction [g·mm].
    parts : tuple of FittedPart
        The plan's parts on this plane, parts to take off first.
    staying : tuple of RotorPart
        Parts on the rotor before the plan that the plan leaves on.
    """

    name: str
    geometry: PlaneGeometry | None
    catalog: str | None
    correction_gmm: complex
    parts: tuple[FittedPart, ...]
    staying: tuple[RotorPart, ...]

    @property
    def residual_gmm(self) -> complex:
        """What the plan leaves of the continuous correction [g·mm], complex."""
        done = sum((p.signed_count * p.mass_g * p.radius_mm
                    * cmath.exp(1j * math.radians(p.angle_deg)) for p in self.parts), 0j)
        return complex(self.correction_gmm - done)


@dataclass(frozen=True)
class VisitReport:
    """Everything the printed visit report shows.

    Parameters
    ----------
    record : VisitRecord
        The visit as stored (runs, readings as read, coefficients, plan).
    weights : tuple of float
        Each sensor's weight (1 each when not stored).
    now : complex array (n_channels,)
        The vibration the plan starts from [unit and measure].
    predicted : complex array (n_channels,) or None
        The vibration after the plan [unit and measure]; None without coefficients.
    planes : tuple of ReportPlane
        The planes.
    static_couple : StaticCouple or None
        The correction's static and couple parts (two planes).
    verdicts : tuple of TrialVerdict
        The verdict on each trial run.
    checks : tuple of DataCheck
        The checks of the data.
    four_run : FourRunSolution or None
        The construction without a phase reference.
    residual_checks : tuple of ResidualCheckResult
        The residual-unbalance checks.
    on_rotor : tuple of RotorPart
        What is on the rotor when the technician leaves.
    missing : tuple of str
        What a visit stored before schema version 3 cannot show, in sentences.
    """

    record: VisitRecord
    weights: tuple[float, ...]
    now: np.ndarray
    predicted: np.ndarray | None
    planes: tuple[ReportPlane, ...]
    static_couple: StaticCouple | None
    verdicts: tuple[TrialVerdict, ...]
    checks: tuple[DataCheck, ...]
    four_run: FourRunSolution | None
    residual_checks: tuple[ResidualCheckResult, ...]
    on_rotor: tuple[RotorPart, ...]
    missing: tuple[str, ...]

    @property
    def data_ok(self) -> bool:
        """Whether every check of the data passed."""
        return all(c.passed for c in self.checks)

    @property
    def amplitude_only(self) -> bool:
        """True for a visit without a phase reference (the four-run method)."""
        return self.record.phase_sense == "none"

    @property
    def limit(self) -> float | None:
        """The vibration limit [unit and measure]; None when none was given."""
        value = self.record.setup.get("vibration_limit", self.record.result.get(
            "vibration_limit"))
        return value if isinstance(value, (int, float)) else None

    @property
    def within_limit(self) -> bool | None:
        """Whether every predicted amplitude is at or below the limit; None without one."""
        if self.limit is None or self.predicted is None:
            return None
        return bool(np.max(np.abs(self.predicted)) <= self.limit)

    @property
    def when(self) -> str:
        """The visit's date (and UTC time) for people."""
        return utc_label(self.record.started_at)

    @property
    def rotor_name(self) -> str:
        """The rotor's name, or the machine's when not stored."""
        return str(self.record.setup.get("rotor_name") or self.record.machine_name)


def as_runs(record: VisitRecord) -> tuple[Run, ...]:
    """A record's runs as the session's runs, for the same judgement of the trial runs.

    Parameters
    ----------
    record : VisitRecord
        The visit.

    Returns
    -------
    tuple of Run
        Name, kind, phasors, readings as read, masses; a trial run's masses
        came off after it when they say so, other runs' stayed.
    """
    return tuple(Run(r.name, r.kind, np.array(r.phasors, dtype=complex), r.readings,
                     tuple(PlacedMass(m.plane, m.mass_g, m.angle_deg, m.radius_mm, m.position,
                                      m.item, m.count) for m in r.masses),
                     removed_after=r.kind == "trial" and any(m.removed_after for m in r.masses))
                 for r in record.runs)


def _four_run(record: VisitRecord) -> FourRunSolution | None:
    if record.phase_sense != "none":
        return None
    trials = [r for r in record.runs if r.kind == "trial" and r.masses]
    if len(trials) < 3 or not record.runs:
        return None
    first = trials[0].masses[0]
    return solve_four_run(abs(record.runs[0].phasors[0]), [r.masses[0].angle_deg for r in trials],
                          [abs(r.phasors[0]) for r in trials], first.mass_g * first.radius_mm)


def _vibration_now(record: VisitRecord, four_run: FourRunSolution | None) -> np.ndarray:
    """The vibration the plan started from, as :func:`placer.fieldplan.solve_session` took it."""
    if four_run is not None:
        return np.array([-four_run.coefficient * four_run.correction_gmm])
    checks = [r for r in record.runs if r.kind == "check"]
    if checks:
        return np.array(checks[-1].phasors, dtype=complex)
    runs = as_runs(record)
    added = [np.array([sum((m.gmm for m in r.added if m.plane == p), 0j)
                       for p in range(len(record.plane_names))]) for r in runs]
    _, state = carried_masses(added, [r.removed_after for r in runs], len(record.plane_names))
    now = np.array(record.runs[0].phasors, dtype=complex) if record.runs else \
        np.zeros(len(record.channel_names), dtype=complex)
    if record.coefficients is not None:
        now = now + record.coefficients @ state
    return now


def planned_parts(record: VisitRecord) -> list[tuple[int, FittedPart]]:
    """The plan as (plane index, FittedPart) pairs, parts to take off first.

    Parameters
    ----------
    record : VisitRecord
        The visit.

    Returns
    -------
    list of (int, FittedPart)
        A negative stored count is a part to take off.
    """
    return _fitted(record.planned)


def _fitted(planned) -> list[tuple[int, FittedPart]]:
    parts = [(m.plane, FittedPart(m.position or 0, m.angle_deg, m.radius_mm, m.item or "",
                                  m.mass_g, abs(m.count), "remove" if m.count < 0 else "fit"))
             for m in planned]
    return sorted(parts, key=lambda pp: (pp[1].action != "remove", pp[0], pp[1].position))


def kept_masses(record: VisitRecord) -> tuple[MassRecord, ...]:
    """The masses fitted for the runs that stayed on: trial weights left on, check-run parts.

    Parameters
    ----------
    record : VisitRecord
        The visit.

    Returns
    -------
    tuple of MassRecord
        In run order.
    """
    return tuple(m for run in record.runs for m in run.masses
                 if not (m.role == "trial" and m.removed_after))


def on_rotor_before(record: VisitRecord) -> list[RotorPart]:
    """Trial weights left on and parts fitted for check runs: on the rotor before the plan.

    Parameters
    ----------
    record : VisitRecord
        The visit.

    Returns
    -------
    list of RotorPart
        One entry per mass as fitted.
    """
    return _as_parts(kept_masses(record))


def _as_parts(kept) -> list[RotorPart]:
    return [RotorPart(m.plane, m.position, m.angle_deg, m.radius_mm, m.mass_g,
                      m.item or f"trial {m.mass_g:g} g", m.count,
                      ORIGINS[0] if m.role == "trial" else ORIGINS[1]) for m in kept]


def on_rotor_after(record: VisitRecord) -> tuple[RotorPart, ...]:
    """What is on the rotor when the technician leaves, if the plan is carried out.

    See :func:`on_rotor`.

    Parameters
    ----------
    record : VisitRecord
        The visit.

    Returns
    -------
    tuple of RotorPart
        Counts above zero, in plane and position order.
    """
    return on_rotor(kept_masses(record), record.planned)


def on_rotor(kept, planned) -> tuple[RotorPart, ...]:
    """The parts on the rotor after a plan: those kept on, less those it takes off, plus its own.

    A planned removal is matched to a part on the rotor by plane, position
    and mass (a left-on trial weight is taken off under the stand-in item the
    plan names); counts are summed per place and part.

    Parameters
    ----------
    kept : sequence of MassRecord
        Masses fitted for the runs that stayed on (:func:`kept_masses`).
    planned : sequence of MassRecord
        The plan (a negative count: parts to take off).

    Returns
    -------
    tuple of RotorPart
        Counts above zero, in plane and position order (by angle for
        weights on no position).
    """
    parts = _as_parts(kept)
    counts = [p.count for p in parts]
    new: list[RotorPart] = []
    for plane, part in _fitted(planned):
        if part.action == "remove":
            left = part.count
            for k, p in enumerate(parts):
                if (p.plane, p.position) == (plane, part.position) and left and \
                        math.isclose(p.mass_g, part.mass_g, rel_tol=1e-9):
                    taken = min(left, counts[k])
                    counts[k] -= taken
                    left -= taken
            continue
        new.append(RotorPart(plane, part.position, part.angle_deg, part.radius_mm, part.mass_g,
                             part.item, part.count, ORIGINS[2]))
    merged: dict[tuple, RotorPart] = {}
    for p, count in [(p, c) for p, c in zip(parts, counts)] + [(p, p.count) for p in new]:
        key = (p.plane, p.position, round(p.angle_deg, 6), round(p.radius_mm, 6), p.label,
               p.origin)
        total = count + (merged[key].count if key in merged else 0)
        merged[key] = RotorPart(p.plane, p.position, p.angle_deg, p.radius_mm, p.mass_g,
                                p.label, total, p.origin)
    return tuple(sorted((p for p in merged.values() if p.count > 0),
                        key=lambda p: (p.plane, p.position is None, p.position or 0,
                                       p.angle_deg, ORIGINS.index(p.origin), p.label)))


def _checks(record: VisitRecord, four_run: FourRunSolution | None
            ) -> tuple[tuple[TrialVerdict, ...], tuple[DataCheck, ...]]:
    if four_run is not None:
        return (), four_run_checks(four_run, record.channel_names[0])
    trials = any(r.kind == "trial" for r in record.runs)
    setup = record.setup
    verdicts = judge_runs(as_runs(record), len(record.plane_names), record.channel_names,
                          setup.get("mass_kg"), record.service_rpm) if trials else ()
    checks = [trial_check(v) for v in verdicts]
    if record.condition is not None and len(record.plane_names) > 1:
        checks.append(conditioning_check(record.condition, record.plane_names))
    return verdicts, tuple(checks)


def _residual_checks(record: VisitRecord) -> tuple[ResidualCheckResult, ...]:
    out = []
    for entry in record.setup.get("residual_checks", []):
        check = ResidualCheck(int(entry["plane"]), int(entry["sensor"]), float(entry["mass_g"]),
                              float(entry["radius_mm"]), tuple(entry["angles_deg"]),
                              tuple(entry["amplitudes"]), entry.get("journal_load_kg"),
                              entry.get("limit_gmm"))
        out.append(residual_check(check, entry.get("judged_limit_gmm"),
                                  str(entry.get("limit_source", ""))))
    return tuple(out)


def visit_report(record: VisitRecord) -> VisitReport:
    """The report of a visit, from its record alone.

    Parameters
    ----------
    record : VisitRecord
        The visit as saved (or about to be).

    Returns
    -------
    VisitReport
        What the report shows; ``missing`` says what an older record lacks.

    References
    ----------
    V = V0 + A·w ([InfluenceCoefficients]); static and couple parts
    ([StaticCouple]); [TrialRunRule], [FourRun], [API617].
    """
    missing = []
    if record.plane_geometries is None:
        missing.append("This visit was stored before placer kept each plane's positions: "
                       "the plan is listed, not drawn on the rotor face.")
    if record.channel_weights is None:
        missing.append("The sensors' weights were not stored: taken as 1 each.")
    weights = record.channel_weights or (1.0,) * len(record.channel_names)
    four_run = _four_run(record)
    now = _vibration_now(record, four_run)
    plan = planned_parts(record)
    predicted = None
    if record.coefficients is not None:
        added = np.zeros(len(record.plane_names), dtype=complex)
        for plane, part in plan:
            added[plane] += part.signed_count * part.mass_g * part.radius_mm * cmath.exp(
                1j * math.radians(part.angle_deg))
        predicted = now + record.coefficients @ added
    stored = record.result.get("correction_gmm") or []
    if len(stored) == len(record.plane_names):
        corrections = [complex(re, im) for re, im in stored]
    elif record.coefficients is not None:
        corrections = list(least_squares_correction(record.coefficients, now,
                                                    np.array(weights, dtype=float)))
    else:
        corrections = [0j] * len(record.plane_names)
    after = on_rotor_after(record)
    planes = []
    for p, name in enumerate(record.plane_names):
        geometry = record.plane_geometries[p] if record.plane_geometries else None
        catalog = record.catalog_names[p] if record.catalog_names else None
        staying = tuple(r for r in after if r.plane == p and r.origin != ORIGINS[2])
        planes.append(ReportPlane(name, geometry, catalog, corrections[p],
                                  tuple(part for q, part in plan if q == p), staying))
    sc = None
    if len(corrections) == 2:
        sc = static_couple(corrections[0], corrections[1],
                           record.setup.get("plane_separation_mm"))
    verdicts, checks = _checks(record, four_run)
    return VisitReport(record, tuple(float(w) for w in weights), now, predicted, tuple(planes),
                       sc, verdicts, checks, four_run, _residual_checks(record), after,
                       tuple(missing))
