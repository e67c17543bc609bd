"""Influence coefficients, corrections and reading conventions against formulas and numpy.

No numeric worked example: REFERENCES.md gives the field-balancing formulas
(single plane, two planes, least squares) but no textbook example with
numbers for them (its only worked example with numbers, FIST Volume 2-2
example 4, is about splitting a weight between two positions).  So the
single-plane and two-plane results are checked against the closed-form
algebra written out in the tests (the quotient, and Cramer's rule for the
2×2 system), numpy.linalg.solve and numpy.linalg.lstsq, on synthetic
machines whose coefficients the tests set (invented data).
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest

from placer.geometry import polar
from placer.influence import (
    CoefficientMismatch,
    StoredCoefficients,
    adapt_stored,
    coefficients_from_runs,
    condition_number,
    least_squares_correction,
    static_couple,
    trial_mass_g,
)
from placer.readings import (
    amplitude_scale,
    convert_amplitude,
    phase_in_rotor_sense,
    sense_against_rotation,
)


def rect(a, deg):
    return cmath.rect(a, math.radians(deg))


def test_single_plane_matches_the_published_formula():
    # REFERENCES.md, influence coefficients, single plane: α = (V1 - V0)/T, W = -V0/α.
    v0, v1, t = rect(4.0, 30.0), rect(7.0, 75.0), rect(1000.0, 0.0)
    result = coefficients_from_runs(np.array([v0]), np.array([[v1]]), np.array([[t]]),
                                    ["s1"], ["p1"])
    alpha = (v1 - v0) / t
    assert result.matrix[0, 0] == pytest.approx(alpha, rel=1e-12)
    w = least_squares_correction(result.matrix, np.array([v0]))
    assert w[0] == pytest.approx(-v0 / alpha, rel=1e-12)


def synthetic_machine(seed=3, channels=2):
    rng = np.random.default_rng(seed)
    a = (rng.normal(size=(channels, 2)) + 1j * rng.normal(size=(channels, 2))) * 1e-3
    u0 = np.array([rect(2500, 40), rect(1800, 200)])
    return a, u0


def test_two_planes_recover_a_synthetic_machine():
    # Synthetic machine whose coefficients we set (no source needed: linear model).
    a, u0 = synthetic_machine()
    v0 = a @ u0
    trials = np.array([[rect(3600, 45), 0], [0, rect(3600, 180)]])
    runs = np.array([v0 + a @ t for t in trials])
    result = coefficients_from_runs(v0, runs, trials, ["s1", "s2"], ["p1", "p2"])
    # One trial per plane: α_i1 = (V1 - V0)/T1, α_i2 = (V2 - V0)/T2 (REFERENCES.md).
    by_hand = np.array([[(runs[0][i] - v0[i]) / trials[0, 0],
                         (runs[1][i] - v0[i]) / trials[1, 1]] for i in range(2)])
    np.testing.assert_allclose(result.matrix, by_hand, rtol=1e-12)
    np.testing.assert_allclose(result.matrix, a, rtol=1e-10)
    w = least_squares_correction(result.matrix, v0)
    # REFERENCES.md: two planes, α·W = -V0 (2×2 complex system).  Cramer's rule,
    # written out: W1 = det([-V0, α_2]) / det(α), W2 = det([α_1, -V0]) / det(α).
    (a11, a12), (a21, a22) = result.matrix
    b1, b2 = -v0
    det = a11 * a22 - a12 * a21
    cramer = np.array([(b1 * a22 - a12 * b2) / det, (a11 * b2 - b1 * a21) / det])
    np.testing.assert_allclose(w, cramer, rtol=1e-10)
    # ... and numpy.linalg.solve on the set matrix.
    np.testing.assert_allclose(w, np.linalg.solve(a, -v0), rtol=1e-10)
    # Round trip: fitting the continuous correction brings the vibration to zero.
    np.testing.assert_allclose(v0 + a @ w, 0, atol=1e-12)
    np.testing.assert_allclose(w, -u0, rtol=1e-9)


def test_trial_weight_left_on_gives_the_same_coefficients():
    a, u0 = synthetic_machine(5)
    v0 = a @ u0
    t1, t2 = rect(3000, 10), rect(2500, 250)
    # Run 1: t1 in plane 1; run 2: t1 still on, t2 added in plane 2 (cumulative).
    weights = np.array([[t1, 0], [t1, t2]])
    runs = np.array([v0 + a @ w for w in weights])
    result = coefficients_from_runs(v0, runs, weights, ["s1", "s2"], ["p1", "p2"])
    np.testing.assert_allclose(result.matrix, a, rtol=1e-10)


def real_form(m: np.ndarray) -> np.ndarray:
    """A complex matrix as the real matrix [[Re, -Im], [Im, Re]] acting on [Re x; Im x]."""
    return np.block([[m.real, -m.imag], [m.imag, m.real]])


def test_more_sensors_than_planes_is_least_squares():
    a, u0 = synthetic_machine(8, channels=4)
    rng = np.random.default_rng(1)
    noise = lambda: 0.02 * (rng.normal(size=4) + 1j * rng.normal(size=4))  # noqa: E731
    v0 = a @ u0 + noise()
    trials = np.array([[rect(3600, 0), 0], [0, rect(3600, 90)], [rect(2000, 200), 0]])
    runs = np.array([a @ (u0 + t) + noise() for t in trials])
    result = coefficients_from_runs(v0, runs, trials, list("abcd"), ["p1", "p2"])
    # Three runs for two planes: the normal equations Tᴴ T Aᵀ = Tᴴ (V - V0), with the
    # conjugate transpose (REFERENCES.md, least squares), solved by numpy.linalg.solve.
    delta = runs - v0
    normal = np.linalg.solve(trials.conj().T @ trials, trials.conj().T @ delta)
    np.testing.assert_allclose(result.matrix, normal.T, rtol=1e-10)
    # Correction: numpy.linalg.lstsq on the raw system written in real numbers
    # (a different formulation from placer's complex one).
    w = least_squares_correction(result.matrix, v0)
    x, *_ = np.linalg.lstsq(real_form(result.matrix), -np.concatenate([v0.real, v0.imag]),
                            rcond=None)
    np.testing.assert_allclose(w, x[:2] + 1j * x[2:], rtol=1e-10)
    # ... and the normal equations W = -(Aᴴ A)⁻¹ Aᴴ V0 (Goodman 1964, from memory).
    m = result.matrix
    np.testing.assert_allclose(w, -np.linalg.solve(m.conj().T @ m, m.conj().T @ v0), rtol=1e-10)
    # With noise the correction stays near the truth (5 % of its size).
    assert np.abs(w + u0).max() < 0.05 * np.abs(u0).max()


def test_weighted_least_squares_matches_the_closed_form():
    a, _ = synthetic_machine(9, channels=3)
    v = np.array([rect(4, 10), rect(3, 100), rect(5, 250)])
    d = np.diag([1.0, 4.0, 0.5])
    # REFERENCES.md (Goodman 1964, from memory): W = -(Aᴴ D A)⁻¹ Aᴴ D V.
    closed = -np.linalg.solve(a.conj().T @ d @ a, a.conj().T @ d @ v)
    np.testing.assert_allclose(least_squares_correction(a, v, np.diag(d)), closed, rtol=1e-10)


def test_poor_plane_separation_shows_in_the_condition_number():
    a = np.array([[1e-3, 1.01e-3], [2e-3, 2.0e-3]], dtype=complex)  # nearly parallel columns
    v0 = np.array([rect(4.0, 30), rect(3.0, 80)])
    trials = np.array([[1000, 0], [0, 1000]], dtype=complex)
    runs = np.array([v0 * 3 + a @ t for t in trials])
    result = coefficients_from_runs(v0 * 3, runs, trials, ["s1", "s2"], ["p1", "p2"])
    assert result.condition > 10


def test_condition_number_is_that_of_the_weighted_matrix_with_unit_columns():
    a, _ = synthetic_machine(9, channels=3)
    d = np.array([1.0, 4.0, 0.25])
    # 2-norm condition number = sqrt(λmax/λmin) of Sᴴ Aᴴ D A S, S scaling the columns of
    # D^½ A to unit length ([GolubVanLoan], [vanderSluis1969], from memory), from
    # numpy.linalg.eigvalsh.
    weighted = np.sqrt(d)[:, None] * a
    scaled = weighted / np.linalg.norm(weighted, axis=0)
    eig = np.linalg.eigvalsh(scaled.conj().T @ scaled)
    assert condition_number(a, d) == pytest.approx(math.sqrt(eig.max() / eig.min()), rel=1e-9)
    trials = np.array([[1000, 0], [0, 1000]], dtype=complex)
    v0 = np.array([rect(4, 10), rect(3, 100), rect(5, 250)])
    result = coefficients_from_runs(v0, np.array([v0 + a @ t for t in trials]), trials,
                                    ["a", "b", "c"], ["p1", "p2"], channel_weights=d)
    assert result.condition == pytest.approx(math.sqrt(eig.max() / eig.min()), rel=1e-6)


def test_condition_number_does_not_depend_on_the_planes_radii():
    """The same rotor with plane 2's positions at 50 mm instead of 200 mm: the readings of
    a 20 g trial weight are the same, so the coefficient per g·mm of plane 2 is four times
    larger.  Per g·mm the condition number moves (as the issue found: 1.47 against 5.07);
    with the columns scaled to unit length it does not (by reasoning: a column scale)."""
    per_gram = np.array([[rect(0.40, 30), rect(0.10, 120)],
                         [rect(0.15, 200), rect(0.35, 10)]])
    at_200 = per_gram / np.array([100.0, 200.0])
    at_50 = per_gram / np.array([100.0, 50.0])
    assert np.linalg.cond(at_200) != pytest.approx(np.linalg.cond(at_50), rel=0.05)
    assert condition_number(at_200) == pytest.approx(condition_number(at_50), rel=1e-12)
    assert condition_number(at_50) == pytest.approx(condition_number(per_gram), rel=1e-12)
    # and of the units: mm/s against in/s (1 in/s = 25.4 mm/s, [NISTHB44]).
    assert condition_number(at_50 / 25.4) == pytest.approx(condition_number(at_50), rel=1e-12)
    # A single plane that moves a reading is perfectly conditioned.
    assert condition_number(at_50[:, :1]) == pytest.approx(1.0)
    assert condition_number(np.zeros((2, 1), dtype=complex)) == math.inf


def stored(matrix, unit="mm/s", measure="peak", sense="against rotation", rotation=None,
           rpm=1475.0):
    return StoredCoefficients(np.asarray(matrix, dtype=complex), unit, measure, sense, rotation,
                              rpm, ("s1",), ("p1",), "visit 7")


def test_stored_coefficients_are_converted_to_this_visit():
    m = np.array([[rect(0.002, 35)]])
    # 1 in/s = 25.4 mm/s (inch definition); rms = peak/√2 (sinusoid identity).
    out, notes = adapt_stored(stored(m), "in/s", "rms", "against rotation", None, 1475.0)
    assert out[0, 0] == pytest.approx(m[0, 0] / 25.4 / math.sqrt(2), rel=1e-12)
    assert notes == []
    # Angles counted the other way: every angle changes sign, so A becomes its conjugate.
    out, _ = adapt_stored(stored(m), "mm/s", "peak", "with rotation", None, 1475.0)
    assert out[0, 0] == pytest.approx(np.conj(m[0, 0]), rel=1e-12)
    # clockwise angles on a machine turning clockwise count with rotation.
    out, _ = adapt_stored(stored(m, sense="clockwise", rotation="clockwise"), "mm/s", "peak",
                          "against rotation", None, 1475.0)
    assert out[0, 0] == pytest.approx(np.conj(m[0, 0]), rel=1e-12)
    out, _ = adapt_stored(stored(m, sense="clockwise", rotation="clockwise"), "mm/s", "peak",
                          "counterclockwise", "counterclockwise", 1475.0)
    assert out[0, 0] == pytest.approx(m[0, 0], rel=1e-12)
    # 1 % off the stored speed passes (within the 2 % rule, placer's own).
    adapt_stored(stored(m), "mm/s", "peak", "against rotation", None, 1475.0 * 1.01)
    _, notes = adapt_stored(stored(m, rpm=None), "mm/s", "peak", "against rotation", None, 1475.0)
    assert notes and "not stored" in notes[0]


@pytest.mark.parametrize("unit, sense, rotation, rpm, key", [
    ("um", "against rotation", None, 1475.0, "readings.unit"),
    ("mils", "against rotation", None, 1475.0, "readings.unit"),
    ("mm/s", "against rotation", None, 1475.0 * 1.05, "rotor.service_rpm"),
    ("mm/s", "against rotation", None, None, "rotor.service_rpm"),
])
def test_stored_coefficients_that_cannot_serve_are_refused(unit, sense, rotation, rpm, key):
    with pytest.raises(CoefficientMismatch) as caught:
        adapt_stored(stored([[0.002]]), unit, "peak", sense, rotation, rpm)
    assert caught.value.key == key


def test_stored_clockwise_without_rotation_is_refused_when_the_sense_differs():
    old = stored([[0.002j]], sense="clockwise", rotation=None)
    with pytest.raises(CoefficientMismatch) as caught:
        adapt_stored(old, "mm/s", "peak", "with rotation", None, 1475.0)
    assert caught.value.key == "rotor.angle_sense"
    out, _ = adapt_stored(old, "mm/s", "peak", "clockwise", "clockwise", 1475.0)
    assert out[0, 0] == 0.002j


def test_clockwise_angles_without_rotation_are_never_converted_silently():
    """This visit counts angles clockwise and gives no rotation, the stored visit counted
    against rotation: the two cannot be related without the rotation, so the stored
    coefficients are refused rather than conjugated or not at a guess [InfluenceCoefficients]."""
    old = stored([[0.002j]], sense="against rotation")
    with pytest.raises(CoefficientMismatch) as caught:
        adapt_stored(old, "mm/s", "peak", "clockwise", None, 1475.0)
    assert caught.value.key == "rotor.rotation"
    # With the rotation given, clockwise angles on a clockwise machine count with rotation:
    # the other sense, so A becomes its conjugate.
    out, _ = adapt_stored(old, "mm/s", "peak", "clockwise", "clockwise", 1475.0)
    assert out[0, 0] == pytest.approx(-0.002j)
    # The same words in both visits need no rotation.
    same = stored([[0.002j]], sense="clockwise", rotation="clockwise")
    out, _ = adapt_stored(same, "mm/s", "peak", "clockwise", None, 1475.0)
    assert out[0, 0] == 0.002j


def test_trial_mass_rule_of_thumb():
    # REFERENCES.md (from memory, widely quoted): m_t·r·ω² = 0.1·M·g.
    # 42 kg, 1480 r/min, r = 210 mm: ω = 154.985 rad/s,
    # m_t = 0.1·42·9.80665 / (0.21·154.985²) kg = 8.165 g (computed by hand).
    assert trial_mass_g(42.0, 1480.0, 210.0) == pytest.approx(8.165, abs=0.001)
    with pytest.raises(ValueError):
        trial_mass_g(0.0, 1480.0, 210.0)


def test_static_and_couple_parts_reassemble():
    u1, u2 = rect(300, 20), rect(200, 150)
    sc = static_couple(u1, u2, 400.0)
    # REFERENCES.md (statics): U1 = U_s/2 + U_c, U2 = U_s/2 - U_c; moment |U_c|·d.
    assert sc.static_gmm / 2 + sc.couple_gmm == pytest.approx(u1)
    assert sc.static_gmm / 2 - sc.couple_gmm == pytest.approx(u2)
    assert sc.couple_moment_gmm2 == pytest.approx(abs(u1 - u2) / 2 * 400.0)
    assert static_couple(rect(100, 0), rect(101, 1)).couple_negligible
    assert not sc.couple_negligible


def test_reading_conventions():
    # 1 mil = 25.4 µm, 1 in/s = 25.4 mm/s (inch definition); rms = peak/√2,
    # peak-to-peak = 2·peak (sinusoid identities).
    assert convert_amplitude(1.0, "mils", "peak", "um") == pytest.approx(25.4)
    assert convert_amplitude(0.1, "in/s", "rms", "mm/s") == pytest.approx(2.54 * math.sqrt(2))
    assert convert_amplitude(10.0, "um", "peak-to-peak", "um") == pytest.approx(5.0)
    # Velocity of a 1× sinusoid: v = ω·x; 10 µm peak at 1500 r/min -> 1.5708 mm/s.
    assert convert_amplitude(10.0, "um", "peak", "mm/s", speed_rpm=1500) == pytest.approx(
        10e-3 * 2 * math.pi * 25, rel=1e-12)
    # Lag counts against rotation, lead with rotation (REFERENCES.md, angles).
    assert phase_in_rotor_sense(30, "lag", "against rotation") == pytest.approx(30)
    assert phase_in_rotor_sense(30, "lead", "against rotation") == pytest.approx(330)
    assert phase_in_rotor_sense(30, "lag", "with rotation") == pytest.approx(330)
    assert phase_in_rotor_sense(30, "lag", "clockwise", "counterclockwise") == pytest.approx(30)
    assert phase_in_rotor_sense(30, "lag", "clockwise", "clockwise") == pytest.approx(330)
    assert polar(2.0, 90.0) == pytest.approx(2j)
    assert amplitude_scale("mils", "peak-to-peak", "um", "peak") == pytest.approx(12.7)
    with pytest.raises(ValueError):
        amplitude_scale("um", "peak", "mm/s", "peak")
    assert sense_against_rotation("clockwise", "counterclockwise") == "against rotation"
    assert sense_against_rotation("clockwise", None) is None


def test_phase_sense_does_not_change_the_physical_answer():
    """The same machine read as lead instead of lag, angles against rotation either way."""
    a, u0 = synthetic_machine(4)
    v0 = a @ u0
    trials = np.array([[rect(3600, 45), 0], [0, rect(3600, 180)]])
    runs = [v0 + a @ t for t in trials]
    # As lead readings the phases are negated; converting back must give the same W.
    to_lead = lambda v: np.array([polar(abs(x), -math.degrees(cmath.phase(x))) for x in v])  # noqa: E731
    back = lambda v: np.array([polar(abs(x), phase_in_rotor_sense(  # noqa: E731
        math.degrees(cmath.phase(x)), "lead", "against rotation")) for x in v])
    coeff = coefficients_from_runs(back(to_lead(v0)), np.array([back(to_lead(r)) for r in runs]),
                                   trials, ["s1", "s2"], ["p1", "p2"])
    np.testing.assert_allclose(least_squares_correction(coeff.matrix, back(to_lead(v0))), -u0,
                               rtol=1e-9)
