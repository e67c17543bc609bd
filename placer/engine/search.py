"""Exact search for the best placement of discrete parts.

The problem in its general shape::

    residual = target + sum_n count_n * effect_n

``effect_n`` is what one part of item k fitted at position j does, as one
complex value per channel: for a correction plane it is minus the part's
unbalance in g·mm (one channel); for field balancing it will be the predicted
vibration at several sensors.  The search finds, for every part count
k = 0 .. max_parts, the least Euclidean norm of the residual over all
selections of at most k parts that respect the capacity of each position
(0 for blocked ones) and the stock of each item.

How the search proves its answer (Notes)
----------------------------------------
* Placements (position, item) are sorted by the norm of their effect,
  largest first, so a multiset written in non-decreasing index order lists
  its parts from largest to smallest.
* Meet in the middle: every feasible pair of placements is tabulated once,
  with its summed effect, in a k-d tree (exact Euclidean distances).  A
  selection of k parts is its k-2 largest parts (the "head") plus a pair.
* Bound from the largest part that is left: a head of j parts whose smallest
  part has norm m can only be completed to k parts with residual below U if
  ``|target + head| - (k - j) * m < U`` (triangle inequality), so heads that
  fail it are never expanded or looked up.
* The incumbent U is the best residual with fewer parts, then shrinks as
  heads are looked up, most promising first.  Every head that survives is
  looked up exactly (nearest feasible pair; when the nearest few pairs all
  clash with the head on a position or an item, the pair table is scanned in
  full for that head), so the result is the proven optimum.
* The least added mass within a residual radius (:meth:`PlacementSearch.lightest`)
  uses the same heads and pairs, with the mass of the lightest parts left as
  the bound (a head of mass w can only be completed to less than the
  incumbent W if ``w + (k - j) * w_min < W``) and the radius as the
  geometric bound.
* Work is counted (candidate residuals evaluated, head rows grown), never
  timed: a part count whose search would pass the work budget is declined and
  left to the CP-SAT model (:mod:`placer.engine.model`), which reports its own
  proof status.  The same input gives the same answer on any machine and load.

References
----------
Meet-in-the-middle and branch-and-bound are textbook combinatorial search
(e.g. Horowitz and Sahni, "Computing partitions with applications to the
knapsack problem", J. ACM 21 (1974) 277-292; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from placer.limits import DEFAULT_WORK
from placer.residual import residual_of

NORMS = ("euclidean", "max")
"""Norms the search can minimise over the channels of the residual."""

PartList = tuple[tuple[int, int, int], ...]
"""Parts as (position_index, item_index, count), sorted by position then item."""

ABS_TOL = 0.01
"""Absolute proof tolerance on the residual, in the target's unit (g·mm)."""
REL_TOL = 0.005
"""Relative proof tolerance on the residual (0.5 %)."""

NEIGHBOURS_FIRST = 4
NEIGHBOURS_SECOND = 32
CHUNK_ROWS = 65536
MAX_PAIRS = 4_000_000
MAX_HEAD_ROWS = 6_000_000
DENSE_LIMIT = 200_000
"""Heads x tail rows up to which heads are completed by a dense scan, not a k-d tree."""
DENSE_TAIL = 4096
"""Tail rows up to which the dense scan takes more heads (a small tree does not pay for
importing scipy, as on a 12-hole bolt circle)..."""
DENSE_LIMIT_SMALL_TAIL = 3_000_000
"""...up to this many heads x tail rows."""
DENSE_CHUNK = 262_144
"""Head x tail combinations scored at once in the dense scan."""


