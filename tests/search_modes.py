"""Forcing how the exact search looks tails up, so that tests check both indexes."""

from __future__ import annotations

import contextlib

import pytest

import placer.engine.search


MODES = ("grid", "scan", "ahead")
"""Every way the search completes heads: the grid; one cell whose every row is scored; the
grid with the last head level in two passes and its memory fetched ahead (used only for
tables of over a megabyte, so forced here for small ones)."""


@contextlib.contextmanager
def completion(mode: str):
    """Force how tails are completed (one of :data:`MODES`) for searches run inside the
    block."""
    search = placer.engine.search
    saved = search.INDEX, search.FETCH_AHEAD_BYTES
    search.INDEX = "scan" if mode == "scan" else "grid"
    search.FETCH_AHEAD_BYTES = 0 if mode == "ahead" else 1 << 62
    try:
        yield
    finally:
        search.INDEX, search.FETCH_AHEAD_BYTES = saved


NEAR_ZERO = 0.01
"""A residual at or below this (the target's unit) is proven as soon as it is found: the
proof rule (within 0.01 of a lower bound of zero; placer/engine/front.py is_proven), so
the search may stop at such a plan rather than at the least residual."""


def same_least(got, expected, rel: float = 1e-9, abs_: float = 1e-9) -> bool:
    """Whether each residual found is the least one (``expected``, from enumeration), or
    a plan the proof rule accepts as found: at or below :data:`NEAR_ZERO` and not below
    the least (which would be impossible)."""
    return all(g == pytest.approx(e, rel=rel, abs=abs_)
               or (e - abs_ <= g <= NEAR_ZERO) for g, e in zip(got, expected, strict=True))
