"""Balancing one plane without a phase reference: the four-run method.

A reference run gives the amplitude A0 at one sensor; three (or more) runs
with the same trial mass m_t at radius r, fitted in turn at angles θ_k
(typically 0°, 120°, 240°), give the amplitudes A_k.  In the linear model
V = α·(U + w) with U the unbalance and T_k = m_t·r·e^{iθ_k}:

    A0² = |α|²·|U|²,   A_k² = |α|²·|U + T_k|² = A0² + q + 2·Re(s·e^{−iθ_k})

with q = |α|²·|T|² and s = |α|²·|T|·U.  The three unknowns (q and the two
parts of s) come from the runs by linear least squares (exactly for three
runs); the angle of U is the angle of s.  The published construction draws
a circle of radius A0, marks the trial angles on it, and draws about each
mark a circle of radius A_k: the circles meet at P = −s/A0, whose distance
from the centre is the trial's effect t = |α|·|T| and whose angle is where
the correction goes.  The correction is m_t·A0/t at that angle.  When the
readings fit the model, |P|² = q; how far they differ is the check of the
data.

References
----------
[FourRun] (the method and its construction), [InfluenceCoefficients]
(the linear model).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from placer.trialruns import VECTOR_CHANGE_SHARE, DataCheck

CONSISTENCY_SHARE = 0.25
"""Largest relative difference between the trial effect from the circles' meeting
point and from the mean of the squared amplitudes before the data check fails
(placer's own threshold)."""

FOUR_RUN_RULE_TEXT = (
    f"Without a phase reference (the four-run method): the trial must move the reading by "
    f"{100 * VECTOR_CHANGE_SHARE:.0f} % of the reference amplitude or more (the trial-run "
    "rule of common practice), and the circles of the construction must meet near one point "
    "(the trial effect from the meeting point and from the mean of the squares within "
    f"{100 * CONSISTENCY_SHARE:.0f} %; placer's own threshold)")
"""The amplitude-only checks in words."""


@dataclass(frozen=True)
class FourRunSolution:
    """The four-run method's answer for one plane and one sensor.

    Parameters
    ----------
    reference : float
        Amplitude of the reference run A0 [session unit and measure].
    trial_gmm : float
        The trial mass times its radius |T| [g·mm].
    angles_deg : tuple of float
        Angles the trial mass was fitted at [deg], in the rotor's angle sense.
    amplitudes : tuple of float
        Amplitude of each trial run [session unit and measure].
    meeting_point : complex
        Where the construction's circles meet, P [session unit]; its angle is
        where the correction goes [deg, rotor's angle sense].
    mean_square_effect : float
        The trial effect from the mean of the squares, √q [session unit];
        NaN when q is not above zero.
    """

    reference: float
    trial_gmm: float
    angles_deg: tuple[float, ...]
    amplitudes: tuple[float, ...]
    meeting_point: complex
    mean_square_effect: float

    @property
    def effect(self) -> float:
        """The trial's effect at the sensor, t = |P| [session unit]."""
        return abs(self.meeting_point)

    @property
    def coefficient(self) -> float:
        """|α| = t/|T|, the reading per g·mm [session unit per g·mm] (its phase is unknown)."""
        return self.effect / self.trial_gmm

    @property
    def correction_gmm(self) -> complex:
        """The correction W = m_t·r·A0/t at the angle of P [g·mm], complex."""
        if self.effect == 0:
            return complex(math.nan, math.nan)
        return self.meeting_point * self.reference * self.trial_gmm / self.effect ** 2

    @property
    def consistency(self) -> float:
        """|P|/√q − 1: how far the circles miss one point [1]; NaN when q ≤ 0."""
        if not self.mean_square_effect > 0:
            return math.nan
        return self.effect / self.mean_square_effect - 1.0

    def circle_centres(self) -> list[complex]:
        """The construction's circle centres, A0·e^{iθ_k} [session unit], one per trial run."""
        return [self.reference * complex(math.cos(math.radians(a)), math.sin(math.radians(a)))
                for a in self.angles_deg]


def solve_four_run(reference: float, angles_deg: Sequence[float], amplitudes: Sequence[float],
                   trial_gmm: float) -> FourRunSolution:
    """The four-run method: the correction from amplitudes alone.

    Parameters
    ----------
    reference : float
        Amplitude of the reference run A0 [session unit], above zero.
    angles_deg : sequence of float
        Angles of the trial mass in the trial runs [deg, rotor's angle sense];
        at least three different ones.
    amplitudes : sequence of float
        Amplitude of each trial run [session unit].
    trial_gmm : float
        Trial mass times radius, the same in every trial run [g·mm].

    Returns
    -------
    FourRunSolution
        The meeting point of the construction and the trial effect both ways.

    Raises
    ------
    ValueError
        Fewer than three different angles, or a reference amplitude of zero.

    References
    ----------
    [FourRun]; the linear least squares by numpy.linalg.lstsq.
    """
    angles = np.radians(np.asarray(angles_deg, dtype=float))
    a = np.asarray(amplitudes, dtype=float)
    distinct = {round(float(x) % 360.0, 6) for x in angles_deg}
    if len(distinct) < 3:
        raise ValueError("the four-run method needs the trial mass at three different angles")
    if not reference > 0:
        raise ValueError("the reference amplitude is zero: nothing to balance")
    rows = np.column_stack([np.ones_like(angles), 2 * np.cos(angles), 2 * np.sin(angles)])
    (q, s_re, s_im), *_ = np.linalg.lstsq(rows, a ** 2 - reference ** 2, rcond=None)
    meeting = -complex(s_re, s_im) / reference
    return FourRunSolution(float(reference), float(trial_gmm),
                           tuple(float(x) for x in angles_deg), tuple(float(x) for x in a),
                           meeting, math.sqrt(q) if q > 0 else math.nan)


def four_run_checks(solution: FourRunSolution, sensor: str) -> tuple[DataCheck, ...]:
    """The amplitude-only data checks: the trial's effect, and whether the circles meet.

    Parameters
    ----------
    solution : FourRunSolution
        The method's answer.
    sensor : str
        The sensor read, for the sentences.

    Returns
    -------
    tuple of DataCheck
        The trial-effect check and the consistency check.

    References
    ----------
    [FourRun]; the 30 % rule of [TrialRunRule] applied to the trial's effect.
    """
    share = solution.effect / solution.reference
    effect = DataCheck(
        "trial runs (amplitude only)", share >= VECTOR_CHANGE_SHARE,
        f"the trial moves the reading at {sensor} by {100 * share:.0f} % of the reference "
        "amplitude",
        "" if share >= VECTOR_CHANGE_SHARE else
        f"repeat the three runs with about {0.5 / max(share, 1e-9):.1f} times the trial mass",
        FOUR_RUN_RULE_TEXT)
    miss = solution.consistency
    ok = math.isfinite(miss) and abs(miss) <= CONSISTENCY_SHARE
    finding = ("the trial runs do not raise the reading on average: the amplitudes do not fit "
               "the linear model" if not math.isfinite(miss) else
               f"the circles meet within {100 * abs(miss):.0f} % (trial effect "
               f"{solution.effect:.3g} from the meeting point, "
               f"{solution.mean_square_effect:.3g} from the mean of the squares)")
    consistent = DataCheck(
        "construction (amplitude only)", ok, finding,
        "" if ok else "repeat the runs at a steady speed and temperature, with the sensor "
        "held in the same place; check the trial angles", FOUR_RUN_RULE_TEXT)
    return effect, consistent
