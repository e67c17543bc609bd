"""Checks of placer.tolerance against published formulas and worked examples.

Sources are named beside each check; "REFERENCES" is the repository's REFERENCES.md.
Tolerances follow the printed precision of the source, as stated at each check.
"""

from __future__ import annotations

import math

import pytest

from placer.errors import ToleranceError
from placer.tolerance import (
    BALANCE_QUALITY_GRADES_MM_S,
    SHARE_LIMITS,
    PlaneShare,
    allocate_to_planes,
    api_617_limit_gmm,
    parse_grade,
    permissible_eccentricity_um,
    permissible_residual_gmm,
)
from placer.units import GMM_PER_OZ_IN as OZ_IN_TO_GMM
from placer.units import KG_PER_LB as LB_TO_KG

# --------------------------------------------------------------------------
# Grades and constants
# --------------------------------------------------------------------------


def test_grade_list_is_the_standards():
    # ISO 21940-11:2016 Table 1, as listed in REFERENCES ("Balance quality").
    assert BALANCE_QUALITY_GRADES_MM_S == (
        4000, 1600, 630, 250, 100, 40, 16, 6.3, 2.5, 1, 0.4)


def test_grade_steps_are_about_2_5():
    # REFERENCES: "steps of about 2.5".  Recomputed ratios lie between
    # 2.5 and 2.54 (e.g. 16/6.3 = 2.5397, 4000/1600 = 2.5).
    grades = BALANCE_QUALITY_GRADES_MM_S
    for coarse, fine in zip(grades, grades[1:]):
        assert 2.45 <= coarse / fine <= 2.55


def test_pound_is_exact_by_definition():
    # Definition of the avoirdupois pound: 1 lb = 0.45359237 kg exactly.
    assert LB_TO_KG == 0.45359237


def test_ounce_inch_in_gram_millimetres():
    # [EnergyTech] prints 1 oz*in = 720.078 g*mm, to 3 decimals: the exact
    # value of [NISTHB44] (28.349523125 g * 25.4 mm = 720.077887375 g*mm)
    # rounds to the article's figure.
    assert round(OZ_IN_TO_GMM, 3) == 720.078
    assert OZ_IN_TO_GMM == pytest.approx(0.45359237 * 1000.0 / 16.0 * 25.4, rel=1e-15)


def test_share_limits_value():
    # REFERENCES: neither share above 0.7 U_per nor below 0.3 U_per
    # (from memory, as REFERENCES says).
    assert SHARE_LIMITS == (0.3, 0.7)


# --------------------------------------------------------------------------
# parse_grade
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("given", "grade"),
    [
        ("G6.3", 6.3), ("g 6.3", 6.3), ("6.3", 6.3), (6.3, 6.3), ("G 2.5", 2.5),
        ("G1", 1.0), (1, 1.0), ("  g0.4 ", 0.4), ("G4000", 4000.0), ("G 16", 16.0),
    ],
)
def test_parse_grade_accepts_common_spellings(given, grade):
    # Grade names as ISO 21940-11 Table 1 writes them (G followed by mm/s);
    # the loose spellings are this module's own rule, no source.
    assert parse_grade(given) == grade


def test_parse_grade_returns_listed_value():
    # Every grade of ISO 21940-11 Table 1 reads back as itself.
    for grade in BALANCE_QUALITY_GRADES_MM_S:
        assert parse_grade(f"G{grade:g}") == grade
        assert parse_grade(grade) == grade


def test_parse_grade_unknown_lists_valid_and_closest():
    # G3 is not a grade of ISO 21940-11 Table 1.
    with pytest.raises(ToleranceError) as caught:
        parse_grade("G3")
    error = caught.value
    assert error.key == "grade"
    for label in ("G4000", "G1600", "G630", "G250", "G100", "G40", "G16",
                  "G6.3", "G2.5", "G1", "G0.4"):
        assert label in error.expected
    # difflib ratio of "G3" is 2*2/6 = 0.667 against both "G6.3" and "G630";
    # the documented tie-break (nearer in value) picks G6.3.  Nearest grade
    # in value (log scale) is G2.5 (3/2.5 = 1.2 < 6.3/3 = 2.1).
    assert "closest spelling G6.3" in str(error)
    assert "nearest in value G2.5" in str(error)
    assert isinstance(error, ValueError)


