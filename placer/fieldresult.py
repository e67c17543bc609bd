"""What a field visit's plan leaves: the plans found and everything a visit prints and stores.

The values :func:`placer.fieldplan.solve_session` returns (re-exported there).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from placer.fourrun import FourRunSolution
from placer.influence import Coefficients, StaticCouple
from placer.plan import FittedPart
from placer.residualcheck import ResidualCheckResult
from placer.session import PlacedMass, Session
from placer.trialruns import DataCheck, TrialVerdict

__all__ = ["FieldOption", "FieldResult"]


@dataclass(frozen=True)
class FieldOption:
    """A discrete plan and the vibration it is predicted to leave.

    ``parts`` are (plane index, FittedPart) pairs; a part with action
    "remove" is one fitted for a check run, to be taken off.  ``predicted``
    is the vibration at each sensor once the plan is carried out [session
    unit and measure]; ``objective`` its largest or root-sum-square value.

    Parameters
    ----------
    part_count : int
        Most parts allowed for this plan.
    parts : tuple of (int, FittedPart)
        (plane index, parts) pairs, parts to take off first.
    predicted : complex array (n_channels,)
        Vibration predicted at each sensor [session unit and measure].
    objective : float
        Its weighted largest or root-sum-square value (:func:`objective_of`),
        what the search makes least [session unit and measure, each sensor
        scaled by the square root of its weight]; :attr:`largest` is the
        physical amplitude.
    proven : bool
        Whether the search proved it least for ``part_count`` parts.
    """

    part_count: int
    parts: tuple[tuple[int, FittedPart], ...]
    predicted: np.ndarray
    objective: float
    proven: bool

    @property
    def used_parts(self) -> int:
        """Operations: parts fitted plus parts taken off."""
        return sum(p.count for _, p in self.parts)

    @property
    def largest(self) -> float:
        """The largest predicted amplitude at any sensor, unweighted [session unit and measure]."""
        return float(np.max(np.abs(self.predicted))) if self.predicted.size else 0.0


@dataclass(frozen=True)
class FieldResult:
    """Everything a visit needs to print, store and fit.

    Parameters
    ----------
    session : Session
        The visit.
    coefficients : Coefficients
        The influence coefficients used, with their warnings.
    coefficient_source : str
        Where they came from: the stored visit's label, or "N trial run(s) of
        this visit".
    vibration_now : complex array (n_channels,)
        The vibration the plan starts from [session unit and measure]: the
        last check run, or the reference run (with the trial weights left on,
        predicted).
    basis : str
        Which of those it is, in words.
    correction_gmm : complex array (n_planes,)
        The continuous least-squares correction [g·mm].
    static_couple : StaticCouple or None
        Its static and couple parts (two planes only).
    front : tuple of FieldOption
        Coupled plans, each with more parts and less predicted vibration
        than the one before, the plan of no parts first.
    chosen : FieldOption
        The plan to fit.
    rounded : FieldOption
        Each plane's correction rounded to stock on its own, for comparison.
    warnings : tuple of str
        Sentences for the technician.
    fitted : tuple of PlacedMass
        Parts on the rotor that a plan may take off: trial weights left on
        their positions (``item`` names the stand-in item of
        :mod:`placer.onrotor`), then the parts fitted for the check runs.
    verdicts : tuple of TrialVerdict
        The verdict on each trial run (none with stored coefficients or
        without a phase reference).
    checks : tuple of DataCheck
        The checks of the data, before the plan: each trial run, the plane
        separation, the amplitude-only construction.
    fixed : tuple of PlacedMass
        Trial weights left on but on no position: they stay on, outside the plan.
    four_run : FourRunSolution or None
        The four-run method's answer, for a session without a phase reference.
    residual_checks : tuple of ResidualCheckResult
        The residual-unbalance checks of the session.
    """

    session: Session
    coefficients: Coefficients
    coefficient_source: str
    vibration_now: np.ndarray
    basis: str
    correction_gmm: np.ndarray
    static_couple: StaticCouple | None
    front: tuple[FieldOption, ...]
    chosen: FieldOption
    rounded: FieldOption
    warnings: tuple[str, ...]
    fitted: tuple[PlacedMass, ...] = ()
    verdicts: tuple[TrialVerdict, ...] = ()
    checks: tuple[DataCheck, ...] = ()
    fixed: tuple[PlacedMass, ...] = ()
    four_run: FourRunSolution | None = None
    residual_checks: tuple[ResidualCheckResult, ...] = ()

    @property
    def data_ok(self) -> bool:
        """Whether every check of the data passed (else the plan is marked as from failed data)."""
        return all(c.passed for c in self.checks)

    def best_with_at_most(self, parts: int) -> FieldOption:
        """The coupled plan with the least predicted vibration using at most ``parts`` parts.

        Parameters
        ----------
        parts : int
            Most parts (fitted plus taken off).

        Returns
        -------
        FieldOption
            The last plan of :attr:`front` within that many parts.
        """
        return [o for o in self.front if o.used_parts <= parts][-1]

    @property
    def coupled_same_parts(self) -> FieldOption:
        """The coupled optimum with no more parts than the rounded per-plane plan."""
        return self.best_with_at_most(self.rounded.used_parts)

    @property
    def within_limit(self) -> bool | None:
        """Whether every sensor's predicted amplitude after the plan is at or below the limit.

        Both are in the session's unit and measure, unweighted.  None: no limit given.
        """
        limit = self.session.vibration_limit
        return None if limit is None else self.chosen.largest <= limit
