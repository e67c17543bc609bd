"""A production batch: one rotor type, a new required correction for every rotor.

Pure core of ``placer batch``: takes the template :class:`placer.job.Job`
and the rotors' readings as dataclasses, returns one :class:`RotorOutcome`
per rotor and a :class:`BatchSummary`.  Reading and writing files is
:mod:`placer.io.batchreadings` and :mod:`placer.io.batchresults`.

How a rotor is solved (Notes)
-----------------------------
* Everything that does not depend on the correction is built once per
  process for the whole batch: per plane one
  :class:`placer.engine.tabulated.TabulatedSearch` (placements, pair table,
  k-d tree; for a small plane the table of all its selections) and the
  plane's tolerance (``tolerance_gmm``, else its share of U_per from the
  grade: :func:`placer.tolerance.job_tolerances`, as for ``placer solve``).
* Per rotor and plane only the target changes: it is the rotor's correction
  plus the plane's fixed offset (the existing parts' correction taken off
  when the rotor's correction_basis is "total", else zero), and goes into
  the plane's prebuilt arrays (:class:`placer.engine.arrays.PlaneArrays`,
  built once) in place of the template's; then
  :func:`placer.engine.front.exact_front` with the prebuilt search,
  :func:`placer.engine.front.choose` (fewest parts within the tolerance,
  else the least residual) and :func:`placer.engine.arrays.option_of`
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
  The number of processes is capped at the cores this process may run on
  (:func:`usable_cores`): more would only take turns on the same cores.

References
----------
[ISO21940-11] residual unbalance and its allocation to the correction planes,
as in :mod:`placer.solve`.
"""

from __future__ import annotations

import hashlib
import multiprocessing
import os
import signal
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, replace

import numpy as np

from placer.engine.arrays import PlaneArrays, option_of, plane_arrays
from placer.engine.front import choose, exact_front
from placer.engine.tabulated import TabulatedSearch
from placer.errors import JobError
from placer.job import Job, PlaneJob
from placer.limits import DEFAULT_TIME_LIMIT_S
from placer.plan import PlanOption
from placer.solve import solve_job
from placer.stock import overdrawn_items, shared_stock_groups
from placer.tolerance import job_tolerances

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

    @property
    def digest(self) -> str:
        """First 16 hex digits of the SHA-256 of the corrections (see :func:`reading_digest`)."""
        return reading_digest(self.corrections_gmm)


def reading_digest(corrections_gmm: Iterable[complex]) -> str:
    """A fingerprint of a rotor's corrections: equal exactly when every float is equal.

    SHA-256 of the real and imaginary parts written with ``repr`` (which
    round-trips a float exactly), first 16 hex digits.  A resumed batch
    compares it with the one stored in each result to find rows changed
    since.

    Parameters
    ----------
    corrections_gmm : iterable of complex
        The rotor's required corrections, plane by plane [g·mm].

    Returns
    -------
    str
        16 lowercase hex digits.

    References
    ----------
    FIPS 180-4 (SHA-256); Python ``float.__repr__``, shortest repr that
    round-trips (Python 3.1+).
    """
    text = ";".join(f"{complex(c).real!r},{complex(c).imag!r}" for c in corrections_gmm)
    return hashlib.sha256(text.encode("ascii")).hexdigest()[:16]


@dataclass(frozen=True)
class PlaneOutcome:
    """The plan chosen for one plane of one rotor.

    ``tolerance_gmm`` is None when the template gives no tolerance for the
    plane; ``within_tolerance`` is then None too.  ``correction_gmm`` is the
    rotor's required correction for the plane, as read [g·mm].

    Parameters
    ----------
    plane : int
        Plane number (from 1), in template order.
    name : str
        The plane's name.
    catalog : str
        Name of the plane's catalogue.
    option : PlanOption
        The plan chosen.
    tolerance_gmm : float or None
        The plane's permissible residual [g·mm].
    within_tolerance : bool or None
        Whether the plan is within it.
    correction_gmm : complex
        The rotor's required correction for the plane [g·mm].
    """

    plane: int
    name: str
    catalog: str
    option: PlanOption
    tolerance_gmm: float | None
    within_tolerance: bool | None
    correction_gmm: complex = 0j

    @property
    def residual_gmm(self) -> float:
        """Residual of the chosen plan [g·mm]."""
        return self.option.residual_gmm


