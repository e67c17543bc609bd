"""A time limit for a block of test code, so that a hang fails instead of stalling the run."""

from __future__ import annotations

import signal
from collections.abc import Iterator
from contextlib import contextmanager


@contextmanager
def deadline(seconds: float, error: type[BaseException] = TimeoutError) -> Iterator[None]:
    """Raise ``error`` into the block when it runs past ``seconds`` (a SIGALRM timer, which
    also interrupts a blocking open or read); the previous handler is put back after."""
    def alarm(signum, frame):
        raise error(f"no answer within {seconds:g} s")

    previous = signal.signal(signal.SIGALRM, alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
