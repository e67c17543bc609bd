"""The JSON shape of a solved job (``placer solve JOB --json``)."""

from __future__ import annotations

from typing import Any

from placer.geometry import angle_of_deg
from placer.plan import JobResult, PlaneResult, PlanOption


def option_dict(option: PlanOption) -> dict[str, Any]:
    """One plan: part count, residual and the parts (position numbers from 1)."""
    return {
        "part_count": option.part_count,
        "residual_gmm": float(option.residual_gmm),
        "residual_angle_deg": float(option.residual_angle_deg),
        "lower_bound_gmm": float(option.lower_bound_gmm),
        "proven": option.proven,
        "chance_within": option.chance_within,
        "residual_p95_gmm": option.residual_p95_gmm,
        "parts": [
            {"position": p.position, "angle_deg": float(p.angle_deg),
             "radius_mm": p.radius_mm, "item": p.item, "mass_g": p.mass_g, "count": p.count,
             "action": p.verb}
            for p in option.parts
        ],
    }


def plane_dict(result: PlaneResult) -> dict[str, Any]:
    """One plane's result."""
    plane = result.plane
    chosen = option_dict(result.chosen)
    chosen["within_tolerance"] = result.within_tolerance
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
        "chosen": chosen,
        "notes": list(result.notes),
        "method": result.method,
        "elapsed_s": float(result.elapsed_s),
    }


def job_dict(result: JobResult) -> dict[str, Any]:
    """The whole JSON object for a job."""
    rotor = result.job.rotor
    return {
        "job": result.job.source,
        "rotor": {"name": rotor.name, "mass_kg": rotor.mass_kg, "service_rpm": rotor.service_rpm,
                  "grade_mm_s": rotor.grade_mm_s},
        "angle_convention": f"degrees from the reference mark, counted {rotor.angle_sense}",
        "permissible_gmm": None if result.permissible_gmm is None
        else float(result.permissible_gmm),
        "within_tolerance": result.all_within,
        "stock_short": list(result.stock_short),
        "notes": list(result.notes),
        "planes": [plane_dict(p) for p in result.planes],
    }
