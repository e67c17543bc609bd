"""The exact search against brute-force enumeration and against cases known by reasoning."""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from oracle import brute_front, ring_effects
from search_modes import completion, same_least

from placer.engine.search import PlacementSearch, residual_of


def check_against_oracle(effects, target, capacity, stock, max_parts, norm="euclidean"):
    expected = brute_front(effects, target, capacity, stock, max_parts, norm=norm)
    for mode in ("grid", "scan"):
        with completion(mode):
            _check_front(effects, target, capacity, stock, max_parts, norm, expected)


def _check_front(effects, target, capacity, stock, max_parts, norm, expected):
    search = PlacementSearch(effects, capacity, stock, max_parts, norm=norm)
    front = search.front(np.atleast_1d(target))
    got = [entry.residual_norm for entry in front.entries]
    # Oracle: exhaustive enumeration (tests/oracle.py); both in float64.  The least
    # residual, or a plan within the proof tolerance of zero (proven as found).
    assert same_least(got, expected)
    assert front.optimal
    eff3 = effects if np.ndim(effects) == 3 else np.asarray(effects)[:, :, None]
    for entry in front.entries:
        # The reported residual is the one recomputed from the listed parts.
        again = residual_of(np.atleast_1d(target), eff3, entry.parts)
        measured = np.linalg.norm(again) if norm == "euclidean" else np.abs(again).max()
        assert measured == pytest.approx(entry.residual_norm, abs=1e-9)
        assert entry.used_parts <= entry.part_count
        per_pos: dict[int, int] = {}
        per_item: dict[int, int] = {}
        for j, k, c in entry.parts:
            per_pos[j] = per_pos.get(j, 0) + c
            per_item[k] = per_item.get(k, 0) + c
        assert all(c <= capacity[j] for j, c in per_pos.items())
        assert all(c <= stock[k] for k, c in per_item.items())


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    n_positions=st.integers(1, 7),
    masses=st.lists(st.floats(0.5, 20.0), min_size=1, max_size=3),
    capacity=st.integers(1, 3),
    stock=st.integers(1, 4),
    max_parts=st.integers(1, 4),
    blocked=st.sets(st.integers(0, 6), max_size=3),
    magnitude=st.floats(0.0, 80.0),
    angle=st.floats(0.0, 360.0),
    radius=st.floats(5.0, 300.0),
)
def test_equal_spacing_matches_enumeration(n_positions, masses, capacity, stock, max_parts,
                                           blocked, magnitude, angle, radius):
    effects = ring_effects(n_positions, masses, radius)
    caps = np.full(n_positions, capacity)
    for b in blocked:
        if b < n_positions:
            caps[b] = 0
    target = magnitude * radius * cmath.exp(1j * math.radians(angle))
    check_against_oracle(effects, target, caps, np.full(len(masses), stock), max_parts)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6), channels=st.integers(1, 3),
       norm=st.sampled_from(["euclidean", "max"]))
def test_random_geometry_and_vector_effects_match_enumeration(seed, channels, norm):
    """Uneven angles and radii, per-item stock, several channels, either norm."""
    rng = np.random.default_rng(seed)
    n_pos, n_items = int(rng.integers(2, 6)), int(rng.integers(1, 4))
    effects = (rng.normal(size=(n_pos, n_items, channels))
               + 1j * rng.normal(size=(n_pos, n_items, channels)))
    target = 3 * (rng.normal(size=channels) + 1j * rng.normal(size=channels))
    capacity = rng.integers(0, 4, size=n_pos)
    stock = rng.integers(0, 4, size=n_items)
    check_against_oracle(effects, target, capacity, stock, int(rng.integers(1, 5)), norm)


def test_bolt_circle_with_stacking_matches_enumeration():
    """12 holes, 3 sizes, washers stack 3 deep: a size the oracle still enumerates."""
    effects = ring_effects(12, [1.83, 3.57, 6.27], 150.0)
    target = 2100.0 * cmath.exp(1j * math.radians(47.0))
    check_against_oracle(effects, target, np.full(12, 3), np.full(3, 5), 4)


def test_capacity_one_rim_matches_enumeration():
    """Capacity 1 makes the nearest pairs clash with the head often."""
    effects = ring_effects(24, [5.0, 10.0, 15.0], 190.0)
    target = 31.0 * 190.0 * cmath.exp(1j * math.radians(100.0))
    check_against_oracle(effects, target, np.ones(24, int), np.full(3, 2), 4)


def test_correction_equal_to_one_part_on_one_hole():
    # Known by reasoning: the part itself cancels the correction exactly.
    effects = ring_effects(12, [1.83, 3.57, 6.27], 150.0)
    target = 6.27 * 150.0 * cmath.exp(1j * math.radians(60.0))  # hole 3 is at 60 deg
    front = PlacementSearch(effects, np.full(12, 3), np.full(3, 10), 4).front(np.array([target]))
    assert front.entries[1].parts == ((2, 2, 1),)
    assert front.entries[1].residual_norm == pytest.approx(0.0, abs=1e-9)


def test_two_equal_parts_sixty_degrees_either_side():
    # Known by reasoning: m at +60 and m at -60 from the correction angle add to
    # 2·m·cos 60° = m along it.  Holes at 0, 120 and 240 deg, correction m at 60 deg:
    # one part leaves m, the two parts on holes 1 and 2 leave nothing.
    effects = ring_effects(3, [4.0], 100.0)
    target = 4.0 * 100.0 * cmath.exp(1j * math.radians(60.0))
    front = PlacementSearch(effects, np.ones(3, int), np.array([5]), 2).front(np.array([target]))
    assert front.entries[1].residual_norm == pytest.approx(400.0)
    best = front.entries[2]
    assert best.residual_norm == pytest.approx(0.0, abs=1e-9)
    assert sorted(j for j, _, _ in best.parts) == [0, 1]  # holes at 0 and 120 deg


