"""Which plan a technician should fit: an aim below the tolerance, the fewest parts that
reach it, then the least added mass.

The rule (Notes)
----------------
A plane with a tolerance T is planned to an aim A = s·T below it (the aim
share s, by default :data:`placer.limits.DEFAULT_AIM_SHARE`), so that the
errors of fitting and measuring still leave the rotor within T:

1. the fewest parts k* whose least residual reaches the aim;
2. among the plans of k* parts within the aim, the least added mass (a part
   taken off and a hole drilled count by the magnitude of their mass), found
   by the exact engine (:meth:`PlacementSearch.lightest`), not by filtering the
   least-residual plans;
3. among those, the least residual.

When no plan reaches the aim, the same rule with the tolerance itself; when
none reaches the tolerance, the least residual with the most parts allowed.
The verdict is always against the tolerance itself.

Without a tolerance the aim is :data:`placer.limits.NO_TOLERANCE_AIM_SHARE` of
the correction still needed; when no plan reaches it, the plan is taken where
one more part stops paying off: the fewest parts k such that no larger count
k' removes at least :data:`placer.limits.PAYOFF_SHARE` of that correction per
extra part (r_k - r_k' < p·|c|·(k' - k) for every k' > k).

Every plan is found by the exact engine and is proven by the same rule as
the front (:func:`placer.engine.front.is_proven`); a search that runs out of
work is said to be unproven, never timed.

References
----------
[ISO21940-14] the residual a balancing job can promise is the tolerance less
the errors of the process (the default aim share is from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from placer.engine.arrays import PlaneArrays
from placer.engine.front import exact_front, improving
from placer.engine.search import PlacementSearch
from placer.engine.selection import Selection
from placer.limits import (
    DEFAULT_EFFORT,
    DEFAULT_WORK,
    NO_TOLERANCE_AIM_SHARE,
    PAYOFF_SHARE,
)
from placer.plan import LEAST_RESIDUAL, LIGHTEST


@dataclass(frozen=True)
class Aim:
    """What a plane's plan aims at.

    Parameters
    ----------
    radius_gmm : float
        The residual the plan should reach [g·mm].
    share : float
        Its share of the tolerance, or (``of_tolerance`` False) of the
        correction still needed [1].
    of_tolerance : bool
        Whether the aim is a share of the tolerance (else of the correction,
        when no tolerance is given).
    source : str
        Where the share came from, for the sheet.
    """

    radius_gmm: float
    share: float
    of_tolerance: bool
    source: str

    @property
    def text(self) -> str:
        """The aim as the sheet says it."""
        what = "of the tolerance" if self.of_tolerance else \
            "of the correction still needed (no tolerance given)"
        return f"{self.share:.0%} {what}, {self.source}"


def aim_of(tolerance_gmm: float | None, further_gmm: float, share: float,
           source: str) -> Aim:
    """The aim of one plane: a share of its tolerance, or of its correction without one.

    Parameters
    ----------
    tolerance_gmm : float or None
        The plane's tolerance [g·mm].
    further_gmm : float
        The correction still needed [g·mm], its magnitude.
    share : float
        The aim's share of the tolerance [1].
    source : str
        Where that share came from.
    """
    if tolerance_gmm is None:
        return Aim(NO_TOLERANCE_AIM_SHARE * abs(further_gmm), NO_TOLERANCE_AIM_SHARE, False,
                   "placer's rule")
    return Aim(share * tolerance_gmm, share, True, source)


@dataclass(frozen=True)
class Choice:
    """The plan chosen for one plane, why, and the rows of its trade-off.

    Parameters
    ----------
    chosen : Selection
        The plan to fit.
    rule : str
        Why it was chosen, as the sheet says it.
    front : tuple of Selection
        Entry k: the least residual with at most k parts.
    lighter : tuple of Selection
        Per part count that reaches the aim, the lightest plan within the aim
        when it is not the least-residual one.
    proven : bool
        Whether every search behind the choice finished (the front and the
        lightest plans).
    score : tuple of float
        The plane's value for planning planes together (larger is better):
        within the aim, within the tolerance, minus the residual outside the
        tolerance, minus the parts, minus the mass, minus the residual.
    work : int
        Work the engine counted.
    method : str
        How the front was found.
    """

    chosen: Selection
    rule: str
    front: tuple[Selection, ...]
    lighter: tuple[Selection, ...]
    proven: bool
    score: tuple[float, ...]
    work: int
    method: str

    @property
    def kind(self) -> str:
        """What the chosen plan is least in: :data:`placer.plan.LIGHTEST` when it is one
        of the lightest plans, else :data:`placer.plan.LEAST_RESIDUAL`."""
        parts = self.chosen.parts
        for light in self.lighter:
            if light.parts == parts:
                return LIGHTEST
        return LEAST_RESIDUAL

    @property
    def improving(self) -> list[Selection]:
        """The front's entries that improve on fewer parts (the rows a sheet shows)."""
        return improving(list(self.front))


