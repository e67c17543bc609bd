"""What a page shows of a plane, read from the result (the sheet's view model).

The arrows are the correction still needed with any existing parts on
(``PlaneJob.further_correction_gmm``) and the residual after the plan, to one scale.  A
vector that is zero to within ``ZERO_SHARE`` of the plane's largest magnitude counts as
zero and is printed as "≈ 0".
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from placer.geometry import angle_of_deg
from placer.plan import PlaneResult
from placer.units import METRIC, UnitSystem
from placer.views.wording import at_radius

ZERO_SHARE = 1e-6
"""A vector no longer than this share of the plane's largest magnitude (the correction
as given, the further correction, the tolerance) counts as zero on the sheet."""


@dataclass(frozen=True)
class StayingPart:
    """Parts already on the rotor that the plan leaves on: ``count`` of ``item`` [g each].

    Parameters
    ----------
    position : int
        Position number (from 1).
    item : str
        Catalogue item id.
    mass_g : float
        Mass of one part [g].
    count : int
        Parts left on.
    """

    position: int
    item: str
    mass_g: float
    count: int


@dataclass(frozen=True)
class PlaneFacts:
    """The numbers one page shows beyond the plan itself, read from the result.

    ``further_gmm`` is the correction still needed with the existing parts
    on, which the plan answers; ``given_gmm`` the correction as the job
    gives it (the total without the existing parts when ``basis`` is
    "total"); ``basis`` is "none" when the plane carries no parts.
    ``zero_gmm`` is the magnitude at or below which a vector counts as zero.

    Parameters
    ----------
    further_gmm : complex
        Correction still needed with the existing parts on [g·mm].
    given_gmm : complex
        Correction as the job gives it [g·mm].
    basis : {"none", "further", "total"}
        How the job gave the correction; "none" without existing parts.
    zero_gmm : float
        Magnitude at or below which a vector counts as zero [g·mm].
    staying : tuple of StayingPart
        Existing parts the plan leaves on.
    """

    further_gmm: complex
    given_gmm: complex
    basis: str
    zero_gmm: float
    staying: tuple[StayingPart, ...]

    def negligible(self, magnitude_gmm: float) -> bool:
        """True for a magnitude [g·mm] that counts as zero on this plane.

        Parameters
        ----------
        magnitude_gmm : float
            The magnitude [g·mm].

        Returns
        -------
        bool
            Whether it is at most :attr:`zero_gmm`.
        """
        return magnitude_gmm <= self.zero_gmm

    @property
    def existing_gmm(self) -> complex:
        """The existing parts' own correction [g·mm] (basis "total" only; else 0)."""
        return self.given_gmm - self.further_gmm if self.basis == "total" else 0j


def plane_facts(plane: PlaneResult) -> PlaneFacts:
    """What one page shows of ``plane`` beside its plan (see :class:`PlaneFacts`).

    Parameters
    ----------
    plane : PlaneResult
        The solved plane.

    Returns
    -------
    PlaneFacts
        Further and given correction, basis, the zero threshold (``ZERO_SHARE``
        of the largest of those and the tolerance) and the parts left on.
    """
    job = plane.plane
    further = complex(job.further_correction_gmm)
    given = complex(job.correction_gmm)
    basis = job.correction_basis if job.existing else "none"
    largest = max(abs(given), abs(further), plane.tolerance_gmm or 0.0)
    items = job.catalog.items
    off: dict[tuple[int, str], int] = {}
    for p in plane.chosen.parts:
        if p.action == "remove":
            off[(p.position, p.item)] = off.get((p.position, p.item), 0) + p.count
    staying = []
    for e in job.existing:
        key = (e.position, items[e.item].id)
        taken = min(e.count, off.get(key, 0))
        off[key] = off.get(key, 0) - taken
        if e.count > taken:
            staying.append(StayingPart(e.position, key[1], items[e.item].mass_g, e.count - taken))
    return PlaneFacts(further_gmm=further, given_gmm=given, basis=basis,
                      zero_gmm=ZERO_SHARE * largest, staying=tuple(staying))


def fmt_gmm(value: float) -> str:
    """A magnitude for the sheet: one decimal from 10 up, else three significant digits.

    Below 10, trailing zeros are dropped down to one decimal ("5.0", "0.125").

    Parameters
    ----------
    value : float
        The magnitude [g·mm, or g].

    Returns
    -------
    str
        The text; thousands separated by a space ("1 707.3"); "0" for zero.
    """
    if value == 0 or not math.isfinite(value):
        return "0" if value == 0 else str(value)
    if abs(value) >= 10:
        return f"{value:,.1f}".replace(",", " ")
    decimals = max(1, 2 - math.floor(math.log10(abs(value))))
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0")
        text = text + "0" if text.endswith(".") else text
    return text


def fmt_vector(vector: complex, facts: PlaneFacts, units: UnitSystem = METRIC) -> str:
    """"X g·mm at Y°" (or oz·in), or "≈ 0 g·mm" when it counts as zero.

    Parameters
    ----------
    vector : complex
        A correction or residual [g·mm].
    facts : PlaneFacts
        The plane's facts, for the zero threshold.
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The vector as text.
    """
    if facts.negligible(abs(vector)):
        return f"≈ 0 {units.unbalance_unit}"
    return f"{units.unbalance_text(abs(vector))} at {angle_of_deg(vector):.1f}°"


