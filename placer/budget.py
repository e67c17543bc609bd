"""A command's budget: the wall-clock time and the memory one run may take.

Every ``placer`` command runs inside :func:`command_budget`: past its time
or its memory it stops with :class:`~placer.errors.LimitReached`, printing
nothing as final, and the command line gives exit code 3.  Neither limit
ever decides a result: what is proven is decided by the counted effort
(:data:`placer.limits.DEFAULT_EFFORT`); a limit only ends a run.

Time (Notes)
------------
A ``SIGALRM`` timer (``setitimer``) raises at the next Python step once the
time is up.  Compiled code sees it too: the exact search's kernel checks for
signals inside its loops (``PyErr_CheckSignals``), and the few long numpy
calls (the field search's span) are kept short by the size limits checked
before any work (README, "Limits").  CP-SAT gets a wall-clock cap a second
past the timer (:func:`wall_clock_cap_s`).  The timer is paused while ``placer
new`` waits for answers on a terminal (:func:`paused`): waiting for a person
is not a runaway.

Memory (Notes)
--------------
The limit is the soft ``RLIMIT_DATA`` of the process, set to what the
process holds when the command starts plus the limit: past it every
allocation fails, numpy's included (``numpy.core._exceptions._ArrayMemoryError``
is a ``MemoryError``), and the command line turns the ``MemoryError`` into
one line.  ``RLIMIT_DATA`` (Linux 4.7 on) counts the memory a process can
write (heap, anonymous maps, thread stacks), not address space only
reserved; ``RLIMIT_AS`` would also count what threads reserve and never use
(malloc arenas of 64 MB a thread, numpy's BLAS buffers, one per core), so
that the same job would pass on one machine and fail on a machine with more
cores.  numpy's BLAS (OpenBLAS) is started before the limit is set and runs on
one thread (:func:`_warm_blas`): it ends the process, or hangs, when it cannot
get memory, instead of failing.  Worker processes (``placer batch --jobs``)
inherit the limit: each worker has its own.  Where the operating system has no such limit
(``resource`` missing), memory is not limited.

References
----------
[PythonDocs] :func:`signal.setitimer`, :func:`resource.setrlimit`
(``RLIMIT_DATA``); [LinuxMan] getrlimit(2) (``RLIMIT_DATA`` counts
private writable mappings since Linux 4.7), proc(5) (``VmData``).
"""

from __future__ import annotations

import contextlib
import os
import signal
import time
from collections.abc import Iterator

from placer.errors import LimitReached

_DOING = ["before the result was final; nothing is printed"]
"""What the running command is doing, for the message when it stops."""

_MEMORY_MB: list[float | None] = [None]
"""The memory limit of the running command [MB] (None outside a command)."""


def doing(text: str) -> None:
    """Say what the running command does from now on, for the message if it stops.

    Parameters
    ----------
    text : str
        Words that follow "the time limit of 5 s was reached": "before the
        plans were final; nothing is printed".
    """
    _DOING[0] = text


def data_size_mb() -> float:
    """The memory the process holds now, as ``RLIMIT_DATA`` counts it (VmData) [MB];
    0 where /proc is missing."""
    try:
        with open("/proc/self/status", encoding="ascii") as status:
            for line in status:
                if line.startswith("VmData:"):
                    return int(line.split()[1]) / 1024.0
    except (OSError, ValueError, IndexError):
        pass
    return 0.0


def memory_stop() -> LimitReached:
    """The error to report when an allocation failed under the running command's limit."""
    limit = _MEMORY_MB[0]
    size = f"of {limit:g} MB " if limit is not None else ""
    return LimitReached(f"the memory limit {size}was reached {_DOING[0]}",
                        option="memory_limit_mb",
                        expected="a larger {opt:memory_limit_mb}, or a smaller job")


