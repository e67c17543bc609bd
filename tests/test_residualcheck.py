"""The residual-unbalance check after balancing, against synthetic data with known answers.

[API617]: a known trial unbalance U_t at six (or more) equally spaced
positions; U_r = U_t·(max − min)/(max + min).  In the linear model the
amplitude is |α|·|U_r + U_t·e^{iθ}|, so with the heavy spot at a trial
angle max = |α|(U_t + U_r) and min = |α|(U_t − U_r), and the formula is exact
(by algebra).  The circle fit [Kasa1976] is exact for points on a circle
(checked with numpy), and within ρ² of U_r in the linear model (ρ = U_r/U_t;
the readings lie on a limaçon that differs from a circle by terms in ρ², by
reasoning).  The limits: [API617] via [EnergyTech]'s worked example and
[ISO21940-11].
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from sessions import ROOT, write

from placer.errors import InputError, SessionError
from placer.fieldplan import solve_session
from placer.io.sessionfile import read_session
from placer.residualcheck import (
    ResidualCheck,
    check_limit_gmm,
    fit_circle,
    residual_check,
)
from placer.tolerance import permissible_residual_gmm

ANGLES = tuple(range(0, 360, 60))


def readings(alpha: float, residual: complex, trial_gmm: float, angles=ANGLES):
    return tuple(abs(alpha * (residual + cmath.rect(trial_gmm, math.radians(a))))
                 for a in angles)


def check(amplitudes, angles=ANGLES, mass_g=10.0, radius_mm=150.0, **extra):
    return ResidualCheck(0, 0, mass_g, radius_mm, tuple(angles), tuple(amplitudes), **extra)


@pytest.mark.parametrize("heavy_deg", ANGLES)
def test_the_range_formula_is_exact_with_the_heavy_spot_at_a_trial_angle(heavy_deg):
    residual = cmath.rect(300.0, math.radians(heavy_deg))
    result = residual_check(check(readings(0.004, residual, 1500.0)), None, "")
    assert result.from_range_gmm == pytest.approx(300.0, rel=1e-12)
    assert result.heavy_spot_deg == pytest.approx(heavy_deg % 360, abs=1e-6)


def test_the_circle_fit_is_exact_for_points_on_a_circle():
    centre, radius = complex(0.7, -0.4), 3.2
    points = [centre + cmath.rect(radius, t) for t in np.linspace(0.1, 6.0, 9)]
    fit = fit_circle(points)
    assert fit.centre == pytest.approx(centre, abs=1e-12)
    assert fit.radius == pytest.approx(radius, rel=1e-12)
    assert fit.scatter == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize("rho", [0.05, 0.1, 0.2, 0.4])
@pytest.mark.parametrize("heavy_deg", [0.0, 17.0, 30.0, 75.0, 211.0])
@pytest.mark.parametrize("n", [6, 8, 12])
def test_both_estimates_in_the_linear_model(rho, heavy_deg, n):
    angles = tuple(360.0 * k / n for k in range(n))
    trial = 1500.0
    residual = cmath.rect(rho * trial, math.radians(heavy_deg))
    result = residual_check(check(readings(0.004, residual, trial, angles), angles,
                                  mass_g=10.0, radius_mm=150.0), None, "")
    assert abs(result.from_circle_gmm - rho * trial) <= rho ** 2 * rho * trial + 1e-9
    gap = (result.heavy_spot_deg - heavy_deg + 180.0) % 360.0 - 180.0
    assert abs(gap) <= math.degrees(rho ** 2) + 1e-6
    # From six readings the largest may miss the heavy spot by half a pitch: the range
    # estimate is never above the true residual by more than ρ² (by algebra), and at least
    # cos(pitch/2) of it less ρ².
    assert result.from_range_gmm <= rho * trial * (1 + rho ** 2) + 1e-9
    assert result.from_range_gmm >= rho * trial * (math.cos(math.pi / n) - rho ** 2)
    assert result.residual_gmm == max(result.from_range_gmm, result.from_circle_gmm)


def test_limits_and_verdict():
    # [EnergyTech]: 500 lb per journal at 15 000 r/min gives 0.13 oz·in per plane (API 617);
    # 1 lb = 0.45359237 kg, 1 oz·in = 720.0779 g·mm ([NISTHB44]).
    c = check(readings(0.004, 80.0, 1500.0), journal_load_kg=500 * 0.45359237)
    limit, source = check_limit_gmm(c, 0.5, None, 15000.0)
    assert limit / 720.0778875 == pytest.approx(0.13, abs=0.005)
    assert "API 617" in source
    # No journal load: the plane's share of U_per (ISO 21940-11): G 6.3, 65 kg, 1475 r/min.
    limit, source = check_limit_gmm(check(readings(0.004, 80.0, 1500.0)), 0.5,
                                    permissible_residual_gmm(6.3, 65.0, 1475.0), 1475.0)
    assert limit == pytest.approx(0.5 * 9549.297 * 6.3 * 65 / 1475, rel=1e-5)
    assert "ISO 21940-11" in source
    stated = check(readings(0.004, 80.0, 1500.0), limit_gmm=100.0)
    assert check_limit_gmm(stated, 0.5, 1.0, 1.0)[0] == 100.0
    assert check_limit_gmm(check(readings(0.004, 80.0, 1500.0)), 0.5, None, None)[0] is None
    result = residual_check(stated, 100.0, "as stated")
    assert result.within is True and result.residual_gmm == pytest.approx(80.0, rel=0.01)
    # The trial should be 1 to 2 times the limit ([API617]): 15 times is noted.
    assert any("1 to 2 times" in note for note in result.notes)


@pytest.mark.parametrize("angles, amplitudes, key", [
    ((0, 72, 144, 216, 288), (1, 1, 1, 1, 1), "angles_deg"),
    ((0, 60, 120, 180, 240, 290), (1,) * 6, "angles_deg"),
    (ANGLES, (1,) * 5, "amplitudes"),
    (ANGLES, (0,) * 6, "amplitudes"),
])
def test_bad_checks_are_refused(angles, amplitudes, key):
    with pytest.raises(InputError) as caught:
        check(amplitudes, angles)
    assert caught.value.key == key


RESIDUAL_TABLE = """
[[residual_checks]]
plane = 2
sensor = "free end horizontal"
mass_g = 8.0
positions = [1, 2, 3, 4, 5, 6, 7, 8]
amplitudes = [{amplitudes}]
"""


def test_a_session_with_a_residual_check(tmp_path):
    """The example visit with a check on the outboard flange (positions 45° apart, r 180 mm):
    readings made from a residual of 120 g·mm at 135° (invented); U_per of G 6.3, 65 kg,
    1475 r/min shared equally by the two planes (ISO 21940-11)."""
    angles = [45.0 * k for k in range(8)]
    amps = readings(0.002, cmath.rect(120.0, math.radians(135)), 8.0 * 180.0, angles)
    text = (ROOT / "examples" / "exhaust-fan-visit.toml").read_text()
    text += RESIDUAL_TABLE.format(amplitudes=", ".join(repr(a) for a in amps))
    session = read_session(write(tmp_path, text))
    (entry,) = session.residual_checks
    assert (entry.plane, entry.sensor, entry.radius_mm) == (1, 2, 180.0)
    assert entry.angles_deg == tuple(angles)
    (result,) = solve_session(session, effort=0.2).residual_checks
    assert result.from_range_gmm == pytest.approx(120.0, rel=1e-9)   # heavy spot at 135°
    assert result.limit_gmm == pytest.approx(permissible_residual_gmm(6.3, 65, 1475) / 2)
    assert result.within is True
    bad = text.replace('sensor = "free end horizontal"', 'sensor = "nowhere"')
    with pytest.raises(SessionError) as caught:
        read_session(write(tmp_path, bad, "bad.toml"))
    assert caught.value.key == "residual_checks[1].sensor"
    five = text.replace("positions = [1, 2, 3, 4, 5, 6, 7, 8]", "positions = [1, 3, 5, 7, 2]")
    with pytest.raises(SessionError) as caught:
        read_session(write(tmp_path, five, "five.toml"))
    assert caught.value.key.startswith("residual_checks[1]")