@dataclass(frozen=True)
class Selection:
    """The best selection found with at most ``part_count`` parts.

    Parameters
    ----------
    part_count : int
        Most parts allowed (k).
    parts : PartList
        The parts, as (row, column, count) of the effects array.
    residual : complex array (n_channels,)
        ``target + Σ count·effect`` [the target's unit: g·mm for a plane].
    residual_norm : float
        Its norm, the one the search minimises [as ``residual``].
    lower_bound : float
        Proven least residual norm with at most ``part_count`` parts [as
        ``residual``]; 0.0 when none is known.
    proven : bool
        Whether ``residual_norm`` is proven least (within the proof tolerances).
    mass : float
        Added mass of the parts [g] (:attr:`PlacementSearch.mass` of each).
    """

    part_count: int
    parts: PartList
    residual: np.ndarray = field(repr=False)
    residual_norm: float
    lower_bound: float
    proven: bool
    mass: float = 0.0

    @property
    def used_parts(self) -> int:
        """Number of parts the selection really uses (may be below part_count)."""
        return sum(count for _, _, count in self.parts)


@dataclass(frozen=True)
class Front:
    """Least residual for every part count 0 .. max_parts.

    Parameters
    ----------
    entries : tuple of Selection
        Entry k: the least residual with at most k parts.
    work : int
        Work the search counted (candidate residuals evaluated).
    method : str
        "exact", or "exact+cp-sat" when a part count was declined (left
        unproven for the integer model).
    """

    entries: tuple[Selection, ...]
    work: int
    method: str

    @property
    def optimal(self) -> bool:
        return all(entry.proven for entry in self.entries)


