"""From readings to a plan: synthetic machines, the example visit, and the enumeration oracle."""

from __future__ import annotations

import cmath
import math
from pathlib import Path

import numpy as np
import pytest

from oracle import brute_front
from placer.fieldplan import field_search, objective_of, solve_session
from placer.sessionfile import read_session

ROOT = Path(__file__).resolve().parent.parent


def rect(a, deg):
    return cmath.rect(a, math.radians(deg))


# The synthetic machine the example visit's readings were made from (rounded to
# 0.01 mm/s and 1°): coefficients in mm/s per g·mm, unbalance in g·mm.
EXAMPLE_A = np.array([[rect(0.0021, 35), rect(0.0008, 95)],
                      [rect(0.0018, 120), rect(0.0006, 190)],
                      [rect(0.0007, 60), rect(0.0019, 20)]])
EXAMPLE_U = np.array([rect(2500, 40), rect(1800, 200)])


def test_example_visit_recovers_its_synthetic_machine():
    result = solve_session(read_session(ROOT / "examples" / "exhaust-fan-visit.toml"))
    # Readings rounded to 0.01 mm/s and 1°: coefficients within 3 % of the set values.
    np.testing.assert_allclose(result.coefficients.matrix, EXAMPLE_A, rtol=0.03)
    # The correction puts mass opposite the unbalance (REFERENCES.md), within 2 %.
    np.testing.assert_allclose(result.correction_gmm, -EXAMPLE_U, rtol=0.02)
    assert not result.coefficients.warnings


def write_session(tmp_path: Path, a: np.ndarray, u0: np.ndarray, noise: float = 0.0,
                  check_parts: str = "", norm: str = "rms", positions: int = 4,
                  max_parts: int = 3) -> Path:
    rng = np.random.default_rng(0)

    def fmt(v):
        v = v + noise * (rng.normal(size=v.shape) + 1j * rng.normal(size=v.shape))
        return "[" + ", ".join(f"[{abs(x):.6f}, {math.degrees(cmath.phase(x)) % 360:.6f}]"
                               for x in v) + "]"

    r = 100.0
    t1 = np.array([20 * r * cmath.exp(1j * math.radians(360 / positions)), 0])
    t2 = np.array([0, 20 * r])
    runs = [("reference", "", a @ u0), ("trial", 'trial = [{ plane = 1, mass_g = 20.0, '
                                                 'position = 2 }]', a @ (u0 + t1)),
            ("trial", 'trial = [{ plane = 2, mass_g = 20.0, position = 1 }]', a @ (u0 + t2))]
    text = f"""
[machine]
id = "T-1"
[rotor]
name = "test"
[readings]
unit = "um"
measure = "peak"
phase = "lag"
{''.join(f'[[sensors]]{chr(10)}name = "s{c}"{chr(10)}' for c in range(a.shape[0]))}
[[planes]]
name = "one"
radius_mm = {r}
positions = {positions}
catalog = "washers-steel"
[[planes]]
name = "two"
radius_mm = {r}
positions = {positions}
catalog = "washers-steel"
[solve]
norm = "{norm}"
max_parts = {max_parts}
"""
    for kind, extra, v in runs:
        text += f'[[runs]]\nkind = "{kind}"\n{extra}\nreadings = {fmt(v)}\n'
    if check_parts:
        text += check_parts
    path = tmp_path / "visit.toml"
    path.write_text(text)
    return path


def synthetic(seed=2, channels=3):
    rng = np.random.default_rng(seed)
    a = (rng.normal(size=(channels, 2)) + 1j * rng.normal(size=(channels, 2))) * 0.01
    return a, np.array([rect(900, 70), rect(600, 250)])


@pytest.mark.parametrize("norm", ["rms", "max"])
def test_discrete_plan_is_the_enumerated_optimum_and_predicts_what_it_says(tmp_path, norm):
    a, u0 = synthetic()
    session = read_session(write_session(tmp_path, a, u0, norm=norm))
    result = solve_session(session)
    np.testing.assert_allclose(result.coefficients.matrix, a, rtol=1e-6)
    # Oracle: exhaustive enumeration over both planes' positions together.
    search, _, _ = field_search(session, result.coefficients.matrix)
    expected = brute_front(search.effects, result.vibration_now, search.capacity, search.stock,
                           session.max_parts, "euclidean" if norm == "rms" else "max")
    assert result.chosen.objective == pytest.approx(expected[-1], rel=1e-9, abs=1e-12)
    # The predicted vibration is the linear model applied to the listed parts.
    added = np.zeros(2, dtype=complex)
    for p, part in result.chosen.parts:
        added[p] += part.count * part.mass_g * part.radius_mm * cmath.exp(
            1j * math.radians(part.angle_deg))
    np.testing.assert_allclose(result.chosen.predicted, a @ (u0 + added), rtol=1e-6)
    assert objective_of(result.chosen.predicted, np.ones(3), session.norm) == pytest.approx(
        result.chosen.objective)
    # Solving the planes together is never worse than rounding each on its own.
    same = result.best_with_at_most(result.rounded.used_parts)
    assert same.objective <= result.rounded.objective + 1e-12


def test_noisy_readings_still_give_a_near_correction(tmp_path):
    a, u0 = synthetic(5, channels=4)
    session = read_session(write_session(tmp_path, a, u0, noise=0.02))
    result = solve_session(session)
    # 4 sensors, 2 planes: least squares; with noise of 0.02 µm on readings of ~10 µm
    # the correction stays within 5 % of the truth.
    assert np.abs(result.correction_gmm + u0).max() < 0.05 * np.abs(u0).max()


def test_check_run_gives_a_trim_plan_from_the_same_coefficients(tmp_path):
    a, u0 = synthetic(7)
    fitted = np.array([rect(6.27 * 100, 90), 0])  # one M12 on plane 1, position 2 of 4
    check_v = a @ (u0 + fitted)
    fmt = "[" + ", ".join(f"[{abs(x):.6f}, {math.degrees(cmath.phase(x)) % 360:.6f}]"
                          for x in check_v) + "]"
    check = ('[[runs]]\nkind = "check"\nfitted = [{ plane = 1, position = 2, item = "M12" }]\n'
             f"readings = {fmt}\n")
    session = read_session(write_session(tmp_path, a, u0, check_parts=check))
    result = solve_session(session)
    assert "check run" in result.basis
    np.testing.assert_allclose(result.vibration_now, check_v, rtol=1e-6)
    np.testing.assert_allclose(result.correction_gmm, -(u0 + fitted), rtol=1e-5)
