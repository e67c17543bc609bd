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
[HorowitzSahni1974] meet in the middle; [Rearrangement] the bound;
[FathiGinjupalli1993] the residual.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from placer.engine.arrangement.model import Problem
from placer.engine.arrangement.pairs import (
    DENSE_PAIRS,
    NO_CHECK,
    PairCheck,
    dense_pair,
    row_sums,
    tree_pair,
    window_pair,
)

MAX_HALF = 9
"""Most open slots in one half (9! = 362 880 arrangements)."""
MAX_SUBSETS = 200_000
"""Most blade sets for half A that are listed for one search."""
DIRECTIONS = 48
"""Directions u of the rearrangement bound."""
CONSTRAINED_UNIT = 8
"""Work units per half-arrangement when limits span the halves (measured: such pairs are
checked candidate by candidate, about 8 times slower than sums alone)."""


@lru_cache(maxsize=None)
def perm_table(k: int) -> np.ndarray:
    """Every permutation of range(k), one per row (itertools order).

    Parameters
    ----------
    k : int
        Length [-]; 0 gives one empty row.

    Returns
    -------
    numpy.ndarray
        Shape (k!, k).
    """
    if k == 0:
        return np.zeros((1, 0), dtype=np.int64)
    return np.array(list(itertools.permutations(range(k))), dtype=np.int64)


def half_cost(m: int, a: int, mirrored: bool = False) -> int:
    """Half-arrangements kept for m open slots split a | m - a (A halved by the mirror rule).

    Parameters
    ----------
    m : int
        Open slots [-].
    a : int
        Slots in half A [-].
    mirrored : bool
        Whether the mirror rule halves half A's permutations.

    Returns
    -------
    int
        C(m, a) blade sets times (a! [halved] + (m - a)!) half-arrangements.
    """
    keep_a = math.factorial(a) // (2 if mirrored and a >= 2 else 1)
    return math.comb(m, a) * (keep_a + math.factorial(m - a))


def best_split(m: int, mirrored: bool = False) -> int | None:
    """Size of half A that enumerates least, or None if a half would pass MAX_HALF.

    Parameters
    ----------
    m : int
        Open slots [-].
    mirrored : bool
        Whether the mirror rule halves half A's permutations.

    Returns
    -------
    int or None
        The size of half A (the smaller on a tie); None also when half A's
        blade sets would pass MAX_SUBSETS.
    """
    sizes = [a for a in range(0, m + 1) if a <= MAX_HALF and m - a <= MAX_HALF]
    if not sizes:
        return None
    a = min(sizes, key=lambda a: (half_cost(m, a, mirrored), a))
    return a if math.comb(m, a) <= MAX_SUBSETS else None


@dataclass
class Frame:
    """An arrangement with some slots open, seen from the halves A and B.

    Parameters
    ----------
    problem : Problem
        The problem.
    base : numpy.ndarray
        The blade in each engine slot, -1 in the open slots.
    a_slots : numpy.ndarray
        Engine slots of half A.
    b_slots : numpy.ndarray
        Engine slots of half B.
    pool : numpy.ndarray
        The blades not in ``base``, to fill the open slots.
    target : complex
        Static unbalance of the disc and the filled slots [g·mm].
    couple_target : complex
        Couple of the disc and the filled slots [g·mm²].
    allowed : dict
        Half ("A", "B") -> boolean table [open slot of the half, blade]: the
        blades the pair tables with filled slots allow there.
    inner : dict
        Half -> list of (i, k, table): pair tables within the half, by position.
    cross : list
        (i in A, k in B, table) pair tables across the halves.
    order_pair : dict
        Half -> (i, k): the mirror rule blade(i) < blade(k) within that half.
    tables : dict
        Cache of permutation and slot tables, built on first use.
    """

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
    order_pair: dict = field(default_factory=dict)
    tables: dict = field(default_factory=dict)

    @property
    def unlimited(self) -> bool:
        """Whether no limit spans the halves (each half is filtered alone)."""
        p = self.problem
        return not self.cross and (p.couple_limit is None or p.axial is None)

    @property
    def unit(self) -> int:
        """Work units per half-arrangement."""
        return 1 if self.unlimited else CONSTRAINED_UNIT

    def limited(self, half: str) -> bool:
        """Whether a limit or pin restricts the arrangements of one half.

        Parameters
        ----------
        half : {"A", "B"}
            The half.

        Returns
        -------
        bool
            True when a pair table within the half, or with a filled slot, applies.
        """
        return bool(self.inner[half]) or not self.allowed[half].all()

    def perms(self, half: str) -> np.ndarray:
        """The permutations the half takes: all, or those keeping the mirror rule.

        Blades of a half are always listed in increasing order, so the mirror
        rule blade(u) < blade(v) is perm[u] < perm[v], the same for every set.

        Parameters
        ----------
        half : {"A", "B"}
            The half.

        Returns
        -------
        numpy.ndarray
            One permutation of the half's positions per row (cached).
        """
        key = ("perms", half)
        if key not in self.tables:
            slots = self.a_slots if half == "A" else self.b_slots
            table = perm_table(len(slots))
            if half in self.order_pair:
                i, k = self.order_pair[half]
                table = table[table[:, i] < table[:, k]]
            self.tables[key] = table
        return self.tables[key]

    def slot_sums(self, half: str, weights: np.ndarray) -> np.ndarray:
        """Sum of every arrangement in ``perms(half)`` of blades with ``weights``.

        Parameters
        ----------
        half : {"A", "B"}
            The half.
        weights : numpy.ndarray
            Moment weights of the half's blades, in increasing blade order [g·mm].

        Returns
        -------
        numpy.ndarray
            Complex Σ w·z of each arrangement [g·mm].
        """
        if half not in self.tables:
            slots = self.a_slots if half == "A" else self.b_slots
            inverse = np.argsort(self.perms(half), axis=1)
            self.tables[half] = np.asfortranarray(self.problem.z[slots][inverse])
        table = self.tables[half]
        out = np.zeros(table.shape[0], dtype=complex)
        for i, w in enumerate(weights):
            out += table[:, i] * w
        return out