@dataclass(frozen=True)
class RotorOutcome:
    """The plans for one rotor, plane by plane.

    Parameters
    ----------
    line : int
        Line of the readings file the rotor came from.
    serial : str
        The rotor's serial number.
    planes : tuple of PlaneOutcome
        Each plane's plan, in template order.
    solved_together : bool
        Whether the rotor was solved whole, its planes sharing stock.
    stock_short : tuple of str
        Ids of items its plans still overdraw (no plan within the stock found).
    """

    line: int
    serial: str
    planes: tuple[PlaneOutcome, ...]
    solved_together: bool = False
    stock_short: tuple[str, ...] = ()

    @property
    def within_tolerance(self) -> bool | None:
        """False when a plane is outside its tolerance, or no plan within the stock was
        found (``stock_short``, the items short); None when no plane has a tolerance."""
        if self.stock_short:
            return False
        flags = [p.within_tolerance for p in self.planes if p.within_tolerance is not None]
        if not flags:
            return None
        return all(flags)


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

    Raises
    ------
    JobError
        For a plane whose parts' effects would change with the correction.
    """

    def __init__(self, template: Job, time_limit_s: float = DEFAULT_TIME_LIMIT_S) -> None:
        self.template = template
        self.time_limit_s = float(time_limit_s)
        self.tolerances_gmm = tuple(p.tolerance_gmm for p in job_tolerances(template).planes)
        self.searches = []
        self.arrays: list[PlaneArrays] = []
        self.offsets_gmm: list[complex] = []
        for number, plane in enumerate(template.planes, start=1):
            arrays = plane_arrays(plane)
            probe = plane_arrays(_row_plane(plane, 1000.0 + 500.0j))
            if not (np.array_equal(arrays.effects, probe.effects)
                    and np.array_equal(arrays.capacity, probe.capacity)
                    and np.array_equal(arrays.stock, probe.stock)):
                raise JobError("the parts' effects depend on the correction, so one search "
                               "cannot serve the batch", file=template.source,
                               key=f"planes[{number}]",
                               expected="a plane whose parts do not change with the correction")
            self.searches.append(TabulatedSearch(arrays.effects, arrays.capacity, arrays.stock,
                                             plane.max_parts))
            self.arrays.append(arrays)
            # The target is linear in the correction: correction + its value at zero.
            self.offsets_gmm.append(complex(_row_plane(plane, 0j).further_correction_gmm))
        self._shared = shared_stock_groups(template.planes)

    @property
    def n_planes(self) -> int:
        return len(self.template.planes)

    def build_tables(self) -> None:
        """Build now what the first rotor would build: one front per plane, away from zero."""
        for search in self.searches:
            if search.n:
                search.front(np.array([2.5 * complex(search.mag.max())]))

    def solve(self, reading: RotorReading) -> RotorOutcome:
        """The chosen plan of every plane for one rotor's corrections.

        Parameters
        ----------
        reading : RotorReading
            The rotor: its serial and one correction per template plane.

        Returns
        -------
        RotorOutcome
            The plans, solved together when planes sharing a drawer overdraw it.

        Raises
        ------
        ValueError
            When the reading has another number of corrections than the
            template has planes.
        """
        if len(reading.corrections_gmm) != self.n_planes:
            raise ValueError(f"rotor {reading.serial} has {len(reading.corrections_gmm)} "
                             f"corrections for {self.n_planes} planes")
        planes = []
        for index, correction in enumerate(reading.corrections_gmm):
            plane = _row_plane(self.template.planes[index], correction)
            arrays = replace(self.arrays[index],
                             target=np.array([complex(correction) + self.offsets_gmm[index]]))
            entries, _, _ = exact_front(arrays, plane.max_parts, self.time_limit_s,
                                        search=self.searches[index])
            option = option_of(plane, choose(entries, self.tolerances_gmm[index]), rows=arrays)
            planes.append(self._outcome(index, plane, option))
        if self._overdraws(planes):
            return self._solved_together(reading)
        return RotorOutcome(reading.line, reading.serial, tuple(planes))

    def _outcome(self, index: int, plane: PlaneJob, option: PlanOption) -> PlaneOutcome:
        tolerance = self.tolerances_gmm[index]
        within = None if tolerance is None else option.residual_gmm <= tolerance
        return PlaneOutcome(index + 1, plane.geometry.name, plane.catalog.name, option,
                            tolerance, within, complex(plane.correction_gmm))

    def _overdraws(self, planes: list[PlaneOutcome]) -> bool:
        """True when planes sharing a drawer together need more of an item than in stock."""
        return any(overdrawn_items([self.template.planes[i] for i in members],
                                   [planes[i].option.parts for i in members])
                   for members in self._shared)

    def _solved_together(self, reading: RotorReading) -> RotorOutcome:
        job = replace(self.template,
                      planes=tuple(_row_plane(p, c) for p, c in
                                   zip(self.template.planes, reading.corrections_gmm)),
                      source=f"{self.template.source}, rotor {reading.serial}")
        result = solve_job(job, self.time_limit_s)
        planes = tuple(self._outcome(i, p.plane, p.chosen) for i, p in enumerate(result.planes))
        return RotorOutcome(reading.line, reading.serial, planes, solved_together=True,
                            stock_short=result.stock_short)


def _row_plane(plane: PlaneJob, correction_gmm: complex) -> PlaneJob:
    return replace(plane, correction_gmm=complex(correction_gmm),
                   given_as=f"correction {abs(correction_gmm):g} g·mm from the batch readings")


# --------------------------------------------------------------------- parallel
_WORKER: BatchSolver | None = None


def _init_worker(template: Job | None, time_limit_s: float) -> None:
    """Build the worker's solver; None: a forked worker inherited the parent's, tables built."""
    global _WORKER
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent stops the pool on Ctrl-C
    if template is not None:
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


def usable_cores() -> int:
    """Cores this process may run on: its CPU affinity where the system has one.

    ``os.sched_getaffinity(0)`` (Linux; a container or ``taskset`` may allow
    fewer cores than the machine has), else ``os.cpu_count()``.

    References
    ----------
    Python documentation, :func:`os.sched_getaffinity` and :func:`os.cpu_count`
    ("not equivalent to the number of CPUs the current process can use").
    """
    affinity = getattr(os, "sched_getaffinity", None)
    if affinity is not None:
        try:
            return max(1, len(affinity(0)))
        except OSError:
            pass
    return os.cpu_count() or 1


def default_jobs() -> int:
    """Worker processes when none are asked for: one per usable core."""
    return usable_cores()


def processes_used(jobs: int, rows: int) -> int:
    """Processes :func:`solve_readings` solves ``rows`` rotors in with ``jobs`` asked.

    Parameters
    ----------
    jobs : int
        Processes asked for.
    rows : int
        Rotors to solve.

    Returns
    -------
    int
        1 for ``jobs`` of 1 or less, else ``jobs`` but no more than ``rows``
        (at least 1).
    """
    return 1 if jobs <= 1 else max(1, min(jobs, rows))


def solve_readings(template: Job, readings: Iterable[RotorReading], jobs: int | None = None,
                   time_limit_s: float = DEFAULT_TIME_LIMIT_S, chunk_rows: int = CHUNK_ROWS,
                   start_method: str | None = None,
                   on_ready: Callable[[], None] | None = None) -> Iterator[RotorOutcome]:
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
    on_ready : callable, optional
        Called once, before the first outcome, when what every rotor shares
        is built (the searches and their tables; with worker processes that
        are not forked, when the workers are started, as each builds its own).

    Yields
    ------
    RotorOutcome
        One per rotor, in input order.

    Raises
    ------
    ValueError
        For ``jobs`` or ``chunk_rows`` below 1.
    """
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1 or chunk_rows < 1:
        raise ValueError("jobs and chunk_rows must be at least 1")
    ready = on_ready if on_ready is not None else (lambda: None)
    if jobs == 1:
        solver = BatchSolver(template, time_limit_s)
        readings = iter(readings)
        first = next(readings, None)
        if first is not None:
            solver.build_tables()  # no tables for no rotors
        ready()
        if first is None:
            return
        yield solver.solve(first)
        for reading in readings:
            yield solver.solve(reading)
        return
    readings = list(readings)
    if not readings:
        ready()
        return
    size = max(1, min(chunk_rows, -(-len(readings) // (4 * jobs))))
    context = multiprocessing.get_context(start_method)
    global _WORKER
    initargs: tuple = (template, time_limit_s)
    if context.get_start_method() == "fork":
        # Build the tables once here; forked workers share them (copy on write).
        _WORKER = BatchSolver(template, time_limit_s)
        _WORKER.build_tables()
        initargs = (None, time_limit_s)
    try:
        with context.Pool(processes_used(jobs, len(readings)), initializer=_init_worker,
                          initargs=initargs) as pool:
            ready()
            for outcomes in pool.imap(_solve_chunk, _chunks(readings, size)):
                yield from outcomes
    finally:
        _WORKER = None


# ---------------------------------------------------------------------- summary
@dataclass(frozen=True)
class PartsUsed:
    """How many parts of one catalogue item the batch fitted.

    Parameters
    ----------
    catalog : str
        The item's catalogue (its own, where a plane merges several).
    item : str
        The item's id.
    count : int
        Parts fitted over the batch.
    """

    catalog: str
    item: str
    count: int


@dataclass(frozen=True)
class BatchSummary:
    """Counts of a batch.

    ``solved`` counts the rotors with a result in the output (including
    ``already_done``, those a resumed batch found there and skipped);
    ``share_within`` is ``within / (within + outside)``, None when no rotor
    has a tolerance.  ``parts_used`` is summed over every solved rotor
    (parts fitted; parts a plan takes off are not counted).

    Parameters
    ----------
    rows_read : int
        Rows of the readings file read.
    solved : int
        Rotors with a result in the output.
    already_done : int
        Rotors a resumed batch found done and skipped.
    errors : int
        Rows in error.
    within : int
        Rotors within tolerance in every plane that has one.
    outside : int
        Rotors outside tolerance in some plane, or short of stock.
    no_tolerance : int
        Rotors with no tolerance in any plane.
    share_within : float or None
        ``within / (within + outside)`` [1].
    parts_used : tuple of PartsUsed
        Parts fitted per item, in catalogue order.
    elapsed_s : float
        Wall-clock time of the batch [s].
    jobs : int
        Processes used.
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
    """Adds up the outcomes of a batch as they come.

    ``template``, when given, lists the parts used in catalogue order
    (others follow by name).

    Parameters
    ----------
    template : Job or None
        The batch's template, for the order of the items and for the drawer
        each plane's item draws on.
    """

    def __init__(self, template: Job | None = None) -> None:
        self._order: dict[tuple[str, str], int] = {}
        # (plane's catalogue name, item id) -> (the item's own catalogue, item id): a plane
        # that merges catalogues draws on the same drawers as one that names them alone.
        self._drawer: dict[tuple[str, str], tuple[str, str]] = {}
        for plane in template.planes if template is not None else ():
            for item in plane.catalog.items:
                own = (item.catalog or plane.catalog.name, item.id)
                self._drawer[(plane.catalog.name, item.id)] = own
                self._order.setdefault(own, len(self._order))
        self.solved = 0
        self.within = 0
        self.outside = 0
        self.no_tolerance = 0
        self.parts: dict[tuple[str, str], int] = {}

    def add(self, within_tolerance: bool | None,
            parts: Iterable[tuple[str, str, int]]) -> None:
        """Count one rotor: its overall flag and its (catalogue, item, count) parts.

        Parameters
        ----------
        within_tolerance : bool or None
            The rotor's flag (:attr:`RotorOutcome.within_tolerance`).
        parts : iterable of (str, str, int)
            (plane's catalogue name, item id, count) of every part fitted.
        """
        self.solved += 1
        if within_tolerance is None:
            self.no_tolerance += 1
        elif within_tolerance:
            self.within += 1
        else:
            self.outside += 1
        for catalog, item, count in parts:
            key = self._drawer.get((catalog, item), (catalog, item))
            self.parts[key] = self.parts.get(key, 0) + int(count)

    def add_outcome(self, outcome: RotorOutcome) -> None:
        """Count one solved rotor.

        Parameters
        ----------
        outcome : RotorOutcome
            The rotor's plans; parts taken off are not counted.
        """
        self.add(outcome.within_tolerance,
                 [(p.catalog, part.item, part.count) for p in outcome.planes
                  for part in p.option.parts if part.action == "fit"])

    def summary(self, rows_read: int, already_done: int, errors: int, elapsed_s: float,
                jobs: int) -> BatchSummary:
        """The summary of everything counted so far.

        Parameters
        ----------
        rows_read : int
            Rows of the readings file read.
        already_done : int
            Rotors a resumed batch found done.
        errors : int
            Rows in error.
        elapsed_s : float
            Wall-clock time of the batch [s].
        jobs : int
            Processes used.

        Returns
        -------
        BatchSummary
            The counts and the parts used.
        """
        judged = self.within + self.outside
        last = len(self._order)
        keys = sorted(self.parts, key=lambda key: (self._order.get(key, last), key))
        used = tuple(PartsUsed(c, i, self.parts[(c, i)]) for c, i in keys)
        return BatchSummary(rows_read=rows_read, solved=self.solved, already_done=already_done,
                            errors=errors, within=self.within, outside=self.outside,
                            no_tolerance=self.no_tolerance,
                            share_within=self.within / judged if judged else None,
                            parts_used=used, elapsed_s=float(elapsed_s), jobs=int(jobs))