@pytest.mark.parametrize("given", ["", "G", "Gx", "six", "G-6.3", 0, -6.3, math.nan,
                                   math.inf, True, None, [6.3]])
def test_parse_grade_rejects_non_grades(given):
    # Only the grades of ISO 21940-11 Table 1 are accepted.
    with pytest.raises(ToleranceError) as caught:
        parse_grade(given)
    assert caught.value.key == "grade"


def test_parse_grade_misspelt_number_names_tied_spellings():
    # "G25" reads as 25 mm/s, not a grade.  difflib ratio is 2*3/7 = 0.857
    # against both "G250" and "G2.5", and both are a factor 10 away in value,
    # so both are named (this module's documented tie rule, no source).
    # Nearest in value: 25/16 = 1.5625 < 40/25 = 1.6, so G16.
    with pytest.raises(ToleranceError) as caught:
        parse_grade("g 25")
    assert "closest spelling G250 or G2.5" in str(caught.value)
    assert "nearest in value G16" in str(caught.value)


def test_parse_grade_garbage_gets_no_spelling_hint():
    # "Gx" is at most 2*1/4 = 0.5 similar to any grade, below difflib's usual
    # cutoff 0.6, so no spelling is suggested; the valid grades are listed.
    with pytest.raises(ToleranceError) as caught:
        parse_grade("Gx")
    assert "closest" not in str(caught.value)
    assert "G6.3" in caught.value.expected


# --------------------------------------------------------------------------
# permissible_residual_gmm and permissible_eccentricity_um
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("grade_mm_s", "mass_kg", "service_rpm"),
    [(6.3, 42.0, 1480.0), (2.5, 12.0, 2950.0), (0.4, 1.5, 30000.0),
     (40.0, 850.0, 600.0), (16.0, 3.2, 975.0), (1.0, 1.0, 1.0)],
)
def test_residual_matches_9549_form(grade_mm_s, mass_kg, service_rpm):
    # REFERENCES (ISO 21940-11): U_per = 9549.297 * G * m / n.  The constant
    # 60000 / (2 pi) = 9549.29659 is printed to 7 significant figures, so the
    # relative difference is at most 4.3e-8; tolerance rel 1e-7.
    expected = 9549.297 * grade_mm_s * mass_kg / service_rpm
    assert permissible_residual_gmm(grade_mm_s, mass_kg, service_rpm) == pytest.approx(
        expected, rel=1e-7)


def test_residual_worked_example_fan():
    # Worked example recomputed by hand from ISO 21940-11 U_per = 1000 G m / omega:
    # G6.3, 42 kg, 1480 r/min: omega = 2 pi 1480 / 60 = 154.9852 rad/s,
    # U_per = 1000 * 6.3 * 42 / 154.9852 = 264600 / 154.9852 = 1707.26 g*mm.
    # Stated to 2 decimals, tolerance 0.005 g*mm.
    assert permissible_residual_gmm(6.3, 42.0, 1480.0) == pytest.approx(1707.26, abs=0.005)


def test_residual_command_line_example():
    # The command-line example G2.5, 12 kg, 2950 r/min, recomputed by hand
    # from ISO 21940-11: omega = 2 pi 2950 / 60 = 308.9233 rad/s,
    # U_per = 1000 * 2.5 * 12 / 308.9233 = 30000 / 308.9233 = 97.11 g*mm.
    # Stated to 2 decimals, tolerance 0.005 g*mm.
    assert permissible_residual_gmm(2.5, 12.0, 2950.0) == pytest.approx(97.11, abs=0.005)


def test_energy_tech_example_total_and_per_plane():
    # REFERENCES, Energy-Tech magazine article comparing API 617, MIL-STD-167
    # and ISO 1940-1: 1000 lb rotor, 15 000 r/min, G 2.5 gives U_per = 1.0 oz*in,
    # 0.5 oz*in per plane for a symmetric rotor.  Printed to 1 decimal:
    # tolerance 0.05 oz*in.  (Exact: 721.91 g*mm = 1.0026 oz*in.)
    total_gmm = permissible_residual_gmm(2.5, 1000.0 * LB_TO_KG, 15000.0)
    assert total_gmm / OZ_IN_TO_GMM == pytest.approx(1.0, abs=0.05)
    shares = allocate_to_planes(total_gmm, ["A", "B"])
    for share in shares:
        assert share.permissible_gmm / OZ_IN_TO_GMM == pytest.approx(0.5, abs=0.05)


