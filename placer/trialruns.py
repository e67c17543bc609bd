"""The verdict on the data before the plan: trial runs, plane separation.

A plan is no better than the influence coefficients it comes from.  Each
trial run is judged on how far it moved the readings away from the run whose
weights it adds to; the coefficient matrix on how well it separates the
planes.  A check that fails says why and what to do, and the plan made from
such data is marked as such (the command line gives it an exit code of its
own).

The rule for a trial run, at any one sensor (a run is trusted when one
sensor passes):

* the vector change |V1 − V0| is at least :data:`VECTOR_CHANGE_SHARE` of
  |V0|: the coefficient α = (V1 − V0)/T carries the reading error divided by
  |V1 − V0|, so it is the vector change, not the amplitude or the phase on
  its own, that says how well α is known;
* or the amplitude changes by :data:`AMPLITUDE_CHANGE_SHARE`, or the phase by
  :data:`PHASE_CHANGE_DEG` (common practice).  Either implies a vector change
  of at least 30 %, so the vector rule passes every run the common rule
  passes, and also the runs that move the reading sideways (40–50 % of |V0|
  with a small change of amplitude and phase).

References
----------
[TrialRunRule] (30 % / 30°, common practice, no source; the vector form is
placer's reading of it); [InfluenceCoefficients] (α = ΔV/T);
[TrialMassRule] for the trial mass a rotor can take; [vanderSluis1969] and
[GolubVanLoan] for the condition number.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from placer.session import Run, carried_baselines, carried_masses

VECTOR_CHANGE_SHARE = 0.30
"""Least vector change |V1 − V0|/|V0| at some sensor for a trusted trial run
(placer's vector form of [TrialRunRule])."""

AMPLITUDE_CHANGE_SHARE = 0.30
"""Least amplitude change ||V1| − |V0||/|V0| that trusts a run on its own
([TrialRunRule]: common practice, no source; 20–25 % is also used)."""

PHASE_CHANGE_DEG = 30.0
"""Least phase change that trusts a run on its own ([TrialRunRule], as above)."""

TARGET_CHANGE_SHARE = 0.50
"""The vector change a repeated trial run is sized for: comfortably above
:data:`VECTOR_CHANGE_SHARE` (placer's own choice)."""

ILL_CONDITIONED = 10.0
"""Condition number (columns scaled to unit length) above which the plane
separation check fails: a reading error of e % may then move the correction by
up to ten times e % (error bound of linear least squares, [GolubVanLoan]).
For two planes it is reached when the planes' effects at the sensors are 98 %
alike (cosine 0.98 between the scaled columns).  placer's own threshold."""

TRIAL_RULE_TEXT = (f"A trial run is trusted when at one sensor or more it moves the reading, "
                   f"as a vector, by {100 * VECTOR_CHANGE_SHARE:.0f} % of the reading it adds "
                   f"to, or changes the amplitude by {100 * AMPLITUDE_CHANGE_SHARE:.0f} % or "
                   f"the phase by "
                   f"{PHASE_CHANGE_DEG:.0f}° (common practice for the last two; the vector "
                   "form is placer's own, as the coefficient's error is the reading error over "
                   "the vector change)")
"""The trial-run rule in words, as the views print it."""

CONDITION_RULE_TEXT = (f"The planes separate well when the condition number of the "
                       f"coefficients, each plane's column scaled to unit length, is at most "
                       f"{ILL_CONDITIONED:g} (placer's own threshold; the scaling makes it "
                       "independent of the planes' radii and of the units)")
"""The plane-separation rule in words."""


@dataclass(frozen=True)
class TrialChange:
    """How one trial run moved one sensor's reading.

    Parameters
    ----------
    sensor : str
        The sensor.
    amplitude_share : float
        (|V1| − |V0|)/|V0| [1], signed; infinite when |V0| is zero.
    phase_change_deg : float
        Phase of V1 less phase of V0 [deg], in (−180, 180]; 0 when either is zero.
    vector_share : float
        |V1 − V0|/|V0| [1]; infinite when |V0| is zero, NaN when both are.
    """

    sensor: str
    amplitude_share: float
    phase_change_deg: float
    vector_share: float

    @property
    def passes(self) -> bool:
        """Whether this sensor alone trusts the run (see the module's rule)."""
        if self.vector_share >= VECTOR_CHANGE_SHARE:
            return True
        if abs(self.amplitude_share) >= AMPLITUDE_CHANGE_SHARE:
            return True
        return abs(self.phase_change_deg) >= PHASE_CHANGE_DEG


@dataclass(frozen=True)
class TrialVerdict:
    """The verdict on one trial run.

    Parameters
    ----------
    run : str
        The trial run's name.
    against : str
        The run whose weights it adds to (the reference run, or an earlier
        trial run whose weight was left on).
    masses_g : tuple of float
        The trial masses fitted for it [g].
    changes : tuple of TrialChange
        How it moved each sensor.
    trusted : bool
        Whether one sensor or more passes the rule.
    scale : float or None
        For a run not trusted: by how much to multiply its trial masses for
        a vector change of :data:`TARGET_CHANGE_SHARE` [1]; None when trusted
        or when no reading moved at all.
    rule_mass_g : float or None
        The mass the 10 % force rule gives at the trial's radius [g]
        ([TrialMassRule]); None when the rotor's mass or speed is unknown.
    """

    run: str
    against: str
    masses_g: tuple[float, ...]
    changes: tuple[TrialChange, ...]
    trusted: bool
    scale: float | None
    rule_mass_g: float | None = None

    @property
    def strongest(self) -> TrialChange:
        """The sensor whose reading moved most, as a vector share."""
        finite = [c for c in self.changes if not math.isnan(c.vector_share)]
        return max(finite or self.changes, key=lambda c: (c.vector_share, c.sensor))

    @property
    def suggested_g(self) -> tuple[float, ...] | None:
        """Trial masses for a repeat run [g], rounded to two significant digits."""
        if self.scale is None:
            return None
        return tuple(float(f"{m * self.scale:.2g}") for m in self.masses_g)


@dataclass(frozen=True)
class DataCheck:
    """One check of the data, with what was found and what to do.

    Parameters
    ----------
    subject : str
        What was checked ("trial run 'trial inboard'", "plane separation").
    passed : bool
        Whether it passed.
    finding : str
        What was found, in a sentence.
    action : str
        What to do about it; "" when it passed.
    rule : str
        The rule and its source, in words.
    """

    subject: str
    passed: bool
    finding: str
    action: str
    rule: str


def trial_changes(baseline: np.ndarray, readings: np.ndarray,
                  sensors: Sequence[str]) -> tuple[TrialChange, ...]:
    """How a trial run moved each reading from the run it adds to.

    Parameters
    ----------
    baseline : complex array (n_channels,)
        Readings of the run whose weights the trial run adds to [session unit].
    readings : complex array (n_channels,)
        The trial run's readings [session unit].
    sensors : sequence of str
        The sensors' names.

    Returns
    -------
    tuple of TrialChange
        One per sensor.

    References
    ----------
    [TrialRunRule], [InfluenceCoefficients].
    """
    out = []
    for name, v0, v1 in zip(sensors, np.asarray(baseline), np.asarray(readings)):
        a0, a1 = abs(v0), abs(v1)
        change = abs(v1 - v0)
        if a0 > 0:
            amplitude, vector = (a1 - a0) / a0, change / a0
        else:
            amplitude = math.inf if a1 > 0 else 0.0
            vector = math.inf if change > 0 else math.nan
        phase = 0.0
        if a0 > 0 and a1 > 0:
            phase = (math.degrees(np.angle(v1) - np.angle(v0)) + 180.0) % 360.0 - 180.0
            phase = 180.0 if phase == -180.0 else phase
        out.append(TrialChange(name, float(amplitude), float(phase), float(vector)))
    return tuple(out)


def judge_trial_run(run: str, against: str, baseline: np.ndarray, readings: np.ndarray,
                    sensors: Sequence[str], masses_g: Sequence[float],
                    rule_mass_g: float | None = None) -> TrialVerdict:
    """The verdict on one trial run (see the module's rule).

    Parameters
    ----------
    run : str
        The trial run's name.
    against : str
        The run it adds to.
    baseline : complex array (n_channels,)
        That run's readings [session unit].
    readings : complex array (n_channels,)
        The trial run's readings [session unit].
    sensors : sequence of str
        The sensors' names.
    masses_g : sequence of float
        The trial masses fitted for the run [g].
    rule_mass_g : float or None
        The 10 % force rule's mass at the trial's radius [g]; None if unknown.

    Returns
    -------
    TrialVerdict
        Trusted or not, and for a run not trusted the factor for its masses.

    References
    ----------
    [TrialRunRule]; the factor puts the vector change at
    :data:`TARGET_CHANGE_SHARE`, the change growing with the trial mass in the
    linear model V = V0 + α·T ([InfluenceCoefficients]).
    """
    changes = trial_changes(baseline, readings, sensors)
    trusted = any(c.passes for c in changes)
    scale = None
    if not trusted:
        best = max((c.vector_share for c in changes if math.isfinite(c.vector_share)),
                   default=0.0)
        scale = TARGET_CHANGE_SHARE / best if best > 0 else None
    return TrialVerdict(run, against, tuple(float(m) for m in masses_g), changes, trusted,
                        scale, rule_mass_g)


def judge_runs(runs: Sequence[Run], n_planes: int, sensors: Sequence[str],
               mass_kg: float | None = None,
               service_rpm: float | None = None) -> tuple[TrialVerdict, ...]:
    """The verdict on every trial run of a visit, each against the run it adds to.

    Parameters
    ----------
    runs : sequence of Run
        The visit's runs, the reference run first.
    n_planes : int
        Planes of the rotor.
    sensors : sequence of str
        The sensors' names.
    mass_kg : float or None
        The rotor's mass [kg], for the 10 % force rule; None when unknown.
    service_rpm : float or None
        The speed of the runs [r/min], likewise.

    Returns
    -------
    tuple of TrialVerdict
        One per trial run, in run order.

    References
    ----------
    [TrialRunRule]; the baseline run as :func:`placer.session.carried_baselines`
    finds it; [TrialMassRule] for the rule's mass.
    """
    from placer.influence import trial_mass_g

    added = []
    for run in runs:
        gmm = np.zeros(n_planes, dtype=complex)
        for mass in run.added:
            gmm[mass.plane] += mass.gmm
        added.append(gmm)
    removed = [run.removed_after for run in runs]
    during, _ = carried_masses(added, removed, n_planes)
    base = carried_baselines(during, removed)
    out = []
    for i, run in enumerate(runs):
        if run.kind != "trial" or base[i] < 0:
            continue
        rule = None
        if mass_kg is not None and service_rpm is not None and run.added:
            rule = trial_mass_g(mass_kg, service_rpm, run.added[0].radius_mm)
        out.append(judge_trial_run(run.name, runs[base[i]].name, runs[base[i]].readings,
                                   run.readings, sensors,
                                   [m.mass_g * m.count for m in run.added], rule))
    return tuple(out)


def trial_check(verdict: TrialVerdict) -> DataCheck:
    """A trial run's verdict as a check: the sensor that moved most, why, what to do.

    Parameters
    ----------
    verdict : TrialVerdict
        The run's verdict.

    Returns
    -------
    DataCheck
        Passed for a trusted run.
    """
    c = verdict.strongest
    amplitude = (f"{100 * c.amplitude_share:+.0f} %" if math.isfinite(c.amplitude_share)
                 else "from zero")
    moved = (f"at {c.sensor} it moved the reading by {_share(c.vector_share)} as a vector "
             f"({amplitude} in amplitude, {c.phase_change_deg:+.0f}° in phase) "
             f"from run '{verdict.against}'")
    subject = f"trial run '{verdict.run}'"
    if verdict.trusted:
        return DataCheck(subject, True, moved, "", TRIAL_RULE_TEXT)
    if verdict.scale is None:
        action = ("no reading moved: check that the trial weight was on and that the sensor "
                  "reads, then repeat the run")
    else:
        masses = verdict.suggested_g or ()
        what = (f"about {masses[0]:g} g" if len(masses) == 1
                else f"trial weights about {verdict.scale:.1f} times as heavy")
        action = (f"repeat the run with {what} at the same place: this run's own coefficient "
                  f"puts a {100 * TARGET_CHANGE_SHARE:.0f} % change there")
        if verdict.rule_mass_g is not None and len(masses) == 1 \
                and masses[0] > verdict.rule_mass_g:
            action += (f"; that is more than the {verdict.rule_mass_g:.3g} g of the 10 % force "
                       "rule, so check the readings and the sensor first, or use a larger "
                       "radius")
    return DataCheck(subject, False, f"too weak: {moved}", action, TRIAL_RULE_TEXT)


def conditioning_check(condition: float, plane_names: Sequence[str]) -> DataCheck:
    """The plane-separation check of the coefficients.

    Parameters
    ----------
    condition : float
        Condition number of the coefficients, columns scaled to unit length [1].
    plane_names : sequence of str
        The planes' names.

    Returns
    -------
    DataCheck
        Failed above :data:`ILL_CONDITIONED` (one plane always passes).

    References
    ----------
    [GolubVanLoan] (error bound), [vanderSluis1969] (column scaling).
    """
    subject = "plane separation"
    if len(plane_names) < 2:
        return DataCheck(subject, True, "one plane: nothing to separate", "",
                         CONDITION_RULE_TEXT)
    finding = (f"condition number {condition:.3g} (1 is ideal): a reading error of 5 % may move "
               f"the correction by up to {min(condition * 5, 999):.0f} %")
    if condition <= ILL_CONDITIONED:
        return DataCheck(subject, True, finding, "", CONDITION_RULE_TEXT)
    return DataCheck(subject, False, f"the planes {' and '.join(plane_names)} separate poorly: "
                     + finding, "move a sensor or a correction plane so that the planes act "
                     "differently on the sensors, or add a sensor, and repeat the trial runs",
                     CONDITION_RULE_TEXT)


def _share(value: float) -> str:
    """A share as an unsigned percentage for the sentences above."""
    if not math.isfinite(value):
        return "all of it" if value > 0 else "an unknown share"
    return f"{100 * abs(value):.0f} %"