def test_all_blocked_but_one():
    # Known by reasoning: every part can only go on the one open position.
    effects = ring_effects(8, [2.0, 5.0], 100.0)
    capacity = np.zeros(8, int)
    capacity[5] = 3
    target = 9.0 * 100.0 * cmath.exp(1j * math.radians(10.0))
    front = PlacementSearch(effects, capacity, np.full(2, 9), 3).front(np.array([target]))
    for entry in front.entries[1:]:
        assert {j for j, _, _ in entry.parts} <= {5}
    check_against_oracle(effects, target, capacity, np.full(2, 9), 3)


def test_zero_correction_needs_no_parts():
    effects = ring_effects(12, [1.0, 2.0], 100.0)
    front = PlacementSearch(effects, np.ones(12, int), np.full(2, 3), 4).front(np.array([0j]))
    assert all(entry.parts == () for entry in front.entries)
    assert front.optimal


def test_search_is_reusable_for_many_targets():
    """Same tables, new target: same answers as a fresh search (batch reuse)."""
    effects = ring_effects(10, [1.0, 2.5, 4.0], 120.0)
    shared = PlacementSearch(effects, np.full(10, 2), np.full(3, 4), 4)
    rng = np.random.default_rng(7)
    for _ in range(5):
        target = np.array([rng.uniform(0, 900) * cmath.exp(1j * rng.uniform(0, 6.3))])
        fresh = PlacementSearch(effects, np.full(10, 2), np.full(3, 4), 4).front(target)
        again = shared.front(target)
        assert [e.residual_norm for e in again.entries] == pytest.approx(
            [e.residual_norm for e in fresh.entries], abs=1e-12)


def test_largest_channel_norm_on_a_larger_case():
    """Four sensors, two planes of 10 positions: the max norm against enumeration."""
    rng = np.random.default_rng(11)
    effects = (rng.normal(size=(10, 2, 4)) + 1j * rng.normal(size=(10, 2, 4)))
    target = 4 * (rng.normal(size=4) + 1j * rng.normal(size=4))
    check_against_oracle(effects, target, np.ones(10, int), np.array([3, 3]), 4, "max")


def test_a_span_wider_than_the_compiled_search_takes_is_refused_in_python():
    # The compiled core holds at most 16 real coordinates (eight planes, the limit of a
    # job or session); wider effects are refused before the kernel sees them.
    rng = np.random.default_rng(7)
    wide = rng.normal(size=(10, 2, 9)) + 1j * rng.normal(size=(10, 2, 9))
    with pytest.raises(ValueError, match="too many channels"):
        PlacementSearch(wide, np.full(10, 2), np.full(2, 5), 2)
    eight = wide[:, :, :8]
    front = PlacementSearch(eight, np.full(10, 2), np.full(2, 5), 2).front(np.ones(8, complex))
    assert len(front.entries) == 3


def test_small_sums_are_numpy_sums_bit_for_bit():
    # The mass and the residual norm of one or two placements are summed in Python floats
    # (one addition per component); source: numpy's own sum of the same rows, the form
    # used before (mass[rows].sum(), t + eff_real[rows].sum(axis=0), then the norm).
    rng = np.random.default_rng(2026)
    masses = rng.uniform(0.2, 40.0, size=7)
    effects = ring_effects(12, list(masses[:5]), 150.0)
    search = PlacementSearch(effects, np.full(12, 3), np.full(5, 9), 4)
    for _ in range(400):
        k = int(rng.integers(1, 5))
        rows = tuple(int(r) for r in rng.integers(0, search.n, size=k))
        t_real = np.array([rng.uniform(-3000, 3000), rng.uniform(-3000, 3000)])
        index = np.asarray(rows, dtype=np.int64)
        mass = float(search.mass[index].sum())
        total = t_real + search.eff_real[index].sum(axis=0)
        x, y = float(total[0]), float(total[1])
        norm = math.sqrt(x * x + y * y)
        assert search._mass_of(rows).hex() == mass.hex()
        assert search._total_norm(t_real, rows).hex() == norm.hex()
    parts = ((0, 1, 2), (5, 4, 1))
    assert search.mass_of(parts) == float(search.mass[search.rows_of(parts)].sum())
    assert search.mass_of(()) == 0.0


def test_no_placements_left_keeps_the_plan_of_no_parts():
    # Every item used up (a drained drawer): source, enumeration (tests/oracle.py) gives
    # the target's own norm for every count; each entry is proven, holds no parts, and a
    # front asked to end at a reach stops at once when the target is within it.
    effects = ring_effects(12, [1.0, 3.5], 150.0)
    target = np.array([420.0 - 180.0j])
    search = PlacementSearch(effects, np.full(12, 3), np.zeros(2, int), 4)
    assert search.n == 0
    expected = brute_front(effects, target, np.full(12, 3), np.zeros(2, int), 4)
    front = search.front(target)
    assert [e.residual_norm for e in front.entries] == pytest.approx(expected, abs=1e-9)
    assert [e.part_count for e in front.entries] == [0, 1, 2, 3, 4]
    assert all(e.parts == () and e.proven and e.mass == 0.0 for e in front.entries)
    assert all(e.lower_bound == front.entries[0].residual_norm for e in front.entries)
    assert front.optimal and front.work == 0
    size = abs(target[0])
    assert len(search.front(target, reach=size + 1.0).entries) == 1
    assert len(search.front(target, reach=size - 1.0).entries) == 5