class PlacementSearch:
    """Exact search over one set of positions and items, reusable for many targets.

    Everything that does not depend on the target (placements, their
    ordering, the pair table and its k-d tree) is built once here, so a
    production line can solve rotor after rotor without rebuilding it.

    Parameters
    ----------
    effects : complex array (n_positions, n_items, n_channels)
        Effect of one part of each item at each position.
    capacity : int array (n_positions,)
        Most parts on each position; 0 for a blocked position.
    stock : int array (n_items,)
        Parts of each item on hand.
    max_parts : int
        Longest selection considered.
    norm : {"euclidean", "max"}
        What is least: the Euclidean norm over all channels (root of the sum
        of squares), or the largest channel magnitude.  Both are norms, so the
        bounds hold; the k-d tree works in Euclidean distance, which bounds
        the largest magnitude from above and from below by a factor
        sqrt(n_channels), and candidates are re-scored exactly.
    masses : float array (n_positions, n_items), optional
        What one part adds to a plan's total mass [g], zero or more (a part
        taken off or a hole drilled counts by its magnitude); default the
        norm of its effect.  Used by :meth:`lightest`.
    """

    def __init__(self, effects: np.ndarray, capacity: np.ndarray, stock: np.ndarray,
                 max_parts: int, norm: str = "euclidean",
                 masses: np.ndarray | None = None) -> None:
        effects = np.asarray(effects, dtype=complex)
        if effects.ndim == 2:
            effects = effects[:, :, None]
        if norm not in NORMS:
            raise ValueError(f"norm must be one of {NORMS}, not {norm!r}")
        self.norm = norm
        self.effects = effects
        self.n_positions, self.n_items, self.n_channels = effects.shape
        # Euclidean distance d between real vectors bounds the chosen norm below by d / widen.
        self.widen = 1.0 if norm == "euclidean" else float(np.sqrt(self.n_channels))
        self.capacity = np.minimum(np.asarray(capacity, dtype=np.int64), max_parts)
        self.stock = np.minimum(np.asarray(stock, dtype=np.int64), max_parts)
        self.max_parts = int(max_parts)
        usable = (self.capacity[:, None] > 0) & (self.stock[None, :] > 0)
        usable &= np.linalg.norm(effects, axis=2) > 0
        pos, item = np.nonzero(usable)
        eff = effects[pos, item, :]
        size = self._norm(_as_real(eff))
        order = np.lexsort((item, pos, -size))
        self.pos_of = pos[order]
        self.item_of = item[order]
        self.eff = eff[order]
        self.mag = size[order]
        weights = (np.linalg.norm(effects, axis=2) if masses is None
                   else np.abs(np.asarray(masses, dtype=float)))
        self.mass = weights[self.pos_of, self.item_of]
        self.n = len(self.pos_of)
        self.eff_real = _as_real(self.eff)
        self._pairs: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
        self._tail_rows: tuple[np.ndarray, np.ndarray] | None = None
        self._tree = None
        self.pair_table_too_large = self.n * (self.n + 1) // 2 > MAX_PAIRS
        self._stock = self.stock
        self._work = 0
        self._work_limit = DEFAULT_WORK

    # ----------------------------------------------------------------- tables
    def _pair_table(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        if self._pairs is None:
            a, b = np.triu_indices(self.n)
            ok = feasible(np.stack([a, b], axis=1), self.pos_of, self.item_of,
                           self.capacity, self.stock)
            a, b = a[ok], b[ok]
            self._pairs = (a, b, self.eff_real[a] + self.eff_real[b])
        return self._pairs

    def _tail_table(self) -> tuple[np.ndarray, np.ndarray]:
        """The table that completes a head: every feasible pair, or (past the pair
        budget) every single placement; its placements and summed effects (built once)."""
        if self._tail_rows is None:
            if self.pair_table_too_large:
                self._tail_rows = (np.arange(self.n)[:, None], self.eff_real)
            else:
                a, b, sums = self._pair_table()
                self._tail_rows = (np.stack([a, b], axis=1), sums)
        return self._tail_rows

    def _tail(self) -> tuple[np.ndarray, np.ndarray, object]:
        """The tail table (see `_tail_table`) and its k-d tree."""
        if self._tree is None:
            from scipy.spatial import cKDTree

            cols, sums = self._tail_table()
            self._tree = cKDTree(sums, balanced_tree=False, compact_nodes=False, leafsize=16)
        return (*self._tail_table(), self._tree)

    # ----------------------------------------------------------------- search
    def front(self, target: np.ndarray, max_parts: int | None = None, *,
              stock: np.ndarray | None = None, work: int = DEFAULT_WORK) -> Front:
        """Least residual for each part count 0 .. max_parts for this ``target``.

        Parameters
        ----------
        target : complex array (n_channels,)
            The residual with no parts [as the effects].
        max_parts : int, optional
            Longest selection (default the search's own).
        stock : int array (n_items,), optional
            Parts of each item on hand for this query, at most the search's
            own stock (default that stock): planes that share a drawer are
            planned with what the others leave.
        work : int
            Work budget of each part count (candidate residuals evaluated);
            a count that would pass it is declined and left unproven.

        Returns
        -------
        Front
            Entries for k = 0 .. max_parts.
        """
        self._begin(stock, work)
        k_max = self.max_parts if max_parts is None else min(int(max_parts), self.max_parts)
        target = np.atleast_1d(np.asarray(target, dtype=complex))
        t_real = _as_real(target[None, :])[0]
        best_rows: list[np.ndarray] = [np.zeros(0, dtype=np.int64)]
        best_norm = float(self._norm(t_real[None, :])[0])
        entries = [self._selection(0, target, best_rows[0], best_norm, best_norm, True)]
        method = "exact"
        total = 0
        # Nothing can beat an exact zero; stop there (relative to the problem's size, so
        # that tiny rotors are solved as carefully as large ones).
        exact_zero = 1e-12 * max(best_norm, float(self.mag.max(initial=0.0)))
        for k in range(1, k_max + 1):
            if best_norm <= exact_zero or self.n == 0:
                entries.append(self._selection(k, target, best_rows[-1], best_norm, 0.0, True))
                continue
            self._work = 0
            found = self._best_with(k, t_real, best_norm)
            total += self._work
            if found is None:
                method = "exact+cp-sat"
                entries.append(self._selection(k, target, best_rows[-1], best_norm, 0.0, False))
                continue
            row, value = found
            if row is not None and value < best_norm:
                best_rows.append(row)
                best_norm = value
            # Every k-part selection was examined: best_norm is the least residual.
            entries.append(self._selection(k, target, best_rows[-1], best_norm, best_norm, True))
        return Front(tuple(entries), total, method)

    def lightest(self, target: np.ndarray, parts: int, radius: float, *,
                 stock: np.ndarray | None = None, work: int = DEFAULT_WORK,
                 known: PartList | None = None) -> Selection | None:
        """The least added mass with exactly ``parts`` parts and a residual within ``radius``.

        Ties in mass go to the least residual.  Exact: every selection of
        ``parts`` parts that could be lighter than the best found and reach
        the radius is examined (see the module notes), unless the work
        budget runs out first; the result is then the lightest found, not
        proven.

        Parameters
        ----------
        target : complex array (n_channels,)
            The residual with no parts [as the effects].
        parts : int
            Number of parts (operations) in the plan.
        radius : float
            Largest residual allowed [as the effects].
        stock : int array (n_items,), optional
            Parts of each item on hand for this query (see :meth:`front`).
        work : int
            Work budget (candidate residuals evaluated).
        known : tuple of (position, item, count), optional
            A plan of ``parts`` parts within the radius known beforehand (the
            least residual one): the search starts from its mass.

        Returns
        -------
        Selection or None
            The plan (``mass`` its added mass [g], ``proven`` whether the
            search finished), or None when no plan of ``parts`` parts reaches
            the radius (proven: the search finished) or none was found.
        """
        self._begin(stock, work)
        target = np.atleast_1d(np.asarray(target, dtype=complex))
        t_real = _as_real(target[None, :])[0]
        k = int(parts)
        # Sums in another order differ in the last bits: a plan exactly at the radius counts.
        size = max(float(self._norm(t_real[None, :])[0]), float(self.mag.max(initial=0.0)))
        radius = float(radius) * (1.0 + 1e-12) + 1e-12 * size
        best_row, best_mass, best_value = None, np.inf, np.inf
        if known is not None:
            best_row = self.rows_of(known)
            best_mass = float(self.mass[best_row].sum())
            best_value = float(self._norm((t_real + self.eff_real[best_row].sum(axis=0))[None, :])[0])
        if k == 0:
            value = float(self._norm(t_real[None, :])[0])
            if value > radius:
                return None
            return self._selection(0, target, np.zeros(0, dtype=np.int64), value, value, True)
        finished = True
        if self.n:
            found = self._lightest_with(k, t_real, radius, best_mass, best_value)
            if found is None:
                finished = False
            elif found[0] is not None:
                best_row, best_mass, best_value = found
        if best_row is None:
            return None
        return self._selection(k, target, best_row, best_value, best_value, finished)

    def _begin(self, stock: np.ndarray | None, work: int) -> None:
        """Set the stock and the work budget of one query."""
        self._stock = self.stock if stock is None else np.minimum(
            np.asarray(stock, dtype=np.int64), self.stock)
        self._work, self._work_limit = 0, int(work)

    def _spend(self, amount: int) -> bool:
        """Count ``amount`` work; True when the budget is passed."""
        self._work += int(amount)
        return self._work > self._work_limit

    def _in_stock(self) -> np.ndarray:
        """Which placements the query's stock allows at all."""
        return self._stock[self.item_of] > 0

    @property
    def work_done(self) -> int:
        """Work counted by the last query (candidate residuals evaluated)."""
        return self._work

    def rows_of(self, parts: PartList) -> np.ndarray:
        """Placement indices of a (position, item, count) part list.

        Parameters
        ----------
        parts : tuple of (position, item, count)
            The parts (position and item as indices of the effects array).
        """
        index = {(int(p), int(i)): r for r, (p, i) in enumerate(zip(self.pos_of, self.item_of))}
        return np.array([index[(p, i)] for p, i, c in parts for _ in range(c)], dtype=np.int64)

    def _best_with(self, k: int, t_real: np.ndarray, bound: float):
        """Best selection of exactly k parts below ``bound``; None if over budget."""
        if k == 1:
            values = np.where(self._in_stock(), self._norm(t_real + self.eff_real), np.inf)
            self._spend(self.n)
            i = int(np.argmin(values))
            return (np.array([i]), float(values[i])) if np.isfinite(values[i]) else (None, np.inf)
        if k == 2 and not self.pair_table_too_large:
            a, b, sums = self._pair_table()
            if len(a) == 0:
                return None, np.inf
            values = self._norm(t_real + sums)
            if self._spend(len(a)):
                return None
            ok = feasible(np.stack([a, b], axis=1), self.pos_of, self.item_of, self.capacity,
                          self._stock)
            values = np.where(ok, values, np.inf)
            i = int(np.argmin(values))
            return ((np.array([a[i], b[i]]), float(values[i])) if np.isfinite(values[i])
                    else (None, np.inf))
        width = 1 if self.pair_table_too_large else 2
        heads, head_sums = self._heads(k - width, k, t_real, bound)
        if heads is None:
            return None
        return self._complete(heads, head_sums, t_real, bound)

    def _lightest_with(self, k: int, t_real: np.ndarray, radius: float, best_mass: float,
                       best_value: float):
        """Lightest selection of exactly k parts within ``radius``, lighter than
        ``best_mass`` (ties: a smaller residual than ``best_value``); (rows, mass, value),
        (None, ...) when there is none, None when over budget."""
        if k <= 2 or self.pair_table_too_large and k == 1:
            if k == 1:
                rows = np.arange(self.n)[:, None]
                sums = self.eff_real
            elif not self.pair_table_too_large:
                a, b, sums = self._pair_table()
                rows = np.stack([a, b], axis=1)
            else:
                rows, sums = self._heads_mass(2, 2, t_real, radius, best_mass)
                if rows is None:
                    return None
            return self._lightest_rows(rows, sums, t_real, radius, best_mass, best_value)
        width = 1 if self.pair_table_too_large else 2
        heads, head_sums = self._heads_mass(k - width, k, t_real, radius, best_mass)
        if heads is None:
            return None
        cols, sums = self._tail_table()
        if len(cols) == 0 or len(heads) == 0:
            return None, np.inf, np.inf
        head_mass = self.mass[heads].sum(axis=1)
        order = np.lexsort((np.arange(len(heads)), head_mass))
        heads, head_sums, head_mass = heads[order], head_sums[order], head_mass[order]
        tail_mass = self.mass[cols].sum(axis=1)
        by_mass = np.argsort(tail_mass, kind="stable")
        cols, sums, tail_mass = cols[by_mass], sums[by_mass], tail_mass[by_mass]
        best_row = None
        for h, hs, hm in zip(heads, head_sums, head_mass):
            room = best_mass - hm
            if room < tail_mass[0] - 1e-12:
                break                                    # heads come lightest first
            stop = int(np.searchsorted(tail_mass, room, side="right"))
            if self._spend(stop):
                return None
            values = self._norm(t_real + hs + sums[:stop])
            hit = np.nonzero(values <= radius)[0]
            if len(hit) == 0:
                continue
            masses = hm + tail_mass[hit]
            pick = np.lexsort((values[hit], masses))
            combos = np.concatenate([np.repeat(h[None, :], len(hit), axis=0), cols[hit]], axis=1)
            ok = feasible(combos[pick], self.pos_of, self.item_of, self.capacity, self._stock)
            if not ok.any():
                continue
            first = pick[int(np.argmax(ok))]
            mass, value = float(masses[first]), float(values[hit[first]])
            if mass < best_mass - 1e-12 or (mass <= best_mass + 1e-12 and value < best_value):
                best_row, best_mass, best_value = combos[first], mass, value
        return best_row, best_mass, best_value

    def _lightest_rows(self, rows: np.ndarray, sums: np.ndarray, t_real: np.ndarray,
                       radius: float, best_mass: float, best_value: float):
        """The lightest feasible row of a table within ``radius`` (see `_lightest_with`)."""
        if len(rows) == 0:
            return None, np.inf, np.inf
        if self._spend(len(rows)):
            return None
        values = self._norm(t_real + sums)
        masses = self.mass[rows].sum(axis=1)
        ok = (values <= radius) & feasible(rows, self.pos_of, self.item_of, self.capacity,
                                           self._stock)
        if rows.shape[1] == 1:
            ok &= self._in_stock()[rows[:, 0]]
        better = ok & ((masses < best_mass - 1e-12)
                       | ((masses <= best_mass + 1e-12) & (values < best_value)))
        if not better.any():
            return None, np.inf, np.inf
        cand = np.nonzero(better)[0]
        first = cand[np.lexsort((values[cand], masses[cand]))[0]]
        return rows[first], float(masses[first]), float(values[first])

    def _heads_mass(self, size: int, k: int, t_real: np.ndarray, radius: float,
                    best_mass: float):
        """Every feasible head of ``size`` parts that could still give a plan of k parts
        within ``radius`` lighter than ``best_mass``; (None, None) over budget."""
        w_min = float(self.mass[self._in_stock()].min(initial=np.inf))

        def keep(rows: np.ndarray, sums: np.ndarray) -> np.ndarray:
            left = k - rows.shape[1]
            return ((self._head_bound(sums, rows, k, t_real) <= radius)
                    & (self.mass[rows].sum(axis=1) + left * w_min < best_mass + 1e-12))

        rows = np.arange(self.n, dtype=np.int64)[:, None]
        return self._grow(rows, self.eff_real, size, keep)

    def _heads(self, size: int, k: int, t_real: np.ndarray, bound: float):
        """All feasible heads of ``size`` parts that pass the remaining-part bound."""
        if size == 1 or self.pair_table_too_large:
            rows = np.arange(self.n, dtype=np.int64)[:, None]
            sums = self.eff_real
        else:
            a, b, sums = self._pair_table()
            rows = np.stack([a, b], axis=1)
        return self._grow(rows, sums, size,
                          lambda r, s: self._head_bound(s, r, k, t_real) < bound)

    def _grow(self, rows: np.ndarray, sums: np.ndarray, size: int, keep):
        """Heads grown to ``size`` parts, a placement at or after the last one at a time;
        every head kept obeys capacity, the query's stock and ``keep(rows, sums)``.
        (None, None) past the work budget or :data:`MAX_HEAD_ROWS`."""
        ok = keep(rows, sums) & self._in_stock()[rows].all(axis=1)
        ok &= feasible(rows, self.pos_of, self.item_of, self.capacity, self._stock)
        rows, sums = rows[ok], sums[ok]
        step = max(1, CHUNK_ROWS // max(1, self.n))
        for _ in range(rows.shape[1], size):
            new_rows, new_sums = [], []
            for start in range(0, len(rows), step):
                r = rows[start:start + step]
                s = sums[start:start + len(r)]
                ri, ci = np.nonzero(np.arange(self.n)[None, :] >= r[:, -1][:, None])
                if self._spend(len(ri)):
                    return None, None
                grown = np.concatenate([r[ri], ci[:, None]], axis=1)
                grown_sums = s[ri] + self.eff_real[ci]
                ok = feasible(grown, self.pos_of, self.item_of, self.capacity, self._stock)
                ok &= self._in_stock()[ci] & keep(grown, grown_sums)
                new_rows.append(grown[ok])
                new_sums.append(grown_sums[ok])
                if sum(len(x) for x in new_rows) > MAX_HEAD_ROWS:
                    return None, None
            rows = (np.concatenate(new_rows) if new_rows
                    else np.zeros((0, rows.shape[1] + 1), np.int64))
            sums = np.concatenate(new_sums) if new_sums else np.zeros((0, sums.shape[1]))
        return rows, sums

    def _complete(self, heads: np.ndarray, head_sums: np.ndarray, t_real: np.ndarray,
                  bound: float):
        """Complete each head from the tail table; the best below ``bound``."""
        cols, sums = self._tail_table()
        if len(cols) == 0 or len(heads) == 0:
            return None, np.inf
        k = heads.shape[1] + cols.shape[1]
        priority = self._head_bound(head_sums, heads, k, t_real)
        order = np.argsort(priority, kind="stable")
        heads, head_sums, priority = heads[order], head_sums[order], priority[order]
        if len(heads) * len(cols) <= (DENSE_LIMIT_SMALL_TAIL if len(cols) <= DENSE_TAIL
                                      else DENSE_LIMIT):
            return self._complete_dense(heads, head_sums, priority, t_real, bound)
        cols, sums, tree = self._tail()
        best_row, best_value = None, bound
        start = 0
        while start < len(heads):
            stop = start + CHUNK_ROWS
            live = priority[start:stop] < best_value
            h, hs = heads[start:stop][live], head_sums[start:stop][live]
            start = stop
            for n_neigh in (NEIGHBOURS_FIRST, NEIGHBOURS_SECOND, None):
                if len(h) == 0:
                    break
                if n_neigh is None:
                    if self._spend(len(h) * len(cols)):
                        return None
                    for row, head_sum in zip(h, hs):
                        row_best = self._scan_row(row, t_real + head_sum, best_value)
                        if row_best is not None and row_best[1] < best_value:
                            best_row, best_value = row_best
                    break
                n_neigh = min(n_neigh, len(cols))
                if self._spend(len(h) * n_neigh * 8):
                    return None
                # Threads pay off only on large batches of lookups.
                dist, idx = tree.query(-(t_real + hs), k=n_neigh,
                                       distance_upper_bound=best_value * self.widen,
                                       workers=-1 if len(h) > 20000 else 1)
                dist = dist.reshape(len(h), n_neigh)
                idx = idx.reshape(len(h), n_neigh)
                finite = np.isfinite(dist)
                safe = np.where(finite, idx, 0)
                combos = np.concatenate([np.repeat(h, n_neigh, axis=0),
                                         cols[safe.ravel()]], axis=1)
                ok = feasible(combos, self.pos_of, self.item_of, self.capacity,
                               self._stock).reshape(len(h), n_neigh) & finite
                if self.norm == "euclidean":
                    value = dist
                else:
                    value = self._norm((t_real + np.repeat(hs, n_neigh, axis=0)
                                        + sums[safe.ravel()])).reshape(len(h), n_neigh)
                value = np.where(ok, value, np.inf)
                choice = np.argmin(value, axis=1)
                row_value = value[np.arange(len(h)), choice]
                j = int(np.argmin(row_value))
                if row_value[j] < best_value:
                    best_row = np.concatenate([h[j], cols[idx[j, choice[j]]]])
                    best_value = float(row_value[j])
                # A completion beyond the last neighbour is at least dist_last / widen away
                # in the chosen norm; rows not settled by that look further.
                settled = row_value <= dist[:, -1] / self.widen
                again = finite[:, -1] & ~settled & (n_neigh < len(cols))
                h, hs = h[again], hs[again]
        if best_row is None:
            return None, np.inf
        total = t_real + self.eff_real[best_row].sum(axis=0)
        return best_row, float(self._norm(total[None, :])[0])

    def _complete_dense(self, heads: np.ndarray, head_sums: np.ndarray, priority: np.ndarray,
                        t_real: np.ndarray, bound: float):
        """`_complete` for small tables: every head against every tail row, no k-d tree.

        Heads come sorted by their bound; a chunk whose first bound is not
        below the incumbent ends the scan.  Within a chunk the candidates
        below the incumbent are checked for capacity and stock in order of
        their residual, so the first feasible one is the chunk's best.
        """
        cols, sums = self._tail_table()
        step = max(1, DENSE_CHUNK // len(cols))
        best_row, best_value = None, bound
        for start in range(0, len(heads), step):
            if priority[start] >= best_value:
                break
            stop = start + step
            live = priority[start:stop] < best_value
            h, hs = heads[start:stop][live], head_sums[start:stop][live]
            if self._spend(len(h) * len(cols)):
                return None
            total = (t_real + hs)[:, None, :] + sums[None, :, :]
            values = self._norm(total.reshape(-1, total.shape[2])).reshape(len(h), len(cols))
            hi, ci = np.nonzero(values < best_value)
            if len(hi) == 0:
                continue
            order = np.argsort(values[hi, ci], kind="stable")
            begin, size = 0, 64
            while begin < len(order):
                batch = order[begin:begin + size]
                combos = np.concatenate([h[hi[batch]], cols[ci[batch]]], axis=1)
                ok = feasible(combos, self.pos_of, self.item_of, self.capacity, self._stock)
                if ok.any():
                    first = batch[int(np.argmax(ok))]
                    best_row = combos[int(np.argmax(ok))]
                    best_value = float(values[hi[first], ci[first]])
                    break
                begin, size = begin + size, size * 8
        if best_row is None:
            return None, np.inf
        total = t_real + self.eff_real[best_row].sum(axis=0)
        return best_row, float(self._norm(total[None, :])[0])

    def _scan_row(self, row: np.ndarray, residual_head: np.ndarray, bound: float):
        """Best feasible completion for one head, by a full scan of the tail table."""
        cols, sums = self._tail_table()
        value = self._norm(residual_head + sums)
        candidates = np.nonzero(value < bound)[0]
        if len(candidates) == 0:
            return None
        candidates = candidates[np.argsort(value[candidates], kind="stable")]
        combos = np.concatenate([np.repeat(row[None, :], len(candidates), axis=0),
                                 cols[candidates]], axis=1)
        ok = feasible(combos, self.pos_of, self.item_of, self.capacity, self._stock)
        if not ok.any():
            return None
        j = candidates[int(np.argmax(ok))]
        return np.concatenate([row, cols[j]]), float(value[j])

    def _norm(self, real_rows: np.ndarray) -> np.ndarray:
        """The chosen norm of each row of real vectors (real parts, then imaginary)."""
        if self.norm == "euclidean":
            return np.linalg.norm(real_rows, axis=1)
        c = real_rows.shape[1] // 2
        return np.sqrt((real_rows[:, :c] ** 2 + real_rows[:, c:] ** 2).max(axis=1))

    def _head_bound(self, sums: np.ndarray, rows: np.ndarray, k: int,
                    t_real: np.ndarray) -> np.ndarray:
        """Least residual any completion of these heads to k parts could reach."""
        remaining = k - rows.shape[1]
        return self._norm(t_real + sums) - remaining * self.mag[rows[:, -1]]

    # ----------------------------------------------------------------- output
    def _selection(self, k: int, target: np.ndarray, row: np.ndarray, norm: float,
                   lower: float, proven: bool) -> Selection:
        counts: dict[tuple[int, int], int] = {}
        for placement in row:
            key = (int(self.pos_of[placement]), int(self.item_of[placement]))
            counts[key] = counts.get(key, 0) + 1
        parts = tuple(sorted((p, i, c) for (p, i), c in counts.items()))
        residual = residual_of(target, self.effects, parts)
        value = float(self._norm(_as_real(residual[None, :]))[0])
        mass = float(self.mass[np.asarray(row, dtype=np.int64)].sum()) if len(row) else 0.0
        return Selection(k, parts, residual, value, float(lower), proven, mass)


def _as_real(values: np.ndarray) -> np.ndarray:
    """Complex (rows, channels) to real (rows, 2*channels): real parts, then imaginary."""
    return np.concatenate([values.real, values.imag], axis=1)


def feasible(rows: np.ndarray, pos_of: np.ndarray, item_of: np.ndarray,
              capacity: np.ndarray, stock: np.ndarray) -> np.ndarray:
    """Which multisets of placements (one per row) respect capacity and stock.

    Parameters
    ----------
    rows : int array (n_rows, width)
        Placement indices, one multiset per row.
    pos_of : int array (n_placements,)
        Position (row of the effects array) of each placement.
    item_of : int array (n_placements,)
        Item (column of the effects array) of each placement.
    capacity : int array (n_positions,)
        Most parts on each position.
    stock : int array (n_items,)
        Parts of each item on hand.

    Returns
    -------
    bool array (n_rows,)
        True where no position holds more parts than its capacity and no
        item is used more often than its stock.
    """
    width = rows.shape[1]
    ok = np.ones(len(rows), dtype=bool)
    if width <= 1:
        return ok
    pos = pos_of[rows]
    item = item_of[rows]
    tight_pos = capacity.min() < width
    tight_item = stock.min() < width
    for c in range(width):
        if tight_pos:
            same = np.ones(len(rows), dtype=np.int64)
            for d in range(width):
                if d != c:
                    same += pos[:, c] == pos[:, d]
            ok &= same <= capacity[pos[:, c]]
        if tight_item:
            same = np.ones(len(rows), dtype=np.int64)
            for d in range(width):
                if d != c:
                    same += item[:, c] == item[:, d]
            ok &= same <= stock[item[:, c]]
    return ok
