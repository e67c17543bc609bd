"""A production batch: one rotor type, a new required correction for every rotor.

Pure core of ``placer batch``: takes the template :class:`placer.job.Job`
and the rotors' readings as dataclasses, returns one :class:`RotorOutcome`
per rotor and a :class:`BatchSummary`.  Reading and writing files is
:mod:`placer.batchfile`'s business.

How a rotor is solved (Notes)
-----------------------------
* Everything that does not depend on the correction is built once per
  process for the whole batch: per plane one :class:`BatchSearch` (a
  :class:`placer.search.PlacementSearch`: placements, pair table, k-d tree)
  and the plane's tolerance (``tolerance_gmm``, else its share of U_per
  from the grade, exactly as :func:`placer.solve.solve_job` works it out).
* Per rotor and plane only the target changes: :func:`placer.solve.exact_front`
  with the prebuilt search, :func:`placer.plan.choose` (fewest parts within
  the tolerance, else the least residual) and :func:`placer.solve.to_option`
  (residual recomputed from the listed parts).  The result is the one
  ``placer solve`` gives for a job file holding that rotor's correction.
* Stock: every rotor is solved as if the drawers were full (the batch does
  not draw stock down from rotor to rotor); :class:`BatchTally` adds up the
  parts used per item, which is what the stores must reorder.  Within one
  rotor, planes that share a catalogue still share its stock: when their
  separate plans together overdraw it, that rotor is solved whole by
  :func:`placer.solve.solve_job`, which plans them together.
* Parallel: :func:`solve_readings` with ``jobs > 1`` runs a pool of
  processes (fork or spawn: everything sent is picklable, the worker's
  state is built by its initializer); each worker builds its searches once.
  Rotors are handed out in chunks and the outcomes come back in input order.

References
----------
Residual and tolerance as in :mod:`placer.solve` (ISO 21940-11:2016, residual
unbalance and its allocation to correction planes).
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, replace

from placer.job import Job, PlaneJob
from placer.plan import PlanOption, choose
from placer.search import PlacementSearch
from placer.solve import DEFAULT_TIME_LIMIT_S, exact_front, plane_arrays, solve_job, to_option

CHUNK_ROWS = 64
"""Most rotors sent to a worker process at once."""


@dataclass(frozen=True)
class RotorReading:
    """One rotor of the batch: its serial and the required correction per plane.

    Parameters
    ----------
    line : int
        Line of the readings file the rotor came from (1 = first line).
    serial : str
        The rotor's serial number.
    corrections_gmm : tuple of complex
        Required correction of each plane, in template plane order [g·mm],
        mass·radius·e^{i·angle} at the angle where mass must be added.
    """

    line: int
    serial: str
    corrections_gmm: tuple[complex, ...]


@dataclass(frozen=True)
class PlaneOutcome:
    """The plan chosen for one plane of one rotor.

    ``tolerance_gmm`` is None when the template gives no tolerance for the
    plane; ``within_tolerance`` is then None too.
    """

    plane: int
    name: str
    catalog: str
    option: PlanOption
    tolerance_gmm: float | None
    within_tolerance: bool | None

    @property
    def residual_gmm(self) -> float:
        """Residual of the chosen plan [g·mm]."""
        return self.option.residual_gmm


@dataclass(frozen=True)
class RotorOutcome:
    """The plans for one rotor, plane by plane."""

    line: int
    serial: str
    planes: tuple[PlaneOutcome, ...]
    solved_together: bool = False

    @property
    def within_tolerance(self) -> bool | None:
        """False when a plane is outside its tolerance; None when no plane has one."""
        flags = [p.within_tolerance for p in self.planes if p.within_tolerance is not None]
        if not flags:
            return None
        return all(flags)


class _OneThreadTree:
    """A k-d tree whose queries run on the calling thread only.

    ``cKDTree.query(workers=-1)`` starts a pool of threads on every call; for
    the few hundred heads of a small plane that costs more than the query
    itself (about 1.7 ms against 0.8 ms per front on a 12-hole, 5-size
    plane).  The batch already runs one process per core, so each query runs
    on one thread: the same tree and the same query, hence the same answers.
    """

    def __init__(self, tree) -> None:
        self._tree = tree

    def query(self, *args, **kwargs):
        kwargs["workers"] = 1
        return self._tree.query(*args, **kwargs)


class BatchSearch(PlacementSearch):
    """:class:`placer.search.PlacementSearch` with single-threaded k-d tree queries."""

    def _pair_tree(self):
        tree = super()._pair_tree()
        if not isinstance(tree, _OneThreadTree):
            tree = self._tree = _OneThreadTree(tree)
        return tree


def template_tolerances(template: Job) -> tuple[float | None, ...]:
    """Each plane's tolerance [g·mm] as :func:`placer.solve.solve_job` works it out.

    ``tolerance_gmm`` of the plane, else its share of U_per from the rotor's
    grade, mass and speed, else None.  Solved once with zero corrections, so
    the rule stays the one of ``placer solve``.

    References
    ----------
    ISO 21940-11:2016, permissible residual unbalance and its allocation to
    the correction planes (via :mod:`placer.tolerance`).
    """
    zero = replace(template, planes=tuple(replace(p, correction_gmm=0j, given_as="batch template")
                                          for p in template.planes))
    return tuple(p.tolerance_gmm for p in solve_job(zero).planes)


class BatchSolver:
    """Solves rotor after rotor of one template, building its searches once.

    Parameters
    ----------
    template : Job
        The rotor type: rotor, planes, catalogues, tolerances; the planes'
        corrections are not used.
    time_limit_s : float
        Time the CP-SAT model may take for one decision, if the search hands
        one over [s].
    """

    def __init__(self, template: Job, time_limit_s: float = DEFAULT_TIME_LIMIT_S) -> None:
        self.template = template
        self.time_limit_s = float(time_limit_s)
        self.tolerances_gmm = template_tolerances(template)
        self.searches = []
        for plane in template.planes:
            arrays = plane_arrays(plane)
            self.searches.append(BatchSearch(arrays.effects, arrays.capacity, arrays.stock,
                                             plane.max_parts))
        self._shared = _shared_stock_groups(template)

    @property
    def n_planes(self) -> int:
        return len(self.template.planes)

    def solve(self, reading: RotorReading) -> RotorOutcome:
        """The chosen plan of every plane for one rotor's corrections."""
        if len(reading.corrections_gmm) != self.n_planes:
            raise ValueError(f"rotor {reading.serial} has {len(reading.corrections_gmm)} "
                             f"corrections for {self.n_planes} planes")
        planes = []
        for index, correction in enumerate(reading.corrections_gmm):
            plane = _row_plane(self.template.planes[index], correction)
            arrays = plane_arrays(plane)
            entries, _, _ = exact_front(arrays, plane.max_parts, self.time_limit_s,
                                        search=self.searches[index])
            option = to_option(plane, choose(entries, self.tolerances_gmm[index]))
            planes.append(self._outcome(index, plane, option))
        if self._overdraws(planes):
            return self._solved_together(reading)
        return RotorOutcome(reading.line, reading.serial, tuple(planes))

    def _outcome(self, index: int, plane: PlaneJob, option: PlanOption) -> PlaneOutcome:
        tolerance = self.tolerances_gmm[index]
        within = None if tolerance is None else option.residual_gmm <= tolerance
        return PlaneOutcome(index + 1, plane.geometry.name, plane.catalog.name, option,
                            tolerance, within)

    def _overdraws(self, planes: list[PlaneOutcome]) -> bool:
        """True when planes sharing a catalogue together need more of an item than in stock."""
        for members in self._shared:
            catalog = self.template.planes[members[0]].catalog
            used: dict[str, int] = {}
            for i in members:
                for part in planes[i].option.parts:
                    used[part.item] = used.get(part.item, 0) + part.count
            if any(item.stock is not None and used.get(item.id, 0) > item.stock
                   for item in catalog.items):
                return True
        return False

    def _solved_together(self, reading: RotorReading) -> RotorOutcome:
        job = replace(self.template,
                      planes=tuple(_row_plane(p, c) for p, c in
                                   zip(self.template.planes, reading.corrections_gmm)),
                      source=f"{self.template.source}, rotor {reading.serial}")
        result = solve_job(job, self.time_limit_s)
        planes = tuple(self._outcome(i, p.plane, p.chosen) for i, p in enumerate(result.planes))
        return RotorOutcome(reading.line, reading.serial, planes, solved_together=True)


