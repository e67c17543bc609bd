"""Influence coefficients, corrections and reading conventions against formulas and numpy."""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest

from placer.influence import (coefficients_from_runs, least_squares_correction,
                              static_couple, trial_mass_g, trial_run_warnings)
from placer.readings import convert_amplitude, phase_in_rotor_sense, phasor


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
    np.testing.assert_allclose(result.matrix, a, rtol=1e-10)
    w = least_squares_correction(result.matrix, v0)
    # REFERENCES.md: two planes, α·W = -V0 (2×2 complex system), solved by numpy.
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


def test_more_sensors_than_planes_is_least_squares_as_numpy():
    a, u0 = synthetic_machine(8, channels=4)
    rng = np.random.default_rng(1)
    noise = lambda: 0.02 * (rng.normal(size=4) + 1j * rng.normal(size=4))  # noqa: E731
    v0 = a @ u0 + noise()
    trials = np.array([[rect(3600, 0), 0], [0, rect(3600, 90)], [rect(2000, 200), 0]])
    runs = np.array([a @ (u0 + t) + noise() for t in trials])
    result = coefficients_from_runs(v0, runs, trials, list("abcd"), ["p1", "p2"])
    expected, *_ = np.linalg.lstsq(trials, runs - v0, rcond=None)  # numpy reference
    np.testing.assert_allclose(result.matrix, expected.T, rtol=1e-12)
    # With noise the correction stays near the truth (5 % of its size).
    w = least_squares_correction(result.matrix, v0)
    assert np.abs(w + u0).max() < 0.05 * np.abs(u0).max()


def test_weighted_least_squares_matches_the_closed_form():
    a, _ = synthetic_machine(9, channels=3)
    v = np.array([rect(4, 10), rect(3, 100), rect(5, 250)])
    d = np.diag([1.0, 4.0, 0.5])
    # REFERENCES.md (Goodman 1964, from memory): W = -(Aᴴ D A)⁻¹ Aᴴ D V.
    closed = -np.linalg.solve(a.conj().T @ d @ a, a.conj().T @ d @ v)
    np.testing.assert_allclose(least_squares_correction(a, v, np.diag(d)), closed, rtol=1e-10)


def test_warnings_for_a_weak_trial_and_poor_plane_separation():
    v0 = np.array([rect(4.0, 30), rect(3.0, 80)])
    weak = np.array([[rect(4.2, 34), rect(3.1, 85)]])  # 5 % and 4°: not trusted
    assert trial_run_warnings(v0, weak, ["s1", "s2"])
    strong = np.array([[rect(6.0, 34), rect(3.1, 85)]])  # 50 % on one sensor
    assert not trial_run_warnings(v0, strong, ["s1", "s2"])
    a = np.array([[1e-3, 1.01e-3], [2e-3, 2.0e-3]], dtype=complex)  # nearly parallel columns
    trials = np.array([[1000, 0], [0, 1000]], dtype=complex)
    runs = np.array([v0 * 3 + a @ t for t in trials])
    result = coefficients_from_runs(v0 * 3, runs, trials, ["s1", "s2"], ["p1", "p2"])
    assert result.condition > 10
    assert any("ill-conditioned" in w for w in result.warnings)


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
    assert phasor(2.0, 90.0) == pytest.approx(2j)


def test_phase_sense_does_not_change_the_physical_answer():
    """The same machine read as lead instead of lag, angles against rotation either way."""
    a, u0 = synthetic_machine(4)
    v0 = a @ u0
    trials = np.array([[rect(3600, 45), 0], [0, rect(3600, 180)]])
    runs = [v0 + a @ t for t in trials]
    # As lead readings the phases are negated; converting back must give the same W.
    to_lead = lambda v: np.array([phasor(abs(x), -math.degrees(cmath.phase(x))) for x in v])  # noqa: E731
    back = lambda v: np.array([phasor(abs(x), phase_in_rotor_sense(  # noqa: E731
        math.degrees(cmath.phase(x)), "lead", "against rotation")) for x in v])
    coeff = coefficients_from_runs(back(to_lead(v0)), np.array([back(to_lead(r)) for r in runs]),
                                   trials, ["s1", "s2"], ["p1", "p2"])
    np.testing.assert_allclose(least_squares_correction(coeff.matrix, back(to_lead(v0))), -u0,
                               rtol=1e-9)