def test_energy_tech_inch_form_agrees():
    # REFERENCES (same article): inch form U_per [oz*in] = 6.0153 * G * W[lb] / n.
    # 6.0153 is printed to 5 significant figures; the article's form and
    # the SI form must agree to 0.1 %.  6.0153 * 2.5 * 1000 / 15000 = 1.00255.
    inch_form_oz_in = 6.0153 * 2.5 * 1000.0 / 15000.0
    si_form_oz_in = permissible_residual_gmm(2.5, 1000.0 * LB_TO_KG, 15000.0) / OZ_IN_TO_GMM
    assert si_form_oz_in == pytest.approx(inch_form_oz_in, rel=1e-3)


def test_eccentricity_definition():
    # ISO 21940-11 (REFERENCES): G = e_per * omega.  G6.3 at 1480 r/min:
    # e_per = 6.3 / 154.9852 mm = 40.649 um (recomputed by hand, 3 decimals).
    e_um = permissible_eccentricity_um(6.3, 1480.0)
    assert e_um == pytest.approx(40.649, abs=0.0005)
    omega_rad_s = 2.0 * math.pi * 1480.0 / 60.0
    assert e_um / 1000.0 * omega_rad_s == pytest.approx(6.3, rel=1e-12)


@pytest.mark.parametrize(("grade_mm_s", "mass_kg", "service_rpm"),
                         [(6.3, 42.0, 1480.0), (2.5, 12.0, 2950.0), (0.4, 0.25, 60000.0)])
def test_eccentricity_times_mass_is_residual(grade_mm_s, mass_kg, service_rpm):
    # ISO 21940-11: U_per = e_per * m; with e in um and m in kg the product
    # is in g*mm (1 um * 1 kg = 1e-3 mm * 1000 g).  Floating-point identity.
    e_um = permissible_eccentricity_um(grade_mm_s, service_rpm)
    assert e_um * mass_kg == pytest.approx(
        permissible_residual_gmm(grade_mm_s, mass_kg, service_rpm), rel=1e-12)


@pytest.mark.parametrize("bad", [0, 0.0, -1.0, -42.0, math.nan, math.inf, -math.inf,
                                 "42", None, True])
def test_residual_rejects_bad_mass(bad):
    # A rotor mass must be positive and finite (common practice, no source).
    with pytest.raises(ToleranceError) as caught:
        permissible_residual_gmm(6.3, bad, 1480.0)
    assert caught.value.key == "mass_kg"
    assert "kg" in caught.value.expected


@pytest.mark.parametrize("bad", [0, 0.0, -1480.0, math.nan, math.inf, "1480", None])
def test_residual_rejects_bad_speed(bad):
    # A service speed must be positive and finite (common practice, no source).
    with pytest.raises(ToleranceError) as caught:
        permissible_residual_gmm(6.3, 42.0, bad)
    assert caught.value.key == "service_rpm"
    with pytest.raises(ToleranceError) as caught:
        permissible_eccentricity_um(6.3, bad)
    assert caught.value.key == "service_rpm"


@pytest.mark.parametrize("bad", [0.0, -6.3, math.nan, math.inf])
def test_residual_rejects_bad_grade(bad):
    # A grade must be positive and finite (ISO 21940-11 grades are all > 0).
    with pytest.raises(ToleranceError) as caught:
        permissible_residual_gmm(bad, 42.0, 1480.0)
    assert caught.value.key == "grade"


# --------------------------------------------------------------------------
# allocate_to_planes
# --------------------------------------------------------------------------


def test_one_plane_gets_full_value():
    # REFERENCES: disc corrected in one plane: the full value in that plane
    # (older handbook rule, Bloch and Geitner).
    (share,) = allocate_to_planes(97.11, ["rim"])
    assert share == PlaneShare(name="rim", share=1.0, permissible_gmm=97.11)


