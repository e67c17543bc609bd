"""Unit conversions against their definitions, and their round trips.

[NISTHB44] (REFERENCES.md): 1 in = 25.4 mm, 1 lb = 0.45359237 kg and
1 oz = 1/16 lb = 28.349523125 g, all exact by definition; so
1 oz·in = 28.349523125 × 25.4 = 720.077887375 g·mm exactly (checked by hand).
The exact values are compared with Python's ``fractions`` (rational
arithmetic, no rounding), the floats within one part in 1e15.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
from hypothesis import given
from hypothesis import strategies as st

from placer import units
from placer.errors import InputError

IN_MM = Fraction("25.4")
LB_KG = Fraction("0.45359237")
OZ_G = LB_KG * 1000 / 16


def test_constants_are_the_definitions():
    # [NISTHB44]: each constant is the float nearest the exact definition.
    assert units.MM_PER_IN == float(IN_MM)
    assert units.KG_PER_LB == float(LB_KG)
    assert OZ_G == Fraction("28.349523125")                 # 1/16 lb, exactly
    assert units.G_PER_OZ == pytest.approx(float(OZ_G), rel=1e-15)
    assert OZ_G * IN_MM == Fraction("720.077887375")        # 1 oz·in, by hand
    assert units.GMM_PER_OZ_IN == pytest.approx(float(OZ_G * IN_MM), rel=1e-15)


@pytest.mark.parametrize("forward, value, exact", [
    # [NISTHB44] definitions, applied to round values.
    (units.mm_from_in, 1.0, IN_MM), (units.mm_from_in, 8.75, Fraction("8.75") * IN_MM),
    (units.g_from_oz, 0.25, OZ_G / 4), (units.g_from_oz, 16.0, LB_KG * 1000),
    (units.kg_from_lb, 1000.0, 1000 * LB_KG),
    (units.gmm_from_oz_in, 1.0, OZ_G * IN_MM),
])
def test_conversions_against_the_definitions(forward, value, exact):
    assert forward(value) == pytest.approx(float(exact), rel=1e-15)


PAIRS = [(units.mm_from_in, units.in_from_mm), (units.g_from_oz, units.oz_from_g),
         (units.kg_from_lb, units.lb_from_kg), (units.gmm_from_oz_in, units.oz_in_from_gmm)]


@given(st.floats(min_value=1e-9, max_value=1e9), st.sampled_from(PAIRS))
def test_round_trips(value, pair):
    # There and back gives the value again, to floating-point rounding.
    forward, back = pair
    assert back(forward(value)) == pytest.approx(value, rel=1e-14)
    assert forward(back(value)) == pytest.approx(value, rel=1e-14)


def test_an_ounce_inch_is_an_ounce_at_an_inch():
    # U = m·r (ISO 21940-11): 1 oz at 1 in is 1 oz·in, in either unit system.
    assert units.gmm_from_oz_in(1.0) == pytest.approx(units.g_from_oz(1.0)
                                                      * units.mm_from_in(1.0), rel=1e-15)
    assert units.mass_at_radius_g(units.gmm_from_oz_in(2.0), units.mm_from_in(4.0)) == \
        pytest.approx(units.g_from_oz(0.5), rel=1e-15)


def test_file_factors_are_the_conversions():
    # The factors readers multiply by are the same definitions.
    assert units.MASS_UNITS["oz"] == units.G_PER_OZ
    assert units.LENGTH_UNITS["in"] == units.MM_PER_IN
    assert units.UNBALANCE_UNITS["oz_in"] == units.GMM_PER_OZ_IN
    assert units.ROTOR_MASS_UNITS["lb"] == units.KG_PER_LB


@pytest.mark.parametrize("value, digits, text", [
    # Significant digits, never fixed decimals: a reading of 0.0012 in/s is not "0.00".
    (0.0012, 3, "0.0012"), (0.00123456, 3, "0.00123"), (1639.84, 4, "1640"),
    (62.8123, 4, "62.81"), (2.5, 3, "2.5"), (0.0, 3, "0"), (-0.000457, 3, "-0.000457"),
    (9.9996, 3, "10"), (123456.0, 3, "123456"), (float("nan"), 3, "-")])
def test_significant_digits(value, digits, text):
    assert units.significant(value, digits) == text


def test_unit_systems_show_values_in_their_units():
    assert units.METRIC.mass_text(6.27) == "6.27 g"
    assert units.IMPERIAL.mass_text(units.g_from_oz(0.25)) == "0.25 oz"
    assert units.IMPERIAL.length_text(units.mm_from_in(8.75)) == "8.75 in"
    assert units.IMPERIAL.unbalance_text(units.gmm_from_oz_in(1.5)) == "1.5 oz·in"
    assert units.IMPERIAL.rotor_mass_text(units.kg_from_lb(68.0)) == "68 lb"
    with pytest.raises(InputError):
        units.UnitSystem("furlongs")
