"""The four-run method without a phase reference, against synthetic machines and [FourRun].

Synthetic machines (invented data) are the linear model V = α·(U + w): the
amplitudes |α·(U + T_k)| alone must give back the correction −U and |α|.
[FourRun]'s worked example (O = 10 mils, trial 50 g, 7.0 mils at 0°,
12.0 mils at 120°, 18.0 mils at 240°) is checked against its own
construction: circles of radius A_k about the trial marks on the circle of
radius O meet at the point whose distance is the trial effect and whose
angle is the correction's (recomputed here, "checked").  With noise, the
error grows with the noise and the consistency check sees bad data.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from sessions import write

from placer.fieldplan import solve_session
from placer.fourrun import CONSISTENCY_SHARE, four_run_checks, solve_four_run
from placer.io.sessionfile import read_session


def amplitudes(alpha: complex, u: complex, trial_gmm: float, angles_deg) -> list[float]:
    return [abs(alpha * (u + cmath.rect(trial_gmm, math.radians(a)))) for a in angles_deg]


@pytest.mark.parametrize("angles", [(0, 120, 240), (10, 100, 250), (0, 90, 180, 270),
                                    (30, 75, 160, 300)])
@pytest.mark.parametrize("seed", range(5))
def test_amplitudes_alone_recover_the_correction(angles, seed):
    rng = np.random.default_rng(seed)
    alpha = cmath.rect(rng.uniform(0.001, 0.01), rng.uniform(-math.pi, math.pi))
    u = cmath.rect(rng.uniform(200, 2000), rng.uniform(-math.pi, math.pi))
    trial = rng.uniform(0.4, 2.0) * abs(u)
    solution = solve_four_run(abs(alpha * u), angles, amplitudes(alpha, u, trial, angles), trial)
    assert solution.correction_gmm == pytest.approx(-u, rel=1e-9)
    assert solution.coefficient == pytest.approx(abs(alpha), rel=1e-9)
    assert solution.consistency == pytest.approx(0.0, abs=1e-9)
    assert all(c.passed for c in four_run_checks(solution, "s1"))


def test_the_published_worked_example_and_its_construction():
    """[FourRun]: O = 10, trial 50 g, T1 = 7.0 at 0°, T2 = 12.0 at 120°, T3 = 18.0 at 240°."""
    solution = solve_four_run(10.0, (0, 120, 240), (7.0, 12.0, 18.0), 50.0)
    # The mean of the squares: t² = (49 + 144 + 324)/3 − 100 = 72.33 (by hand).
    assert solution.mean_square_effect ** 2 == pytest.approx(517 / 3 - 100, rel=1e-12)
    # Equally spaced: the angle of Σ A_k²·e^{iθ_k} is the heavy spot (by hand:
    # 49 + 144·e^{i120°} + 324·e^{i240°} = −185 − 155.88i, at 220.1°); the correction is
    # opposite, at 40.1°.
    heavy = sum(a * a * cmath.rect(1, math.radians(t)) for a, t in
                zip((7.0, 12.0, 18.0), (0, 120, 240)))
    assert math.degrees(cmath.phase(solution.correction_gmm)) % 360 == pytest.approx(
        math.degrees(cmath.phase(-heavy)) % 360, abs=1e-9)
    assert math.degrees(cmath.phase(solution.correction_gmm)) % 360 == pytest.approx(40.1,
                                                                                    abs=0.05)
    # The construction: the circles about the trial marks (radius A_k) pass at the meeting
    # point P within the model's miss, |P − c_k|² = A_k² + |P|² − t², exactly.
    p = solution.meeting_point
    for centre, a in zip(solution.circle_centres(), (7.0, 12.0, 18.0)):
        assert abs(p - centre) ** 2 == pytest.approx(
            a * a + abs(p) ** 2 - solution.mean_square_effect ** 2, rel=1e-12)
    # Correction = trial mass × O / t with t = |P| (the construction's distance):
    # 50 × 10 / 8.064 = 62.0 g at the trial radius (checked).
    assert abs(solution.correction_gmm) == pytest.approx(50 * 10 / abs(p), rel=1e-12)
    assert abs(solution.correction_gmm) == pytest.approx(62.0, abs=0.05)
    assert abs(solution.consistency) < CONSISTENCY_SHARE


def test_noise_grows_the_error_and_bad_data_fails_the_check():
    """1 % noise on every amplitude: the correction stays within a few percent and degrees;
    20 % noise: the error is larger and the consistency check fails in many draws
    (placer's own figures, measured on the model with a fixed seed)."""
    alpha, u, trial = cmath.rect(0.004, 0.7), cmath.rect(900, 2.0), 900.0
    angles = (0, 120, 240)
    exact = amplitudes(alpha, u, trial, angles)
    a0 = abs(alpha * u)

    def errors(noise: float, seed: int):
        rng = np.random.default_rng(seed)
        bumped = [x * (1 + noise * rng.normal()) for x in exact]
        solution = solve_four_run(a0 * (1 + noise * rng.normal()), angles, bumped, trial)
        w = solution.correction_gmm
        return (abs(abs(w) - abs(u)) / abs(u),
                abs((math.degrees(cmath.phase(w / -u)) + 180) % 360 - 180),
                all(c.passed for c in four_run_checks(solution, "s1")))

    small = [errors(0.01, s) for s in range(200)]
    large = [errors(0.20, s) for s in range(200)]
    assert np.median([m for m, _, _ in small]) < 0.03
    assert np.median([d for _, d, _ in small]) < 2.0
    assert all(ok for _, _, ok in small)
    assert np.median([m for m, _, _ in large]) > 3 * np.median([m for m, _, _ in small])
    assert sum(not ok for _, _, ok in large) > 20


def test_fewer_than_three_angles_is_refused():
    with pytest.raises(ValueError):
        solve_four_run(1.0, (0, 0, 120), (1, 2, 3), 100.0)
    with pytest.raises(ValueError):
        solve_four_run(0.0, (0, 120, 240), (1, 2, 3), 100.0)


AMPLITUDE_SESSION = """
[machine]
id = "WM-FAN-12"
name = "Roof fan 12, Wrenmoor shop"
[rotor]
name = "roof fan 12"
service_rpm = 1450
angle_sense = "against rotation"
[readings]
unit = "mm/s"
measure = "rms"
phase = "none"
[[sensors]]
name = "fan bearing"
[[planes]]
name = "hub"
radius_mm = 150.0
positions = 12
capacity = 2
catalog = "washers-steel"
[[runs]]
name = "as found"
kind = "reference"
readings = [{a0}]
{trials}
[solve]
max_parts = 3
"""


def amplitude_session(tmp_path, alpha, u, mass_g=20.0, positions=(1, 5, 9)):
    trials = ""
    for k, n in enumerate(positions, start=1):
        angle = 30.0 * (n - 1)
        a = abs(alpha * (u + cmath.rect(mass_g * 150.0, math.radians(angle))))
        trials += (f'[[runs]]\nname = "trial at {n}"\nkind = "trial"\n'
                   f"trial = [{{ plane = 1, mass_g = {mass_g}, position = {n} }}]\n"
                   f"readings = [{a!r}]\n")
    return write(tmp_path, AMPLITUDE_SESSION.format(a0=repr(abs(alpha * u)), trials=trials))


def test_an_amplitude_only_session_plans_by_the_model(tmp_path):
    """The plan's predicted amplitude is the synthetic machine's |α·(U + w)| (exact model)."""
    alpha, u = cmath.rect(0.003, 1.1), cmath.rect(1200, 4.0)
    result = solve_session(read_session(amplitude_session(tmp_path, alpha, u)))
    assert result.four_run is not None and result.verdicts == ()
    assert result.correction_gmm[0] == pytest.approx(-u, rel=1e-9)
    assert result.data_ok and [c.passed for c in result.checks] == [True, True]
    assert abs(result.vibration_now[0]) == pytest.approx(abs(alpha * u), rel=1e-12)
    for option in result.front:
        added = sum(p.signed_count * p.mass_g * p.radius_mm * cmath.rect(1, math.radians(
            p.angle_deg)) for _, p in option.parts)
        assert option.largest == pytest.approx(abs(alpha * (u + added)), rel=1e-9)
    assert "amplitudes only" in result.coefficient_source


@pytest.mark.parametrize("change, key", [
    ('name = "fan bearing"\n', "sensors"),
    ("trial at 9", "runs"),
])
def test_amplitude_only_sessions_must_have_the_methods_shape(tmp_path, change, key):
    from placer.errors import SessionError

    path = amplitude_session(tmp_path, cmath.rect(0.003, 1.1), cmath.rect(1200, 4.0))
    text = path.read_text()
    if key == "sensors":
        text = text.replace(change, change + '[[sensors]]\nname = "motor"\n')
        text = text.replace("readings = [", "readings = [1.0, ")
    else:
        text = text.replace("position = 9", "position = 5")
    path.write_text(text)
    with pytest.raises(SessionError) as caught:
        read_session(path)
    assert caught.value.key == key
