"""The trade-off front of one plane, proven, and the choice of a plan from it.

The exact search (:mod:`placer.engine.search`) gives the least residual for
every part count; a count it cannot finish within its work budget keeps the
plan of fewer parts and is marked not proven.  (The integer model,
:mod:`placer.engine.model`, is no longer asked to take such counts over: in
about 45 such solves it never proved one, its lower bound stayed 0, and it
spent seconds on each; it is kept for shared stock.)
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from placer.engine.arrays import PlaneArrays
from placer.engine.search import ABS_TOL, REL_TOL, PlacementSearch
from placer.engine.selection import Selection
from placer.limits import DEFAULT_EFFORT, DEFAULT_WORK


def is_proven(found: float, lower_bound: float) -> bool:
    """True when ``found`` is within 0.5 % or 0.01 of the proven ``lower_bound``.

    Parameters
    ----------
    found : float
        Residual of the plan found [g·mm, or the target's unit].
    lower_bound : float
        Proven least residual [as ``found``].

    Returns
    -------
    bool
        Whether ``found`` is at most the larger of ``lower_bound·(1 + REL_TOL)``
        and ``lower_bound + ABS_TOL`` (1e-12 allowed for rounding).
    """
    return found <= max(lower_bound * (1.0 + REL_TOL), lower_bound + ABS_TOL) + 1e-12


def exact_front(arrays: PlaneArrays, max_parts: int, effort: float = DEFAULT_EFFORT,
                search: PlacementSearch | None = None,
                stock: np.ndarray | None = None,
                reach: float | None = None) -> tuple[list[Selection], int, str]:
    """The front of one plane, proven where the search finishes within its effort.

    A part count the search declines (past its work budget) keeps the plan
    of fewer parts, not proven.  Entry k is made no worse than entry k - 1,
    and proven only if both are.

    Parameters
    ----------
    arrays : PlaneArrays
        The plane (see :func:`placer.engine.arrays.placement_arrays`).
    max_parts : int
        Longest plan.
    effort : float
        Multiple of the default work budget (deterministic).
    search : PlacementSearch, optional
        A search built once for these arrays (batches); default a new one.
    stock : int array, optional
        Parts of each column on hand for this plane (default the arrays').
    reach : float, optional
        End the front at the first part count whose least residual is at most
        this (:meth:`PlacementSearch.front`); default the whole front.

    Returns
    -------
    entries : list of Selection
        Entry k: the least residual with at most k parts, k = 0 .. max_parts.
    work : int
        Work the search counted.
    method : str
        "exact search", or "exact search (not proven past its budget)".
    """
    if search is None:
        search = PlacementSearch(arrays.effects, arrays.capacity, arrays.stock, max_parts,
                                 masses=arrays.masses)
    front = search.front(arrays.target, stock=stock, work=int(DEFAULT_WORK * effort),
                         reach=reach)
    entries = list(front.entries)
    method = ("exact search" if all([entry.proven for entry in entries])
              else "exact search (not proven past its budget)")
    # At most k parts is never worse than at most k - 1, and is proven only if both are.
    for k in range(1, len(entries)):
        before, entry = entries[k - 1], entries[k]
        if entry.residual_norm > before.residual_norm:
            entry = replace(before, part_count=k)
        proven = entry.proven and before.proven
        lower = min(entry.lower_bound, before.lower_bound)
        if proven != entry.proven or lower != entry.lower_bound:
            entry = replace(entry, proven=proven, lower_bound=lower)
        entries[k] = entry
    return entries, front.work, method


def improving(entries: list[Selection]) -> list[Selection]:
    """The entries k >= 1 that improve on fewer parts (the trade-off front as shown).

    An entry improves when it uses more parts than the last entry shown and
    leaves a residual smaller by more than the proof tolerance (0.5 % or
    0.01 of the target's unit, :func:`is_proven`): a smaller residual within
    that tolerance is no better than proven.

    Parameters
    ----------
    entries : list of Selection
        A front from :func:`exact_front` (index k = at most k parts).

    Returns
    -------
    list of Selection
        The entries that improve, fewest parts first.
    """
    out: list[Selection] = []
    shown = entries[0] if entries else None
    for entry in entries[1:]:
        if entry.used_parts > shown.used_parts and not is_proven(shown.residual_norm,
                                                                 entry.residual_norm):
            out.append(entry)
            shown = entry
    return out
