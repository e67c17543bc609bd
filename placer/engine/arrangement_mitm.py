"""Meet in the middle over two halves of the open slots, exact and with a bound.

The open slots are split into halves A and B.  For every set X of the open
blades that can fill A, every arrangement of X on A and of the other blades
on B is enumerated (numpy permutation tables), and the pair whose sums come
nearest to cancelling the fixed part is found exactly (k-d tree or a dense
scan, with the pair tables of the limits checked on every candidate, more
candidates fetched when the nearest ones break a limit).

Before enumerating, each set X gets a lower bound from the rearrangement
inequality: for a unit direction u the projection of the sum,
Re(ū·(t + Σ_A w·z + Σ_B w·z)), is at least Re(ū·t) plus, per half, the
sorted weights paired with the oppositely sorted projections Re(ū·z) of
its slots.  The largest of these over directions bounds the residual of
every arrangement with X in A.  Sets are taken in increasing bound order, so
when the incumbent is at most the next set's bound the search is complete,
and when the work budget runs out first that bound is a proven lower bound.

References
----------
[HorowitzSahni1974] meet in the middle; [FathiGinjupalli1993] the residual.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy.spatial import cKDTree

from placer.engine.arrangement_model import Problem

MAX_HALF = 9
"""Most open slots in one half (9! = 362 880 arrangements)."""
MAX_SUBSETS = 200_000
"""Most blade sets for half A that are listed for one search."""
DIRECTIONS = 48
"""Directions u of the rearrangement bound."""
DENSE_PAIRS = 250_000
"""Pairs of half-arrangements up to which the pair is found by a dense scan."""
NEIGHBOURS = 8
"""Candidates fetched per query when a limit spans the two halves."""


@lru_cache(maxsize=None)
def perm_table(k: int) -> np.ndarray:
    """Every permutation of range(k), one per row (itertools order)."""
    if k == 0:
        return np.zeros((1, 0), dtype=np.int64)
    return np.array(list(itertools.permutations(range(k))), dtype=np.int64)


def half_cost(m: int, a: int) -> int:
    """Half-arrangements enumerated for m open slots split a | m - a."""
    return math.comb(m, a) * (math.factorial(a) + math.factorial(m - a))


def best_split(m: int) -> int | None:
    """Size of half A that enumerates least, or None if a half would pass MAX_HALF."""
    sizes = [a for a in range(0, m + 1) if a <= MAX_HALF and m - a <= MAX_HALF]
    if not sizes or math.comb(m, min(sizes, key=lambda a: half_cost(m, a))) > MAX_SUBSETS:
        return None
    return min(sizes, key=lambda a: half_cost(m, a))


@dataclass
class Frame:
    """An arrangement with some slots open, seen from the halves A and B."""

    problem: Problem
    base: np.ndarray
    a_slots: np.ndarray
    b_slots: np.ndarray
    pool: np.ndarray
    target: complex
    couple_target: complex
    allowed: dict
    inner: dict
    cross: list


def make_frame(problem: Problem, base: np.ndarray, a_slots: np.ndarray,
               b_slots: np.ndarray) -> Frame:
    """The frame of ``base`` with ``a_slots`` and ``b_slots`` opened.

    Pair tables between an open slot and a filled one become a mask of the
    blades allowed in the open slot; tables within a half are checked on
    its rows; tables across the halves on the candidate pairs.
    """
    n = problem.n
    base = base.copy()
    base[a_slots] = -1
    base[b_slots] = -1
    where = {int(s): ("A", i) for i, s in enumerate(a_slots)}
    where.update({int(s): ("B", i) for i, s in enumerate(b_slots)})
    used = np.zeros(n, dtype=bool)
    used[base[base >= 0]] = True
    allowed = {"A": np.ones((len(a_slots), n), dtype=bool),
               "B": np.ones((len(b_slots), n), dtype=bool)}
    inner: dict = {"A": [], "B": []}
    cross = []
    for (u, v), ok in problem.edges.items():
        wu, wv = where.get(u), where.get(v)
        if wu is None and wv is None:
            continue
        if wv is None:
            allowed[wu[0]][wu[1]] &= ok[:, base[v]]
        elif wu is None:
            allowed[wv[0]][wv[1]] &= ok[base[u], :]
        elif wu[0] == wv[0]:
            inner[wu[0]].append((wu[1], wv[1], ok))
        elif wu[0] == "A":
            cross.append((wu[1], wv[1], ok))
        else:
            cross.append((wv[1], wu[1], ok.T))
    fixed = base >= 0
    target = problem.offset + complex(np.sum(problem.weights[base[fixed]] * problem.z[fixed]))
    couple_target = 0j
    if problem.axial is not None:
        couple_target = problem.couple_offset + complex(
            np.sum(problem.axial[base[fixed]] * problem.z[fixed]))
    return Frame(problem, base, np.asarray(a_slots), np.asarray(b_slots),
                 np.flatnonzero(~used), target, couple_target, allowed, inner, cross)


def half_rows(frame: Frame, half: str, blades: np.ndarray) -> np.ndarray:
    """Every arrangement of ``blades`` on one half that keeps the half's own limits."""
    rows = blades[perm_table(len(blades))]
    if rows.shape[1] == 0:
        return rows
    keep = np.all(frame.allowed[half][np.arange(rows.shape[1]), rows], axis=1)
    for i, k, ok in frame.inner[half]:
        keep &= ok[rows[:, i], rows[:, k]]
    return rows[keep]


