"""Exact search for the best placement of discrete parts.

The problem in its general shape::

    residual = target + sum_n count_n * effect_n

``effect_n`` is what one part of item k fitted at position j does, as one
complex value per channel: for a correction plane it is minus the part's
unbalance in g·mm (one channel); for field balancing it is the predicted
vibration at several sensors.  The search finds, for every part count
k = 0 .. max_parts, the least norm of the residual over all selections of at
most k parts that respect the capacity of each position (0 for blocked ones)
and the stock of each item.

How the search proves its answer (Notes)
----------------------------------------
* Placements (position, item) are sorted by the norm of their effect,
  largest first, so a multiset written in non-decreasing index order lists
  its parts from largest to smallest.
* The span (:mod:`placer.engine.coordinates`): the search works in the
  coordinates of the effects' span (2 × rank real numbers) and adds back the
  part of the target outside it, which no plan changes.
* Meet in the middle: every feasible multiset of w placements (w = 2, pairs;
  3 for plans of seven parts or more when the table stays small; 1 past the
  pair budget) is tabulated once in a uniform grid over its summed effect.
  A selection of k parts is its k - w largest parts (the "head") plus a
  tail row.
* Bound from the largest part that is left: a head of j parts whose smallest
  part has norm m can only be completed to k parts with residual below U if
  ``|target + head| - (k - j) * m < U`` (triangle inequality), so heads that
  fail it are never expanded or looked up.  Heads are walked depth first,
  first parts most promising first.
* The incumbent U is the best residual with fewer parts, then shrinks as
  heads are completed.  A head's completion scans the grid's cells shell by
  shell around the point that would cancel it, skipping cells whose box is
  not nearer than U, and stops when a whole shell is at least U away: every
  row that could beat U is looked at, so the result is the proven optimum.
* A residual within the proof tolerance of zero (:data:`ABS_TOL`, or
  :data:`REL_TOL` of the problem's size if that is smaller) is proven as
  soon as it is found (its lower bound is zero), so the search of that part
  count stops there; long plans on large rims are proven this way.
* The largest channel ("max" norm) is bounded below by the Euclidean norm
  over √channels, which prunes heads and cells; candidates are scored exactly.
* The least added mass within a residual radius (:meth:`PlacementSearch.lightest`)
  walks the same heads and grid, with the mass of the lightest parts left as
  the bound (a head of mass w can only be completed to less than the
  incumbent W if ``w + (k - j) * w_min < W``) and the radius as the
  geometric bound.
* Work is counted (head nodes, grid cells and rows looked at), never timed:
  a part count whose search would pass the work budget is declined and left
  unproven.  The same input gives the same answer on any machine and load.
  The compiled loops also check for signals (the command's time limit,
  Ctrl-C) every few hundred thousand units of work.

The head walk and the grid are compiled (``placer/engine/_kernel.c``, built
when placer is installed); this module prepares the arrays and reads the
answer.

References
----------
[HorowitzSahni1974] meet in the middle; branch and bound is textbook
combinatorial search.  [Bentley1975] uniform grids ("cells") for nearest
neighbours.
"""

from __future__ import annotations

import math

import numpy as np

from placer.engine.coordinates import (NORMS, as_real, in_span, norm_of, norms, span_of,
                                       target_arrays)
from placer.engine.selection import Front, PartList, Selection
from placer.errors import PlacerError
from placer.limits import DEFAULT_WORK
from placer.residual import residual_of

_NO_ROWS: tuple[int, ...] = ()
"""No placements (the plan of no parts)."""

try:
    from placer.engine import _kernel
except ImportError:                                   # pragma: no cover - a broken install
    _kernel = None


ABS_TOL = 0.01
"""Absolute proof tolerance on the residual, in the target's unit (g·mm)."""
REL_TOL = 0.005
"""Relative proof tolerance on the residual (0.5 %)."""

