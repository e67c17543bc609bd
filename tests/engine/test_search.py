"""The exact search against brute-force enumeration and against cases known by reasoning."""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from oracle import brute_front, ring_effects
from search_modes import MODES, completion, same_least

import placer.engine.search
from placer.engine.search import PlacementSearch, residual_of


def check_against_oracle(effects, target, capacity, stock, max_parts, norm="euclidean"):
    expected = brute_front(effects, target, capacity, stock, max_parts, norm=norm)
    for mode in MODES:
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


def _small_random_instance(seed, channels, most_placements, scale):
    """Uneven geometry and limits with at most ``most_placements`` placements (so that
    enumerating long plans stays quick) and room for long plans: every position takes
    one to three parts and every item has one to six in stock, one position in four
    blocked; the target ``scale`` times a typical part."""
    rng = np.random.default_rng(seed)
    n_pos = int(rng.integers(3, 6))
    n_items = max(2, min(4, most_placements // n_pos))
    effects = (rng.normal(size=(n_pos, n_items, channels))
               + 1j * rng.normal(size=(n_pos, n_items, channels)))
    target = scale * (rng.normal(size=channels) + 1j * rng.normal(size=channels))
    capacity = rng.integers(1, 4, size=n_pos) * (rng.random(n_pos) > 0.25)
    stock = rng.integers(1, 7, size=n_items)
    return effects, target, capacity, stock


@settings(max_examples=40, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6), channels=st.integers(1, 2),
       norm=st.sampled_from(["euclidean", "max"]), max_parts=st.integers(5, 6))
def test_five_and_six_parts_match_enumeration(seed, channels, norm, max_parts):
    """Heads of three and four parts completed by pairs, against every plan of up to six
    parts listed by enumeration (tests/oracle.py), in every completion mode."""
    effects, target, capacity, stock = _small_random_instance(seed, channels, 14, 5.0)
    check_against_oracle(effects, target, capacity, stock, max_parts, norm)


@settings(max_examples=20, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6), norm=st.sampled_from(["euclidean", "max"]),
       max_parts=st.integers(7, 8))
def test_seven_and_eight_parts_complete_heads_from_triples_and_match_enumeration(
        seed, norm, max_parts):
    """Plans of seven and eight parts take their tails from the table of triples; against
    enumeration (tests/oracle.py), in every completion mode.  A correction five to eight
    times the largest part on three or four positions, so the best plans are long."""
    rng = np.random.default_rng(seed)
    n_pos, n_items = int(rng.integers(3, 5)), int(rng.integers(2, 4))
    angles = 2 * np.pi * (np.arange(n_pos) / n_pos + rng.uniform(-0.05, 0.05, n_pos))
    sizes = rng.uniform(0.3, 1.0, n_items)
    channel_two = rng.uniform(0.2, 1.0, n_pos) * np.exp(1j * rng.uniform(0, 6.3, n_pos))
    effects = -np.stack([np.exp(1j * angles)[:, None] * sizes[None, :],
                         channel_two[:, None] * sizes[None, :]], axis=2)
    target = rng.uniform(5.0, 8.0) * np.exp(1j * rng.uniform(0, 6.3)) * np.array([1.0, 0.3])
    capacity, stock = rng.integers(2, 5, size=n_pos), rng.integers(3, 9, size=n_items)
    search = PlacementSearch(effects, capacity, stock, max_parts, norm=norm)
    assert search._width(max_parts) == 3
    check_against_oracle(effects, target, capacity, stock, max_parts, norm)


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


def _run_both_ways(effects, capacity, stock, max_parts, target, norm="euclidean", masses=None):
    """The front, and the lightest plan within twice the least residual of max_parts, with
    the last head level in one pass and in two (memory fetched ahead): (parts, work) each."""
    out = {}
    for mode in ("grid", "ahead"):
        with completion(mode):
            search = PlacementSearch(effects, capacity, stock, max_parts, norm=norm,
                                     masses=masses)
            front = search.front(target)
            runs = [(tuple(e.parts for e in front.entries), front.work)]
            last = front.entries[-1]
            if last.used_parts == max_parts and max_parts >= 2:
                found = search.lightest(target, max_parts, 2.0 * last.residual_norm + 1.0)
                runs.append((found and found.parts, search.work_done))
        out[mode] = runs
    return out


@settings(max_examples=40, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6), channels=st.integers(1, 3),
       norm=st.sampled_from(["euclidean", "max"]), max_parts=st.integers(3, 6))
def test_fetching_ahead_walks_the_same_heads_in_the_same_order(seed, channels, norm,
                                                               max_parts):
    """The two-pass last head level is the one-pass loop with memory fetched ahead: the
    same plans and the same work counted (reference: the one-pass loop itself), for both
    aims, several channels, either norm; each is also checked against enumeration above."""
    rng = np.random.default_rng(seed)
    n_pos, n_items = int(rng.integers(3, 9)), int(rng.integers(1, 4))
    effects = (rng.normal(size=(n_pos, n_items, channels))
               + 1j * rng.normal(size=(n_pos, n_items, channels)))
    capacity = rng.integers(0, 3, size=n_pos)
    stock = rng.integers(1, 5, size=n_items)
    target = 3.0 * (rng.normal(size=channels) + 1j * rng.normal(size=channels))
    masses = rng.uniform(0.5, 5.0, size=(n_pos, n_items))
    runs = _run_both_ways(effects, capacity, stock, max_parts, target, norm, masses)
    assert runs["grid"] == runs["ahead"]


def test_a_table_over_a_megabyte_is_fetched_ahead_with_the_same_answer():
    """72 slots x 8 sizes: about 165 000 pairs (1.3 MB), so the default threshold fetches
    ahead; the fronts and the work equal the one-pass loop's (reference: that loop)."""
    effects = ring_effects(72, [5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0], 190.0)
    capacity, stock = np.ones(72, dtype=int), np.full(8, 30)
    target = np.array([48_000.0 * cmath.exp(1j * 0.7)])
    with completion("grid"):
        one_pass = PlacementSearch(effects, capacity, stock, 4).front(target)
    default = PlacementSearch(effects, capacity, stock, 4).front(target)
    assert placer.engine.search.FETCH_AHEAD_BYTES < 165_000 * 8
    assert [e.parts for e in default.entries] == [e.parts for e in one_pass.entries]
    assert default.work == one_pass.work and default.optimal


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
