"""A solved visit as a record for the machine history database (pure mapping)."""

from __future__ import annotations

from datetime import datetime, timezone

from placer.fieldplan import FieldResult
from placer.io.history import MassRecord, RunRecord, VisitRecord


def visit_record(result: FieldResult, started_at: str | None = None) -> VisitRecord:
    """Everything of the visit worth keeping: runs, readings, coefficients, plan, result.

    The visit's time is the session's ``[visit] date`` if given, else
    ``started_at``, else now (UTC).  Readings and coefficients are kept in the
    session's unit and measure, with its angle sense, sense of rotation and
    speed, so that a later visit can convert them or refuse them.
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
        service_rpm=s.rotor.service_rpm, rotation=s.rotation)