def test_two_planes_without_distances_half_each():
    # REFERENCES (ISO 21940-11): symmetric rotor: half each.
    shares = allocate_to_planes(1707.26, ["drive", "free"])
    assert [s.name for s in shares] == ["drive", "free"]
    assert [s.share for s in shares] == [0.5, 0.5]
    assert [s.permissible_gmm for s in shares] == pytest.approx([853.63, 853.63], abs=1e-9)


def test_lever_rule_without_clamping():
    # REFERENCES (ISO 21940-11): U_A = U L_B / L, U_B = U L_A / L.
    # U = 1000 g*mm, L_A = 200 mm, L_B = 300 mm, L = 500 mm:
    # U_A = 1000 * 300 / 500 = 600 g*mm, U_B = 1000 * 200 / 500 = 400 g*mm,
    # both within [300, 700], no clamping.  Exact arithmetic, tolerance 1e-9.
    share_a, share_b = allocate_to_planes(1000.0, ["A", "B"], (200.0, 300.0))
    assert share_a.permissible_gmm == pytest.approx(600.0, abs=1e-9)
    assert share_b.permissible_gmm == pytest.approx(400.0, abs=1e-9)
    assert share_a.share == pytest.approx(0.6, abs=1e-12)
    assert share_b.share == pytest.approx(0.4, abs=1e-12)


def test_lever_rule_equal_distances_is_half_each():
    # REFERENCES: centre of mass midway (symmetric rotor): half each.
    shares = allocate_to_planes(721.91, ["A", "B"], (250.0, 250.0))
    assert [s.permissible_gmm for s in shares] == pytest.approx([360.955, 360.955], abs=1e-9)


def test_lever_rule_with_clamping():
    # REFERENCES (ISO 21940-11 lever rule; 0.3/0.7 limits from memory):
    # U = 1000 g*mm, L_A = 100 mm, L_B = 900 mm: lever rule gives
    # U_A = 900, U_B = 100 g*mm; clamped to U_A = 700, U_B = 300 g*mm.
    share_a, share_b = allocate_to_planes(1000.0, ["A", "B"], (100.0, 900.0))
    assert share_a.permissible_gmm == pytest.approx(700.0, abs=1e-9)
    assert share_b.permissible_gmm == pytest.approx(300.0, abs=1e-9)
    assert share_a.permissible_gmm + share_b.permissible_gmm == pytest.approx(1000.0, abs=1e-9)


def test_lever_rule_centre_of_mass_in_a_plane_is_clamped():
    # L_A = 0: lever rule gives all of U to plane A, clamped to 0.7 / 0.3
    # (limits from memory, see above).
    share_a, share_b = allocate_to_planes(500.0, ["A", "B"], (0.0, 400.0))
    assert (share_a.share, share_b.share) == (0.7, 0.3)


def test_lever_rule_clamp_boundary_exact():
    # L_A = 300, L_B = 700: lever shares 0.7 and 0.3, exactly at the limits.
    share_a, share_b = allocate_to_planes(1000.0, ["A", "B"], (300.0, 700.0))
    assert share_a.permissible_gmm == pytest.approx(700.0, abs=1e-9)
    assert share_b.permissible_gmm == pytest.approx(300.0, abs=1e-9)


def test_overhung_rotor_uses_absolute_distances():
    # This module's documented simplification (no source): a centre of mass
    # outside the planes, given as a signed distance, is treated by absolute
    # values.  (-100, 300) -> (100, 300): U_A = 750 -> 700, U_B = 250 -> 300.
    signed = allocate_to_planes(1000.0, ["A", "B"], (-100.0, 300.0))
    absolute = allocate_to_planes(1000.0, ["A", "B"], (100.0, 300.0))
    assert signed == absolute
    assert [s.permissible_gmm for s in signed] == pytest.approx([700.0, 300.0], abs=1e-9)


