"""Properties the exact search must have, whatever the instance (hypothesis).

Each property follows from the problem's definition (no outside source
needed): more choice never hurts; the problem is invariant under rotation
and linear under scaling.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from placer.search import PlacementSearch, residual_of

SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@st.composite
def instances(draw):
    n_pos = draw(st.integers(1, 9))
    n_items = draw(st.integers(1, 4))
    angles = np.array(draw(st.lists(st.floats(0, 360), min_size=n_pos, max_size=n_pos)))
    radii = np.array(draw(st.lists(st.floats(10, 400), min_size=n_pos, max_size=n_pos)))
    masses = np.array(draw(st.lists(st.floats(0.2, 50), min_size=n_items, max_size=n_items)))
    capacity = np.array(draw(st.lists(st.integers(0, 3), min_size=n_pos, max_size=n_pos)))
    stock = np.array(draw(st.lists(st.integers(0, 4), min_size=n_items, max_size=n_items)))
    magnitude = draw(st.floats(0, 150)) * float(radii.mean())
    angle = draw(st.floats(0, 360))
    k = draw(st.integers(1, 4))
    return angles, radii, masses, capacity, stock, magnitude * cmath.exp(1j * math.radians(
        angle)), k


def effects_of(angles, radii, masses):
    unit = radii * np.exp(1j * np.radians(angles))
    return -(unit[:, None] * masses[None, :])[:, :, None]


def front_of(angles, radii, masses, capacity, stock, target, k):
    search = PlacementSearch(effects_of(angles, radii, masses), capacity, stock, k)
    return search.front(np.array([target]))


@SETTINGS
@given(instances())
def test_reported_residual_is_the_recomputed_one(inst):
    angles, radii, masses, capacity, stock, target, k = inst
    front = front_of(*inst)
    for entry in front.entries:
        again = residual_of(np.array([target]), effects_of(angles, radii, masses), entry.parts)
        assert abs(again[0]) == pytest.approx(entry.residual_norm, rel=1e-12, abs=1e-9)
        assert entry.used_parts <= entry.part_count


@SETTINGS
@given(instances(), st.floats(0, 360), st.floats(10, 400), st.floats(0.2, 50))
def test_adding_a_position_or_an_item_never_makes_it_worse(inst, angle, radius, mass):
    angles, radii, masses, capacity, stock, target, k = inst
    base = [e.residual_norm for e in front_of(*inst).entries]
    more_positions = front_of(np.append(angles, angle), np.append(radii, radius), masses,
                              np.append(capacity, 2), stock, target, k)
    more_items = front_of(angles, radii, np.append(masses, mass), capacity,
                          np.append(stock, 2), target, k)
    for front in (more_positions, more_items):
        for got, was in zip((e.residual_norm for e in front.entries), base):
            assert got <= was + 1e-9 * max(1.0, was)


@SETTINGS
@given(instances(), st.floats(-720, 720))
def test_rotating_every_angle_rotates_the_plan(inst, shift):
    angles, radii, masses, capacity, stock, target, k = inst
    base = front_of(*inst)
    turned = front_of(angles + shift, radii, masses, capacity, stock,
                      target * cmath.exp(1j * math.radians(shift)), k)
    for a, b in zip(base.entries, turned.entries):
        assert b.residual_norm == pytest.approx(a.residual_norm, rel=1e-9, abs=1e-7)
        # The rotated residual vector is the original one turned by the same angle.
        if a.parts == b.parts:
            assert b.residual[0] == pytest.approx(a.residual[0] * cmath.exp(
                1j * math.radians(shift)), rel=1e-9, abs=1e-7)


@SETTINGS
@given(instances(), st.floats(0.01, 100))
def test_scaling_masses_and_correction_scales_the_residual(inst, factor):
    angles, radii, masses, capacity, stock, target, k = inst
    base = front_of(*inst)
    scaled = front_of(angles, radii, masses * factor, capacity, stock, target * factor, k)
    for a, b in zip(base.entries, scaled.entries):
        assert b.residual_norm == pytest.approx(a.residual_norm * factor, rel=1e-9,
                                                abs=1e-6 * factor)


def test_edge_sizes_one_and_720_positions():
    one = front_of(np.array([10.0]), np.array([100.0]), np.array([5.0]), np.array([3]),
                   np.array([9]), 1500 * cmath.exp(1j * math.radians(10.0)), 4)
    # Known by reasoning: three 5 g parts at 100 mm on the one position cancel exactly.
    assert one.entries[3].residual_norm == pytest.approx(0.0, abs=1e-9)
    angles = np.arange(720) * 0.5
    many = front_of(angles, np.full(720, 190.0), np.array([5.0, 10.0]), np.ones(720, int),
                    np.array([4, 4]), 1900 * cmath.exp(1j * math.radians(33.25)), 4)
    # 10 g at 190 mm is 1900 g·mm; position at 33.0° or 33.5° is 0.25° off: the one-part
    # residual is 2·1900·sin(0.125°) = 8.29 g·mm (computed by hand).
    assert many.entries[1].residual_norm == pytest.approx(8.290, abs=0.001)
    assert many.optimal


def test_positions_at_the_same_angle_and_huge_or_tiny_values():
    for scale in (1e-6, 1.0, 1e6):
        front = front_of(np.array([0.0, 0.0, 90.0]), np.array([100.0, 100.0, 100.0]) * scale,
                         np.array([1.0, 2.0]) * scale, np.ones(3, int), np.array([2, 2]),
                         300 * scale * scale + 0j, 2)
        # Known by reasoning: 1 g and 2 g on the two positions at 0° give 300 g·mm.
        assert front.entries[2].residual_norm == pytest.approx(0.0, abs=1e-9 * scale * scale)
