"""Stock shared by several planes: one drawer per catalogue file and item.

Each plane is planned on its own first; when the plans of planes that draw
on one drawer together need more of an item than it holds, those planes are
planned together by the integer model (:func:`placer.engine.model.solve_shared_stock`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from placer.catalog import Item
from placer.engine.arrays import PlaneArrays, option_of
from placer.engine.search import PartList, Selection
from placer.job import Job, PlaneJob
from placer.plan import FittedPart, PlaneResult
from placer.residual import residual_of


def shared_stock_groups(planes: Sequence[PlaneJob]) -> list[list[int]]:
    """Indices of planes linked by drawing on items of limited stock.

    Two planes are linked when both may use one item (same catalogue file,
    same id) whose stock is limited; links are followed through, so a
    group is every plane that one drawer's shortage can touch.

    Parameters
    ----------
    planes : sequence of PlaneJob
        The job's planes.

    Returns
    -------
    list of list of int
        Groups of two or more plane indices, each sorted, the groups sorted.
    """
    users: dict[str, set[int]] = {}
    for i, plane in enumerate(planes):
        for item in plane.catalog.items:
            if item.stock is not None:
                users.setdefault(item.stock_key, set()).add(i)
    groups: list[set[int]] = []
    for members in users.values():
        if len(members) < 2:
            continue
        touching = [g for g in groups if g & members]
        merged = set(members).union(*touching)
        groups = [g for g in groups if not g & members] + [merged]
    return sorted(sorted(g) for g in groups)


def overdrawn_items(planes: Sequence[PlaneJob],
                    parts_of: Sequence[Sequence[FittedPart]]) -> list[Item]:
    """Items whose parts to fit, over all ``planes`` together, exceed their stock.

    Parameters
    ----------
    planes : sequence of PlaneJob
        The planes, for their catalogues.
    parts_of : sequence of sequence of FittedPart
        Each plane's plan, in the order of ``planes``; parts to remove do not
        draw on stock.

    Returns
    -------
    list of Item
        One item per overdrawn drawer (catalogue file and id).
    """
    used: dict[str, int] = {}
    seen: dict[str, Item] = {}
    for plane, parts in zip(planes, parts_of):
        by_id = {item.id: item for item in plane.catalog.items}
        for part in parts:
            if part.action == "fit":
                item = by_id[part.item]
                used[item.stock_key] = used.get(item.stock_key, 0) + part.count
                seen[item.stock_key] = item
    return [item for key, item in seen.items()
            if item.stock is not None and used[key] > item.stock]


def share_stock(job: Job, results: list[PlaneResult], arrays_of: list[PlaneArrays],
                 time_limit_s: float) -> tuple[list[PlaneResult], list[str], tuple[str, ...]]:
    """Re-plan planes that draw on one drawer when their plans overdraw its stock.

    Returns the results, notes, and the ids of items still overdrawn (when
    CP-SAT found no plan within the shared stock in the time limit).

    Parameters
    ----------
    job : Job
        The job.
    results : list of PlaneResult
        Each plane's result planned on its own; replaced in place where re-planned.
    arrays_of : list of PlaneArrays
        Each plane's arrays.
    time_limit_s : float
        Time the integer model may take for each group of planes [s].

    Returns
    -------
    results : list of PlaneResult
        The results, re-planned planes with their new plans.
    notes : list of str
        One note per group re-planned or left short.
    short : tuple of str
        Ids of the items still overdrawn, sorted.
    """
    notes: list[str] = []
    short_left: list[str] = []
    for members in shared_stock_groups(job.planes):
        planes = [job.planes[i] for i in members]
        over = overdrawn_items(planes, [results[i].chosen.parts for i in members])
        if not over:
            continue
        from placer.engine.model import ModelPlane, solve_shared_stock

        shared = {item.stock_key: int(item.stock) for plane in planes
                  for item in plane.catalog.items if item.stock is not None}
        model_planes = []
        for i, plane in zip(members, planes):
            arrays = arrays_of[i]
            hint = tuple((arrays.row_of(p.position - 1, p.mass_g < 0),
                          plane.catalog.item_index(p.item), p.count)
                         for p in results[i].chosen.parts if p.action == "fit")
            model_planes.append(ModelPlane(
                arrays.effects, arrays.target, arrays.capacity, arrays.stock, plane.max_parts,
                results[i].tolerance_gmm, tuple(it.stock_key for it in plane.catalog.items),
                hint))
        outcome = solve_shared_stock(model_planes, shared, time_limit_s)
        names = ", ".join(plane.geometry.name for plane in planes)
        short = ", ".join(sorted({item.id for item in over}))
        if outcome.status not in ("OPTIMAL", "FEASIBLE"):
            short_left += [item.id for item in over]
            notes.append(f"planes {names} together need more {short} than in stock, and no "
                         f"plan within the stock was found in the time limit: do not fit "
                         "these plans as printed; restock or raise --time-limit")
            continue
        notes.append(f"planes {names} share stock and the separate plans needed more {short} "
                     "than in stock: plans chosen together"
                     + ("" if outcome.proven else " (not proven optimal in the time limit)"))
        for i, parts in zip(members, outcome.parts):
            results[i] = rechosen(results[i], arrays_of[i], parts, outcome.proven)
    return results, notes, tuple(sorted(set(short_left)))


def rechosen(result: PlaneResult, arrays: PlaneArrays, parts: PartList,
              proven: bool) -> PlaneResult:
    """``result`` with the plan chosen together with other planes under shared stock.

    Parameters
    ----------
    result : PlaneResult
        The plane's result planned on its own.
    arrays : PlaneArrays
        The plane's arrays.
    parts : PartList
        The plan from the integer model, as (row, column, count).
    proven : bool
        Whether the model proved the joint plans optimal.

    Returns
    -------
    PlaneResult
        The new chosen plan (bounded below by the plane's own front), whether
        it is within tolerance, optimal only if it was and the plan is proven,
        and a note.
    """
    residual = residual_of(arrays.target, arrays.effects, parts)
    count = sum(c for _, _, c in parts)
    # The plane's own least residual with at most this many parts bounds it below.
    lower = min([o.lower_bound_gmm for o in result.front if o.used_parts <= count]
                + [float(np.linalg.norm(arrays.target))])
    entry = Selection(count, parts, residual, float(np.linalg.norm(residual)), lower, proven)
    option = option_of(result.plane, entry, arrays)
    within = None if result.tolerance_gmm is None else option.residual_gmm <= result.tolerance_gmm
    notes = result.notes + ("plan chosen together with the other planes that share its stock",)
    return replace(result, chosen=option, within_tolerance=within,
                   optimal=result.optimal and proven, notes=notes)