def test_more_than_two_planes_equal_shares():
    # This module's documented rule (not from the standard): k planes get
    # U_per / k each.  900 g*mm over 3 planes: 300 g*mm each.
    shares = allocate_to_planes(900.0, ["A", "B", "C"])
    assert [s.name for s in shares] == ["A", "B", "C"]
    assert [s.permissible_gmm for s in shares] == pytest.approx([300.0] * 3, abs=1e-9)
    assert sum(s.share for s in shares) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize(
    ("names", "distances", "key"),
    [
        ([], None, "planes"),
        (["A", "A"], None, "planes"),
        ("AB", None, "planes"),
        (["A", 2], None, "planes"),
        (["A"], (100.0, 200.0), "distances_mm"),
        (["A", "B", "C"], (100.0, 200.0), "distances_mm"),
        (["A", "B"], (100.0,), "distances_mm"),
        (["A", "B"], (100.0, 200.0, 300.0), "distances_mm"),
        (["A", "B"], (0.0, 0.0), "distances_mm"),
        (["A", "B"], (math.nan, 200.0), "distances_mm"),
        (["A", "B"], (100.0, math.inf), "distances_mm"),
    ],
)
def test_allocation_rejects_bad_input(names, distances, key):
    # Input checks of this module (no source).
    with pytest.raises(ToleranceError) as caught:
        allocate_to_planes(1000.0, names, distances)
    assert caught.value.key == key


@pytest.mark.parametrize("bad", [0.0, -10.0, math.nan, math.inf])
def test_allocation_rejects_bad_total(bad):
    # A permissible residual must be positive and finite (no source).
    with pytest.raises(ToleranceError) as caught:
        allocate_to_planes(bad, ["A", "B"])
    assert caught.value.key == "u_per_gmm"


def test_plane_share_is_frozen():
    # STYLE.md: frozen dataclasses for domain values.
    share = PlaneShare(name="A", share=0.5, permissible_gmm=10.0)
    with pytest.raises(AttributeError):
        share.share = 0.6  # type: ignore[misc]


# --------------------------------------------------------------------------
# api_617_limit_gmm
# --------------------------------------------------------------------------


def test_api_example_per_plane():
    # REFERENCES (Energy-Tech article, API 617 / API 610 style limit):
    # 500 lb per journal at 15 000 r/min gives 0.13 oz*in per plane, printed
    # to 2 decimals: tolerance 0.005 oz*in.  (Exact: 96.01 g*mm = 0.1333 oz*in.)
    limit_gmm = api_617_limit_gmm(500.0 * LB_TO_KG, 15000.0)
    assert limit_gmm / OZ_IN_TO_GMM == pytest.approx(0.13, abs=0.005)


def test_api_si_form_matches_inch_form():
    # REFERENCES: U_max = 4 W / N [oz*in, lb]; SI form 6350 W / N [g*mm, kg].
    # 4 * 720.078 / 0.45359237 = 6350.001, so the forms agree to 2e-7;
    # tolerance rel 1e-6.
    for load_lb, speed_rpm in [(500.0, 15000.0), (1200.0, 9000.0), (80.0, 3600.0)]:
        inch_form_oz_in = 4.0 * load_lb / speed_rpm
        si_form_oz_in = api_617_limit_gmm(load_lb * LB_TO_KG, speed_rpm) / OZ_IN_TO_GMM
        assert si_form_oz_in == pytest.approx(inch_form_oz_in, rel=1e-6)


def test_api_limit_is_about_grade_0_665():
    # REFERENCES: the API limit is "about grade G 0.665 on the journal load".
    # 6350 / 9549.297 = 0.66497; printed to 3 decimals: tolerance 0.0005.
    load_kg, speed_rpm = 226.796, 15000.0
    ratio = api_617_limit_gmm(load_kg, speed_rpm) / permissible_residual_gmm(
        1.0, load_kg, speed_rpm)
    assert ratio == pytest.approx(0.665, abs=0.0005)


@pytest.mark.parametrize(
    ("load_kg", "speed_rpm", "key"),
    [(0.0, 15000.0, "journal_load_kg"), (-1.0, 15000.0, "journal_load_kg"),
     (math.nan, 15000.0, "journal_load_kg"), (226.8, 0.0, "max_continuous_rpm"),
     (226.8, -3600.0, "max_continuous_rpm"), (226.8, math.inf, "max_continuous_rpm")],
)
def test_api_limit_rejects_bad_input(load_kg, speed_rpm, key):
    # Load and speed must be positive and finite (no source).
    with pytest.raises(ToleranceError) as caught:
        api_617_limit_gmm(load_kg, speed_rpm)
    assert caught.value.key == key
