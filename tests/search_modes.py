"""Forcing how the exact search completes its heads, so that tests check both modes."""

from __future__ import annotations

import contextlib

import placer.engine.search


@contextlib.contextmanager
def completion(mode: str):
    """Force how heads are completed: "dense" numpy scan or "tree" (scipy k-d tree)."""
    saved = placer.engine.search.DENSE_TAIL, placer.engine.search.DENSE_LIMIT
    if mode == "tree":
        placer.engine.search.DENSE_TAIL, placer.engine.search.DENSE_LIMIT = -1, -1
    else:
        placer.engine.search.DENSE_TAIL, placer.engine.search.DENSE_LIMIT = 10**12, 10**12
    try:
        yield
    finally:
        placer.engine.search.DENSE_TAIL, placer.engine.search.DENSE_LIMIT = saved
