"""Arrange blades on a disc: least static unbalance, proven where the work allows.

The search for the least residual (:func:`solve`, one problem per
alternation phase); the entry point is :func:`placer.engine.arrangement.arrange`,
which takes the blades and the disc and returns an
:class:`placer.blades.ArrangementResult`.  It is deterministic: every budget
counts work (half-arrangements and swaps scored), every random choice comes
from a seeded generator, so the same input gives the same output on any
machine and under any load.

The search, in order (see the Notes of each module):

1. Zero by construction (:mod:`placer.engine.arrangement.exact`): with equally spaced slots,
   no disc unbalance and weights that are decimals, an arrangement whose
   residual is exactly zero is built when the weights fill regular polygons
   or an addition grid; the zero is checked in integer arithmetic.
2. Symmetry: with equally spaced slots and nothing else fixing the
   orientation (no disc unbalance, no pinned blade), rotating an arrangement
   by one pitch multiplies its sum by e^{2πi/n} and reflecting it conjugates
   the sum, so one blade is pinned in the first slot and of the two slots
   beside it the one after holds the lower-numbered blade.
3. An incumbent from swap descent (CP-SAT for a start within tight limits).
4. Up to 2·MAX_HALF open slots: meet in the middle over every blade set of
   half A, in increasing order of the rearrangement bound: complete (proven)
   or, when the work runs out, with that bound as the proven lower bound.
   Beyond: windows of open slots re-solved by meet in the middle.
5. The result's residual is tested for an exact zero when the weights allow.

References
----------
[FathiGinjupalli1993], [Burkard1998] (the problem is NP-hard, hence budgets),
[HorowitzSahni1974], [RootsOfUnity], [ISO21940-11] (the residual is a static
unbalance to compare with U_per).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from placer.blades import ArrangementResult, Blade
from placer.engine.arrangement import exact as exact
from placer.engine.arrangement.local import (
    descend,
    feasible_start,
    random_start,
    windows,
)
from placer.engine.arrangement.mitm import (
    best_split,
    make_frame,
    rearrangement_bounds,
    search_frame,
)
from placer.engine.arrangement.model import Problem
from placer.errors import InputError

DEFAULT_WORK = 200_000_000
"""Default work budget in work units (a half-arrangement scored from sums alone is one
unit; one checked against limits across the halves, CONSTRAINED_UNIT): a few seconds."""
WINDOW_SHARE = 8
"""The windows, which prove nothing, take at most this fraction (1/8) of the budget."""
STARTS = 3
"""Seeded random starts of the swap descent."""
ZERO_TEST_REL = 1e-9
"""A float residual below this share of Σw is tested for an exact zero."""
NOISE_REL = 1e-13
"""Residuals below this share of Σw are rounding noise: the windows stop there."""


@dataclass
class Solved:
    """One problem's answer, in engine slots.

    Parameters
    ----------
    arr : numpy.ndarray or None
        The blade in each engine slot; None when none was found.
    value : float
        Its static residual [g·mm] (inf when none).
    lower_bound : float
        Proven least residual of the problem [g·mm].
    proven : bool
        Whether ``value`` is proven least.
    zero_shown : bool
        Whether the residual was shown exactly zero.
    method : str
        How it was found, in a few words.
    work : int
        Work units spent [-].
    """

    arr: np.ndarray | None
    value: float
    lower_bound: float
    proven: bool
    zero_shown: bool
    method: str
    work: int


def to_result(blades: tuple[Blade, ...], problems: list[Problem], answers: list[Solved],
              swaps=None, swap_lower_bound=None) -> ArrangementResult:
    """The best of the answers (one per alternation phase) as an ArrangementResult.

    Parameters
    ----------
    blades : tuple of Blade
        The blades, in the order given.
    problems : list of Problem
        The problems (one per alternation phase).
    answers : list of Solved
        Each problem's answer, in the same order.
    swaps : tuple of (int, int) or None
        For the fewest-swaps search: the swaps, as slot numbers.
    swap_lower_bound : int or None
        For the fewest-swaps search: no fewer swaps reach the tolerance.

    Returns
    -------
    ArrangementResult
        The least residual's arrangement by user slot; proven only if every
        answer is, its lower bound the least of theirs.

    Raises
    ------
    InputError
        When no answer has an arrangement (the limits cannot be kept, or none
        was found within the work budget).
    """
    found = [i for i, a in enumerate(answers) if a.arr is not None]
    if not found:
        proven = all(a.proven for a in answers)
        raise InputError("no arrangement keeps the limits" if proven else
                         "no arrangement within the limits found within the work budget",
                         key="limits", expected="looser limits" if proven
                         else "looser limits or a larger work budget")
    best = min(found, key=lambda i: (answers[i].value, i))
    answer, problem = answers[best], problems[best]
    arr = answer.arr
    user = np.empty(problem.n, dtype=np.int64)
    user[problem.order] = arr
    static = problem.residual(arr)
    couple = problem.couple(arr)
    return ArrangementResult(
        blade_ids=tuple(blades[i].blade_id for i in user),
        residual_gmm=abs(static),
        residual_angle_deg=math.degrees(math.atan2(static.imag, static.real)) % 360.0,
        couple_gmm2=None if couple is None else abs(couple),
        lower_bound_gmm=min(min(a.lower_bound for a in answers), abs(static)),
        proven=all(a.proven for a in answers),
        zero_shown=answer.zero_shown,
        method=answer.method,
        work=sum(a.work for a in answers),
        swaps=swaps,
        swap_lower_bound=swap_lower_bound)


def exact_applies(problem: Problem) -> bool:
    """Whether residuals can be tested for an exact zero (integer arithmetic).

    Parameters
    ----------
    problem : Problem
        The problem.

    Returns
    -------
    bool
        True for equally spaced slots, decimal weights and no disc unbalance.
    """
    return problem.equal_spacing and problem.int_weights is not None and problem.offset == 0


def shown_zero(problem: Problem, arr: np.ndarray) -> bool:
    """Whether the residual of ``arr`` is exactly zero, by the cyclotomic test.

    Parameters
    ----------
    problem : Problem
        The problem.
    arr : numpy.ndarray
        The blade in each engine slot.

    Returns
    -------
    bool
        False also when the test does not apply (:func:`exact_applies`).

    References
    ----------
    [RootsOfUnity].
    """
    if not exact_applies(problem):
        return False
    coeffs = [problem.int_weights[b] for b in arr]
    return exact.is_zero_sum(coeffs, problem.n)


def solve(problem: Problem, budget: int, seed: int, stop_gmm: float = 0.0) -> Solved:
    """The best arrangement of one problem within ``budget`` work units.

    Zero by construction when it applies; else an incumbent from swap
    descent, then meet in the middle over all open slots when that fits the
    budget (or nothing else was found), else windows; the lower bound is the
    search's, raised to the field-norm bound, and an exact zero is tested.

    Parameters
    ----------
    problem : Problem
        The problem.
    budget : int
        Most work units [-].
    seed : int
        Seed of every random choice [-].
    stop_gmm : float
        The windows stop once the residual is at most this [g·mm].

    Returns
    -------
    Solved
        The answer; ``arr`` None when the limits cannot be kept or no
        feasible start was found.

    References
    ----------
    [HorowitzSahni1974], [RootsOfUnity] (module docstring).
    """
    built = construct_zero(problem)
    if built is not None:
        return Solved(built, abs(problem.residual(built)), 0.0, True, True,
                      "zero by construction", 0)
    work_problem = symmetry_reduced(problem)
    arr, value, work = incumbent(work_problem, budget // 10, seed)
    if arr is False:
        return Solved(None, math.inf, math.inf, True, False, "limits cannot be kept", work)
    total = float(np.sum(problem.weights))
    frame = exact_frame(work_problem)
    if frame is not None and (frame_cost(frame) <= budget - work or arr is None):
        outcome = search_frame(frame, value, max(1, budget - work), seed)
        work += outcome.work
        if outcome.arr is not None:
            arr, value = outcome.arr, outcome.value
        lower, proven = outcome.lower_bound, outcome.complete
        method = "meet in the middle, " + ("complete" if proven else "stopped by work budget")
    else:
        if arr is None:
            return Solved(None, math.inf, 0.0, False, False, "no feasible start", work)
        stop = max(stop_gmm, NOISE_REL * total)
        arr, value, more = windows(work_problem, arr, value,
                                   max(1, (budget - work) // WINDOW_SHARE), seed, stop)
        work += more
        lower, proven = root_bound(work_problem), False
        method = "swap descent and windows"
    if arr is None:
        return Solved(None, math.inf, lower, proven, False, "limits cannot be kept", work)
    lower = min(max(lower, norm_bound(problem)), value)
    if value <= ZERO_TEST_REL * total and shown_zero(problem, arr):
        return Solved(arr, value, 0.0, True, True, method + ", zero shown", work)
    return Solved(arr, value, lower, proven, False, method, work)


def exact_frame(problem: Problem):
    """The split of the open slots for meet in the middle, or None when too large.

    Two splits are weighed, an arc (round slot 0 when the mirror rule is on, so
    that its two slots share half A) and a split by diameters (slots sorted by
    angle modulo 180°, so that opposite slots share a half); the one with fewer
    pair tables across the halves is taken, as those are checked pair by pair.

    Parameters
    ----------
    problem : Problem
        The problem (symmetry reduced or not).

    Returns
    -------
    Frame or None
        The frame of the pins with every free slot open.
    """
    free = problem.free_slots
    a = best_split(len(free), mirrored=problem.mirror is not None)
    if a is None:
        return None
    arc = free
    if problem.mirror is not None:
        arc = free[np.argsort(np.minimum(free, problem.n - free), kind="stable")]
    diametric = free[np.argsort(np.angle(problem.z[free]) % math.pi, kind="stable")]
    frames = [make_frame(problem, problem.pinned, order[:a], order[a:], mirror=True)
              for order in (arc, diametric)]
    return min(frames, key=lambda f: len(f.cross))


def frame_cost(frame) -> int:
    """Work units of a complete meet in the middle over ``frame`` (before pruning).

    Parameters
    ----------
    frame : Frame
        The frame.

    Returns
    -------
    int
        Blade sets of half A times the half-arrangements per set, times the unit.
    """
    sets = math.comb(len(frame.pool), len(frame.a_slots))
    return sets * (len(frame.perms("A")) + len(frame.perms("B"))) * frame.unit


def symmetry_reduced(problem: Problem) -> Problem:
    """The problem with one blade pinned in slot 0 and reflections ruled out, when symmetric.

    Every arrangement can be rotated to put the heaviest blade in slot 0 and
    then reflected (slot j to slot -j) so that slot 1 holds a lower-numbered
    blade than slot n - 1 (``Problem.mirror``, applied by the exact search);
    both keep |residual|, |couple| and every pair table (opposite and
    neighbouring slots stay so; with alternation each phase is solved, and
    reflection keeps a slot's parity for even n).

    Parameters
    ----------
    problem : Problem
        The problem.

    Returns
    -------
    Problem
        The reduced problem, or ``problem`` itself when it is not symmetric
        or has fewer than 3 slots.

    References
    ----------
    [FathiGinjupalli1993] (one blade fixed in slot 1).
    """
    if not problem.symmetric() or problem.n < 3:
        return problem
    pinned = problem.pinned.copy()
    pinned[0] = int(np.argmax(problem.weights))
    return replace(problem, pinned=pinned, mirror=(1, problem.n - 1))


def incumbent(problem: Problem, budget: int, seed: int):
    """(arr, value, work): the best feasible arrangement of a few seeded swap descents.

    ``arr`` is None when none is feasible and False when CP-SAT proves that no
    arrangement keeps the pair tables.

    Parameters
    ----------
    problem : Problem
        The problem.
    budget : int
        Work units for the descents [-], shared among :data:`STARTS` starts.
    seed : int
        Seed of the starts and of CP-SAT [-].

    Returns
    -------
    arr : numpy.ndarray or None or bool
        The arrangement, None or False as above.
    value : float
        Its residual [g·mm] (inf when none).
    work : int
        Work units spent [-].
    """
    rng = np.random.default_rng(seed)
    best, best_value, work = None, math.inf, 0
    for _ in range(STARTS):
        arr, spent = descend(problem, random_start(problem, rng), max(1, budget // STARTS))
        work += spent
        if problem.feasible(arr) and abs(problem.residual(arr)) < best_value:
            best, best_value = arr, abs(problem.residual(arr))
    if best is None and problem.edges:
        start = feasible_start(problem, seed)
        if start is False:
            return False, math.inf, work
        if start is not None:
            arr, spent = descend(problem, start, max(1, budget // STARTS))
            work += spent
            if problem.feasible(arr):
                best, best_value = arr, abs(problem.residual(arr))
    return best, best_value, work


def root_bound(problem: Problem) -> float:
    """Rearrangement bound over all open slots and blades at once [g·mm].

    Parameters
    ----------
    problem : Problem
        The problem.

    Returns
    -------
    float
        A lower bound on the residual of every arrangement [g·mm].

    References
    ----------
    [Rearrangement] (see :func:`placer.engine.arrangement.mitm.rearrangement_bounds`).
    """
    free = problem.free_slots
    frame = make_frame(problem, problem.pinned, free, free[:0])
    return float(rearrangement_bounds(frame, problem.free_blades[None, :])[0])


def norm_bound(problem: Problem) -> float:
    """The field-norm bound [g·mm] when zero is impossible, else 0.

    Parameters
    ----------
    problem : Problem
        The problem.

    Returns
    -------
    float
        The bound [g·mm]; 0 unless the exact test applies and n is a prime
        power that no zero arrangement exists for.

    References
    ----------
    [RootsOfUnity].
    """
    if not exact_applies(problem) or exact.zero_possible(problem.int_weights, problem.n) \
            is not False:
        return 0.0
    w = np.sort(problem.weights)
    u = np.exp(2j * np.pi * np.arange(64) / 64)
    proj = np.sort(np.real(np.conj(u)[:, None] * problem.z[None, :]), axis=1)
    largest = float(np.einsum("dk,k->d", proj, w).max()) / math.cos(math.pi / 64)
    return exact.norm_lower_bound(problem.n, largest, problem.scale)


def construct_zero(problem: Problem) -> np.ndarray | None:
    """A zero arrangement built from polygons or a grid that keeps the limits, or None.

    Parameters
    ----------
    problem : Problem
        The problem; only without pins and when :func:`exact_applies`.

    Returns
    -------
    numpy.ndarray or None
        The blade in each engine slot, its residual exactly zero; None when
        neither construction applies or keeps the limits.

    References
    ----------
    [RootsOfUnity] (regular polygons and addition grids sum to zero).
    """
    if not exact_applies(problem) or np.any(problem.pinned >= 0):
        return None
    values = problem.int_weights
    for build in (exact.periodic_zero, exact.grid_zero):
        by_slot = build(values, problem.n)
        if by_slot is None:
            continue
        arr = _blades_for_values(values, by_slot)
        if problem.feasible(arr) and exact.is_zero_sum(by_slot, problem.n):
            return arr
    return None


def _blades_for_values(values: Sequence[int], by_slot: Sequence[int]) -> np.ndarray:
    """Blades for the wanted value in each slot, equal values in blade order."""
    queues: dict[int, list[int]] = {}
    for blade, value in enumerate(values):
        queues.setdefault(value, []).append(blade)
    return np.array([queues[v].pop(0) for v in by_slot], dtype=np.int64)
