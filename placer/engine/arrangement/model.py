"""The blade-arrangement problem as arrays: slots, weights, limits as pair tables.

Inside the engine, slots are numbered in the order of their angles (so that
neighbours are consecutive, slot n - 1 next to slot 0) and blades in the
order they were given.  An arrangement is an integer array ``arr`` with
``arr[j]`` the blade in slot j.  Every shop limit except the couple limit is
a table on a pair of slots: ``ok[a, b]`` says whether blade a in slot u and
blade b in slot v may stand together, so one check serves the opposite limit,
the neighbour limit and the alternation.

References
----------
[FathiGinjupalli1993] the residual Σ w·e^{iθ}; [Li2021] the opposite and
neighbour limits; [OppositeDifferences] opposite slots.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from placer.blades import ANGLE_TOL_DEG, Blade, Disc, check_blades

LIMIT_SLACK = 1e-9
"""Relative slack on a limit, so that a difference equal to the limit passes."""

INTEGER_SCALES = (1, 10, 100, 1000)
"""Decimal scales tried to read the moment weights as exact integers."""


@dataclass(frozen=True)
class Problem:
    """One arrangement problem, ready for the search.

    Parameters
    ----------
    weights : numpy.ndarray
        Moment weight of each blade [g·mm].
    z : numpy.ndarray
        Unit vector e^{iθ} of each slot (engine order) [-].
    order : numpy.ndarray
        User slot index (from 0) of each engine slot.
    offset : complex
        The disc's own unbalance [g·mm].
    pinned : numpy.ndarray
        Blade pinned in each engine slot, -1 where the slot is free.
    edges : dict
        (u, v) with u < v -> boolean table ok[a, b] [-].
    axial : numpy.ndarray or None
        Axial moment of each blade [g·mm²].
    couple_offset : complex
        The disc's own couple [g·mm²].
    couple_limit : float or None
        Largest couple [g·mm²].
    equal_spacing : bool
        Whether the slots are equally spaced (engine slot j at θ_0 + 360·j/n).
    int_weights : tuple of int or None
        The weights times ``scale`` as exact integers, when they are decimals.
    scale : int
        The decimal scale of ``int_weights``.
    mirror : tuple of (int, int) or None
        Two slots (u, v) where the search may take blade(u) < blade(v) only,
        because every mirror image of an arrangement scores the same.
    """

    weights: np.ndarray
    z: np.ndarray
    order: np.ndarray
    offset: complex
    pinned: np.ndarray
    edges: dict
    axial: np.ndarray | None
    couple_offset: complex
    couple_limit: float | None
    equal_spacing: bool
    int_weights: tuple[int, ...] | None
    scale: int
    mirror: tuple[int, int] | None = None

    @property
    def n(self) -> int:
        return len(self.weights)

    @property
    def free_slots(self) -> np.ndarray:
        return np.flatnonzero(self.pinned < 0)

    @property
    def free_blades(self) -> np.ndarray:
        used = np.zeros(self.n, dtype=bool)
        used[self.pinned[self.pinned >= 0]] = True
        return np.flatnonzero(~used)

    def pinned_sum(self) -> complex:
        """Static unbalance of the disc and its pinned blades [g·mm]."""
        fixed = self.pinned >= 0
        return self.offset + complex(np.sum(self.weights[self.pinned[fixed]] * self.z[fixed]))

    def pinned_couple(self) -> complex:
        """Couple of the disc and its pinned blades [g·mm²] (0 without axial moments)."""
        if self.axial is None:
            return 0j
        fixed = self.pinned >= 0
        return self.couple_offset + complex(np.sum(self.axial[self.pinned[fixed]] * self.z[fixed]))

    def symmetric(self) -> bool:
        """Whether every rotation and reflection of an arrangement scores the same.

        True for equally spaced slots with no disc unbalance, no disc couple
        under a couple limit and no pinned blade: rotating by one pitch
        multiplies the sums by e^{2πi/n}, reflecting conjugates them, and the
        pair tables only depend on which slots are opposite or neighbours.
        """
        couple_free = self.couple_limit is None or self.couple_offset == 0
        return (self.equal_spacing and self.offset == 0 and couple_free
                and bool(np.all(self.pinned < 0)))

    def residual(self, arr: np.ndarray) -> complex:
        """Static unbalance of arrangement ``arr`` [g·mm].

        Parameters
        ----------
        arr : numpy.ndarray
            The blade in each engine slot.

        Returns
        -------
        complex
            The disc's unbalance plus Σ w·z [g·mm].

        References
        ----------
        [FathiGinjupalli1993] the residual Σ w·e^{iθ}.
        """
        return self.offset + complex(np.sum(self.weights[arr] * self.z))

    def couple(self, arr: np.ndarray) -> complex | None:
        """Couple of arrangement ``arr`` [g·mm²], None without axial moments.

        Parameters
        ----------
        arr : numpy.ndarray
            The blade in each engine slot.

        Returns
        -------
        complex or None
            The disc's couple plus Σ axial·z [g·mm²].

        References
        ----------
        [StaticCouple] (couple unbalance).
        """
        if self.axial is None:
            return None
        return self.couple_offset + complex(np.sum(self.axial[arr] * self.z))

    def feasible(self, arr: np.ndarray) -> bool:
        """Whether ``arr`` keeps the pinned blades and every limit.

        Parameters
        ----------
        arr : numpy.ndarray
            The blade in each engine slot.

        Returns
        -------
        bool
            True when every pin, pair table and the couple limit hold.
        """
        fixed = self.pinned >= 0
        if np.any(arr[fixed] != self.pinned[fixed]):
            return False
        if any(not ok[arr[u], arr[v]] for (u, v), ok in self.edges.items()):
            return False
        return self.couple_ok(self.couple(arr))

    def couple_ok(self, couple: complex | None) -> bool:
        """Whether a couple [g·mm²] is within the couple limit.

        Parameters
        ----------
        couple : complex or None
            The couple [g·mm²]; None (no axial moments) always passes.

        Returns
        -------
        bool
            True without a limit, or when |couple| is within it (with
            :data:`LIMIT_SLACK`).
        """
        if self.couple_limit is None or couple is None:
            return True
        return abs(couple) <= self.couple_limit * (1 + LIMIT_SLACK) + LIMIT_SLACK

    def violations(self, arr: np.ndarray) -> int:
        """How many pair tables ``arr`` breaks (pinned slots and couple aside).

        Parameters
        ----------
        arr : numpy.ndarray
            The blade in each engine slot.

        Returns
        -------
        int
            The number of slot pairs whose table refuses their two blades.
        """
        return sum(int(not ok[arr[u], arr[v]]) for (u, v), ok in self.edges.items())


def build_problems(blades: tuple[Blade, ...], disc: Disc) -> list[Problem]:
    """The engine's problems for ``blades`` on ``disc``: two when blades alternate.

    With alternation the phase (whether slot 1 holds a high or a low blade) is
    a choice; each phase is its own problem and the better answer is taken.

    Parameters
    ----------
    blades : tuple of Blade
        One blade per slot.
    disc : Disc
        The disc, its unbalance, pinned blades and limits.

    Raises
    ------
    InputError
        When the blades do not fit the disc (see :func:`placer.blades.check_blades`).
    """
    check_blades(blades, disc)
    n = disc.slot_count
    angles = np.array(disc.slot_angles_deg()) % 360.0
    order = np.argsort(angles, kind="stable")
    theta = angles[order]
    z = np.exp(1j * np.radians(theta))
    ids = {b.blade_id: i for i, b in enumerate(blades)}
    pinned = np.full(n, -1, dtype=np.int64)
    engine_slot = np.empty(n, dtype=np.int64)
    engine_slot[order] = np.arange(n)
    for slot, blade_id in disc.pinned:
        pinned[engine_slot[slot - 1]] = ids[blade_id]
    weights = np.array([b.moment_gmm for b in blades], dtype=float)
    axial = None
    if blades[0].axial_moment_gmm2 is not None:
        axial = np.array([b.axial_moment_gmm2 for b in blades], dtype=float)
    equal = _equally_spaced(theta)
    if equal:
        z = np.exp(1j * (math.radians(theta[0]) + 2 * math.pi * np.arange(n) / n))
    int_weights, scale = _as_integers(weights)
    base = _limit_edges(blades, disc.limits, theta)
    phases = [None] if not disc.limits.alternate_frequency else [0, 1]
    problems = []
    for phase in phases:
        edges = dict(base)
        if phase is not None:
            _merge(edges, _alternation_edges(blades, n, phase))
        problems.append(Problem(weights, z, order, disc.unbalance(), pinned, edges, axial,
                                disc.couple(), disc.limits.couple_gmm2, equal, int_weights,
                                scale))
    return problems


def _equally_spaced(theta: np.ndarray) -> bool:
    n = len(theta)
    expected = theta[0] + 360.0 * np.arange(n) / n
    return bool(np.all(np.abs(theta - expected) <= ANGLE_TOL_DEG))


def _as_integers(weights: np.ndarray) -> tuple[tuple[int, ...] | None, int]:
    """The weights as integers at the smallest decimal scale that holds them exactly."""
    for scale in INTEGER_SCALES:
        scaled = weights * scale
        rounded = np.round(scaled)
        if np.all(np.abs(scaled - rounded) <= 1e-9 * np.maximum(1.0, np.abs(scaled))) \
                and np.all(np.abs(rounded) < 2**52):
            return tuple(int(v) for v in rounded), scale
    return None, 1


def opposite_pairs(theta_deg: np.ndarray) -> list[tuple[int, int]]:
    """Pairs of opposite slots: each slot with the slot(s) nearest its angle plus 180°.

    For an even count of equally spaced slots each slot has one opposite; for
    an odd count the point opposite a slot falls mid-way between two slots,
    and both count as its opposites (the pairs then form one ring).  Ties are
    angles within ANGLE_TOL_DEG of each other.

    Parameters
    ----------
    theta_deg : numpy.ndarray
        Slot angles [deg] in engine order.

    References
    ----------
    [OppositeDifferences], [Li2021].
    """
    n = len(theta_deg)
    pairs = set()
    for j in range(n):
        gap = np.abs((theta_deg - theta_deg[j] - 180.0 + 180.0) % 360.0 - 180.0)
        gap[j] = np.inf
        for k in np.flatnonzero(gap <= gap.min() + ANGLE_TOL_DEG):
            pairs.add((min(j, int(k)), max(j, int(k))))
    return sorted(pairs)


def neighbour_pairs(n: int) -> list[tuple[int, int]]:
    """Pairs of neighbouring slots in engine order, round the disc.

    Parameters
    ----------
    n : int
        Number of slots [-].

    Returns
    -------
    list of (int, int)
        (u, v) with u < v, sorted; one pair for two slots.
    """
    if n == 2:
        return [(0, 1)]
    return sorted((min(j, (j + 1) % n), max(j, (j + 1) % n)) for j in range(n))


def _limit_edges(blades: tuple[Blade, ...], limits, theta: np.ndarray) -> dict:
    edges: dict = {}
    if limits.opposite_gmm is not None:
        w = np.array([b.moment_gmm for b in blades])
        ok = np.abs(w[:, None] - w[None, :]) <= limits.opposite_gmm * (1 + LIMIT_SLACK)
        _merge(edges, {pair: ok for pair in opposite_pairs(theta)})
    if limits.neighbour_hz is not None:
        f = np.array([b.frequency_hz for b in blades])
        ok = np.abs(f[:, None] - f[None, :]) <= limits.neighbour_hz * (1 + LIMIT_SLACK)
        _merge(edges, {pair: ok for pair in neighbour_pairs(len(theta))})
    return edges


def _alternation_edges(blades: tuple[Blade, ...], n: int, phase: int) -> dict:
    """Tables for high/low alternation: slots j with (j + phase) even hold the higher blade."""
    f = np.array([b.frequency_hz for b in blades])
    higher = f[:, None] > f[None, :]
    return {(u, v): (higher if (u + phase) % 2 == 0 else higher.T)
            for u, v in neighbour_pairs(n)}


def _merge(edges: dict, more: dict) -> None:
    for pair, ok in more.items():
        edges[pair] = edges[pair] & ok if pair in edges else ok
