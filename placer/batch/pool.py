"""Solving the rotors of a batch in worker processes, in input order.

Parallel (Notes)
----------------
:func:`solve_readings` with ``jobs > 1`` runs a pool of processes (fork or
spawn: everything sent is picklable, the worker's state is built by its
initializer); each worker builds its searches once and plans its rotors
with full drawers.  Rotors are handed out in chunks and come back in input
order; this process then draws the drawers down rotor by rotor
(:func:`placer.batch.solver.draw_down`) and plans again, itself, any rotor
that what is left cannot supply, so the answer is the one a single process
gives.  The number of processes is capped at the cores this process may run
on (:func:`usable_cores`): more would only take turns on the same cores.

References
----------
[PythonDocs] :func:`os.sched_getaffinity` and :func:`os.cpu_count`.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
from collections.abc import Callable, Iterable, Iterator

from placer.batch.solver import (
    BatchSolver,
    Drawer,
    RotorOutcome,
    RotorReading,
    draw_down,
)
from placer.job import Job
from placer.limits import DEFAULT_EFFORT

CHUNK_ROWS = 64
"""Most rotors sent to a worker at once."""

_WORKER: BatchSolver | None = None


def _init_worker(template: Job | None, effort: float) -> None:
    """Build the worker's solver; None: a forked worker inherited the parent's, tables built."""
    global _WORKER
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent stops the pool on Ctrl-C
    if template is not None:
        _WORKER = BatchSolver(template, effort)


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
                   effort: float = DEFAULT_EFFORT, chunk_rows: int = CHUNK_ROWS,
                   start_method: str | None = None,
                   on_ready: Callable[[], None] | None = None,
                   used: dict[str, int] | None = None) -> Iterator[RotorOutcome]:
    """Outcomes of every rotor, in input order, as they are solved.

    Parameters
    ----------
    template : Job
        The rotor type (see :class:`BatchSolver`).
    readings : iterable of RotorReading
        The rotors.
    jobs : int, optional
        Processes to solve in; 1 solves in this process; default one per core.
    effort : float
        Multiple of the engine's default work budget (deterministic).
    used : dict of str to int, optional
        Parts already taken from each drawer by rotors solved before (a
        resumed batch), by stock key.
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
    drawer = Drawer(template, used)
    if jobs == 1:
        solver = BatchSolver(template, effort)
        readings = iter(readings)
        first = next(readings, None)
        if first is not None:
            solver.build_tables()  # no tables for no rotors
        ready()
        if first is None:
            return
        yield draw_down(solver, first, drawer)
        for reading in readings:
            yield draw_down(solver, reading, drawer)
        return
    readings = list(readings)
    if not readings:
        ready()
        return
    size = max(1, min(chunk_rows, -(-len(readings) // (4 * jobs))))
    context = multiprocessing.get_context(start_method)
    global _WORKER
    initargs: tuple = (template, effort)
    if context.get_start_method() == "fork":
        # Build the tables once here; forked workers share them (copy on write).
        _WORKER = BatchSolver(template, effort)
        _WORKER.build_tables()
        initargs = (None, effort)
    here = _Here(template, effort, _WORKER)
    try:
        with context.Pool(processes_used(jobs, len(readings)), initializer=_init_worker,
                          initargs=initargs) as pool:
            ready()
            chunks = _chunks(readings, size)
            for chunk, planned in zip(_chunks(readings, size), pool.imap(_solve_chunk, chunks)):
                for reading, full in zip(chunk, planned):
                    yield draw_down(here, reading, drawer, full)
    finally:
        _WORKER = None


class _Here:
    """This process's own solver, built only when a rotor must be planned again here."""

    def __init__(self, template: Job, effort: float, built: BatchSolver | None) -> None:
        self.template, self.effort, self.solver = template, effort, built

    def plan(self, reading: RotorReading, drawer: Drawer | None = None):
        if self.solver is None:
            self.solver = BatchSolver(self.template, self.effort)
        return self.solver.plan(reading, drawer)
