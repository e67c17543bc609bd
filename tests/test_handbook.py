"""Tests of placer.handbook: the law-of-sines split and the method done by hand.

Published checks come first (US Bureau of Reclamation FIST Volume 2-2,
example 4; the mid-pitch rule, REFERENCES.md [FIST2-2]), then checks
against numpy (the split recombines to the original vector; a 2x2 linear
solve gives the same shares), then cases whose answer is clear by reasoning.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest

from placer.errors import InputError
from placer.handbook import (
    bracketing_positions,
    handbook_plan,
    nearest_item,
    residual_gmm,
    split_between,
)

# FIST Volume 2-2 prints the exact split to 0.01 lb, so it agrees with the
# exact value to half a unit of its last digit.
FIST_PRINTED_TOL_LB = 0.006
# Identities checked against numpy: floating-point rounding only.
FLOAT_RTOL = 1e-12


def polar(magnitude: float, angle_deg: float) -> complex:
    return cmath.rect(magnitude, math.radians(angle_deg))


# --------------------------------------------------------------- published
def test_fist_example_4_exact_split() -> None:
    # US Bureau of Reclamation, FIST Volume 2-2, "Field Balancing Large
    # Rotating Machinery", example 4: 50 lb at 15°, arms at 0° and 60°.
    # Exact split printed as 40.82 lb and 14.94 lb; recomputed here:
    # 50·sin 45°/sin 60° = 40.8248, 50·sin 15°/sin 60° = 14.9429.
    # The manual's graphical answer, 42 lb at 0° and 15 lb at 60°, is read
    # off a vector drawing (1.18 lb and 0.06 lb from the exact split), so it
    # is not asserted: only the exact figures are printed to 0.01 lb.
    at_0_lb, at_60_lb = split_between(polar(50.0, 15.0), 0.0, 60.0)
    assert at_0_lb == pytest.approx(40.82, abs=FIST_PRINTED_TOL_LB)
    assert at_60_lb == pytest.approx(14.94, abs=FIST_PRINTED_TOL_LB)


@pytest.mark.parametrize("pitch_deg", [10.0, 30.0, 45.0, 60.0, 90.0, 120.0, 150.0])
def test_mid_pitch_total_is_m_over_cos_half_pitch(pitch_deg: float) -> None:
    # REFERENCES.md [FIST2-2], splitting a correction onto two fixed
    # positions: mid-pitch the split needs total = m / cos(Δ/2).
    angle_a_deg = 20.0
    correction = polar(100.0, angle_a_deg + pitch_deg / 2.0)
    share_a, share_b = split_between(correction, angle_a_deg, angle_a_deg + pitch_deg)
    assert share_a + share_b == pytest.approx(100.0 / math.cos(math.radians(pitch_deg / 2.0)),
                                              rel=FLOAT_RTOL)
    assert share_a == pytest.approx(share_b, rel=FLOAT_RTOL)


# --------------------------------------------------------------- numpy checks
def test_shares_recombine_to_the_correction() -> None:
    # Law of sines is exact: m_a∠θa + m_b∠θb = m∠θ (checked with numpy).
    rng = np.random.default_rng(20240611)
    for _ in range(200):
        magnitude = rng.uniform(1.0, 5000.0)
        angle_deg = rng.uniform(-360.0, 720.0)
        angle_a_deg = rng.uniform(0.0, 360.0)
        angle_b_deg = angle_a_deg + rng.uniform(5.0, 175.0) * rng.choice([-1.0, 1.0])
        radius_a_mm, radius_b_mm = rng.uniform(50.0, 400.0, size=2)
        correction = polar(magnitude, angle_deg)
        mass_a_g, mass_b_g = split_between(correction, angle_a_deg, angle_b_deg,
                                           radius_a_mm, radius_b_mm)
        rebuilt = (mass_a_g * radius_a_mm * np.exp(1j * np.radians(angle_a_deg))
                   + mass_b_g * radius_b_mm * np.exp(1j * np.radians(angle_b_deg)))
        np.testing.assert_allclose(rebuilt, correction, rtol=1e-9, atol=1e-9 * magnitude)


def test_split_matches_a_linear_solve() -> None:
    # Independent route: solve [cos θa cos θb; sin θa sin θb]·u = c with numpy.
    correction = polar(1234.5, 73.0)
    angle_a_deg, angle_b_deg = 40.0, 115.0
    matrix = np.array([[math.cos(math.radians(angle_a_deg)), math.cos(math.radians(angle_b_deg))],
                       [math.sin(math.radians(angle_a_deg)), math.sin(math.radians(angle_b_deg))]])
    expected = np.linalg.solve(matrix, [correction.real, correction.imag])
    np.testing.assert_allclose(split_between(correction, angle_a_deg, angle_b_deg), expected,
                               rtol=1e-10)


def test_different_radii_split_the_gmm_vector_then_divide() -> None:
    # 1000 g·mm at 30° onto 0° at 100 mm and 90° at 200 mm: the g·mm shares
    # are 1000·sin 60°/sin 90° = 866.025 and 1000·sin 30°/sin 90° = 500,
    # so 8.66025 g and 2.5 g (recomputed by hand).
    mass_a_g, mass_b_g = split_between(polar(1000.0, 30.0), 0.0, 90.0, 100.0, 200.0)
    assert mass_a_g == pytest.approx(1000.0 * math.sin(math.radians(60.0)) / 100.0,
                                     rel=FLOAT_RTOL)
    assert mass_b_g == pytest.approx(2.5, rel=FLOAT_RTOL)
    unit_a, unit_b = split_between(polar(1000.0, 30.0), 0.0, 90.0)
    assert mass_a_g * 100.0 == pytest.approx(unit_a, rel=FLOAT_RTOL)
    assert mass_b_g * 200.0 == pytest.approx(unit_b, rel=FLOAT_RTOL)


def test_correction_outside_the_pair_gives_a_negative_share() -> None:
    # 10 at 100° onto 0° and 60°: sin(60° − 100°) < 0, so the 0° share is
    # negative (the correction is not between the positions).
    share_a, share_b = split_between(polar(10.0, 100.0), 0.0, 60.0)
    assert share_a < 0.0 < share_b


@pytest.mark.parametrize("angle_a_deg, angle_b_deg", [(0.0, 180.0), (30.0, 30.0),
                                                      (0.0, 360.0), (45.0, -135.0)])
def test_collinear_positions_raise(angle_a_deg: float, angle_b_deg: float) -> None:
    with pytest.raises(ValueError, match="collinear"):
        split_between(polar(10.0, 20.0), angle_a_deg, angle_b_deg)
    with pytest.raises(InputError):
        split_between(polar(10.0, 20.0), angle_a_deg, angle_b_deg)


def test_non_positive_radius_raises() -> None:
    with pytest.raises(InputError):
        split_between(polar(10.0, 20.0), 0.0, 60.0, 0.0, 100.0)


# --------------------------------------------------------------- bracketing
TWELVE_HOLES_DEG = [30.0 * n for n in range(12)]


def test_bracketing_wraps_through_zero() -> None:
    # 350° on a 12-hole circle lies between hole 11 (330°) and hole 0 (0°).
    assert bracketing_positions(350.0, TWELVE_HOLES_DEG, [True] * 12) == (11, 0)
    assert bracketing_positions(-10.0, TWELVE_HOLES_DEG, [True] * 12) == (11, 0)
    assert bracketing_positions(710.0, TWELVE_HOLES_DEG, [True] * 12) == (11, 0)
    assert bracketing_positions(5.0, TWELVE_HOLES_DEG, [True] * 12) == (0, 1)


def test_bracketing_skips_blocked_positions() -> None:
    usable = [True] * 12
    usable[0] = usable[11] = False
    assert bracketing_positions(350.0, TWELVE_HOLES_DEG, usable) == (10, 1)


def test_bracketing_on_a_position_returns_it_twice() -> None:
    assert bracketing_positions(90.0, TWELVE_HOLES_DEG, [True] * 12) == (3, 3)
    assert bracketing_positions(360.0, TWELVE_HOLES_DEG, [True] * 12) == (0, 0)


def test_bracketing_angles_given_outside_0_360() -> None:
    holes_deg = [-30.0, 0.0, 390.0]          # 330°, 0°, 30°
    assert bracketing_positions(345.0, holes_deg, [True] * 3) == (0, 1)
    assert bracketing_positions(15.0, holes_deg, [True] * 3) == (1, 2)


def test_bracketing_single_usable_position() -> None:
    usable = [False] * 12
    usable[4] = True
    assert bracketing_positions(10.0, TWELVE_HOLES_DEG, usable) == (4, 4)


def test_bracketing_errors() -> None:
    with pytest.raises(InputError):
        bracketing_positions(10.0, TWELVE_HOLES_DEG, [False] * 12)
    with pytest.raises(InputError):
        bracketing_positions(10.0, TWELVE_HOLES_DEG, [True] * 11)


# --------------------------------------------------------------- handbook plan
WASHERS_G = [1.83, 3.57, 6.27]          # made-up stock for these cases
RADII_150_MM = [150.0] * 12


def test_nearest_item_rounding() -> None:
    assert nearest_item(3.45, WASHERS_G) == 1
    assert nearest_item(0.9, WASHERS_G) is None        # nearer 0 than 1.83
    assert nearest_item(0.915, WASHERS_G) == 0         # exactly half: the part
    assert nearest_item(-2.0, WASHERS_G) is None
    assert nearest_item(40.0, WASHERS_G) == 2


def test_handbook_plan_mid_pitch() -> None:
    # 1000 g·mm at 15°, holes at 0° and 30° of a 150 mm circle.  Mid-pitch,
    # each share is 1000/(2·cos 15°)/150 = 3.451 g; the nearest washer is
    # 3.57 g (0.12 g off; 1.83 g is 1.62 g off), one on each hole.  The two
    # give 2·3.57·150·cos 15° = 1034.50 g·mm along 15°, so the residual is
    # 34.50 g·mm (recomputed by hand).
    correction = polar(1000.0, 15.0)
    parts = handbook_plan(correction, TWELVE_HOLES_DEG, RADII_150_MM, [True] * 12, WASHERS_G)
    assert parts == [(0, 1, 1), (1, 1, 1)]
    expected_gmm = 2 * 3.57 * 150.0 * math.cos(math.radians(15.0)) - 1000.0
    assert residual_gmm(correction, parts, TWELVE_HOLES_DEG, RADII_150_MM,
                        WASHERS_G) == pytest.approx(expected_gmm, rel=1e-12)


def test_handbook_plan_small_share_gets_no_part() -> None:
    # 1000 g·mm at 1°: the 30° share is 1000·sin 1°/sin 30°/150 = 0.233 g,
    # nearer 0 than 1.83 g, so no part; the 0° share 1000·sin 29°/sin 30°/150
    # = 6.464 g takes the 6.27 g washer.
    parts = handbook_plan(polar(1000.0, 1.0), TWELVE_HOLES_DEG, RADII_150_MM, [True] * 12,
                          WASHERS_G)
    assert parts == [(0, 2, 1)]


def test_handbook_plan_on_a_hole_and_around_a_blocked_one() -> None:
    # 940.5 g·mm exactly at 90° (hole 3) is 6.27 g there.
    parts = handbook_plan(polar(6.27 * 150.0, 90.0), TWELVE_HOLES_DEG, RADII_150_MM,
                          [True] * 12, WASHERS_G)
    assert parts == [(3, 2, 1)]
    assert residual_gmm(polar(6.27 * 150.0, 90.0), parts, TWELVE_HOLES_DEG, RADII_150_MM,
                        WASHERS_G) == pytest.approx(0.0, abs=1e-9)
    # With hole 3 blocked, the same correction splits evenly onto holes 2 and
    # 4 (60° and 120°): 6.27/(2·cos 30°) = 3.620 g each, nearest 3.57 g.
    usable = [True] * 12
    usable[3] = False
    parts = handbook_plan(polar(6.27 * 150.0, 90.0), TWELVE_HOLES_DEG, RADII_150_MM, usable,
                          WASHERS_G)
    assert parts == [(2, 1, 1), (4, 1, 1)]


def test_handbook_plan_cannot_add_mass_behind_the_correction() -> None:
    # Only 0° and 90° usable, correction at 200°: mass added at 0° or 90°
    # only moves the sum further from (−0.94, −0.34), so no part, and the
    # residual is the whole correction.
    usable = [False] * 12
    usable[0] = usable[3] = True
    correction = polar(500.0, 200.0)
    parts = handbook_plan(correction, TWELVE_HOLES_DEG, RADII_150_MM, usable, WASHERS_G)
    assert parts == []
    assert residual_gmm(correction, parts, TWELVE_HOLES_DEG, RADII_150_MM,
                        WASHERS_G) == pytest.approx(500.0, rel=1e-12)


def test_residual_matches_numpy_vector_sum() -> None:
    parts = [(0, 1, 2), (5, 0, 1)]
    correction = polar(2000.0, 100.0)
    angles = np.radians(TWELVE_HOLES_DEG)
    fitted = (2 * 3.57 * 150.0 * np.exp(1j * angles[0])
              + 1 * 1.83 * 150.0 * np.exp(1j * angles[5]))
    assert residual_gmm(correction, parts, TWELVE_HOLES_DEG, RADII_150_MM,
                        WASHERS_G) == pytest.approx(abs(correction - fitted), rel=1e-12)