def payoff_count(residuals: list[float], required_gmm: float,
                 share: float = PAYOFF_SHARE) -> int:
    """The fewest parts beyond which one more part stops paying off.

    Parameters
    ----------
    residuals : list of float
        The least residual with at most k parts, k = 0, 1, ... [g·mm].
    required_gmm : float
        The correction still needed [g·mm].
    share : float
        What an extra part must remove at least, as a share of it [1].

    Returns
    -------
    int
        The smallest k with ``r_k - r_k' < share·required·(k' - k)`` for every
        k' > k.
    """
    step = share * abs(required_gmm)
    for k, r_k in enumerate(residuals):
        if all(r_k - r_j < step * (j - k) for j, r_j in enumerate(residuals) if j > k):
            return k
    return len(residuals) - 1


def _mass(search: PlacementSearch, entry: Selection) -> float:
    """The added mass of an entry's parts [g]."""
    return search.mass_of(entry.parts)


def choose_plan(arrays: PlaneArrays, max_parts: int, tolerance_gmm: float | None, aim: Aim, *,
                effort: float = DEFAULT_EFFORT, search: PlacementSearch | None = None,
                stock: np.ndarray | None = None, parts: int | None = None,
                tradeoff: bool = True) -> Choice:
    """Plan one plane by the rule of the module notes.

    Parameters
    ----------
    arrays : PlaneArrays
        The plane as arrays (target: the correction still needed).
    max_parts : int
        Longest plan.
    tolerance_gmm : float or None
        The plane's tolerance [g·mm].
    aim : Aim
        What the plan aims at (:func:`aim_of`).
    effort : float
        Multiple of the default work budget.
    search : PlacementSearch, optional
        A search built once for these arrays; default a new one.
    stock : int array, optional
        Parts of each column on hand for this plane (shared stock).
    parts : int, optional
        Choose the plan of this many parts instead (the lightest within the
        aim when that count reaches it, else the least residual).
    tradeoff : bool
        Whether the whole trade-off is wanted (the front to ``max_parts`` and
        the lightest plans of every count past the chosen one).  Without it
        the front ends at the first count that reaches the aim: the plan
        chosen is the same (the rule never looks past that count when one
        reaches the aim, and each count's entry depends only on the counts
        before it), only ``front`` and ``lighter`` are shorter (a batch
        prints the plan alone).

    Returns
    -------
    Choice
    """
    if search is None:
        search = PlacementSearch(arrays.effects, arrays.capacity, arrays.stock, max_parts,
                                 masses=arrays.masses)
    end_at = None if tradeoff or parts is not None else aim.radius_gmm
    front, work, method = exact_front(arrays, max_parts, effort, search, stock, end_at)
    residuals = [e.residual_norm for e in front]
    budget = int(DEFAULT_WORK * effort)
    proven = all([e.proven for e in front])

    def lightest(k: int, radius: float) -> Selection:
        """The lightest plan of the parts of front entry k within radius (else that entry)."""
        nonlocal proven, work
        entry = front[k]
        used = entry.used_parts
        found = search.lightest(arrays.target, used, radius, stock=stock, work=budget,
                                known=entry.parts)
        work += search.work_done
        if found is None:
            return entry
        proven &= found.proven
        return Selection(k, found.parts, found.residual, found.residual_norm,
                         entry.lower_bound, entry.proven, mass=found.mass)

    def first_within(radius: float) -> int | None:
        for k, r in enumerate(residuals):
            if r <= radius:
                return k
        return None

    lighter: list[Selection] = []
    reach = first_within(aim.radius_gmm)
    if reach is not None:
        for entry in improving(front) if reach < len(front) - 1 else []:
            k = entry.part_count
            if k > reach and entry.residual_norm <= aim.radius_gmm:
                light = lightest(k, aim.radius_gmm)
                if light.parts != entry.parts:
                    lighter.append(light)
    if parts is not None:
        k = min(int(parts), len(front) - 1)
        chosen = (lightest(k, aim.radius_gmm) if residuals[k] <= aim.radius_gmm
                  else _with_mass(search, front[k]))
        rule = f"the plan of {parts} part{'s' if parts != 1 else ''} asked for"
    elif reach is not None:
        chosen = lightest(reach, aim.radius_gmm) if reach else _with_mass(search, front[0])
        rule = ("already within the aim: nothing to fit" if reach == 0 else
                f"the fewest parts that reach the aim ({aim.text}), then the least added mass")
    elif tolerance_gmm is not None and first_within(tolerance_gmm) is not None:
        chosen = lightest(first_within(tolerance_gmm), tolerance_gmm)
        rule = ("no plan reaches the aim: the fewest parts within the tolerance, then the "
                "least added mass")
    elif tolerance_gmm is not None:
        chosen = _with_mass(search, front[-1])
        rule = "no plan reaches the tolerance: the least residual with the most parts allowed"
    else:
        k = payoff_count(residuals, float(np.abs(arrays.target).max(initial=0.0)))
        chosen = _with_mass(search, front[k])
        rule = (f"no tolerance given, and no plan leaves {NO_TOLERANCE_AIM_SHARE:.0%} of the "
                f"correction: the parts beyond which one more removes less than "
                f"{PAYOFF_SHARE:.0%} of it")
    if reach is not None and parts is None and reach:
        lighter = [s for s in lighter if s.parts != chosen.parts]
        base = front[reach]
        if chosen.parts != base.parts:
            lighter.insert(0, chosen)
    lighter = _lighter_rows(lighter, front, aim.radius_gmm, search)
    return Choice(chosen, rule, tuple(front), tuple(lighter), proven and chosen.proven,
                  _score(chosen, tolerance_gmm, aim, search), work, method)


