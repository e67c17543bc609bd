"""Fewest blade swaps that bring an assembled rotor within a tolerance.

Swapping blades turns the current arrangement σ into τ; the fewest swaps
that do so is n - c, c the number of cycles of σ⁻¹τ (slots that keep their
blade count as cycles of one).  A change of exactly k swaps moves the blades
of s slots, k + 1 ≤ s ≤ 2k, by a permutation of those s slots with no fixed
point and s - k cycles.  The search takes k = 0, 1, 2, ... and at each k
scores every such change (every set of s open slots times every such
permutation, with numpy); the first k with an arrangement within the
tolerance and the limits is the fewest, and among its arrangements the one
with the least residual is taken.  When the work budget stops the search
before one is found, a greedy sequence of best single swaps gives an answer
and ``swap_lower_bound`` says how many swaps were ruled out.

References
----------
[PermutationCycles] a permutation with c cycles is n - c transpositions;
[LaporteMercure1988] interchanges.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from functools import lru_cache

import numpy as np

from placer.blades import ArrangementResult, Blade
from placer.engine.arrangement.model import Problem
from placer.engine.arrangement.search import Solved, solve, to_result
from placer.errors import InputError

CHUNK = 20_000
"""Slot sets scored at once."""


@lru_cache(maxsize=None)
def changes(s: int, k: int) -> np.ndarray:
    """Permutations of range(s) with no fixed point and s - k cycles (k swaps).

    Parameters
    ----------
    s : int
        Slots moved [-].
    k : int
        Swaps [-].

    Returns
    -------
    numpy.ndarray
        One permutation per row (itertools order), shape (count, s).

    References
    ----------
    [PermutationCycles] s - k cycles are k transpositions.
    """
    rows = [p for p in itertools.permutations(range(s))
            if all(p[i] != i for i in range(s)) and _cycles(p) == s - k]
    return np.array(rows, dtype=np.int64).reshape(len(rows), s)


def _cycles(perm: Sequence[int]) -> int:
    seen, count = set(), 0
    for start in range(len(perm)):
        if start in seen:
            continue
        count += 1
        j = start
        while j not in seen:
            seen.add(j)
            j = perm[j]
    return count


def swaps_between(arr: np.ndarray, target: np.ndarray) -> list[tuple[int, int]]:
    """Slot pairs (engine slots) whose swaps, in order, turn ``arr`` into ``target``.

    Parameters
    ----------
    arr : numpy.ndarray
        The blade in each engine slot now; not changed.
    target : numpy.ndarray
        The blade in each engine slot wanted (the same blades).

    Returns
    -------
    list of (int, int)
        The swaps, slot by slot from the first; the fewest possible.

    References
    ----------
    [PermutationCycles].
    """
    arr = arr.copy()
    where = {int(b): j for j, b in enumerate(arr)}
    out = []
    for j in range(len(arr)):
        if arr[j] != target[j]:
            k = where[int(target[j])]
            out.append((j, k))
            where[int(arr[j])], where[int(arr[k])] = k, j
            arr[j], arr[k] = arr[k], arr[j]
    return out


def depth_cost(m: int, k: int) -> int:
    """Changes of exactly k swaps among m open slots.

    Parameters
    ----------
    m : int
        Open slots [-].
    k : int
        Swaps [-].

    Returns
    -------
    int
        Σ over s = k + 1 .. min(2k, m) of C(m, s) times the permutations of
        :func:`changes` (s, k).
    """
    return sum(math.comb(m, s) * len(changes(s, k)) for s in range(k + 1, min(2 * k, m) + 1))


def best_at_depth(problem: Problem, arr: np.ndarray, k: int,
                  tolerance: float) -> tuple[float, np.ndarray] | None:
    """Least residual within ``tolerance`` and the limits after exactly k swaps, or None.

    Parameters
    ----------
    problem : Problem
        The problem.
    arr : numpy.ndarray
        The blade in each engine slot now.
    k : int
        Swaps [-]; 0 tests ``arr`` itself.
    tolerance : float
        Permissible static residual [g·mm].

    Returns
    -------
    (float, numpy.ndarray) or None
        The residual [g·mm] and the arrangement; None when no change of k
        swaps is within the tolerance and the limits.
    """
    free = problem.free_slots
    base = problem.residual(arr)
    if k == 0:
        value = abs(base)
        return (value, arr) if value <= tolerance and problem.feasible(arr) else None
    hits: list[tuple[float, tuple[int, ...], tuple[int, ...]]] = []
    for s in range(k + 1, min(2 * k, len(free)) + 1):
        perms = changes(s, k)
        combos = itertools.combinations(free.tolist(), s)
        while True:
            chunk = np.array(list(itertools.islice(combos, CHUNK)), dtype=np.int64)
            if len(chunk) == 0:
                break
            w = problem.weights[arr[chunk]]
            z = problem.z[chunk]
            delta = ((w[:, perms] - w[:, None, :]) * z[:, None, :]).sum(axis=2)
            value = np.abs(base + delta)
            for c, p in zip(*np.nonzero(value <= tolerance)):
                hits.append((float(value[c, p]), tuple(chunk[c]), tuple(perms[p])))
    for value, slots, perm in sorted(hits):
        moved = arr.copy()
        moved[list(slots)] = arr[[slots[t] for t in perm]]
        if problem.feasible(moved):
            return value, moved
    return None


def greedy(problem: Problem, arr: np.ndarray, tolerance: float) -> np.ndarray | None:
    """Best single swaps, one after another, until within tolerance (or no swap helps).

    Each step takes the swap with the fewest broken pair tables, then the
    least residual; at most n steps.

    Parameters
    ----------
    problem : Problem
        The problem.
    arr : numpy.ndarray
        The blade in each engine slot now.
    tolerance : float
        Permissible static residual [g·mm].

    Returns
    -------
    numpy.ndarray or None
        An arrangement within the tolerance and the limits, or None.

    References
    ----------
    [LaporteMercure1988] interchanges.
    """
    for _ in range(problem.n):
        if abs(problem.residual(arr)) <= tolerance and problem.feasible(arr):
            return arr
        options = []
        for i, k in itertools.combinations(problem.free_slots.tolist(), 2):
            moved = arr.copy()
            moved[i], moved[k] = arr[k], arr[i]
            options.append((problem.violations(moved), abs(problem.residual(moved)), i, k))
        if not options:
            return None
        best = min(options)
        if (best[0], best[1]) >= (problem.violations(arr), abs(problem.residual(arr))):
            return None
        arr = arr.copy()
        arr[best[2]], arr[best[3]] = arr[best[3]], arr[best[2]]
    return arr if abs(problem.residual(arr)) <= tolerance and problem.feasible(arr) else None


def fewest_swaps(blades: tuple[Blade, ...], problems: list[Problem],
                 current: Sequence[str] | None, tolerance_gmm: float | None,
                 budget: int, seed: int) -> ArrangementResult:
    """The fewest swaps from ``current`` to an arrangement within ``tolerance_gmm``.

    Parameters
    ----------
    blades : tuple of Blade
        The blades.
    problems : list of Problem
        The engine's problems (one per alternation phase).
    current : sequence of str
        Blade id in each slot now (slot 1 first).
    tolerance_gmm : float
        Permissible static residual [g·mm].
    budget : int
        Most changes scored [-].
    seed : int
        Seed for the fallback search [-].

    Raises
    ------
    InputError
        Missing or bad current arrangement or tolerance; no arrangement found.
    """

    start_user = _current(blades, problems[0], current, tolerance_gmm)
    phases = [_phase(problem, start_user[problem.order], tolerance_gmm, budget, seed)
              for problem in problems]
    found = [ph for ph in phases if ph[0] is not None]
    if not found:
        raise InputError(f"no arrangement within {tolerance_gmm} g·mm found by swaps",
                         key="tolerance_gmm", expected="a larger tolerance or looser limits")
    fewest = min(len(ph[1]) for ph in found)
    floor = min(min(ph[2], fewest) for ph in phases)
    proven = floor == fewest
    answers = []
    for problem, (arr, swaps, ruled_out, work, method) in zip(problems, phases):
        if arr is None or len(swaps) != fewest:
            answers.append(Solved(None, math.inf, math.inf, True, False, method, work))
            continue
        value = abs(problem.residual(arr))
        answers.append(Solved(arr, value, value, proven, False, method, work))
    best = min((i for i, a in enumerate(answers) if a.arr is not None),
               key=lambda i: (answers[i].value, i))
    order = problems[best].order
    swaps = tuple((int(order[j]) + 1, int(order[k]) + 1) for j, k in phases[best][1])
    return to_result(blades, problems, answers, swaps=swaps, swap_lower_bound=floor)


def _phase(problem: Problem, start: np.ndarray, tolerance: float, budget: int, seed: int):
    """(arr, swaps, ruled_out, work, method) for one problem; arr None when none found.

    ``ruled_out``: no arrangement within the tolerance is fewer swaps away.
    """

    ruled_out, work = 0, 0
    for k in range(0, len(problem.free_slots) + 1):
        cost = depth_cost(len(problem.free_slots), k) if k else 1
        if work + cost > budget and k > 0:
            break
        work += cost
        found = best_at_depth(problem, start, k, tolerance)
        if found is not None:
            return found[1], swaps_between(start, found[1]), k, work, "fewest swaps, exact"
        ruled_out = k + 1
    arr = greedy(problem, start, tolerance)
    method = "fewest swaps ruled out below the bound; greedy swaps past the work budget"
    if arr is None:
        solved = solve(problem, budget, seed)
        if solved.arr is not None and solved.value <= tolerance:
            arr = solved.arr
            method = "fewest swaps ruled out below the bound; rearranged past the work budget"
    if arr is None:
        return None, [], ruled_out, work, "none found"
    return arr, swaps_between(start, arr), ruled_out, work, method


def _current(blades: tuple[Blade, ...], problem: Problem, current: Sequence[str] | None,
             tolerance_gmm: float | None) -> np.ndarray:
    """The current arrangement as blade indices by user slot, checked."""
    if current is None or tolerance_gmm is None:
        raise InputError("the fewest-swaps search needs the current arrangement and a tolerance",
                         key="current" if current is None else "tolerance_gmm",
                         expected="both the blade in every slot now and a tolerance in g·mm")
    if isinstance(tolerance_gmm, bool) or not isinstance(tolerance_gmm, (int, float)) \
            or not math.isfinite(tolerance_gmm) or tolerance_gmm < 0:
        raise InputError(f"tolerance {tolerance_gmm!r}", key="tolerance_gmm",
                         expected="a tolerance in g·mm, zero or above")
    index = {b.blade_id: i for i, b in enumerate(blades)}
    if len(current) != len(blades) or sorted(current) != sorted(index):
        raise InputError("the current arrangement is not every blade once", key="current",
                         expected="each blade id once, slot 1 first")
    user = np.array([index[c] for c in current], dtype=np.int64)
    engine = user[problem.order]
    pinned = problem.pinned >= 0
    if np.any(engine[pinned] != problem.pinned[pinned]):
        raise InputError("a pinned blade is not in its slot in the current arrangement",
                         key="current", expected="pinned blades where they are pinned")
    return user