MAX_TAIL_ROWS = 16_000_000
"""Most rows of one tail table (pairs or triples; 4 bytes a placement): past this the
search completes heads from a narrower table (triples -> pairs -> single placements)."""
LONG_PLAN = 7
"""Part counts from which the table of triples is used when it fits: building it (12 M
rows for 36 positions x 12 items) takes about a second, which pays only for 7 and 8
parts; shorter plans are proven sooner with pairs."""
GRID_OCCUPANCY = 3.0
"""Rows per grid cell on average over the table's bounding box."""
GRID_DIMS = 4
"""Most coordinates the grid indexes (the rest are scored, not indexed)."""
INDEX = "grid"
"""How tails are looked up: "grid", or "scan" (one cell: every row is scored; for tests)."""
FETCH_AHEAD_BYTES = 1 << 20
"""Tail tables larger than this [bytes] are walked with their memory fetched ahead (the last
head level in two passes, ``last_level`` in ``_kernel.c``): the same heads, order and work;
smaller tables stay in the processor's caches and take the one-pass loop."""
MAX_COORDS = 16
"""Most real coordinates of the span the compiled search takes (2 × rank; MAXD in
``_kernel.c``): eight correction planes, :data:`placer.limits.MAX_PLANES`."""
MAX_FULL = 128
"""Most real coordinates of a full residual for the max norm (2 × channels)."""


def _require_kernel() -> None:
    """Raise a one-line error when the compiled search was not built."""
    if _kernel is None:
        raise PlacerError("placer's compiled search is not built",
                          expected="placer installed with `python -m pip install .`, which "
                          "needs a C compiler and the Python headers")


