"""The anytime part of the search: swap descent, windows solved exactly, a feasible start.

* Swap descent: from an arrangement, take the swap of two open blades that
  most improves (broken pair tables, couple above its limit, static
  residual), compared in that order, until no swap improves.  All swaps
  are scored at once with numpy.
* Windows: a seeded choice of open slots (up to 2·MAX_HALF of them) is
  re-solved by meet in the middle with every other blade held, keeping the
  result when it is better.  This reaches residuals far below what swaps
  reach: one window of 16 slots scores about 1.6e9 pairs of half-arrangements.
* A feasible start from CP-SAT (one worker, fixed seed, deterministic time)
  when the pair tables are tight enough that swaps do not find one.

References
----------
[LaporteMercure1988] interchange heuristics; [HorowitzSahni1974] meet in the
middle; [CPSAT] the feasibility model.
"""

from __future__ import annotations

import numpy as np
from ortools.sat.python import cp_model

from placer.budget import wall_clock_cap_s
from placer.engine.arrangement.mitm import MAX_HALF, make_frame, search_sample
from placer.engine.arrangement.model import Problem

WINDOW_SETS = 3
"""Blade sets of half A tried per window (each a full meet in the middle of the halves)."""
CPSAT_DETERMINISTIC_S = 20.0
"""CP-SAT's deterministic time limit for a feasible start [deterministic s]."""


def random_start(problem: Problem, rng: np.random.Generator) -> np.ndarray:
    """The pinned blades in place, the others in a seeded random order.

    Parameters
    ----------
    problem : Problem
        The problem.
    rng : numpy.random.Generator
        The seeded generator drawn from.

    Returns
    -------
    numpy.ndarray
        The blade in each engine slot.
    """
    arr = problem.pinned.copy()
    free = problem.free_slots
    arr[free] = rng.permutation(problem.free_blades)
    return arr


def _score(problem: Problem, arr: np.ndarray) -> tuple[int, float, float]:
    couple = problem.couple(arr)
    excess = 0.0
    if problem.couple_limit is not None and couple is not None:
        excess = max(0.0, abs(couple) - problem.couple_limit)
    return problem.violations(arr), excess, abs(problem.residual(arr))


def _violation_after_swaps(problem: Problem, arr: np.ndarray, free: np.ndarray) -> np.ndarray:
    """Broken pair tables after swapping the blades of free slots i and k, for all i, k."""
    n = problem.n
    cost = np.zeros((n, n), dtype=np.int64)
    for (u, v), ok in problem.edges.items():
        cost[u] += ~ok[:, arr[v]]
        cost[v] += ~ok[arr[u], :]
    now = problem.violations(arr)
    bf = arr[free]
    cf = cost[free]
    after = (now + cf[:, bf] + cf[:, bf].T
             - np.diag(cf[:, bf])[:, None] - np.diag(cf[:, bf])[None, :])
    index = {int(s): i for i, s in enumerate(free)}
    for (u, v), ok in problem.edges.items():
        if u in index and v in index:
            i, k = index[u], index[v]
            old = int(not ok[arr[u], arr[v]])
            new = int(not ok[arr[v], arr[u]])
            stale = int(not ok[arr[v], arr[v]]) + int(not ok[arr[u], arr[u]])
            after[i, k] += old + new - stale
            after[k, i] += old + new - stale
    return after


