"""Domain values of blade arrangement: checked on construction, slots numbered from 1."""

from __future__ import annotations

import math

import numpy as np
import pytest

from placer.blades import ArrangementResult, Blade, Disc, Limits, check_blades
from placer.engine.arrangement import arrange
from placer.engine.arrangement.model import (
    build_problems,
    neighbour_pairs,
    opposite_pairs,
)
from placer.errors import InputError


@pytest.mark.parametrize("kwargs, key", [
    ({"blade_id": "", "moment_gmm": 1.0}, "blade_id"),
    ({"blade_id": "A", "moment_gmm": 0.0}, "blades[A].moment_gmm"),
    ({"blade_id": "A", "moment_gmm": math.nan}, "blades[A].moment_gmm"),
    ({"blade_id": "A", "moment_gmm": "12"}, "blades[A].moment_gmm"),
    ({"blade_id": "A", "moment_gmm": True}, "blades[A].moment_gmm"),
    ({"blade_id": "A", "moment_gmm": 1.0, "frequency_hz": -3.0}, "blades[A].frequency_hz"),
    ({"blade_id": "A", "moment_gmm": 1.0, "axial_moment_gmm2": math.inf},
     "blades[A].axial_moment_gmm2"),
])
def test_bad_blade(kwargs, key):
    with pytest.raises(InputError) as err:
        Blade(**kwargs)
    assert err.value.key == key and err.value.expected


def test_axial_moment_may_be_negative():
    # The axial offset of the centre of gravity is signed (common practice, no source).
    assert Blade("A", 10.0, axial_moment_gmm2=-50.0).axial_moment_gmm2 == -50.0


@pytest.mark.parametrize("kwargs, key", [
    ({"slot_count": 1}, "slot_count"),
    ({"slot_count": 3.0}, "slot_count"),
    ({"slot_count": 3, "angles_deg": (0.0, 90.0)}, "angles_deg"),
    ({"slot_count": 3, "angles_deg": (0.0, 90.0, 360.0)}, "angles_deg"),
    ({"slot_count": 3, "unbalance_gmm": -1.0}, "unbalance_gmm"),
    ({"slot_count": 3, "pinned": ((4, "A"),)}, "pinned[A]"),
    ({"slot_count": 3, "pinned": ((1, "A"), (1, "B"))}, "pinned"),
    ({"slot_count": 3, "pinned": ((1, "A"), (2, "A"))}, "pinned"),
    ({"slot_count": 3, "pinned": ((1,),)}, "pinned"),
    ({"slot_count": 3, "pinned": (5,)}, "pinned"),
    ({"slot_count": 5, "limits": Limits(alternate_frequency=True)}, "limits.alternate_frequency"),
])
def test_bad_disc(kwargs, key):
    with pytest.raises(InputError) as err:
        Disc(**kwargs)
    assert err.value.key == key


@pytest.mark.parametrize("kwargs", [{"opposite_gmm": -1.0}, {"neighbour_hz": math.nan},
                                    {"couple_gmm2": "5"}, {"alternate_frequency": 1}])
def test_bad_limits(kwargs):
    with pytest.raises(InputError):
        Limits(**kwargs)


def test_lists_become_tuples():
    disc = Disc(3, angles_deg=[0.0, 100.0, 200.0], pinned=[[2, "A"]])
    assert disc.angles_deg == (0.0, 100.0, 200.0) and disc.pinned == ((2, "A"),)
    assert hash(disc) == hash(Disc(3, angles_deg=(0.0, 100.0, 200.0), pinned=((2, "A"),)))


def test_equal_spacing_by_default():
    assert Disc(4).slot_angles_deg() == (0.0, 90.0, 180.0, 270.0)


def test_disc_unbalance_as_complex():
    # U = |U|·e^{iφ}: 100 g·mm at 90° is 100i.
    assert Disc(3, unbalance_gmm=100.0, unbalance_angle_deg=90.0).unbalance() == \
        pytest.approx(100j)


def blades(n, **extra):
    return tuple(Blade(f"B{i}", 10.0 + i, **extra) for i in range(1, n + 1))


@pytest.mark.parametrize("items, disc, key", [
    (blades(3), Disc(4), "blades"),
    (blades(2) + (Blade("B1", 3.0),), Disc(3), "blades"),
    (blades(3), Disc(3, pinned=((1, "X"),)), "pinned"),
    (blades(3), Disc(3, limits=Limits(neighbour_hz=2.0)), "blades[B1]"),
    (blades(3), Disc(3, limits=Limits(couple_gmm2=2.0)), "blades[B1]"),
    (blades(2) + (Blade("B3", 1.0, axial_moment_gmm2=2.0),), Disc(3), "blades"),
])
def test_blades_must_fit_disc(items, disc, key):
    with pytest.raises(InputError) as err:
        check_blades(items, disc)
    assert err.value.key == key


def test_opposite_slots_even_and_odd():
    # Even count: slot j faces j + n/2 ([OppositeDifferences]); odd count: the two slots either
    # side of the point opposite (the definition in placer.blades.Limits).
    assert opposite_pairs(np.arange(6) * 60.0) == [(0, 3), (1, 4), (2, 5)]
    odd = opposite_pairs(np.arange(5) * 72.0)
    assert odd == [(0, 2), (0, 3), (1, 3), (1, 4), (2, 4)]
    assert neighbour_pairs(5) == [(0, 1), (0, 4), (1, 2), (2, 3), (3, 4)]


def test_slots_in_angle_order_map_back():
    # Slots numbered out of angle order: the result speaks of slot numbers, not angle order.
    angles = (90.0, 0.0, 270.0, 180.0)
    items = (Blade("A", 10.0), Blade("B", 10.5), Blade("C", 11.0), Blade("D", 12.0))
    result = arrange(items, Disc(4, angles_deg=angles))
    z = np.exp(1j * np.radians(angles))
    weight = {b.blade_id: b.moment_gmm for b in items}
    static = sum(weight[i] * z[k] for k, i in enumerate(result.blade_ids))
    assert result.residual_gmm == pytest.approx(abs(static))
    assert result.residual_angle_deg == pytest.approx(math.degrees(np.angle(static)) % 360)
    assert result.blade_in(1) == result.blade_ids[0]
    assert result.slot_of()[result.blade_ids[2]] == 3


def test_pinned_blade_stays():
    items = blades(6)
    result = arrange(items, Disc(6, pinned=((4, "B2"),)))
    assert result.blade_in(4) == "B2"


def test_alternation_gives_two_phases():
    items = blades(4, frequency_hz=100.0)
    assert len(build_problems(items, Disc(4, limits=Limits(alternate_frequency=True)))) == 2


def test_result_refuses_bound_above_residual():
    with pytest.raises(ValueError):
        ArrangementResult(("A", "B"), 1.0, 0.0, None, 2.0, False, False, "x", 0)
