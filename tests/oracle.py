"""Brute-force enumeration: the true optimum of small placement problems.

Independent of placer's search: it lists every multiset of placements up to
k parts, keeps those that respect capacity and stock, and takes the least
Euclidean residual.  Used as the oracle the exact search is checked against.
"""

from __future__ import annotations

import itertools

import numpy as np


def brute_front(effects: np.ndarray, target: np.ndarray, capacity, stock, max_parts: int,
                norm: str = "euclidean"):
    """Least residual norm with at most k parts, k = 0 .. max_parts, by enumeration.

    ``norm`` is "euclidean" (root of the sum of squared channel magnitudes) or
    "max" (the largest channel magnitude).
    """
    measure = (lambda v: float(np.linalg.norm(v))) if norm == "euclidean" else \
        (lambda v: float(np.abs(v).max()))
    best = [measure(np.atleast_1d(np.asarray(target, dtype=complex)))]
    for k in range(1, max_parts + 1):
        values = [value for value, _ in all_plans(effects, target, capacity, stock, k, measure)]
        best.append(min([best[-1]] + values))
    return best


def ring_effects(n_positions, masses_g, radius_mm, start_deg=0.0):
    """Effects -m·r·e^{iθ} of each mass on equally spaced positions (written out here)."""
    angles = np.radians(start_deg + 360.0 * np.arange(n_positions) / n_positions)
    return -(np.asarray(masses_g)[None, :] * radius_mm) * np.exp(1j * angles)[:, None]


def all_plans(effects: np.ndarray, target: np.ndarray, capacity, stock, parts: int,
              measure=None):
    """Every plan of exactly ``parts`` parts that respects capacity and stock, by enumeration:
    (residual norm, combo of (position, item) placements).  ``measure`` is the norm of a
    residual vector (default Euclidean)."""
    measure = measure or (lambda v: float(np.linalg.norm(v)))
    effects = np.asarray(effects, dtype=complex)
    if effects.ndim == 2:
        effects = effects[:, :, None]
    target = np.atleast_1d(np.asarray(target, dtype=complex))
    n_pos, n_items, _ = effects.shape
    placements = [(j, k) for j in range(n_pos) for k in range(n_items)
                  if capacity[j] > 0 and stock[k] > 0]
    for combo in itertools.combinations_with_replacement(range(len(placements)), parts):
        pos_count: dict[int, int] = {}
        item_count: dict[int, int] = {}
        for c in combo:
            j, i = placements[c]
            pos_count[j] = pos_count.get(j, 0) + 1
            item_count[i] = item_count.get(i, 0) + 1
        if any(n > capacity[j] for j, n in pos_count.items()):
            continue
        if any(n > stock[i] for i, n in item_count.items()):
            continue
        total = target.copy()
        for c in combo:
            total = total + effects[placements[c][0], placements[c][1]]
        yield measure(total), [placements[c] for c in combo]


def brute_lightest(effects: np.ndarray, target: np.ndarray, capacity, stock, masses,
                   parts: int, radius: float):
    """The least added mass of a plan of exactly ``parts`` parts within ``radius``, and the
    least residual among the plans of that mass, by enumeration; None when none reaches it.
    ``masses[j][k]`` is what one part of item k at position j adds."""
    best = None
    for value, combo in all_plans(effects, target, capacity, stock, parts):
        if value > radius:
            continue
        mass = sum(float(masses[j][k]) for j, k in combo)
        if best is None or (mass, value) < best:
            best = (mass, value)
    return best