def make_frame(problem: Problem, base: np.ndarray, a_slots: np.ndarray,
               b_slots: np.ndarray, mirror: bool = False) -> Frame:
    """The frame of ``base`` with ``a_slots`` and ``b_slots`` opened.

    Pair tables between an open slot and a filled one become a mask of the
    blades allowed in the open slot; tables within a half are checked on
    its rows; tables across the halves on the candidate pairs.  With
    ``mirror``, the problem's mirror rule (both its slots open) is applied.

    Parameters
    ----------
    problem : Problem
        The problem.
    base : numpy.ndarray
        An arrangement (or the pins, -1 where free) in engine slots; not changed.
    a_slots : numpy.ndarray
        Engine slots of half A.
    b_slots : numpy.ndarray
        Engine slots of half B.
    mirror : bool
        Apply the problem's mirror rule.

    Returns
    -------
    Frame
        The frame, its target the disc and the filled slots.

    Raises
    ------
    ValueError
        With ``mirror``, when a slot of the mirror rule is not open.
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
    order_pair = {}
    if mirror and problem.mirror is not None:
        wu, wv = (where.get(s) for s in problem.mirror)
        lower_first = np.arange(n)[:, None] < np.arange(n)[None, :]
        if wu is None or wv is None:
            raise ValueError("the mirror rule needs both its slots open")
        if wu[0] == wv[0]:
            order_pair[wu[0]] = (wu[1], wv[1])
        else:
            cross.append((wu[1], wv[1], lower_first) if wu[0] == "A"
                         else (wv[1], wu[1], lower_first.T))
    fixed = base >= 0
    target = problem.offset + complex(np.sum(problem.weights[base[fixed]] * problem.z[fixed]))
    couple_target = 0j
    if problem.axial is not None:
        couple_target = problem.couple_offset + complex(
            np.sum(problem.axial[base[fixed]] * problem.z[fixed]))
    return Frame(problem, base, np.asarray(a_slots), np.asarray(b_slots),
                 np.flatnonzero(~used), target, couple_target, allowed, inner, cross, order_pair)


def half_rows(frame: Frame, half: str, blades: np.ndarray) -> np.ndarray:
    """Every arrangement of ``blades`` on one half that keeps the half's own limits.

    Parameters
    ----------
    frame : Frame
        The frame.
    half : {"A", "B"}
        The half.
    blades : numpy.ndarray
        The half's blades, in increasing order.

    Returns
    -------
    numpy.ndarray
        One row of blades (by the half's slots) per arrangement kept.
    """
    return blades[frame.perms(half)][_kept(frame, half, blades)]


def rearrangement_bounds(frame: Frame, subsets: np.ndarray) -> np.ndarray:
    """Lower bound on the residual for each blade set of half A (rows of ``subsets``).

    For each of :data:`DIRECTIONS` unit directions u, the least projection
    Re(ū·(t + Σ w·z)) pairs each half's weights ascending with its slots'
    projections descending; the largest over u bounds |residual| below.

    Parameters
    ----------
    frame : Frame
        The frame (target, pool and halves).
    subsets : numpy.ndarray
        One blade set of half A per row; half B takes the rest of the pool.

    Returns
    -------
    numpy.ndarray
        The bound of each set [g·mm], at least 0.

    References
    ----------
    [Rearrangement]: Σ x_i·y_σ(i) is least when x ascending meets y descending.
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
        total += np.einsum("sk,dk->sd", np.sort(w[members], axis=1), proj)
    return np.maximum(0.0, total.max(axis=1))


@dataclass
class Outcome:
    """What one search over a frame found.

    Parameters
    ----------
    value : float
        Least residual found, or the incumbent when nothing beat it [g·mm].
    arr : numpy.ndarray or None
        Its arrangement (engine slots); None when nothing beat the incumbent.
    lower_bound : float
        Proven least residual of the frame [g·mm]; 0 for a sample.
    complete : bool
        Whether every blade set was searched or bounded out.
    work : int
        Work units spent [-].
    """

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
    cost = (len(frame.perms("A")) + len(frame.perms("B"))) * frame.unit
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


def search_sample(frame: Frame, incumbent: float, count: int, seed: int) -> Outcome:
    """Like search_frame over ``count`` seeded random blade sets of half A: no bound, no proof.

    Parameters
    ----------
    frame : Frame
        The open slots and the fixed part.
    incumbent : float
        Residual to beat [g·mm].
    count : int
        Blade sets tried [-].
    seed : int
        Seed of the choice of sets [-].

    Returns
    -------
    Outcome
        The best found; lower bound 0, not complete.
    """
    rng = np.random.default_rng(seed)
    a = len(frame.a_slots)
    best, best_arr = incumbent, None
    cost = (len(frame.perms("A")) + len(frame.perms("B"))) * frame.unit
    for _ in range(count):
        subset = np.sort(rng.choice(frame.pool, size=a, replace=False))
        found = _best_for_subset(frame, subset, best)
        if found is not None:
            best, best_arr = found
    return Outcome(best, best_arr, 0.0, False, (count + 1) * cost)


def _best_for_subset(frame: Frame, subset: np.ndarray,
                     best: float) -> tuple[float, np.ndarray] | None:
    rest = np.setdiff1d(frame.pool, subset)
    if frame.unlimited:
        return _best_unlimited(frame, subset, rest, best)
    rows_a = half_rows(frame, "A", subset)
    rows_b = half_rows(frame, "B", rest)
    if len(rows_a) == 0 or len(rows_b) == 0:
        return None
    p = frame.problem
    sum_a = frame.target + row_sums(p.weights[rows_a], p.z[frame.a_slots])
    sum_b = row_sums(p.weights[rows_b], p.z[frame.b_slots])
    check = PairCheck(frame, rows_a, rows_b)
    if len(rows_a) * len(rows_b) <= DENSE_PAIRS:
        pair = dense_pair(sum_a, sum_b, check, best)
    else:
        pair = tree_pair(sum_a, sum_b, check, best)
    if pair is None:
        return None
    value, i, k = pair
    arr = frame.base.copy()
    arr[frame.a_slots] = rows_a[i]
    arr[frame.b_slots] = rows_b[k]
    return value, arr


def _best_unlimited(frame: Frame, subset: np.ndarray, rest: np.ndarray,
                    best: float) -> tuple[float, np.ndarray] | None:
    """The nearest pair from sums alone: one matrix product per half, no rows built."""
    w = frame.problem.weights
    keep_a = _kept(frame, "A", subset)
    keep_b = _kept(frame, "B", rest)
    sum_a = frame.target + frame.slot_sums("A", w[subset])[keep_a]
    sum_b = frame.slot_sums("B", w[rest])[keep_b]
    if len(sum_a) == 0 or len(sum_b) == 0:
        return None
    pair = window_pair(-sum_a, sum_b, best) if math.isfinite(best) else False
    if pair is False:
        pair = tree_pair(sum_a, sum_b, NO_CHECK, best)
    if pair is None:
        return None
    value, i, k = pair
    arr = frame.base.copy()
    arr[frame.a_slots] = subset[frame.perms("A")[keep_a][i]]
    arr[frame.b_slots] = rest[frame.perms("B")[keep_b][k]]
    return value, arr


def _kept(frame: Frame, half: str, blades: np.ndarray) -> np.ndarray | slice:
    """Rows of the half's permutation table that keep its own limits (all: a slice)."""
    if not frame.limited(half):
        return slice(None)
    rows = blades[frame.perms(half)]
    if rows.shape[1] == 0:
        return slice(None)
    keep = np.all(frame.allowed[half][np.arange(rows.shape[1]), rows], axis=1)
    for i, k, ok in frame.inner[half]:
        keep &= ok[rows[:, i], rows[:, k]]
    return np.flatnonzero(keep)
