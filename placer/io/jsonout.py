"""Every JSON shape placer prints or writes (``--json`` of each command)."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from placer.catalog import Catalog
from placer.fieldresult import FieldOption, FieldResult
from placer.geometry import angle_of_deg
from placer.plan import LIGHTEST, JobResult, PlaneResult, PlanOption
from placer.records import (
    MachineSummary,
    MassRecord,
    VisitRecord,
    VisitSummary,
    utc_label,
)
from placer.tolerance import PlaneShare
from placer.units import kg_mm2_from_gmm2, mass_at_radius_g

if TYPE_CHECKING:  # the blade pipeline (and CP-SAT with it) loads only for placer blades
    from placer.arrange import BladeResult


def option_dict(option: PlanOption) -> dict[str, Any]:
    """One plan: part count, residual and the parts (position numbers from 1).

    Parameters
    ----------
    option : PlanOption
        The plan.

    Returns
    -------
    dict
        Part count, residual [g·mm] and its angle [deg], lower bound, proof,
        Monte Carlo figures (null when not rated) and the parts.
    """
    return {
        "part_count": option.part_count,
        "residual_gmm": float(option.residual_gmm),
        "residual_angle_deg": float(option.residual_angle_deg),
        "lower_bound_gmm": float(option.lower_bound_gmm),
        "proven": option.proven,
        "chance_within": option.chance_within,
        "residual_p95_gmm": option.residual_p95_gmm,
        "mass_g": option.mass_g,
        "least": "mass" if option.kind == LIGHTEST else "residual",
        "parts": [
            {"position": p.position, "angle_deg": float(p.angle_deg),
             "radius_mm": p.radius_mm, "item": p.item, "mass_g": p.mass_g, "count": p.count,
             "action": p.verb}
            for p in option.parts
        ],
    }


def plane_dict(result: PlaneResult) -> dict[str, Any]:
    """One plane's result.

    Parameters
    ----------
    result : PlaneResult
        The plane's result.

    Returns
    -------
    dict
        Tolerance, required and further correction, existing parts, the
        trade-off front ("pareto"), the chosen plan, notes, method and time.
    """
    plane = result.plane
    chosen = option_dict(result.chosen)
    for part, fitted in zip(chosen["parts"], result.chosen.parts):
        try:
            item = plane.catalog.items[plane.catalog.item_index(fitted.item)]
            part["fixing"] = item.fixing
        except KeyError:
            part["fixing"] = ""
    radius_mm = max(plane.geometry.radii_mm)
    chosen["within_tolerance"] = result.within_tolerance
    chosen["within_aim"] = result.within_aim
    chosen["rule"] = result.rule
    return {
        "name": result.name,
        "optimal": result.optimal,
        "tolerance_gmm": None if result.tolerance_gmm is None else float(result.tolerance_gmm),
        "tolerance_source": result.tolerance_source,
        "required": {
            "gmm": float(abs(plane.correction_gmm)),
            "angle_deg": float(angle_of_deg(plane.correction_gmm)),
            "given_as": plane.given_as,
        },
        "further_gmm": float(abs(plane.further_correction_gmm)),
        "further_angle_deg": float(angle_of_deg(plane.further_correction_gmm)),
        "existing": [{"position": e.position, "item": plane.catalog.items[e.item].id,
                      "count": e.count} for e in plane.existing],
        "catalog": plane.catalog.name,
        "pareto": [option_dict(o) for o in result.front],
        "lightest_within_aim": [option_dict(o) for o in result.lighter],
        "aim_gmm": None if result.aim_gmm is None else float(result.aim_gmm),
        "aim": result.aim_text,
        "chosen": chosen,
        "notes": list(result.notes),
        "method": result.method,
        "elapsed_s": float(result.elapsed_s),
        "worked_from": plane.worked_from,
        "radius_mm": radius_mm,
        "residual_mass_g": mass_at_radius_g(float(result.chosen.residual_gmm), radius_mm),
        "tolerance_mass_g": None if result.tolerance_gmm is None
        else mass_at_radius_g(float(result.tolerance_gmm), radius_mm),
    }


def job_dict(result: JobResult) -> dict[str, Any]:
    """The whole JSON object for a job.

    Parameters
    ----------
    result : JobResult
        The solved job.

    Returns
    -------
    dict
        The object of ``placer solve --json``.
    """
    rotor = result.job.rotor
    papers = result.job.paperwork
    return {
        "job": result.job.source,
        "rotor": {"name": rotor.name, "mass_kg": rotor.mass_kg, "service_rpm": rotor.service_rpm,
                  "grade_mm_s": rotor.grade_mm_s, "reference_mark": rotor.reference_mark,
                  "rotation": rotor.rotation, "front": rotor.end_name("front"),
                  "back": rotor.end_name("back")},
        "paperwork": {"customer": papers.customer, "work_order": papers.work_order,
                      "technician": papers.technician, "date": papers.date or None},
        "units": papers.units,
        "angle_convention": f"degrees from the reference mark, counted {rotor.angle_sense}",
        "permissible_gmm": None if result.permissible_gmm is None
        else float(result.permissible_gmm),
        "within_tolerance": result.all_within,
        "stock_short": list(result.stock_short),
        "notes": list(result.notes),
        "planes": [plane_dict(p) for p in result.planes],
    }


def _option_dict(option: FieldOption, result: FieldResult) -> dict[str, Any]:
    return {
        "part_count": option.used_parts,
        "largest_amplitude": option.largest,
        "objective": option.objective,
        "proven": option.proven,
        "parts": [{"plane": p + 1, "plane_name": result.session.planes[p].geometry.name,
                   "position": part.position, "angle_deg": part.angle_deg,
                   "radius_mm": part.radius_mm, "item": part.item, "mass_g": part.mass_g,
                   "count": part.count, "action": part.verb} for p, part in option.parts],
        "predicted": [_phasor_dict(v) for v in option.predicted],
    }


def _phasor_dict(value: complex) -> dict[str, float]:
    return {"amplitude": float(abs(value)), "angle_deg": angle_of_deg(complex(value))}


def field_dict(result: FieldResult) -> dict[str, Any]:
    """The JSON object of ``placer field --json``.

    Parameters
    ----------
    result : FieldResult
        The solved visit.

    Returns
    -------
    dict
        Coefficients, the checks of the data (``data_ok`` false: the plan is
        from data that fails them), vibration now, correction, plans with
        their largest predicted amplitude and the weighted objective they
        minimise, what is on the rotor, residual checks and warnings; the
        static and couple parts for two planes; the four-run figures without
        a phase reference.
    """
    from placer.records import visit_record
    from placer.visitreport import on_rotor_after, on_rotor_before

    s = result.session
    matrix = result.coefficients.matrix
    record = visit_record(result)
    out: dict[str, Any] = {
        "machine": {"id": s.machine_id, "name": s.machine_name},
        "unit": s.unit, "measure": s.measure, "norm": s.norm,
        "amplitudes": f"{s.unit} {s.measure}, as read",
        "angle_convention": f"degrees from the reference mark, counted {s.rotor.angle_sense}",
        "coefficient_source": result.coefficient_source,
        "coefficients_per_gmm": [[{"re": float(v.real), "im": float(v.imag)} for v in row]
                                 for row in matrix],
        "condition_number": result.coefficients.condition,
        "condition_number_of": "the coefficients with each sensor's row weighted and each "
                               "plane's column scaled to unit length",
        "objective": ("weighted largest reading" if s.norm == "max"
                      else "weighted root-sum-square of the readings"),
        "data_ok": result.data_ok,
        "plan_from_failed_data": not result.data_ok,
        "checks": [{"subject": c.subject, "passed": c.passed, "finding": c.finding,
                    "action": c.action, "rule": c.rule} for c in result.checks],
        "trial_runs": [_verdict_dict(v) for v in result.verdicts],
        "basis": result.basis,
        "vibration_now": [_phasor_dict(v) for v in result.vibration_now],
        "correction": [{"plane": p + 1, "gmm": float(abs(w)), "angle_deg": angle_of_deg(w)}
                       for p, w in enumerate(result.correction_gmm)],
        "pareto": [_option_dict(o, result) for o in result.front],
        "chosen": _option_dict(result.chosen, result),
        "rounded_per_plane": _option_dict(result.rounded, result),
        "coupled_same_parts": _option_dict(result.coupled_same_parts, result),
        "fitted_on_rotor": [{"plane": m.plane + 1, "position": m.position, "item": m.item,
                             "count": m.count} for m in result.fitted],
        "on_rotor_before": [_rotor_part_dict(p) for p in on_rotor_before(record)],
        "on_rotor_after": [_rotor_part_dict(p) for p in on_rotor_after(record)],
        "residual_checks": [_residual_dict(r) for r in result.residual_checks],
        "vibration_limit": s.vibration_limit,
        "within_limit": result.within_limit,
        "warnings": list(result.warnings),
    }
    if result.static_couple is not None:
        sc = result.static_couple
        out["static_couple"] = {"static_gmm": float(abs(sc.static_gmm)),
                                "static_angle_deg": angle_of_deg(sc.static_gmm),
                                "couple_gmm": float(abs(sc.couple_gmm)),
                                "couple_angle_deg": angle_of_deg(sc.couple_gmm),
                                "couple_moment_gmm2": sc.couple_moment_gmm2,
                                "couple_moment_kg_mm2": None if sc.couple_moment_gmm2 is None
                                else kg_mm2_from_gmm2(sc.couple_moment_gmm2),
                                "couple_negligible": bool(sc.couple_negligible)}
    if result.four_run is not None:
        f = result.four_run
        out["amplitude_only"] = {
            "reference": f.reference, "trial_gmm": f.trial_gmm,
            "trial_angles_deg": list(f.angles_deg), "trial_amplitudes": list(f.amplitudes),
            "meeting_point": _phasor_dict(f.meeting_point), "trial_effect": f.effect,
            "trial_effect_mean_square": f.mean_square_effect,
            "coefficient_per_gmm": f.coefficient}
    return out


def _verdict_dict(v) -> dict[str, Any]:
    return {"run": v.run, "against": v.against, "masses_g": list(v.masses_g),
            "trusted": v.trusted, "suggested_masses_g": None if v.suggested_g is None
            else list(v.suggested_g),
            "sensors": [{"sensor": c.sensor, "vector_change": c.vector_share,
                         "amplitude_change": c.amplitude_share,
                         "phase_change_deg": c.phase_change_deg} for c in v.changes]}


def _rotor_part_dict(p) -> dict[str, Any]:
    return {"plane": p.plane + 1, "position": p.position, "angle_deg": p.angle_deg,
            "radius_mm": p.radius_mm, "mass_g": p.mass_g, "part": p.label, "count": p.count,
            "origin": p.origin}


def _residual_dict(r) -> dict[str, Any]:
    c = r.check
    return {"plane": c.plane + 1, "sensor": c.sensor + 1, "mass_g": c.mass_g,
            "radius_mm": c.radius_mm, "trial_gmm": c.trial_gmm,
            "angles_deg": list(c.angles_deg), "amplitudes": list(c.amplitudes),
            "residual_from_range_gmm": r.from_range_gmm,
            "residual_from_circle_gmm": r.from_circle_gmm, "residual_gmm": r.residual_gmm,
            "heavy_spot_deg": r.heavy_spot_deg, "limit_gmm": r.limit_gmm,
            "limit_source": r.limit_source, "within_limit": r.within, "notes": list(r.notes)}


def visit_dict(visit_id: int, record: VisitRecord,
               saved_at: str | None = None) -> dict[str, Any]:
    """The JSON object of ``placer history MACHINE --visit N``.

    Parameters
    ----------
    visit_id : int
        The visit's id.
    record : VisitRecord
        The visit as stored.
    saved_at : str or None
        When it was saved, ISO 8601 in UTC (None: not kept).

    Returns
    -------
    dict
        Everything stored about the visit; plane numbers from 1.
    """
    from placer.visitreport import on_rotor_after

    def mass(m: MassRecord) -> dict[str, Any]:
        return {"plane": m.plane + 1, "plane_name": record.plane_names[m.plane],
                "position": m.position, "angle_deg": m.angle_deg, "radius_mm": m.radius_mm,
                "mass_g": m.mass_g, "item": m.item, "count": m.count, "role": m.role,
                "removed_after": m.removed_after}

    return {
        "visit": visit_id, "machine": {"id": record.machine_id, "name": record.machine_name},
        "started_at": record.started_at, "started_at_utc": utc_label(record.started_at),
        "saved_at": saved_at, "session_file": record.session_file, "unit": record.unit,
        "measure": record.measure,
        "phase_sense": record.phase_sense, "angle_sense": record.angle_sense,
        "rotation": record.rotation, "service_rpm": record.service_rpm,
        "sensors": list(record.channel_names), "planes": list(record.plane_names),
        "runs": [{"name": r.name, "kind": r.kind,
                  "readings": [{"amplitude": a, "phase_deg": p} for a, p in r.readings],
                  "masses": [mass(m) for m in r.masses]} for r in record.runs],
        "coefficient_source": record.coefficient_source,
        "coefficients_per_gmm": None if record.coefficients is None else [
            [{"re": float(v.real), "im": float(v.imag)} for v in row]
            for row in record.coefficients],
        "condition_number": record.condition,
        "planned": [mass(m) for m in record.planned],
        "on_rotor_after": [_rotor_part_dict(p) for p in on_rotor_after(record)],
        "sensor_weights": None if record.channel_weights is None
        else list(record.channel_weights),
        "plane_positions": None if record.plane_geometries is None else [
            None if g is None else {"angles_deg": list(g.angles_deg),
                                    "radii_mm": list(g.radii_mm), "capacity": g.capacity,
                                    "blocked": sorted(g.blocked)}
            for g in record.plane_geometries],
        "catalogs": None if record.catalog_names is None else list(record.catalog_names),
        "setup": record.setup,
        "result": record.result,
    }


def catalogs_list(names: Sequence[str], catalogs: Sequence[Catalog]) -> list[dict[str, Any]]:
    """The JSON of ``placer catalogs --json``: each bundled catalogue's name, title, items.

    Parameters
    ----------
    names : sequence of str
        The bundled catalogues' names.
    catalogs : sequence of Catalog
        The catalogues, in the same order.

    Returns
    -------
    list of dict
        Name, title and number of items of each.
    """
    return [{"name": n, "title": c.name, "items": len(c.items)} for n, c in zip(names, catalogs)]


def catalog_dict(catalog: Catalog) -> dict[str, Any]:
    """The JSON of ``placer catalogs NAME --json``: the catalogue's items.

    Parameters
    ----------
    catalog : Catalog
        The catalogue.

    Returns
    -------
    dict
        Its name and its items' ids, masses [g] and stock.
    """
    return {"name": catalog.name, "items": [
        {"id": i.id, "mass_g": i.mass_g, "stock": i.stock} for i in catalog.items]}


def tolerance_dict(grade_mm_s: float, mass_kg: float, service_rpm: float, u_per_gmm: float,
                   shares: Sequence[PlaneShare],
                   radius_mm: float | None = None) -> dict[str, Any]:
    """The JSON of ``placer tolerance --json``: U_per and each plane's share.

    Parameters
    ----------
    grade_mm_s : float
        Balance quality grade G [mm/s].
    mass_kg : float
        Rotor mass [kg].
    service_rpm : float
        Maximum service speed [r/min].
    u_per_gmm : float
        Permissible residual unbalance of the rotor [g·mm].
    shares : sequence of PlaneShare
        Its shares per plane.
    radius_mm : float or None
        A correction radius [mm]: each share also as the mass at it
        (``mass_at_radius_g``); None to leave that out.

    Returns
    -------
    dict
        The inputs, U_per and the shares.
    """
    out = {"grade_mm_s": grade_mm_s, "mass_kg": mass_kg, "service_rpm": service_rpm,
           "permissible_gmm": u_per_gmm, "shares": [
               {"plane": s.name, "share": s.share, "permissible_gmm": s.permissible_gmm}
               for s in shares]}
    if radius_mm is not None:
        out["radius_mm"] = radius_mm
        for entry, share in zip(out["shares"], shares):
            entry["mass_at_radius_g"] = mass_at_radius_g(share.permissible_gmm, radius_mm)
    return out


def machines_list(machines: Sequence[MachineSummary]) -> list[dict[str, Any]]:
    """The JSON of ``placer machines --json``.

    Parameters
    ----------
    machines : sequence of MachineSummary
        The machines in the history.

    Returns
    -------
    list of dict
        Id, name, number of visits and last visit of each.
    """
    return [{"id": m.id, "name": m.name, "visits": m.visits, "last_visit": m.last_visit}
            for m in machines]


def visits_list(visits: Sequence[VisitSummary]) -> list[dict[str, Any]]:
    """The JSON of ``placer history MACHINE --json``: one entry per visit.

    Parameters
    ----------
    visits : sequence of VisitSummary
        A machine's visits.

    Returns
    -------
    list of dict
        Id, start, when saved (None: not kept), coefficient source, condition,
        runs and result of each.
    """
    return [{"id": v.id, "started_at": v.started_at, "saved_at": v.saved_at,
             "coefficient_source": v.coefficient_source, "condition": v.condition,
             "runs": v.runs, "result": v.result} for v in visits]


def blades_dict(result: BladeResult) -> dict[str, Any]:
    """The JSON object of ``placer blades --json``: the arrangement, its proof, the trim.

    Parameters
    ----------
    result : BladeResult
        The arranged blades (and the trim plane, when there is one).

    Returns
    -------
    dict
        The slot table, the residual unbalance (heavy spot) and couple, the
        lower bound and proof, the swaps, the tolerance and verdicts, and the
        trim plane as ``placer solve --json`` gives a plane (null without one).
    """
    job, arrangement = result.job, result.arrangement
    rotor = job.rotor
    swaps = arrangement.swaps
    return {
        "file": job.source,
        "rotor": {"name": rotor.name, "mass_kg": rotor.mass_kg, "service_rpm": rotor.service_rpm,
                  "grade_mm_s": rotor.grade_mm_s},
        "angle_convention": f"degrees from the reference mark, counted {rotor.angle_sense}",
        "move": job.move,
        "slot_count": job.disc.slot_count,
        "total_moment_gmm": result.total_moment_gmm,
        "disc_unbalance": {"gmm": job.disc.unbalance_gmm,
                           "angle_deg": job.disc.unbalance_angle_deg % 360.0},
        "slots": [{"slot": row.slot, "angle_deg": float(row.angle_deg), "blade": row.blade.blade_id,
                   "moment_gmm": row.blade.moment_gmm,
                   "axial_moment_gmm2": row.blade.axial_moment_gmm2,
                   "frequency_hz": row.blade.frequency_hz, "stays": row.stays,
                   "from_slot": row.from_slot} for row in result.rows()],
        "residual_gmm": float(arrangement.residual_gmm),
        "residual_angle_deg": float(arrangement.residual_angle_deg),
        "residual_is": "the heavy spot of the bladed disc",
        "couple_gmm2": arrangement.couple_gmm2,
        "couple_limit_gmm2": job.disc.limits.couple_gmm2,
        "lower_bound_gmm": float(arrangement.lower_bound_gmm),
        "proven": arrangement.proven,
        "zero_shown": arrangement.zero_shown,
        "method": arrangement.method,
        "work": arrangement.work,
        "swaps": None if swaps is None else [
            {"step": k, "slots": [a, b], "blades": [in_a, in_b]}
            for k, (a, b, in_a, in_b) in enumerate(result.swap_steps(), start=1)],
        "swap_lower_bound": arrangement.swap_lower_bound,
        "swaps_from_now": result.swaps_from_now(),
        "tolerance_gmm": result.tolerance_gmm,
        "tolerance_source": result.tolerance_source,
        "permissible_gmm": result.permissible_gmm,
        "arrangement_within_tolerance": result.within_tolerance,
        "trim": None if result.trim is None else plane_dict(result.trim.planes[0]),
        "within_tolerance": result.final_within,
        "notes": list(result.notes),
    }
