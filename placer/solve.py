"""Solving a whole job: tolerance and aim per plane, the exact front, the plan to fit,
shared stock, and the chance a plan survives fitting errors.

Pure: takes a :class:`placer.job.Job`, returns a :class:`placer.plan.JobResult`.
"""

from __future__ import annotations

import itertools
import time
from dataclasses import dataclass, replace

import numpy as np

from placer.choice import Choice, aim_of
from placer.engine.arrays import PlaneArrays, option_of
from placer.job import Job, PlaneJob
from placer.limits import (
    DEFAULT_AIM_SHARE,
    DEFAULT_EFFORT,
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
)
from placer.plan import LIGHTEST, JobResult, PlaneResult, PlanOption
from placer.robust import robustness
from placer.stock import PlanePlanner, share_stock
from placer.tolerance import job_tolerances


@dataclass(frozen=True)
class FittingErrors:
    """How the Monte Carlo of fitting errors runs, and whether it picks the plan.

    Parameters
    ----------
    samples : int
        Draws per plan.
    seed : int
        Seed of the draws, so that runs repeat.
    min_chance : float or None
        Choose the fewest parts whose chance of staying within tolerance is
        at least this [1] (None: choose by the aim and the mass).
    """

    samples: int = DEFAULT_SAMPLES
    seed: int = DEFAULT_SEED
    min_chance: float | None = None


def aim_share_of(job: Job, plane: PlaneJob, aim_share: float | None) -> tuple[float, str]:
    """The aim's share of the tolerance for a plane, and where it came from.

    Parameters
    ----------
    job : Job
        The job (its rotor may set ``aim_share`` for every plane).
    plane : PlaneJob
        The plane (its own ``aim_share`` comes before the rotor's).
    aim_share : float or None
        A share given for the whole run (it comes first) [1].
    """
    if aim_share is not None:
        return aim_share, "as asked for this run"
    if plane.aim_share is not None:
        return plane.aim_share, "the plane's aim_share"
    if job.rotor.aim_share is not None:
        return job.rotor.aim_share, "the job's aim_share"
    return DEFAULT_AIM_SHARE, "placer's default"


def solve_job(job: Job, effort: float = DEFAULT_EFFORT, errors: FittingErrors | None = None,
              *, aim_share: float | None = None, parts: int | None = None) -> JobResult:
    """Solve every plane of ``job`` and choose the plan to fit for each.

    Parameters
    ----------
    job : Job
        The rotor and its planes.
    effort : float
        Multiple of the engine's default work budget (deterministic: the
        same input and effort give the same answer on any machine).
    errors : FittingErrors, optional
        How fitting errors are rated (Monte Carlo) and whether they choose.
    aim_share : float, optional
        The aim's share of every plane's tolerance, for this run [1].
    parts : int, optional
        Choose the plan of this many parts on every plane instead.

    Returns
    -------
    JobResult
    """
    errors = errors or FittingErrors()
    tolerances = job_tolerances(job)
    planners, choices, elapsed = [], [], []
    for plane, own in zip(job.planes, tolerances.planes):
        started = time.perf_counter()
        share, source = aim_share_of(job, plane, aim_share)
        aim = aim_of(own.tolerance_gmm, abs(plane.further_correction_gmm), share, source)
        planner = PlanePlanner.of(plane, own.tolerance_gmm, aim, effort, parts)
        planners.append(planner)
        choices.append(planner.choice())
        elapsed.append(time.perf_counter() - started)
    choices, together, notes, short = share_stock(planners, choices, effort)
    results = []
    for index, (planner, own) in enumerate(zip(planners, tolerances.planes)):
        plane_notes = [n for n in (_reach_note(planner.plane, planner.arrays),) if n]
        if index in together:
            plane_notes.append("plan chosen together with the other planes that share its "
                               "stock")
        results.append(_plane_result(planner, choices[index], own.source, plane_notes,
                                     elapsed[index], errors, job.rotor.placement_error_deg))
    return JobResult(job=job, planes=tuple(results), permissible_gmm=tolerances.permissible_gmm,
                     shares=tolerances.shares, notes=tolerances.notes + tuple(notes),
                     stock_short=short)


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