def _lighter_rows(lighter: list[Selection], front: list[Selection], radius: float,
                  search: PlacementSearch) -> list[Selection]:
    """The lightest plans worth a row: lighter than every plan within the aim with fewer
    parts (least residual or lightest), fewest parts first."""
    rows = []
    for light in sorted(lighter, key=lambda s: (s.used_parts, s.mass)):
        fewer = [s for s in rows + [e for e in front if e.residual_norm <= radius]
                 if s.used_parts < light.used_parts]
        if all(light.mass < _mass(search, s) - 1e-9 for s in fewer):
            rows.append(light)
    return rows


def _with_mass(search: PlacementSearch, entry: Selection) -> Selection:
    """The entry with its added mass filled in (the entry itself when it holds that mass
    already: a sum of masses of one sign, equal as floats, is the same float)."""
    mass = _mass(search, entry)
    return entry if mass == entry.mass else replace(entry, mass=mass)


def _score(chosen: Selection, tolerance_gmm: float | None, aim: Aim,
           search: PlacementSearch) -> tuple[float, ...]:
    """The plane's value for planning planes together (see :class:`Choice`)."""
    residual = chosen.residual_norm
    within_tolerance = tolerance_gmm is None or residual <= tolerance_gmm
    scale = max(tolerance_gmm or 0.0, aim.radius_gmm, 1e-12)
    outside = 0.0 if within_tolerance else residual / scale
    return (float(residual <= aim.radius_gmm), float(within_tolerance), -outside,
            -float(chosen.used_parts), -_mass(search, chosen), -residual / scale)
