"""The nearest pair of half-sums: |t + s_A + s_B| least, with limits across the halves.

Three exact ways, chosen by size: a dense scan of all pairs; a sorted window
(the smaller set sorted by real part: any pair closer than the incumbent has
real parts closer than it); a k-d tree (scipy cKDTree, exact Euclidean
distances), fetching more candidates when the nearest ones break a limit
that spans the halves, and in the last resort every point within the
incumbent's distance.

References
----------
[HorowitzSahni1974] meet in the middle.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.spatial import cKDTree

DENSE_PAIRS = 250_000
"""Pairs of half-arrangements up to which the pair is found by a dense scan."""
NEIGHBOURS = 16
"""Candidates fetched per query when a limit spans the two halves."""
WINDOW_CAP = 2_000_000
"""Most candidate pairs the sorted-window scan takes before it leaves the pair to the tree."""


def row_sums(values: np.ndarray, z: np.ndarray) -> np.ndarray:
    """Σ_t values[:, t]·z[t] for every row, column by column.

    Neither ``@`` nor BLAS: on a shared 2-core machine OpenBLAS's threads made
    these small products up to 40 times slower, and a float table times a
    complex vector takes numpy's slow path.

    Parameters
    ----------
    values : numpy.ndarray
        Real table, one row per half-arrangement, one column per slot
        [g·mm, or g·mm² for axial moments].
    z : numpy.ndarray
        Unit vector of each column's slot [-].

    Returns
    -------
    numpy.ndarray
        The complex sum of each row [as ``values``].
    """
    out = np.zeros(values.shape[0], dtype=complex)
    for t in range(values.shape[1]):
        out += values[:, t] * z[t]
    return out


def window_pair(queries: np.ndarray, points: np.ndarray, best: float):
    """(value, i, k) of the nearest pair |queries[i] - points[k]| < best, None, or False.

    Both sets are sorted by real part; every pair closer than ``best`` has real
    parts closer than ``best``, so a window of the smaller set holds all of
    them (sorted queries make the binary searches about four times faster).
    Of equally near pairs the least (i, k) is taken, so the answer does not
    depend on how a sort orders equal keys.  False when the windows hold more
    than WINDOW_CAP pairs.

    Parameters
    ----------
    queries : numpy.ndarray
        Complex points of one set [g·mm].
    points : numpy.ndarray
        Complex points of the other set [g·mm].
    best : float
        Distance to beat [g·mm], finite.

    Returns
    -------
    (float, int, int) or None or False
        The distance [g·mm] and the indices (i in ``queries``, k in
        ``points``); None when no pair is nearer than ``best``; False as above.
    """
    flip = len(queries) < len(points)
    small, large = (queries, points) if flip else (points, queries)
    order = np.argsort(small.real)
    keys = small.real[order]
    by_real = np.argsort(large.real)
    large_real = large.real[by_real]
    lo = np.searchsorted(keys, large_real - best, side="left")
    # Most windows are empty when ``best`` is small: the second search only
    # for those whose first key is inside.
    inside = np.flatnonzero(keys[np.minimum(lo, len(keys) - 1)] <= large_real + best)
    inside = inside[lo[inside] < len(keys)]
    counts = np.zeros(len(large), dtype=np.int64)
    counts[inside] = np.searchsorted(keys, large_real[inside] + best, side="right") - lo[inside]
    total = int(counts.sum())
    if total > WINDOW_CAP:
        return False
    if total == 0:
        return None
    li = by_real[np.repeat(np.arange(len(large)), counts)]
    start = np.repeat(lo - (np.cumsum(counts) - counts), counts)
    si = order[np.arange(total) + start]
    dist = np.abs(large[li] - small[si])
    least = dist.min()
    if least >= best:
        return None
    qi, pk = (si, li) if flip else (li, si)
    tied = np.flatnonzero(dist == least)
    j = tied[np.argmin(qi[tied] * len(points) + pk[tied])]
    return float(least), int(qi[j]), int(pk[j])


class NoCheck:
    active = False


NO_CHECK = NoCheck()


class PairCheck:
    """The limits that span the halves, checked on index pairs (i in A, k in B).

    Called with index arrays ``i`` (rows of A) and ``k`` (rows of B), it
    returns which pairs keep the pair tables across the halves and the
    couple limit.

    Parameters
    ----------
    frame : Frame
        The frame: its pair tables across the halves, couple target and problem.
    rows_a : numpy.ndarray
        Half A's arrangements, one row of blades per arrangement.
    rows_b : numpy.ndarray
        Half B's arrangements, likewise.
    """

    def __init__(self, frame, rows_a: np.ndarray, rows_b: np.ndarray) -> None:
        self.frame, self.rows_a, self.rows_b = frame, rows_a, rows_b
        p = frame.problem
        self.couple = p.couple_limit is not None and p.axial is not None
        if self.couple:
            self.couple_a = frame.couple_target + row_sums(p.axial[rows_a], p.z[frame.a_slots])
            self.couple_b = row_sums(p.axial[rows_b], p.z[frame.b_slots])
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


def dense_pair(sum_a, sum_b, check: PairCheck, best: float):
    """The least |sum_a[i] + sum_b[k]| over every pair that passes ``check``, by a full scan.

    Parameters
    ----------
    sum_a : numpy.ndarray
        Complex sums of half A, the fixed part included [g·mm].
    sum_b : numpy.ndarray
        Complex sums of half B [g·mm].
    check : PairCheck
        The limits across the halves (inactive: every pair passes).
    best : float
        Residual to beat [g·mm].

    Returns
    -------
    (float, int, int) or None
        The residual [g·mm] and the indices (i, k); None when no pair beats ``best``.
    """
    dist = np.abs(sum_a[:, None] + sum_b[None, :])
    if check.active:
        ia, kb = np.indices(dist.shape)
        dist = np.where(check(ia, kb), dist, np.inf)
    flat = int(np.argmin(dist))
    i, k = divmod(flat, dist.shape[1])
    value = float(dist[i, k])
    return (value, i, k) if value < best else None


def tree_pair(sum_a, sum_b, check: PairCheck, best: float):
    """The least |sum_a[i] + sum_b[k]| over every pair that passes ``check``, by a k-d tree.

    Exact: the nearest few of B to each -sum_a[i] are fetched, and a row
    whose few all break a limit gets every point of B within ``best``.

    Parameters
    ----------
    sum_a : numpy.ndarray
        Complex sums of half A, the fixed part included [g·mm].
    sum_b : numpy.ndarray
        Complex sums of half B [g·mm].
    check : PairCheck or NoCheck
        The limits across the halves (inactive: every pair passes).
    best : float
        Residual to beat [g·mm]; inf when none is known.

    Returns
    -------
    (float, int, int) or None
        The residual [g·mm] and the indices (i, k); None when no pair beats ``best``.
    """
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