def descend(problem: Problem, arr: np.ndarray, budget: int) -> tuple[np.ndarray, int]:
    """Best-swap descent on (broken tables, couple excess, residual); returns (arr, work).

    Each step takes the swap of two open slots' blades that most improves
    the three keys compared in that order; it stops when none improves or
    the work is spent.

    Parameters
    ----------
    problem : Problem
        The problem.
    arr : numpy.ndarray
        The arrangement to start from (engine slots); not changed.
    budget : int
        Most swaps scored [-].

    Returns
    -------
    arr : numpy.ndarray
        The arrangement reached.
    work : int
        Swaps scored [-].

    References
    ----------
    [LaporteMercure1988] pairwise interchange.
    """
    arr = arr.copy()
    free = problem.free_slots
    if len(free) < 2:
        return arr, 0
    w, z = problem.weights, problem.z
    zf = z[free]
    dz = zf[:, None] - zf[None, :]
    work = 0
    current = _score(problem, arr)
    while work < budget:
        bw = w[arr[free]]
        static = problem.residual(arr) + (bw[None, :] - bw[:, None]) * dz
        keys = [np.abs(static)]
        if problem.axial is not None and problem.couple_limit is not None:
            ba = problem.axial[arr[free]]
            couple = problem.couple(arr) + (ba[None, :] - ba[:, None]) * dz
            keys.insert(0, np.maximum(0.0, np.abs(couple) - problem.couple_limit))
        else:
            keys.insert(0, np.zeros_like(keys[0]))
        keys.insert(0, _violation_after_swaps(problem, arr, free) if problem.edges
                    else np.zeros(dz.shape, dtype=np.int64))
        work += len(free) * (len(free) - 1) // 2
        np.fill_diagonal(keys[0], np.iinfo(np.int64).max)
        flat = np.lexsort((keys[2].ravel(), keys[1].ravel(), keys[0].ravel()))[0]
        i, k = divmod(int(flat), len(free))
        candidate = (int(keys[0][i, k]), float(keys[1][i, k]), float(keys[2][i, k]))
        if not _better(candidate, current):
            break
        arr[free[i]], arr[free[k]] = arr[free[k]], arr[free[i]]
        current = _score(problem, arr)
    return arr, work


def _better(a: tuple[int, float, float], b: tuple[int, float, float]) -> bool:
    """Whether score a beats score b (a relative margin keeps float noise from looping)."""
    if a[0] != b[0]:
        return a[0] < b[0]
    if a[1] != b[1] and (a[1] > 0 or b[1] > 0):
        return a[1] < b[1] * (1 - 1e-12)
    return a[2] < b[2] * (1 - 1e-12)


def windows(problem: Problem, arr: np.ndarray, value: float, budget: int, seed: int,
            stop_gmm: float) -> tuple[np.ndarray, float, int]:
    """Re-solve seeded windows of open slots by meet in the middle; returns (arr, value, work).

    Parameters
    ----------
    problem : Problem
        The problem.
    arr : numpy.ndarray
        A feasible arrangement (engine slots).
    value : float
        Its residual [g·mm].
    budget : int
        Most half-arrangements to enumerate over all windows [-].
    seed : int
        Seed of the windows' choice [-].
    stop_gmm : float
        Stop once the residual is at most this [g·mm].
    """
    free = problem.free_slots
    size = min(len(free), 2 * (MAX_HALF - 1))
    if size < 2:
        return arr, value, 0
    rng = np.random.default_rng(seed)
    work = 0
    while work < budget and value > stop_gmm:
        window = np.sort(rng.choice(free, size=size, replace=False))
        half = size // 2
        frame = make_frame(problem, arr, window[:half], window[half:])
        outcome = search_sample(frame, value, WINDOW_SETS, int(rng.integers(2**31)))
        work += outcome.work
        if outcome.arr is not None and outcome.value < value:
            arr, value = outcome.arr, outcome.value
    return arr, value, work


def feasible_start(problem: Problem, seed: int) -> np.ndarray | None | bool:
    """An arrangement that keeps every pair table and pin, from CP-SAT.

    Returns the arrangement, False when CP-SAT proves there is none, or None
    when it finds none within its deterministic time.  The couple limit is
    left to the descent.

    Parameters
    ----------
    problem : Problem
        The problem: its pins and pair tables.
    seed : int
        CP-SAT's random seed [-].

    Returns
    -------
    numpy.ndarray or bool or None
        The blade in each engine slot; False or None as above.

    References
    ----------
    [CPSAT] one worker and a deterministic time limit make the run repeatable.
    """
    n = problem.n
    model = cp_model.CpModel()
    slot = [model.NewIntVar(0, n - 1, f"s{j}") for j in range(n)]
    model.AddAllDifferent(slot)
    for j in np.flatnonzero(problem.pinned >= 0):
        model.Add(slot[j] == int(problem.pinned[j]))
    for (u, v), ok in problem.edges.items():
        pairs = [(int(a), int(b)) for a, b in zip(*np.nonzero(ok))]
        model.AddAllowedAssignments([slot[u], slot[v]], pairs)
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.random_seed = seed
    solver.parameters.max_deterministic_time = CPSAT_DETERMINISTIC_S
    cap = wall_clock_cap_s()  # past the command's time limit: stops it, decides nothing
    if cap is not None:
        solver.parameters.max_time_in_seconds = cap
    status = solver.Solve(model)
    if status in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return np.array([solver.Value(s) for s in slot], dtype=np.int64)
    if status == cp_model.INFEASIBLE:
        return False
    return None