@contextlib.contextmanager
def command_budget(time_limit_s: float | None, memory_limit_mb: float | None,
                   doing_first: str = "before the result was final; nothing is printed",
                   remedy: str = "a smaller job") -> Iterator[None]:
    """Run the block within ``time_limit_s`` of wall-clock time and ``memory_limit_mb``.

    Parameters
    ----------
    time_limit_s : float or None
        Wall-clock time the block may take [s]; None: no limit.
    memory_limit_mb : float or None
        Memory the block may add to what the process holds at its start
        [MB]; None: no limit.
    doing_first : str
        What the command does until it says otherwise (:func:`doing`).
    remedy : str
        What else than a larger limit helps ("a smaller {opt:effort}").

    Raises
    ------
    LimitReached
        When the time is up (option ``time_limit_s``).  A ``MemoryError``
        passes through: the caller turns it into :func:`memory_stop`, after
        the block has given its memory back.
    """
    _DOING[0] = doing_first
    _MEMORY_MB[0] = memory_limit_mb
    with _memory(memory_limit_mb), _deadline(time_limit_s, remedy):
        yield


@contextlib.contextmanager
def _memory(limit_mb: float | None) -> Iterator[None]:
    try:
        import resource
    except ImportError:  # no such limit on this system
        resource = None
    if limit_mb is None or resource is None:
        yield
        return
    _warm_blas()
    soft, hard = resource.getrlimit(resource.RLIMIT_DATA)
    wanted = int((data_size_mb() + limit_mb) * 1024 * 1024)
    if hard != resource.RLIM_INFINITY:
        wanted = min(wanted, hard)
    if soft != resource.RLIM_INFINITY:
        wanted = min(wanted, soft)
    resource.setrlimit(resource.RLIMIT_DATA, (wanted, hard))
    try:
        yield
    finally:
        resource.setrlimit(resource.RLIMIT_DATA, (soft, hard))


def _warm_blas() -> None:
    """Let numpy's BLAS take its working memory before the limit is set.

    OpenBLAS takes a buffer at its first call and, when it cannot, ends the
    process ("Memory allocation still failed") instead of failing the call;
    a thread of it that cannot start hangs.  So BLAS runs on one thread
    (unless ``OPENBLAS_NUM_THREADS`` says otherwise: placer's matrices are
    small, and a batch runs in processes) and is called once here.
    """
    os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
    import numpy as np

    square = np.eye(64)
    np.linalg.svd(square @ square)


@contextlib.contextmanager
def _deadline(seconds: float | None, remedy: str) -> Iterator[None]:
    """The timer; a timer already running (a caller's own) that fires first stays in
    charge, and one that fires later is set again, for the time it has left, after."""
    if seconds is None or not hasattr(signal, "setitimer"):
        yield
        return
    outer_left, _ = signal.getitimer(signal.ITIMER_REAL)
    if 0 < outer_left <= seconds:
        yield
        return

    def stop(signum, frame):
        raise LimitReached(f"the time limit of {seconds:g} s was reached {_DOING[0]}",
                           option="time_limit_s",
                           expected=f"a larger {{opt:time_limit_s}}, or {remedy}")

    started = time.monotonic()
    previous = signal.signal(signal.SIGALRM, stop)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
        if outer_left > 0:
            signal.setitimer(signal.ITIMER_REAL,
                             max(outer_left - (time.monotonic() - started), 1e-3))


def wall_clock_cap_s() -> float | None:
    """A wall-clock cap for a compiled solver that cannot see the timer (CP-SAT) [s].

    CP-SAT does not return to Python until it is done, so the command's timer
    cannot stop it; given this cap as its ``max_time_in_seconds``, it returns a
    second after the timer has fired, and the pending timer stops the command
    at once, so that the cap never decides a result.  None when no timer runs.
    """
    if not hasattr(signal, "getitimer"):
        return None
    left, _ = signal.getitimer(signal.ITIMER_REAL)
    return left + 1.0 if left > 0 else None


@contextlib.contextmanager
def paused() -> Iterator[None]:
    """Stop the clock for the block (waiting for a person's answers), then let it run on."""
    if not hasattr(signal, "setitimer"):
        yield
        return
    left, _ = signal.setitimer(signal.ITIMER_REAL, 0)
    try:
        yield
    finally:
        if left > 0:
            signal.setitimer(signal.ITIMER_REAL, left)