class PlacementSearch:
    """Exact search over one set of positions and items, reusable for many targets.

    Everything that does not depend on the target (placements, their
    ordering, the span's coordinates, the tail tables and their grids) is
    built once here, so a production line can solve rotor after rotor
    without rebuilding it.

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
        bounds hold; the Euclidean distance bounds the largest magnitude from
        below over sqrt(n_channels), and candidates are scored exactly.
    masses : float array (n_positions, n_items), optional
        What one part adds to a plan's total mass [g], zero or more (a part
        taken off or a hole drilled counts by its magnitude); default the
        norm of its effect.  Used by :meth:`lightest`.
    """

    def __init__(self, effects: np.ndarray, capacity: np.ndarray, stock: np.ndarray,
                 max_parts: int, norm: str = "euclidean",
                 masses: np.ndarray | None = None) -> None:
        _require_kernel()
        effects = np.asarray(effects, dtype=complex)
        if effects.ndim == 2:
            effects = effects[:, :, None]
        if norm not in NORMS:
            raise ValueError(f"norm must be one of {NORMS}, not {norm!r}")
        self.effects = effects
        self.n_positions, self.n_items, self.n_channels = effects.shape
        # One channel: the largest magnitude is the Euclidean norm.
        self.norm = "euclidean" if self.n_channels == 1 else norm
        self.capacity = np.ascontiguousarray(
            np.minimum(np.asarray(capacity, dtype=np.int64), max_parts))
        self.stock = np.ascontiguousarray(np.minimum(np.asarray(stock, dtype=np.int64),
                                                     max_parts))
        self.max_parts = int(max_parts)
        usable = (self.capacity[:, None] > 0) & (self.stock[None, :] > 0)
        usable &= np.linalg.norm(effects, axis=2) > 0
        pos, item = np.nonzero(usable)
        eff = effects[pos, item, :]
        size = norms(self.norm, as_real(eff))
        order = np.lexsort((item, pos, -size))
        self.pos_of = np.ascontiguousarray(pos[order], dtype=np.int64)
        self.item_of = np.ascontiguousarray(item[order], dtype=np.int64)
        self.eff = eff[order]
        self.mag = np.ascontiguousarray(size[order], dtype=float)
        weights = (np.linalg.norm(effects, axis=2) if masses is None
                   else np.abs(np.asarray(masses, dtype=float)))
        self.mass = np.ascontiguousarray(weights[self.pos_of, self.item_of], dtype=float)
        self._mass_floats = self.mass.tolist()
        self.n = len(self.pos_of)
        self.eff_real = np.ascontiguousarray(as_real(self.eff))
        # One channel, Euclidean: the effects' real and imaginary parts as columns of their own,
        # and as Python floats (sums of one or two placements, see _mass_of).
        self._columns = ((np.ascontiguousarray(self.eff_real[:, 0]),
                          np.ascontiguousarray(self.eff_real[:, 1]))
                         if self.norm == "euclidean" and self.eff_real.shape[1] == 2 else None)
        self._floats = None if self._columns is None else (self._columns[0].tolist(),
                                                           self._columns[1].tolist())
        self._basis, self.coords = span_of(self.eff)
        if self.coords.shape[1] > MAX_COORDS or (self.norm == "max"
                                                 and self.eff_real.shape[1] > MAX_FULL):
            raise ValueError("too many channels for the compiled search "
                             f"(rank {self.coords.shape[1] // 2}, {self.n_channels} channels)")
        span_mag = np.linalg.norm(self.coords, axis=1)
        # Suffix maxima: no placement from i on is larger in the span than this.
        self._mag_max = float(self.mag.max(initial=0.0))
        self.span_mag = np.ascontiguousarray(np.maximum.accumulate(span_mag[::-1])[::-1]
                                             if self.n else span_mag)
        self._tables: dict[int, tuple | None] = {}
        self._index: dict[tuple[int, int], int] | None = None
        self._lists: tuple[list[int], list[int]] | None = None
        self._stock = self.stock
        self._stock_key: bytes | None = None
        self._all_in_stock = bool((self.stock[self.item_of] > 0).all())
        self._widths: dict[int, int] = {}
        self._placements: tuple | None = None
        self._work = 0
        self._work_limit = DEFAULT_WORK

    # ----------------------------------------------------------------- tables
    def _table(self, width: int) -> tuple | None:
        """The grid of every feasible multiset of ``width`` placements (built once);
        None when it would pass :data:`MAX_TAIL_ROWS` rows."""
        if width not in self._tables:
            built = None
            if width == 1 or _multisets(self.n, width) <= 2 * MAX_TAIL_ROWS:
                built = _kernel.build(self.coords, self.coords.shape[1], self._walk(), self.pos_of,
                                      self.item_of, self.capacity, self.stock, width,
                                      min(GRID_DIMS, self.coords.shape[1]), GRID_OCCUPANCY,
                                      max(MAX_TAIL_ROWS, self.n) if width == 1
                                      else MAX_TAIL_ROWS, int(INDEX == "scan"))
            self._tables[width] = None if built is None else (*built, width)
        return self._tables[width]

    def _walk(self) -> np.ndarray:
        """The order tables are built in: by item, then by the angle of the first
        coordinate (around the circle), so that consecutive rows fall in nearby cells."""
        angle = np.arctan2(self.coords[:, 1], self.coords[:, 0]) if self.n else np.zeros(0)
        return np.ascontiguousarray(np.lexsort((angle, self.item_of)), dtype=np.int64)

    def _width(self, k: int) -> int:
        """Tail width for a plan of k parts (k >= 2): triples for long plans when their
        table fits, else pairs when theirs fits, else single placements (kept per k)."""
        if k not in self._widths:
            if k >= LONG_PLAN and self._table(3) is not None:
                self._widths[k] = 3
            else:
                self._widths[k] = 2 if self._table(2) is not None else 1
        return self._widths[k]

    def _run(self, k: int, t_real: np.ndarray, *, bound: float = np.inf,
             radius: float | None = None, best_mass: float = np.inf,
             best_value: float = np.inf, stop: float = 0.0):
        """One compiled search of exactly k parts (k >= 2): the least residual below
        ``bound`` or, with ``radius``, the lightest within it.  Returns (rows or None,
        value, mass, stopped) or None past the work budget."""
        width = min(self._width(k), k)
        table = self._table(width)
        coords, perp2 = in_span(self._basis, t_real)
        maxnorm = self.norm == "max"
        if self._placements is None:
            full = self.eff_real if maxnorm else None
            self._placements = (self.coords, self.coords.shape[1], full,
                                self.eff_real.shape[1] if maxnorm else 0, self.pos_of,
                                self.item_of, self.capacity, self.mag, self.span_mag, self.mass,
                                self.n_positions)
        placements = self._placements
        lightest = radius is not None
        query = (tuple(coords), tuple(t_real) if maxnorm else (), perp2, self._stock, k,
                 int(maxnorm), int(lightest), float(radius if lightest else bound),
                 float(stop), float(best_mass), float(best_value),
                 max(0, self._work_limit - self._work), FETCH_AHEAD_BYTES)
        status, rows, value, mass, work = _kernel.search(table, placements, query)
        self._work += work
        if status == 1:
            return None
        if rows is None:
            return None, np.inf, np.inf, False
        return tuple(rows), value, mass, status == 2

    # ----------------------------------------------------------------- search
    def front(self, target: np.ndarray, max_parts: int | None = None, *,
              stock: np.ndarray | None = None, work: int = DEFAULT_WORK,
              reach: float | None = None) -> Front:
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
            Work budget of each part count (head nodes, grid cells and rows
            looked at); a count that would pass it is declined and left
            unproven.
        reach : float, optional
            Stop after the first part count whose entry's residual is at
            most this [as the target]: the entries up to it are the same as
            the whole front's (each count is searched below the best of
            fewer parts), and the counts after it are not searched.

        Returns
        -------
        Front
            Entries for k = 0 .. max_parts (.. the count that reached ``reach``).
        """
        self._begin(stock, work)
        k_max = self.max_parts if max_parts is None else min(int(max_parts), self.max_parts)
        target, t_real = target_arrays(target)
        best_rows: list[tuple[int, ...]] = [_NO_ROWS]
        best_norm = norm_of(self.norm, t_real)
        entries = [self._selection(0, target, _NO_ROWS, best_norm, best_norm, True, (), 0.0)]
        if self.n == 0:
            # No placements (every item used up): each count keeps the plan of no parts,
            # proven, its lower bound the target's norm (the loop below, in one step).
            zero = entries[0]
            if reach is None or zero.residual_norm > reach:
                entries += [Selection(k, zero.parts, zero.residual, zero.residual_norm,
                                      best_norm, True, zero.mass) for k in range(1, k_max + 1)]
            return Front(tuple(entries), 0, "exact")

        def entry(k: int, lower: float, proven: bool) -> Selection:
            """Entry k: the best rows so far (the last entry's, unless they changed)."""
            last = entries[-1]
            if entries_rows[-1] is best_rows[-1]:
                return Selection(k, last.parts, last.residual, last.residual_norm,
                                 float(lower), proven, last.mass)
            entries_rows.append(best_rows[-1])
            return self._selection(k, target, best_rows[-1], best_norm, lower, proven)

        entries_rows = [best_rows[0]]
        method = "exact"
        total = 0
        stop = self._near_zero(best_norm)
        for k in range(1, k_max + 1):
            if reach is not None and entries[-1].residual_norm <= reach:
                break
            if best_norm <= stop:
                entries.append(entry(k, min(best_norm, entries[-1].lower_bound), True))
                continue
            self._work = 0
            found = self._best_with(k, t_real, best_norm, stop)
            total += self._work
            if found is None:
                method = "exact (not proven past its budget)"
                entries.append(entry(k, 0.0, False))
                continue
            row, value, stopped = found
            if row is not None and value < best_norm:
                best_rows.append(row)
                best_norm = value
            # Every k-part selection that could beat best_norm was examined, unless the
            # search stopped at a plan within the proof tolerance of zero.
            entries.append(entry(k, 0.0 if stopped else best_norm, True))
        return Front(tuple(entries), total, method)

    def _near_zero(self, target_norm: float) -> float:
        """The residual at or below which a plan is proven as found (see the notes)."""
        size = max(target_norm, self._mag_max)
        return max(min(ABS_TOL, REL_TOL * size), 1e-12 * size)

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
            Work budget (head nodes, grid cells and rows looked at).
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
        target, t_real = target_arrays(target)
        k = int(parts)
        # Sums in another order differ in the last bits: a plan exactly at the radius counts.
        size = max(norm_of(self.norm, t_real), self._mag_max)
        radius = float(radius) * (1.0 + 1e-12) + 1e-12 * size
        best_row, best_mass, best_value = None, np.inf, np.inf
        known_row = None
        if known is not None:
            best_row = known_row = self._rows_list(known)
            best_mass = self._mass_of(best_row)
            best_value = self._total_norm(t_real, best_row)
        if k == 0:
            value = norm_of(self.norm, t_real)
            if value > radius:
                return None
            return self._selection(0, target, _NO_ROWS, value, value, True, (), 0.0)
        finished = True
        if self.n:
            if k == 1:
                found = self._lightest_single(t_real, radius, best_mass, best_value)
            else:
                found = self._run(k, t_real, radius=radius, best_mass=best_mass,
                                  best_value=best_value)
                if found is not None:
                    found = (found[0], found[2], found[1])
            if found is None:
                finished = False
            elif found[0] is not None:
                best_row, best_mass, best_value = found
        if best_row is None:
            return None
        return self._selection(k, target, best_row, best_value, best_value, finished,
                               mass=best_mass if best_row is known_row else None)

    def _lightest_single(self, t_real: np.ndarray, radius: float, best_mass: float,
                         best_value: float):
        """The lightest single part within ``radius`` (see :meth:`lightest`):
        (rows, mass, value), (None, ...) when none beats the known plan."""
        self._spend(self.n)
        values = self._single_norms(t_real)
        ok = (values <= radius) & self._in_stock()
        better = ok & ((self.mass < best_mass - 1e-12)
                       | ((self.mass <= best_mass + 1e-12) & (values < best_value)))
        if not better.any():
            return None, np.inf, np.inf
        cand = np.nonzero(better)[0]
        first = int(cand[np.lexsort((values[cand], self.mass[cand]))[0]])
        return (first,), float(self.mass[first]), float(values[first])

    def _begin(self, stock: np.ndarray | None, work: int) -> None:
        """Set the stock and the work budget of one query (the stock of the query before
        is kept when the same stock comes again: a batch asks with one stock rotor after
        rotor)."""
        if stock is None:
            if self._stock_key is not None:
                self._stock, self._stock_key = self.stock, None
                self._all_in_stock = bool(self._in_stock().all())
        else:
            stock = np.asarray(stock, dtype=np.int64)
            key = stock.tobytes()
            if key != self._stock_key:
                self._stock = np.ascontiguousarray(np.minimum(stock, self.stock))
                self._stock_key = key
                self._all_in_stock = bool(self._in_stock().all())
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
        """Work counted by the last query (head nodes, grid cells and rows looked at)."""
        return self._work

    def rows_of(self, parts: PartList) -> np.ndarray:
        """Placement indices of a (position, item, count) part list.

        Parameters
        ----------
        parts : tuple of (position, item, count)
            The parts (position and item as indices of the effects array).
        """
        return np.array(self._rows_list(parts), dtype=np.int64)

    def _rows_list(self, parts: PartList) -> tuple[int, ...]:
        """Placement indices of a part list (:meth:`rows_of`), as a tuple."""
        if self._index is None:
            self._index = {(int(p), int(i)): r
                           for r, (p, i) in enumerate(zip(self.pos_of, self.item_of))}
        index = self._index
        return tuple([index[(p, i)] for p, i, c in parts for _ in range(c)])

    def mass_of(self, parts: PartList) -> float:
        """Added mass of a part list [g]: the parts' :attr:`mass` summed in the order of
        :meth:`rows_of` (0.0 for no parts).

        Parameters
        ----------
        parts : tuple of (position, item, count)
            The parts.
        """
        return self._mass_of(self._rows_list(parts)) if parts else 0.0

    def _mass_of(self, rows: tuple[int, ...]) -> float:
        """Mass of placements ``rows`` summed as numpy sums ``mass[rows]``.  One or two
        placements in Python floats: one addition at most, which every order and every
        summation numpy may use rounds alike (tests/engine/test_search.py checks it)."""
        if len(rows) == 1:
            return self._mass_floats[rows[0]]
        if len(rows) == 2:
            return self._mass_floats[rows[0]] + self._mass_floats[rows[1]]
        return float(self.mass[np.asarray(rows, dtype=np.int64)].sum()) if rows else 0.0

    def _total_norm(self, t_real: np.ndarray, rows: tuple[int, ...]) -> float:
        """Norm of the target plus the effects of placements ``rows``: the effects summed
        (as numpy sums them), then added to the target.  One channel and one or two
        placements in Python floats (one addition per component, see :meth:`_mass_of`)."""
        if self._floats is not None and 1 <= len(rows) <= 2:
            xs, ys = self._floats
            if len(rows) == 2:
                sx, sy = xs[rows[0]] + xs[rows[1]], ys[rows[0]] + ys[rows[1]]
            else:
                sx, sy = xs[rows[0]], ys[rows[0]]
            x, y = float(t_real[0]) + sx, float(t_real[1]) + sy
            return math.sqrt(x * x + y * y)
        return norm_of(self.norm, t_real + self.eff_real[np.asarray(rows, dtype=np.int64)].sum(axis=0))

    def _best_with(self, k: int, t_real: np.ndarray, bound: float, stop: float = 0.0):
        """Best selection of exactly k parts below ``bound``: (rows or None, value,
        stopped at a plan within ``stop``); None past the work budget."""
        if k == 1:
            values = self._single_norms(t_real)
            if not self._all_in_stock:
                values = np.where(self._in_stock(), values, np.inf)
            self._spend(self.n)
            i = int(values.argmin())
            value = float(values[i])
            return ((i,), value, False) if math.isfinite(value) else (None, np.inf, False)
        found = self._run(k, t_real, bound=bound, stop=stop)
        if found is None:
            return None
        rows, value, _, stopped = found
        if rows is None:
            return None, np.inf, False
        return rows, self._total_norm(t_real, rows), stopped

    def _single_norms(self, t_real: np.ndarray) -> np.ndarray:
        """The norm of the target plus each placement's effect: ``_norm(t_real + eff_real)``,
        for one channel from the columns (the same sums, squares and roots)."""
        if self._columns is None:
            return norms(self.norm, t_real + self.eff_real)
        x = t_real[0] + self._columns[0]
        y = t_real[1] + self._columns[1]
        return np.sqrt(x * x + y * y)

    # ----------------------------------------------------------------- output
    def _selection(self, k: int, target: np.ndarray, row: tuple[int, ...], norm: float,
                   lower: float, proven: bool, parts: PartList | None = None,
                   mass: float | None = None) -> Selection:
        """The Selection of placements ``row``; ``parts`` and ``mass`` when the caller
        has them already (the parts of ``row``, the mass summed over ``row`` in its order)."""
        if parts is None:
            if self._lists is None:
                self._lists = (self.pos_of.tolist(), self.item_of.tolist())
            pos, item = self._lists
            placements = row
            if len(placements) == 1:
                parts = ((pos[placements[0]], item[placements[0]], 1),)
            else:
                counts: dict[tuple[int, int], int] = {}
                for placement in placements:
                    key = (pos[placement], item[placement])
                    counts[key] = counts.get(key, 0) + 1
                # Sorted by (position, item), each pair once: as (position, item, count).
                parts = tuple([(p, i, c) for (p, i), c in sorted(counts.items())])
        residual = residual_of(target, self.effects, parts)
        if len(residual) == 1:
            one = complex(residual[0])
            value = norm_of(self.norm, (one.real, one.imag))
        else:
            value = norm_of(self.norm, as_real(residual[None, :])[0])
        if mass is None:
            mass = self._mass_of(row)
        return Selection(k, parts, residual, value, float(lower), proven, mass)


def _multisets(n: int, width: int) -> int:
    """Multisets of ``width`` of n placements: C(n + width - 1, width)."""
    out = 1
    for j in range(width):
        out = out * (n + j) // (j + 1)
    return out