def _row_plane(plane: PlaneJob, correction_gmm: complex) -> PlaneJob:
    return replace(plane, correction_gmm=complex(correction_gmm),
                   given_as=f"correction {abs(correction_gmm):g} g·mm from the batch readings")


def _shared_stock_groups(template: Job) -> list[list[int]]:
    """Plane indices that draw on one catalogue with limited stock (two or more planes)."""
    groups: dict[str, list[int]] = {}
    for i, plane in enumerate(template.planes):
        groups.setdefault(plane.catalog.source, []).append(i)
    return [members for members in groups.values() if len(members) > 1
            and any(item.stock is not None for item in template.planes[members[0]].catalog.items)]


# --------------------------------------------------------------------- parallel
_WORKER: BatchSolver | None = None


def _init_worker(template: Job, time_limit_s: float) -> None:
    global _WORKER
    _WORKER = BatchSolver(template, time_limit_s)


def _solve_chunk(chunk: list[RotorReading]) -> list[RotorOutcome]:
    return [_WORKER.solve(reading) for reading in chunk]


def _chunks(readings: Iterable[RotorReading], size: int) -> Iterator[list[RotorReading]]:
    chunk: list[RotorReading] = []
    for reading in readings:
        chunk.append(reading)
        if len(chunk) >= size:
            yield chunk
            chunk = []
    if chunk:
        yield chunk


