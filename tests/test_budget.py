"""placer.budget: the timer, the memory limit and the cap given to CP-SAT.

Checked against the operating system's documented behaviour ([PythonDocs]
signal.setitimer / getitimer, resource.getrlimit; [LinuxMan] getrlimit(2)).
"""

from __future__ import annotations

import resource
import time

import numpy as np
import pytest

from placer.budget import (
    command_budget,
    data_size_mb,
    doing,
    memory_stop,
    paused,
    wall_clock_cap_s,
)
from placer.errors import LimitReached


def test_no_timer_no_cap():
    assert wall_clock_cap_s() is None


def test_the_cap_lies_a_second_past_the_timer():
    # getitimer gives the time left on the timer ([PythonDocs]).
    with command_budget(5.0, None):
        cap = wall_clock_cap_s()
    assert 5.0 < cap <= 6.0
    assert wall_clock_cap_s() is None


def test_the_timer_stops_the_block_and_says_what_it_was_doing():
    with pytest.raises(LimitReached) as stopped:
        with command_budget(0.05, None):
            doing("while counting sheep")
            while True:
                time.sleep(0.01)
    assert "the time limit of 0.05 s was reached while counting sheep" in str(stopped.value)


def test_a_paused_clock_does_not_run():
    with command_budget(0.3, None):
        with paused():
            time.sleep(0.5)  # longer than the limit: the clock is paused
        assert wall_clock_cap_s() > 1.0


def test_the_memory_limit_is_set_for_the_block_and_lifted_after():
    before = resource.getrlimit(resource.RLIMIT_DATA)
    with command_budget(None, 500.0):
        soft, _ = resource.getrlimit(resource.RLIMIT_DATA)
        assert soft == pytest.approx((data_size_mb() + 500.0) * 2**20, rel=0.05)
        with pytest.raises(MemoryError):
            np.empty(600 * 2**20, dtype=np.uint8)  # 600 MB at once: past the limit
    assert resource.getrlimit(resource.RLIMIT_DATA) == before
    assert "the memory limit of 500 MB was reached" in str(memory_stop())


def test_a_callers_own_timer_is_kept():
    # The caller's timer (1 s) fires before the command's (300 s): it stays in charge;
    # one that fires later (600 s) runs on after the command, less the time it took.
    import signal

    previous = signal.signal(signal.SIGALRM, lambda *_: None)
    try:
        signal.setitimer(signal.ITIMER_REAL, 1.0)
        with command_budget(300.0, None):
            assert signal.getitimer(signal.ITIMER_REAL)[0] <= 1.0
        signal.setitimer(signal.ITIMER_REAL, 600.0)
        with command_budget(300.0, None):
            assert 299.0 < signal.getitimer(signal.ITIMER_REAL)[0] <= 300.0
        assert 599.0 < signal.getitimer(signal.ITIMER_REAL)[0] <= 600.0
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
