"""The least added mass within a residual radius, and a query's own stock, against
exhaustive enumeration (tests/oracle.py).

Every instance is random and small enough to enumerate every plan; capacity,
blocked positions (capacity 0) and stock are all exercised.  The oracle lists
every multiset of exactly k placements, keeps those within the radius that
respect capacity and stock, and takes the least mass, then the least residual.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from oracle import all_plans, brute_front, brute_lightest
from search_modes import MODES, completion, same_least

from placer.engine.search import PlacementSearch


@st.composite
def instances(draw):
    n_pos = draw(st.integers(2, 6))
    n_items = draw(st.integers(1, 3))
    angles = np.radians(draw(st.lists(st.floats(0, 359), min_size=n_pos, max_size=n_pos)))
    radius = draw(st.floats(50, 200))
    masses = draw(st.lists(st.floats(0.5, 20), min_size=n_items, max_size=n_items))
    effects = -(radius * np.exp(1j * angles))[:, None] * np.array(masses)[None, :]
    capacity = np.array(draw(st.lists(st.integers(0, 2), min_size=n_pos, max_size=n_pos)))
    stock = np.array(draw(st.lists(st.integers(0, 3), min_size=n_items, max_size=n_items)))
    target = complex(draw(st.floats(-4000, 4000)), draw(st.floats(-4000, 4000)))
    parts = draw(st.integers(1, 4))
    weights = np.broadcast_to(np.array(masses), (n_pos, n_items))
    return effects, capacity, stock, np.array([target]), parts, weights


SETTINGS = settings(max_examples=60, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow])


@SETTINGS
@given(instances(), st.floats(0.05, 1.5))
def test_lightest_within_a_radius_is_the_enumerated_one(inst, share):
    effects, capacity, stock, target, parts, weights = inst
    # A radius between the least residual of that many parts and far above it.
    residuals = [value for value, _ in all_plans(effects, target, capacity, stock, parts)]
    if not residuals:
        return
    radius = min(residuals) + share * (max(residuals) - min(residuals))
    expected = brute_lightest(effects, target, capacity, stock, weights, parts, radius)
    for mode in MODES:
        with completion(mode):
            search = PlacementSearch(effects, capacity, stock, 4, masses=weights)
            found = search.lightest(target, parts, radius)
        if expected is None:
            assert found is None
            continue
        mass, value = expected
        assert found is not None and found.proven
        assert found.used_parts == parts
        assert found.mass == pytest.approx(mass, abs=1e-9)
        assert found.residual_norm == pytest.approx(value, abs=1e-9)


@SETTINGS
@given(instances(), st.data())
def test_a_query_with_less_stock_is_the_enumerated_front_of_that_stock(inst, data):
    effects, capacity, stock, target, parts, weights = inst
    less = np.array([data.draw(st.integers(0, int(s))) for s in stock])
    expected = brute_front(effects, target, capacity, less, 4)
    for mode in MODES:
        with completion(mode):
            search = PlacementSearch(effects, capacity, stock, 4, masses=weights)
            front = search.front(target, stock=less)
        assert same_least([e.residual_norm for e in front.entries], expected)
        for entry in front.entries:
            used = np.zeros(len(stock), dtype=int)
            for _, item, count in entry.parts:
                used[item] += count
            assert np.all(used <= less)


def test_known_plan_is_the_start_and_a_lighter_one_replaces_it():
    # By hand: two 10 g parts at 0° and 120° on r = 100 mm, or one 5 g and one 15 g ...
    # the lightest plan within the radius must not be heavier than the known one.
    angles = np.radians([0.0, 60.0, 120.0, 180.0, 240.0, 300.0])
    masses = np.array([5.0, 10.0, 15.0])
    effects = -(100.0 * np.exp(1j * angles))[:, None] * masses[None, :]
    weights = np.broadcast_to(masses, (6, 3))
    target = np.array([1500.0 * np.exp(1j * np.radians(60.0))])
    search = PlacementSearch(effects, np.full(6, 2), np.full(3, 4), 4, masses=weights)
    # 15 g at 60° cancels it exactly: the least residual plan of one part.
    known = ((1, 2, 1),)
    found = search.lightest(target, 1, 200.0, known=known)
    assert found.parts == known and found.mass == 15.0
    # Within 600 g·mm a 10 g part at 60° will do: lighter than the known plan.
    found = search.lightest(target, 1, 600.0, known=known)
    assert found.parts == ((1, 1, 1),) and found.mass == 10.0