def rearrangement_bounds(frame: Frame, subsets: np.ndarray) -> np.ndarray:
    """Lower bound on the residual for each blade set of half A (rows of ``subsets``).

    References
    ----------
    Rearrangement inequality: Σ x_i·y_σ(i) is least when x ascending meets y
    descending (Hardy, Littlewood and Pólya; from memory) [HorowitzSahni1974].
    """
    w = frame.problem.weights
    u = np.exp(2j * np.pi * np.arange(DIRECTIONS) / DIRECTIONS)
    total = np.real(np.conj(u) * frame.target)[None, :].repeat(len(subsets), axis=0)
    in_a = np.zeros((len(subsets), frame.problem.n), dtype=bool)
    np.put_along_axis(in_a, subsets, True, axis=1)
    in_pool = np.zeros(frame.problem.n, dtype=bool)
    in_pool[frame.pool] = True
    rest = np.nonzero(in_pool[None, :] & ~in_a)[1].reshape(len(subsets), -1)
    for slots, members in ((frame.a_slots, subsets), (frame.b_slots, rest)):
        if len(slots) == 0:
            continue
        proj = -np.sort(-np.real(np.conj(u)[:, None] * frame.problem.z[slots][None, :]), axis=1)
        total += np.sort(w[members], axis=1) @ proj.T
    return np.maximum(0.0, total.max(axis=1))


@dataclass
class Outcome:
    """What one search over a frame found."""

    value: float
    arr: np.ndarray | None
    lower_bound: float
    complete: bool
    work: int


def search_frame(frame: Frame, incumbent: float, budget: int, seed: int) -> Outcome:
    """Best arrangement of the frame's pool on its open slots, blade set by blade set.

    Parameters
    ----------
    frame : Frame
        The open slots and the fixed part.
    incumbent : float
        Residual to beat [g·mm] (inf when none is known).
    budget : int
        Most half-arrangements to enumerate [-].
    seed : int
        Seed of the order among blade sets of equal bound [-].
    """
    a = len(frame.a_slots)
    listed = list(itertools.combinations(frame.pool, a))
    subsets = np.array(listed, dtype=np.int64).reshape(len(listed), a)
    bounds = rearrangement_bounds(frame, subsets)
    tie = np.random.default_rng(seed).permutation(len(subsets))
    order = np.lexsort((tie, bounds))
    best, best_arr, work = incumbent, None, 0
    cost = math.factorial(a) + math.factorial(len(frame.b_slots))
    for count, s in enumerate(order):
        if bounds[s] >= best:
            return Outcome(best, best_arr, best, True, work)
        if work + cost > budget and count > 0:
            return Outcome(best, best_arr, min(best, float(bounds[s])), False, work)
        work += cost
        found = _best_for_subset(frame, subsets[s], best)
        if found is not None:
            best, best_arr = found
    return Outcome(best, best_arr, best, True, work)


