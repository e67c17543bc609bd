"""Solving a whole job: tolerance per plane, exact fronts, chosen plans, shared stock.

Pure: takes a :class:`placer.job.Job`, returns a :class:`placer.plan.JobResult`.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, replace

import numpy as np

from placer.engine.arrays import PlaneArrays, option_of, plane_arrays
from placer.engine.front import choose, exact_front, improving
from placer.job import Job, PlaneJob
from placer.limits import DEFAULT_SAMPLES, DEFAULT_SEED, DEFAULT_TIME_LIMIT_S
from placer.plan import JobResult, PlaneResult, PlanOption
from placer.robust import robustness
from placer.stock import share_stock
from placer.tolerance import job_tolerances


def _reach_note(plane: PlaneJob, arrays: PlaneArrays) -> str | None:
    """A note when no plan can reach the correction still needed.

    The reach is at most max_parts times the largest single effect among the
    placements allowed (open positions, items in stock, existing parts that
    may come off), by the triangle inequality.
    """
    size = np.abs(arrays.effects[:, :, 0])
    usable = (arrays.capacity[:, None] > 0) & (arrays.stock[None, :] > 0)
    largest = float(size[usable].max(initial=0.0))
    reach = plane.max_parts * largest
    need = float(np.abs(arrays.target[0]))
    if need > reach:
        return (f"cannot be reached: the correction still needed is {need:.1f} g·mm but "
                f"{plane.max_parts} of the largest part allowed reach at most {reach:.1f} g·mm; "
                "raise max_parts, use a heavier item or check the reading")
    return None


def solve_job(job: Job, time_limit_s: float = DEFAULT_TIME_LIMIT_S,
              errors: FittingErrors | None = None) -> JobResult:
    """Solve every plane of ``job`` and choose a plan for each.

    Each plane gets its tolerance, its proven trade-off front and the fewest
    parts within tolerance (or the least residual); planes that overdraw a
    shared drawer are then planned together.

    Parameters
    ----------
    job : Job
        The job.
    time_limit_s : float
        Time the engine may spend on each plane (and on each planning of
        planes together) [s].
    errors : FittingErrors or None
        How fitting errors are rated (Monte Carlo) and whether they pick the
        plan; None for the defaults.

    Returns
    -------
    JobResult
        The planes' results, the job's permissible residual, its shares and notes.

    Raises
    ------
    ToleranceError
        From :func:`placer.tolerance.job_tolerances`: distances from the
        centre of mass that cannot share U_per (other than two planes, or
        both zero).
    """
    tolerances = job_tolerances(job)
    results = []
    arrays_of = []
    for plane, own in zip(job.planes, tolerances.planes):
        arrays = plane_arrays(plane)
        arrays_of.append(arrays)
        tolerance, source = own.tolerance_gmm, own.source
        entries, elapsed, method = exact_front(arrays, plane.max_parts, time_limit_s)
        chosen = choose(entries, tolerance)
        notes = [n for n in (_reach_note(plane, arrays),) if n]
        results.append(_plane_result(plane, tolerance, source, entries, chosen, notes,
                                     elapsed, method, errors=errors or FittingErrors(),
                                     placement_error_deg=job.rotor.placement_error_deg,
                                     rows=arrays))
    results, stock_notes, short = share_stock(job, results, arrays_of, time_limit_s)
    return JobResult(job=job, planes=tuple(results), permissible_gmm=tolerances.permissible_gmm,
                     shares=tolerances.shares, notes=tolerances.notes + tuple(stock_notes),
                     stock_short=short)


@dataclass(frozen=True)
class FittingErrors:
    """How the Monte Carlo of fitting errors runs, and whether it picks the plan.

    ``min_chance``: choose the fewest parts whose chance of staying within
    tolerance is at least this (None: choose by residual alone).

    Parameters
    ----------
    samples : int
        Monte Carlo draws per plan.
    seed : int
        Seed of the draws.
    min_chance : float or None
        Least chance of staying within tolerance [1], or None.
    """

    samples: int = DEFAULT_SAMPLES
    seed: int = DEFAULT_SEED
    min_chance: float | None = None


def _with_robustness(plane: PlaneJob, option: PlanOption, tolerance: float,
                     errors: FittingErrors, placement_error_deg: float) -> PlanOption:
    mass_tol = {item.id: item.mass_tolerance_g for item in plane.catalog.items}
    r = robustness(plane.further_correction_gmm, option.parts, tolerance, mass_tol,
                   placement_error_deg, errors.samples, errors.seed)
    return replace(option, chance_within=r.chance_within, residual_p95_gmm=r.residual_p95_gmm)


def _plane_result(plane, tolerance, source, entries, chosen, notes, elapsed, method,
                  optimal=None, errors: FittingErrors | None = None,
                  placement_error_deg: float = 0.0,
                  rows: PlaneArrays | None = None) -> PlaneResult:
    rows = plane_arrays(plane) if rows is None else rows
    option = option_of(plane, chosen, rows)
    zero = option_of(plane, entries[0], rows)
    front = [option_of(plane, e, rows) for e in improving(entries)]
    errors = errors or FittingErrors()
    if tolerance is None and errors.min_chance is not None:
        notes = list(notes) + ["a least chance of staying within tolerance needs a tolerance; "
                               "this plane has none, so the plan is chosen by residual alone"]
    rated = tolerance is not None and (errors.min_chance is not None or
                                       fitting_errors_given(plane, placement_error_deg))
    if rated:
        rate = lambda o: _with_robustness(plane, o, tolerance, errors,  # noqa: E731
                                          placement_error_deg)
        # Equal residuals: the plan whose parts keep it within tolerance more often.
        front = [max(map(rate, equal_mass_variants(plane, o)),
                     key=lambda v: v.chance_within) for o in front]
        zero = rate(zero)
        option = next((o for o in [zero] + front if o.parts == option.parts
                       or _same_places(o, option)), rate(option))
        if errors.min_chance is not None:
            pick = [o for o in [zero] + front if o.chance_within >= errors.min_chance]
            if pick:
                option = pick[0]
                notes = list(notes) + [f"chosen by the chance of staying within tolerance "
                                       f"(at least {errors.min_chance:.0%})"]
            else:
                option = max([zero] + front, key=lambda o: (o.chance_within, -o.residual_gmm))
                notes = list(notes) + [f"no plan reaches a {errors.min_chance:.0%} chance of "
                                       "staying within tolerance; the plan with the best "
                                       f"chance ({option.chance_within:.0%}) is shown"]
    within = None if tolerance is None else bool(option.residual_gmm <= tolerance)
    return PlaneResult(
        plane=plane, tolerance_gmm=tolerance, tolerance_source=source,
        front=tuple(front), chosen=option, within_tolerance=within,
        optimal=all(e.proven for e in entries) if optimal is None else optimal,
        notes=tuple(notes), elapsed_s=elapsed, method=method)


def fitting_errors_given(plane: PlaneJob, placement_error_deg: float) -> bool:
    """True when a part may be fitted off its nominal mass or angle.

    Parameters
    ----------
    plane : PlaneJob
        The plane; its items' mass tolerances count.
    placement_error_deg : float
        The job's angle error of fitting [deg].

    Returns
    -------
    bool
        Whether the error or any item's mass tolerance is above zero.
    """
    return placement_error_deg > 0 or any(item.mass_tolerance_g > 0
                                          for item in plane.catalog.items)


def _same_places(a: PlanOption, b: PlanOption) -> bool:
    """Same part count on the same positions (items may differ, masses equal)."""
    key = lambda o: sorted((p.position, p.action, p.mass_g, p.count) for p in o.parts)  # noqa
    return key(a) == key(b)


def equal_mass_variants(plane: PlaneJob, option: PlanOption,
                        limit: int = 256) -> list[PlanOption]:
    """``option`` and the plans that differ only in items of the same nominal mass.

    They leave the same residual; their mass tolerances may differ, so the
    Monte Carlo can tell them apart.  Parts taken off are what is on the
    rotor and are not swapped.  Stock is respected; at most ``limit`` plans.

    Parameters
    ----------
    plane : PlaneJob
        The plane, for its catalogue.
    option : PlanOption
        The plan.
    limit : int
        Most combinations tried.

    Returns
    -------
    list of PlanOption
        The variants within stock (items in catalogue order), or ``[option]``
        when none is.
    """
    items = plane.catalog.items
    choices = []
    for part in option.parts:
        if part.action != "fit":
            choices.append([part])
            continue
        twins = [it for it in items if it.mass_g == part.mass_g]
        choices.append([replace(part, item=it.id) for it in twins])
    stock = {it.id: it.stock for it in items}
    out = []
    for combo in itertools.islice(itertools.product(*choices), limit):
        used: dict[str, int] = {}
        for p in combo:
            if p.action == "fit":
                used[p.item] = used.get(p.item, 0) + p.count
        if all(stock[i] is None or n <= stock[i] for i, n in used.items()):
            parts = tuple(sorted(combo, key=lambda p: (p.action != "remove", p.position, p.item)))
            out.append(replace(option, parts=parts))
    return out or [option]
