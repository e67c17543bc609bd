"""Words every view shares: the cautions, the action words, the verdicts.

The terminal sheets and the printed sheet take them from here, so that a
technician reads the same words on both.

References
----------
[Cautions] in REFERENCES.md: lock out and tag out (OSHA 29 CFR 1910.147),
guarding (ISO 21940-23), a weight that comes off is a projectile; local codes
and the machine maker's instructions come first.
"""

from __future__ import annotations

from placer.plan import LIGHTEST, FittedPart, PlaneResult, PlanOption

CAUTIONS = (
    "Lock out and tag out the machine before fitting or removing any part; "
    "try a start to prove it is isolated.",
    "A part that comes off a spinning rotor is a projectile: fasten every part "
    "as the machine maker specifies, and keep clear of the plane of rotation on test runs.",
    "Local codes and the machine maker's instructions come first.",
)
"""The cautions every sheet carries."""

DRILL_CAUTION = (
    "Drilling: check the wall or boss is thick enough and within the maker's drilling "
    "limits, drill only with the machine isolated and still, and clear every chip before "
    "the run.")
"""The caution a plan with a hole to drill adds."""

TRIAL_CAUTION = ("Trial runs spin the rotor with a weight fitted for the purpose: fasten it as "
                 "firmly as a final weight, keep out of the plane of rotation, and remove or "
                 "account for it afterwards.")
"""The caution a field visit with trial runs adds."""

ACTION_ORDER = ("remove", "drill", "fit")
"""The order the work is done in: parts to take off first, then holes, then parts to fit."""


def action_word(part: FittedPart, emphasise: bool = False) -> str:
    """What the technician does with ``part``: fit, drill or remove.

    Parameters
    ----------
    part : FittedPart
        The part.
    emphasise : bool
        Capitals for the actions that are not a plain fit (DRILL, REMOVE), as
        the terminal sheet prints them; the printed sheet capitalises all.
    """
    verb = part.verb
    return verb.upper() if emphasise and verb != "fit" else verb


def cautions_for(drilling: bool = False, trial_runs: bool = False) -> tuple[str, ...]:
    """The cautions of one sheet: the trial-run caution first, the drilling one last.

    Parameters
    ----------
    drilling : bool
        The plan drills a hole (adds :data:`DRILL_CAUTION`).
    trial_runs : bool
        The visit had trial runs (adds :data:`TRIAL_CAUTION`).

    Returns
    -------
    tuple of str
        The cautions, in the order printed.
    """
    return (((TRIAL_CAUTION,) if trial_runs else ()) + CAUTIONS
            + ((DRILL_CAUTION,) if drilling else ()))


def drills(parts) -> bool:
    """True when the parts include a hole to drill.

    Parameters
    ----------
    parts : iterable of FittedPart
        The parts of a plan.

    Returns
    -------
    bool
        Whether any part's verb is "drill".
    """
    return any(p.verb == "drill" for p in parts)


def plan_kind(option: PlanOption) -> str:
    """Which plan a trade-off row is: the least "residual", or the least "mass" in the aim.

    Parameters
    ----------
    option : PlanOption
        The row's plan.
    """
    return "mass" if option.kind == LIGHTEST else "residual"


def verdict_word(plane: PlaneResult, option: PlanOption) -> str:
    """A trade-off row against the plane's aim and tolerance: "in aim", "within",
    "outside", or "-" when the plane has no tolerance.

    Parameters
    ----------
    plane : PlaneResult
        The plane (its aim and tolerance).
    option : PlanOption
        The row's plan.
    """
    if plane.tolerance_gmm is None:
        return "-"
    if plane.aim_gmm is not None and option.residual_gmm <= plane.aim_gmm:
        return "in aim"
    return "within" if option.residual_gmm <= plane.tolerance_gmm else "outside"
