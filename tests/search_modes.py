"""Forcing how the exact search looks tails up, so that tests check both indexes."""

from __future__ import annotations

import contextlib

import pytest

import placer.engine.search


@contextlib.contextmanager
def completion(mode: str):
    """Force the tail index: "grid" (cells around the point sought) or "scan" (one cell,
    every row scored), for searches built inside the block."""
    saved = placer.engine.search.INDEX
    placer.engine.search.INDEX = mode
    try:
        yield
    finally:
        placer.engine.search.INDEX = saved


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