@dataclass(frozen=True)
class PlaneDrawing:
    """Where things were drawn on one rotor face, in data units (largest radius = 1).

    ``position_xy`` maps every position number to its marker; ``fit_xy``
    (parts to fit and holes to drill), ``drill_xy`` (holes only),
    ``remove_xy``, ``stay_xy`` (existing parts left on) and ``blocked_xy``
    the positions with those symbols.  ``rotation_clockwise`` is the way the
    rotation arrow turns on the page (None: not drawn).  ``required_xy`` and ``residual_xy``
    are the arrows as (tail, tip), None when not drawn.  ``kinds`` are the
    symbols drawn, in the order the key lists them.  ``ax`` is the matplotlib
    Axes (``ax.transData`` turns data units into pixels of the page).

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    counterclockwise : bool
        Whether job angles grow counterclockwise on the page.
    rotation_clockwise : bool or None
        Way of the rotation arrow; None when not drawn.
    position_xy : dict of int to (float, float)
        Position number -> its marker [data units].
    fit_xy : dict of int to (float, float)
        Positions with a part to fit or a hole to drill -> symbol [data units].
    remove_xy : dict of int to (float, float)
        Positions with a part to take off -> symbol [data units].
    blocked_xy : dict of int to (float, float)
        Blocked positions -> marker [data units].
    correction_tip_xy : (float, float)
        Tip of the required arrow [data units]; the centre when it is zero.
    residual_tip_xy : (float, float)
        Tip of the residual to scale [data units]; the centre when it is zero.
    drill_xy : dict of int to (float, float)
        Positions with a hole to drill -> symbol [data units].
    stay_xy : dict of int to (float, float)
        Positions with existing parts left on -> symbol [data units].
    required_xy : ((float, float), (float, float)) or None
        The required arrow as (tail, tip) [data units].
    residual_xy : ((float, float), (float, float)) or None
        The residual arrow as drawn (enlarged when short) [data units].
    kinds : tuple of str
        The symbols drawn, in key order.
    accepts_all : str
        What every open position takes when they all take the same ("both",
        "add" or "remove"); "" when they differ.
    """

    ax: Any
    counterclockwise: bool
    rotation_clockwise: bool | None
    position_xy: dict[int, tuple[float, float]]
    fit_xy: dict[int, tuple[float, float]]
    remove_xy: dict[int, tuple[float, float]]
    blocked_xy: dict[int, tuple[float, float]]
    correction_tip_xy: tuple[float, float]
    residual_tip_xy: tuple[float, float]
    drill_xy: dict[int, tuple[float, float]]
    stay_xy: dict[int, tuple[float, float]]
    required_xy: tuple[tuple[float, float], tuple[float, float]] | None
    residual_xy: tuple[tuple[float, float], tuple[float, float]] | None
    kinds: tuple[str, ...]
    accepts_all: str
    """What every open position takes when they all take the same ("both", "add" or
    "remove"); "" when they differ and the add-only and remove-only ones are marked."""


@dataclass(frozen=True)
class SheetPage:
    """One page written: the file it is in, its plane (1-based) and its drawing.

    Parameters
    ----------
    path : Path
        The file.
    plane : int
        Plane number (from 1).
    drawing : PlaneDrawing
        Where things were drawn on it.
    """

    path: Path
    plane: int
    drawing: PlaneDrawing


def tolerance_text(plane: PlaneResult, units: UnitSystem = METRIC) -> str:
    """The plane's tolerance for the sheet: "X g·mm (Y g at r Z mm)", or "none given".

    Parameters
    ----------
    plane : PlaneResult
        The solved plane.
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The text.
    """
    if plane.tolerance_gmm is None:
        return "none given"
    return (f"{units.unbalance_text(plane.tolerance_gmm)} "
            f"({at_radius(plane.tolerance_gmm, plane.plane.geometry, units)})")


def basis_lines(plane: PlaneResult, facts: PlaneFacts) -> list[str]:
    """How the job gave the correction, and what the plan answers.

    Parameters
    ----------
    plane : PlaneResult
        The solved plane.
    facts : PlaneFacts
        Its facts (:func:`plane_facts`).

    Returns
    -------
    list of str
        One or two lines for the plane band.
    """
    if facts.basis == "none":
        return [f"as given: {plane.plane.given_as}"]
    if facts.basis == "further":
        return [f"as given: {plane.plane.given_as}", "measured with the existing parts on"]
    return ["with the existing parts on (sum below)"]


def basis_sentence(plane: PlaneResult, facts: PlaneFacts,
                   units: UnitSystem = METRIC) -> str | None:
    """For a correction given without the existing parts: total − existing = further.

    Parameters
    ----------
    plane : PlaneResult
        The solved plane.
    facts : PlaneFacts
        Its facts (:func:`plane_facts`).
    units : UnitSystem
        The job's units.

    Returns
    -------
    str or None
        The sentence; None unless the basis is "total".

    References
    ----------
    Unbalances in one plane add as vectors [StaticCouple].
    """
    if facts.basis != "total":
        return None
    return (f"Required correction: total {fmt_vector(facts.given_gmm, facts, units)} as the "
            f"job gives it ({plane.plane.given_as}, without the existing parts) − existing "
            f"parts {fmt_vector(facts.existing_gmm, facts, units)} = further "
            f"{fmt_vector(facts.further_gmm, facts, units)}, which the arrows and the plan use.")
