"""The verdict on trial runs and on plane separation, before the plan.

The rule is [TrialRunRule] (30 % in amplitude or 30° in phase, common
practice, no source) with placer's vector form |V1 − V0| ≥ 0.3·|V0|.  The
checks: the common rule on hand-made readings; the law of cosines (every run
the common rule passes moves the reading by 30 % or more as a vector: by
reasoning, checked on random readings); a sideways change of 45 % that the
common rule rejects though the coefficient it gives is exact (synthetic
machine, invented data); the repeat mass against the linear model
V = V0 + α·T ([InfluenceCoefficients]).
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from sessions import rect, session_toml, write

from placer.fieldplan import solve_session
from placer.io.sessionfile import read_session
from placer.trialruns import (
    ILL_CONDITIONED,
    TARGET_CHANGE_SHARE,
    conditioning_check,
    judge_trial_run,
    trial_changes,
    trial_check,
)

V0 = np.array([rect(4.0, 30), rect(3.0, 80)])


def verdict(readings, masses=(20.0,), rule=None):
    return judge_trial_run("trial", "as found", V0, np.asarray(readings), ["s1", "s2"],
                           masses, rule)


def test_the_common_rule_trusts_30_percent_or_30_degrees():
    # [TrialRunRule]: 30 % in amplitude or 30° in phase at one sensor.
    assert verdict([rect(5.3, 30), rect(3.0, 80)]).trusted          # +32.5 % amplitude
    assert verdict([rect(4.0, 61), rect(3.0, 80)]).trusted          # 31° phase
    weak = verdict([rect(4.2, 34), rect(3.1, 85)])                  # 5 % and 4°: not trusted
    assert not weak.trusted
    assert weak.changes[0].amplitude_share == pytest.approx(0.05)
    assert weak.changes[0].phase_change_deg == pytest.approx(4.0)
    assert weak.changes[0].vector_share == pytest.approx(abs(rect(4.2, 34) - V0[0]) / 4.0)


def test_every_run_the_common_rule_passes_moves_the_reading_by_30_percent():
    """Law of cosines: |V1 − V0|² = a0² + a1² − 2·a0·a1·cos Δφ ≥ (a1 − a0)², and for
    Δφ ≥ 30° it is at least a0²·sin²(30°) = 0.25·a0² when a1 is free, i.e. 50 % — so the
    vector rule at 30 % passes every run the common rule passes (by reasoning)."""
    rng = np.random.default_rng(5)
    for _ in range(20000):
        a0, a1 = rng.uniform(0.1, 10, size=2)
        dphi = rng.uniform(-180, 180)
        change = trial_changes(np.array([a0]), np.array([rect(a1, dphi)]), ["s"])[0]
        common = abs(a1 - a0) / a0 >= 0.30 or abs(dphi) >= 30.0
        if common:
            assert change.vector_share >= 0.30 - 1e-12, (a0, a1, dphi)


def test_a_sideways_change_of_45_percent_is_trusted_and_gives_the_right_correction(tmp_path):
    """One plane, one sensor: the trial weight moves the reading by 45 % of |V0| at right
    angles to it, so the amplitude changes by √(1 + 0.45²) − 1 = 9.7 % and the phase by
    atan(0.45) = 24.2° (by hand): the common rule alone would reject it.  The
    coefficient is exact (noiseless synthetic machine), so the correction is right to 0.1 %."""
    alpha = rect(0.004, 40)
    u0 = rect(700, 200)
    t = 20.0 * 100.0 * 1j                       # 20 g at r 100 mm, position 2 of 4 (90°)
    # choose U so that α·T is 0.45·|V0| at 90° to V0: U = T/(0.45·i)
    u0 = t / (0.45j)
    path = write(tmp_path, session_toml(np.array([[alpha]]), np.array([u0]),
                                        trials=((0, 20.0, 2, True),), max_parts=2))
    result = solve_session(read_session(path))
    change = result.verdicts[0].changes[0]
    assert change.vector_share == pytest.approx(0.45, rel=1e-9)
    assert change.amplitude_share == pytest.approx(math.sqrt(1 + 0.45 ** 2) - 1, rel=1e-9)
    assert abs(change.phase_change_deg) == pytest.approx(math.degrees(math.atan(0.45)), rel=1e-9)
    assert abs(change.amplitude_share) < 0.30 and abs(change.phase_change_deg) < 30.0
    assert result.verdicts[0].trusted and result.data_ok
    assert abs(result.correction_gmm[0] - (-u0)) / abs(u0) < 1e-3


def test_a_weak_run_gets_a_repeat_mass_from_its_own_coefficient():
    """V = V0 + α·T: scaling the trial mass by k scales the change by k, so the repeat mass
    moves the strongest sensor's reading by TARGET_CHANGE_SHARE exactly."""
    alpha = np.array([rect(0.0002, 10), rect(0.0001, 200)])
    t = 20.0 * 150.0
    readings = V0 + alpha * t
    weak = verdict(readings, rule=45.0)
    assert not weak.trusted
    k = weak.scale
    repeat = V0 + alpha * t * k
    shares = np.abs(repeat - V0) / np.abs(V0)
    assert shares.max() == pytest.approx(TARGET_CHANGE_SHARE, rel=1e-12)
    assert weak.suggested_g == (float(f"{20.0 * k:.2g}"),)
    check = trial_check(weak)
    assert not check.passed and "too weak" in check.finding
    assert f"about {weak.suggested_g[0]:g} g" in check.action
    assert "30 %" in check.rule and "common practice" in check.rule
    # More than the 10 % force rule's mass: the action says so ([TrialMassRule]).
    assert "10 % force rule" in trial_check(verdict(readings, rule=1.0)).action


def test_a_run_that_moved_nothing_asks_to_check_the_weight_and_sensor():
    still = verdict(V0)
    assert not still.trusted and still.scale is None and still.suggested_g is None
    assert "check that the trial weight was on" in trial_check(still).action


def test_plane_separation_check():
    assert conditioning_check(ILL_CONDITIONED, ["a", "b"]).passed
    bad = conditioning_check(ILL_CONDITIONED * 1.01, ["inboard", "outboard"])
    assert not bad.passed and "inboard and outboard separate poorly" in bad.finding
    assert "placer's own threshold" in bad.rule
    assert conditioning_check(math.inf, ["hub"]).passed     # one plane: nothing to separate


def test_phase_change_is_taken_round_the_circle():
    change = trial_changes(np.array([rect(1.0, 350)]), np.array([rect(1.0, 10)]), ["s"])[0]
    assert change.phase_change_deg == pytest.approx(20.0)
    assert change.vector_share == pytest.approx(abs(cmath.rect(1, math.radians(20)) - 1))