def default_jobs() -> int:
    """Worker processes when none are asked for: one per core."""
    return os.cpu_count() or 1


def solve_readings(template: Job, readings: Iterable[RotorReading], jobs: int | None = None,
                   time_limit_s: float = DEFAULT_TIME_LIMIT_S, chunk_rows: int = CHUNK_ROWS,
                   start_method: str | None = None) -> Iterator[RotorOutcome]:
    """Outcomes of every rotor, in input order, as they are solved.

    Parameters
    ----------
    template : Job
        The rotor type (see :class:`BatchSolver`).
    readings : iterable of RotorReading
        The rotors.
    jobs : int, optional
        Processes to solve in; 1 solves in this process; default one per core.
    time_limit_s : float
        CP-SAT time limit per decision, if needed [s].
    chunk_rows : int
        Most rotors handed to a worker at once.
    start_method : {"fork", "spawn", "forkserver"}, optional
        How worker processes start; default the platform's.

    Raises
    ------
    ValueError
        For ``jobs`` or ``chunk_rows`` below 1.
    """
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1 or chunk_rows < 1:
        raise ValueError("jobs and chunk_rows must be at least 1")
    if jobs == 1:
        solver = BatchSolver(template, time_limit_s)
        for reading in readings:
            yield solver.solve(reading)
        return
    readings = list(readings)
    if not readings:
        return
    size = max(1, min(chunk_rows, -(-len(readings) // (4 * jobs))))
    context = multiprocessing.get_context(start_method)
    with context.Pool(jobs, initializer=_init_worker, initargs=(template, time_limit_s)) as pool:
        for outcomes in pool.imap(_solve_chunk, _chunks(readings, size)):
            yield from outcomes


# ---------------------------------------------------------------------- summary
@dataclass(frozen=True)
class PartsUsed:
    """How many parts of one catalogue item the batch fitted."""

    catalog: str
    item: str
    count: int


@dataclass(frozen=True)
class BatchSummary:
    """Counts of a batch.

    ``solved`` counts the rotors with a result in the output (including
    ``already_done``, those a resumed batch found there and skipped);
    ``share_within`` is ``within / (within + outside)``, None when no rotor
    has a tolerance.  ``parts_used`` is summed over every solved rotor.
    """

    rows_read: int
    solved: int
    already_done: int
    errors: int
    within: int
    outside: int
    no_tolerance: int
    share_within: float | None
    parts_used: tuple[PartsUsed, ...]
    elapsed_s: float
    jobs: int

    @property
    def all_within(self) -> bool:
        """True when no rotor is outside its tolerance and no row was in error."""
        return self.outside == 0 and self.errors == 0


class BatchTally:
    """Adds up the outcomes of a batch as they come."""

    def __init__(self) -> None:
        self.solved = 0
        self.within = 0
        self.outside = 0
        self.no_tolerance = 0
        self.parts: dict[tuple[str, str], int] = {}

    def add(self, within_tolerance: bool | None,
            parts: Iterable[tuple[str, str, int]]) -> None:
        """Count one rotor: its overall flag and its (catalogue, item, count) parts."""
        self.solved += 1
        if within_tolerance is None:
            self.no_tolerance += 1
        elif within_tolerance:
            self.within += 1
        else:
            self.outside += 1
        for catalog, item, count in parts:
            self.parts[(catalog, item)] = self.parts.get((catalog, item), 0) + int(count)

    def add_outcome(self, outcome: RotorOutcome) -> None:
        """Count one solved rotor."""
        self.add(outcome.within_tolerance,
                 [(p.catalog, part.item, part.count) for p in outcome.planes
                  for part in p.option.parts])

    def summary(self, rows_read: int, already_done: int, errors: int, elapsed_s: float,
                jobs: int) -> BatchSummary:
        """The summary of everything counted so far."""
        judged = self.within + self.outside
        used = tuple(PartsUsed(c, i, n) for (c, i), n in sorted(self.parts.items()))
        return BatchSummary(rows_read=rows_read, solved=self.solved, already_done=already_done,
                            errors=errors, within=self.within, outside=self.outside,
                            no_tolerance=self.no_tolerance,
                            share_within=self.within / judged if judged else None,
                            parts_used=used, elapsed_s=float(elapsed_s), jobs=int(jobs))

