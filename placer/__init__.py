"""placer: exact placement of stock balancing parts on a rotor's fixed positions.

A job (the rotor, its correction planes, a catalogue of parts and the
correction each plane needs) is solved by an exact search for the least
residual with every number of parts, checked against ISO 21940-11 and
printed as a fitting sheet.  Field visits turn vibration readings into a
plan; production batches solve rotor after rotor of one type.

The public API, by name (everything is importable from ``placer``)::

    Jobs          read_job, solve_job, FittingErrors, job_tolerances, job_dict,
                  write_sheet, JobResult, PlaneResult, PlanOption, FittedPart
    Domain        Job, Rotor, PlaneJob, ExistingPart, PlaneGeometry, Catalog, Item,
                  read_catalog, load_bundled, polar, angle_of_deg
    Field visits  read_session, solve_session, solve_visit, field_dict, Session,
                  FieldResult, History, default_db_path
    Batches       read_template, read_readings, solve_readings, run_batch,
                  RotorReading, RotorOutcome
    Blades        read_blade_file, arrange_blades, blades_dict, write_blade_sheet,
                  BladeJob, BladeResult, TrimPlane, Blade, Disc, Limits
    Tolerances    permissible_residual_gmm, allocate_to_planes, parse_grade
    Engine        PlacementSearch
    JSON          json_text (strict JSON of any of the dicts above)
    Errors        PlacerError, InputError, JobError, CatalogError, ToleranceError,
                  SessionError, HistoryError, CoefficientMismatch, OutputError

Example (see the README, "Using placer from Python")::

    >>> import placer
    >>> result = placer.solve_job(placer.read_job("examples/supply-fan.toml"))
    >>> [p.within_tolerance for p in result.planes]
    [True, True]

Names are loaded when first used, so that ``import placer`` (and the
command line) starts fast.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

_HOME = {
    # jobs
    "read_job": "placer.io.jobfile", "solve_job": "placer.solve",
    "FittingErrors": "placer.solve", "job_tolerances": "placer.tolerance",
    "job_dict": "placer.io.jsonout", "write_sheet": "placer.views.sheet",
    "JobResult": "placer.plan", "PlaneResult": "placer.plan", "PlanOption": "placer.plan",
    "FittedPart": "placer.plan",
    # domain
    "Job": "placer.job", "Rotor": "placer.job", "PlaneJob": "placer.job",
    "ExistingPart": "placer.job", "PlaneGeometry": "placer.geometry",
    "Catalog": "placer.catalog", "Item": "placer.catalog",
    "read_catalog": "placer.io.catalogfile", "load_bundled": "placer.io.catalogfile",
    "polar": "placer.geometry", "angle_of_deg": "placer.geometry",
    # field visits
    "read_session": "placer.io.sessionfile", "solve_session": "placer.fieldplan",
    "solve_visit": "placer.io.fieldvisit", "field_dict": "placer.io.jsonout",
    "Session": "placer.session", "FieldResult": "placer.fieldplan",
    "History": "placer.io.history", "default_db_path": "placer.io.historyfile",
    # batches
    "read_template": "placer.io.batchresults", "read_readings": "placer.io.batchreadings",
    "solve_readings": "placer.batch", "run_batch": "placer.io.batchresults",
    "RotorReading": "placer.batch", "RotorOutcome": "placer.batch",
    # blades
    "read_blade_file": "placer.io.bladefile", "arrange_blades": "placer.arrange",
    "blades_dict": "placer.io.jsonout", "write_blade_sheet": "placer.views.sheet.bladepage",
    "BladeJob": "placer.arrange", "BladeResult": "placer.arrange",
    "TrimPlane": "placer.arrange", "Blade": "placer.blades", "Disc": "placer.blades",
    "Limits": "placer.blades",
    # tolerances
    "permissible_residual_gmm": "placer.tolerance", "allocate_to_planes": "placer.tolerance",
    "parse_grade": "placer.tolerance",
    # engine, JSON
    "PlacementSearch": "placer.engine.search", "json_text": "placer.io.tables",
    # errors
    "PlacerError": "placer.errors", "InputError": "placer.errors", "JobError": "placer.errors",
    "CatalogError": "placer.errors", "ToleranceError": "placer.errors",
    "SessionError": "placer.errors", "HistoryError": "placer.errors",
    "CoefficientMismatch": "placer.errors", "OutputError": "placer.errors",
}
"""Where each public name lives."""

__all__ = sorted(_HOME)


def __getattr__(name: str) -> Any:
    """Load a public name from its module on first use (PEP 562)."""
    if name not in _HOME:
        raise AttributeError(f"module 'placer' has no attribute {name!r}")
    value = getattr(importlib.import_module(_HOME[name]), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