def _best_for_subset(frame: Frame, subset: np.ndarray,
                     best: float) -> tuple[float, np.ndarray] | None:
    rest = np.setdiff1d(frame.pool, subset)
    rows_a = half_rows(frame, "A", subset)
    rows_b = half_rows(frame, "B", rest)
    if len(rows_a) == 0 or len(rows_b) == 0:
        return None
    p = frame.problem
    sum_a = frame.target + p.weights[rows_a] @ p.z[frame.a_slots]
    sum_b = p.weights[rows_b] @ p.z[frame.b_slots]
    check = _PairCheck(frame, rows_a, rows_b)
    if len(rows_a) * len(rows_b) <= DENSE_PAIRS:
        pair = _dense_pair(sum_a, sum_b, check, best)
    else:
        pair = _tree_pair(sum_a, sum_b, check, best)
    if pair is None:
        return None
    value, i, k = pair
    arr = frame.base.copy()
    arr[frame.a_slots] = rows_a[i]
    arr[frame.b_slots] = rows_b[k]
    return value, arr


class _PairCheck:
    """The limits that span the halves, checked on index pairs (i in A, k in B)."""

    def __init__(self, frame: Frame, rows_a: np.ndarray, rows_b: np.ndarray) -> None:
        self.frame, self.rows_a, self.rows_b = frame, rows_a, rows_b
        p = frame.problem
        self.couple = p.couple_limit is not None and p.axial is not None
        if self.couple:
            self.couple_a = frame.couple_target + p.axial[rows_a] @ p.z[frame.a_slots]
            self.couple_b = p.axial[rows_b] @ p.z[frame.b_slots]
        self.active = bool(frame.cross) or self.couple

    def __call__(self, i: np.ndarray, k: np.ndarray) -> np.ndarray:
        ok = np.ones(np.broadcast(i, k).shape, dtype=bool)
        for ia, kb, table in self.frame.cross:
            ok &= table[self.rows_a[i, ia], self.rows_b[k, kb]]
        if self.couple:
            p = self.frame.problem
            limit = p.couple_limit * (1 + 1e-9) + 1e-9
            ok &= np.abs(self.couple_a[i] + self.couple_b[k]) <= limit
        return ok


def _dense_pair(sum_a, sum_b, check: _PairCheck, best: float):
    dist = np.abs(sum_a[:, None] + sum_b[None, :])
    if check.active:
        ia, kb = np.indices(dist.shape)
        dist = np.where(check(ia, kb), dist, np.inf)
    flat = int(np.argmin(dist))
    i, k = divmod(flat, dist.shape[1])
    value = float(dist[i, k])
    return (value, i, k) if value < best else None


def _tree_pair(sum_a, sum_b, check: _PairCheck, best: float):
    tree = cKDTree(np.column_stack((sum_b.real, sum_b.imag)))
    queries = np.column_stack((-sum_a.real, -sum_a.imag))
    k = NEIGHBOURS if check.active else 1
    k = min(k, len(sum_b))
    bound = best * (1 + 1e-12) if math.isfinite(best) else np.inf
    dist, idx = tree.query(queries, k=k, distance_upper_bound=bound)
    dist, idx = dist.reshape(len(queries), k), idx.reshape(len(queries), k)
    found = idx < len(sum_b)
    rows = np.nonzero(found.any(axis=1))[0]
    if len(rows) == 0:
        return None
    ia = np.repeat(rows[:, None], k, axis=1)
    safe = np.where(found[rows], idx[rows], 0)
    ok = found[rows] & (check(ia, safe) if check.active else True)
    exact = np.abs(sum_a[ia] + sum_b[safe])
    exact = np.where(ok, exact, np.inf)
    result = None
    if np.isfinite(exact).any():
        flat = int(np.argmin(exact))
        r, c = divmod(flat, k)
        if exact[r, c] < best:
            best, result = float(exact[r, c]), (float(exact[r, c]), int(rows[r]), int(safe[r, c]))
    # Rows whose k nearest all broke a limit while all lying within the bound:
    # look at every point within the bound for them.
    if check.active and k < len(sum_b):
        full = found[rows].all(axis=1) & ~ok.any(axis=1)
        for r in np.flatnonzero(full)[np.argsort(dist[rows[full], 0], kind="stable")]:
            i = int(rows[r])
            if dist[i, 0] >= best:
                continue
            near = np.array(tree.query_ball_point(queries[i], best * (1 + 1e-12)), dtype=np.int64)
            if len(near) == 0:
                continue
            near = near[check(np.full(len(near), i), near)]
            if len(near) == 0:
                continue
            values = np.abs(sum_a[i] + sum_b[near])
            j = int(np.argmin(values))
            if values[j] < best:
                best, result = float(values[j]), (float(values[j]), i, int(near[j]))
    return result