def _plane_result(planner: PlanePlanner, choice: Choice, source: str, notes: list[str],
                  elapsed_s: float, errors: FittingErrors,
                  placement_error_deg: float) -> PlaneResult:
    """A plane's choice in domain terms, rated for fitting errors when they are given."""
    plane, arrays, tolerance = planner.plane, planner.arrays, planner.tolerance_gmm
    option = option_of(plane, choice.chosen, arrays, choice.kind)
    zero = option_of(plane, choice.front[0], arrays)
    front = [option_of(plane, e, arrays) for e in choice.improving]
    lighter = [option_of(plane, e, arrays, LIGHTEST) for e in choice.lighter]
    rule = choice.rule
    if tolerance is None and errors.min_chance is not None:
        notes = notes + ["a least chance of staying within tolerance needs a tolerance; "
                         "this plane has none, so the plan is chosen without it"]
    rated = tolerance is not None and (errors.min_chance is not None or
                                       fitting_errors_given(plane, placement_error_deg))
    if rated:
        def rate(o: PlanOption) -> PlanOption:
            return _with_robustness(plane, o, tolerance, errors, placement_error_deg)

        # Items of equal nominal mass: the plan whose parts keep it within tolerance more often.
        def best_variant(o: PlanOption) -> PlanOption:
            return max(map(rate, equal_mass_variants(plane, o)), key=lambda v: v.chance_within)

        front, lighter = [best_variant(o) for o in front], [best_variant(o) for o in lighter]
        zero = rate(zero)
        candidates = [zero] + front + lighter
        option = next((o for o in candidates if o.parts == option.parts
                       or _same_places(o, option)), rate(option))
        if errors.min_chance is not None:
            ranked = sorted(candidates, key=lambda o: (o.used_parts, o.mass_g, o.residual_gmm))
            pick = [o for o in ranked if o.chance_within >= errors.min_chance]
            if pick:
                option = pick[0]
                rule = (f"the fewest parts with at least a {errors.min_chance:.0%} chance of "
                        "staying within tolerance, then the least added mass")
            else:
                option = max(candidates, key=lambda o: (o.chance_within, -o.residual_gmm))
                notes = notes + [f"no plan reaches a {errors.min_chance:.0%} chance of "
                                 "staying within tolerance; the plan with the best "
                                 f"chance ({option.chance_within:.0%}) is shown"]
    within = None if tolerance is None else bool(option.residual_gmm <= tolerance)
    return PlaneResult(
        plane=plane, tolerance_gmm=tolerance, tolerance_source=source,
        front=tuple(front), chosen=option, within_tolerance=within, optimal=choice.proven,
        notes=tuple(notes), elapsed_s=elapsed_s, method=choice.method,
        aim_gmm=planner.aim.radius_gmm, aim_text=planner.aim.text, rule=rule,
        lighter=tuple(lighter))


def _with_robustness(plane: PlaneJob, option: PlanOption, tolerance: float,
                     errors: FittingErrors, placement_error_deg: float) -> PlanOption:
    mass_tol = {item.id: item.mass_tolerance_g for item in plane.catalog.items}
    r = robustness(plane.further_correction_gmm, option.parts, tolerance, mass_tol,
                   placement_error_deg, errors.samples, errors.seed)
    return replace(option, chance_within=r.chance_within, residual_p95_gmm=r.residual_p95_gmm)


def fitting_errors_given(plane: PlaneJob, placement_error_deg: float) -> bool:
    """True when a part may be fitted off its nominal mass or angle.

    Parameters
    ----------
    plane : PlaneJob
        The plane (its items' mass tolerances).
    placement_error_deg : float
        How far off its angle a part may sit [deg].
    """
    return placement_error_deg > 0 or any(item.mass_tolerance_g > 0
                                          for item in plane.catalog.items)


def _same_places(a: PlanOption, b: PlanOption) -> bool:
    """Same part count on the same positions (items may differ, masses equal)."""
    def key(o: PlanOption) -> list:
        return sorted((p.position, p.action, p.mass_g, p.count) for p in o.parts)

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
        The plane (its catalogue and stock).
    option : PlanOption
        The plan.
    limit : int
        Most variants returned.
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
