"""One rotor of a production batch: its readings, its plans, and the solver that builds
everything the rotors share once.

How a rotor is solved (Notes)
-----------------------------
* Everything that does not depend on the correction is built once per
  process for the whole batch: per plane one
  :class:`placer.engine.search.PlacementSearch` (placements, the grid of
  their pairs), the plane's tolerance
  (:func:`placer.tolerance.job_tolerances`, as for ``placer solve``) and its
  aim share.
* Per rotor and plane only the target changes: the rotor's correction plus
  the plane's fixed offset (the existing parts' correction taken off when
  the basis is "total"); the plan is chosen by the rule of
  :mod:`placer.choice`, and planes that share a drawer are planned together
  (:mod:`placer.stock`), exactly as ``placer solve`` does for a job file
  holding that rotor's correction.
* The drawers are drawn down rotor by rotor in input order
  (:class:`Drawer`): each rotor is planned with what the rotors before it
  left; where that changes its plans, the plans a full drawer would have
  given are kept beside them.

References
----------
[ISO21940-11] residual unbalance and its allocation to the correction planes,
as in :mod:`placer.solve`.
"""

from __future__ import annotations

import hashlib
from collections.abc import Iterable
from dataclasses import dataclass, fields, replace
from typing import Any

import numpy as np

from placer.choice import Aim, aim_of
from placer.engine.arrays import PlaneArrays, option_of, plane_arrays
from placer.engine.search import PlacementSearch
from placer.errors import JobError
from placer.job import Job, PlaneJob
from placer.limits import DEFAULT_EFFORT
from placer.plan import PlanOption
from placer.solve import aim_share_of
from placer.stock import PlanePlanner, share_stock, shared_stock_groups
from placer.tolerance import job_tolerances


@dataclass(frozen=True)
class RotorReading:
    """One rotor of the batch: its serial and the required correction per plane.

    Parameters
    ----------
    line : int
        Line of the readings file the rotor came from (1 = first line).
    serial : str
        The rotor's serial number.
    corrections_gmm : tuple of complex
        Required correction of each plane, in template plane order [g·mm],
        mass·radius·e^{i·angle} at the angle where mass must be added.
    """

    line: int
    serial: str
    corrections_gmm: tuple[complex, ...]

    @property
    def digest(self) -> str:
        """First 16 hex digits of the SHA-256 of the corrections (see :func:`reading_digest`)."""
        return reading_digest(self.corrections_gmm)


def reading_digest(corrections_gmm: Iterable[complex]) -> str:
    """A fingerprint of a rotor's corrections: equal exactly when every float is equal.

    SHA-256 of the real and imaginary parts written with ``repr`` (which
    round-trips a float exactly), first 16 hex digits.  A resumed batch
    compares it with the one stored in each result to find rows changed
    since.

    Parameters
    ----------
    corrections_gmm : iterable of complex
        The rotor's required corrections, plane by plane [g·mm].

    Returns
    -------
    str
        16 lowercase hex digits.

    References
    ----------
    FIPS 180-4 (SHA-256); Python ``float.__repr__``, shortest repr that
    round-trips (Python 3.1+).
    """
    text = ";".join(f"{complex(c).real!r},{complex(c).imag!r}" for c in corrections_gmm)
    return hashlib.sha256(text.encode("ascii")).hexdigest()[:16]


@dataclass(frozen=True)
class PlaneOutcome:
    """The plan chosen for one plane of one rotor.

    ``tolerance_gmm`` is None when the template gives no tolerance for the
    plane; ``within_tolerance`` is then None too.  ``correction_gmm`` is the
    rotor's required correction for the plane, as read [g·mm].

    Parameters
    ----------
    plane : int
        Plane number (from 1), in template order.
    name : str
        The plane's name.
    catalog : str
        Name of the plane's catalogue.
    option : PlanOption
        The plan chosen.
    tolerance_gmm : float or None
        The plane's permissible residual [g·mm].
    within_tolerance : bool or None
        Whether the plan is within it.
    correction_gmm : complex
        The rotor's required correction for the plane [g·mm].
    """

    plane: int
    name: str
    catalog: str
    option: PlanOption
    tolerance_gmm: float | None
    within_tolerance: bool | None
    correction_gmm: complex = 0j

    @property
    def residual_gmm(self) -> float:
        """Residual of the chosen plan [g·mm]."""
        return self.option.residual_gmm


@dataclass(frozen=True)
class RotorOutcome:
    """The plans for one rotor, plane by plane.

    Parameters
    ----------
    line : int
        Line of the readings file the rotor came from.
    serial : str
        The rotor's serial number.
    planes : tuple of PlaneOutcome
        Each plane's plan, in template order.
    solved_together : bool
        Whether the rotor was solved whole, its planes sharing stock.
    stock_short : tuple of str
        Ids of items its plans still overdraw (no plan within the stock found).
    full_drawer : tuple of PlaneOutcome or None
        The plans a full drawer would have given, when what was left in the
        drawers changed them (None: the same plans).
    drawer_left : tuple of (str, str, int)
        Parts left in each limited drawer after this rotor: (catalogue, item,
        count), in template order.
    """

    line: int
    serial: str
    planes: tuple[PlaneOutcome, ...]
    solved_together: bool = False
    stock_short: tuple[str, ...] = ()
    full_drawer: tuple[PlaneOutcome, ...] | None = None
    drawer_left: tuple[tuple[str, str, int], ...] = ()

    @property
    def within_tolerance(self) -> bool | None:
        """False when a plane is outside its tolerance, or no plan within the stock was
        found (``stock_short``, the items short); None when no plane has a tolerance."""
        if self.stock_short:
            return False
        flags = [p.within_tolerance for p in self.planes if p.within_tolerance is not None]
        if not flags:
            return None
        return all(flags)


class Drawer:
    """What is left in each drawer of limited stock, drawn down rotor by rotor.

    Parameters
    ----------
    template : Job
        The rotor type: its catalogues' items with a stock count are the
        drawers (one per catalogue file and item, as in a job).
    used : dict of str to int, optional
        Parts already taken from each drawer (by stock key), by rotors solved
        before (a resumed batch).
    """

    def __init__(self, template: Job, used: dict[str, int] | None = None) -> None:
        self.items = {}
        for plane in template.planes:
            for item in plane.catalog.items:
                if item.stock is not None:
                    self.items.setdefault(item.stock_key, item)
        self.left = {key: int(item.stock) - (used or {}).get(key, 0)
                     for key, item in self.items.items()}

    @property
    def limited(self) -> bool:
        """Whether any drawer has a stock count at all."""
        return bool(self.items)

    def fits(self, use: dict[str, int]) -> bool:
        """Whether parts taken as ``use`` are in the drawers.

        Parameters
        ----------
        use : dict of str to int
            Parts to take, by stock key.
        """
        left = self.left
        for key, count in use.items():
            if count > left.get(key, count):
                return False
        return True

    def take(self, use: dict[str, int]) -> None:
        """Take parts out; drawers never go below zero.

        Parameters
        ----------
        use : dict of str to int
            Parts taken, by stock key.
        """
        for key, count in use.items():
            if key in self.left:
                self.left[key] = max(0, self.left[key] - count)

    def state(self) -> tuple[tuple[str, str, int], ...]:
        """(catalogue, item, parts left) of every drawer, in template order."""
        return tuple([(item.catalog, item.id, self.left[key])
                      for key, item in self.items.items()])


class BatchSolver:
    """Solves rotor after rotor of one template, building its searches once.

    Parameters
    ----------
    template : Job
        The rotor type: rotor, planes, catalogues, tolerances; the planes'
        corrections are not used.
    effort : float
        Multiple of the engine's default work budget (deterministic).

    Raises
    ------
    JobError
        For a plane whose parts' effects would change with the correction.
    """

    def __init__(self, template: Job, effort: float = DEFAULT_EFFORT) -> None:
        self.template = template
        self.effort = float(effort)
        self.tolerances_gmm = tuple(p.tolerance_gmm for p in job_tolerances(template).planes)
        self.shares = tuple(aim_share_of(template, p, None) for p in template.planes)
        # Planes that draw on one drawer are planned together (placer.stock); with none
        # there is nothing to share.
        self.shares_stock = bool(shared_stock_groups(template.planes))
        self.searches = []
        self._narrowed: list[dict[tuple[bool, ...], PlacementSearch]] = []
        self._stocked: list[list[int]] = []   # per plane, the columns its search has stock of
        self.arrays: list[PlaneArrays] = []
        # Per plane, what every rotor's plane and arrays share (all but the correction).
        self._same: list[tuple[dict[str, Any], dict[str, Any]]] = []
        self.offsets_gmm: list[complex] = []
        for number, plane in enumerate(template.planes, start=1):
            arrays = plane_arrays(plane)
            probe = plane_arrays(_row_plane(plane, 1000.0 + 500.0j))
            if not (np.array_equal(arrays.effects, probe.effects)
                    and np.array_equal(arrays.capacity, probe.capacity)
                    and np.array_equal(arrays.stock, probe.stock)):
                raise JobError("the parts' effects depend on the correction, so one search "
                               "cannot serve the batch", file=template.source,
                               key=f"planes[{number}]",
                               expected="a plane whose parts do not change with the correction")
            self.searches.append(PlacementSearch(arrays.effects, arrays.capacity, arrays.stock,
                                                 plane.max_parts, masses=arrays.masses))
            self.arrays.append(arrays)
            self._same.append((_fields_of(plane, "correction_gmm", "given_as"),
                               _fields_of(arrays, "target")))
            self._narrowed.append({})
            self._stocked.append([column for column, count
                                  in enumerate(self.searches[-1].stock.tolist()) if count > 0])
            # The target is linear in the correction: correction + its value at zero.
            self.offsets_gmm.append(complex(_row_plane(plane, 0j).further_correction_gmm))
        self._last: tuple[RotorReading, tuple] | None = None

    @property
    def n_planes(self) -> int:
        """Correction planes of the template."""
        return len(self.template.planes)

    def build_tables(self) -> None:
        """Build now what the first rotor would build: one front per plane, away from zero."""
        for search in self.searches:
            if search.n:
                search.front(np.array([2.5 * complex(search.mag.max())]))

    def _search_for(self, index: int, stock: np.ndarray) -> PlacementSearch:
        """The search of plane ``index`` over the items that ``stock`` still has.

        A drawn-down drawer empties its items one by one; the placements of
        an empty item can take no part, so a search built without them (its
        grid of pairs smaller, its bounds tighter) gives the same least
        residuals, found sooner.  One is built per set of items left, at
        most once per item that runs out, and kept.
        """
        full = self.searches[index]
        left = tuple([count > 0 for count in stock.tolist()])
        if all(left[column] for column in self._stocked[index]):
            return full
        narrowed = self._narrowed[index]
        if left not in narrowed:
            arrays = self.arrays[index]
            narrowed[left] = PlacementSearch(arrays.effects, arrays.capacity,
                                             np.where(left, arrays.stock, 0), full.max_parts,
                                             masses=arrays.masses)
        return narrowed[left]

    def solve(self, reading: RotorReading,
              drawer: Drawer | None = None) -> tuple[RotorOutcome, dict[str, int]]:
        """The chosen plan of every plane for one rotor's corrections.

        Parameters
        ----------
        reading : RotorReading
            The rotor.
        drawer : Drawer, optional
            What is left in the drawers (default: full drawers).  It is not
            drawn down here (see :func:`draw_down`).

        Returns
        -------
        (RotorOutcome, dict of str to int)
            The plans, and the parts they take from each drawer (by stock key).
        """
        planes, together, short, use = self.plan(reading, drawer)
        return RotorOutcome(reading.line, reading.serial, planes, solved_together=together,
                            stock_short=short), use

    def plan(self, reading: RotorReading, drawer: Drawer | None = None) -> tuple[
            tuple[PlaneOutcome, ...], bool, tuple[str, ...], dict[str, int]]:
        """What :meth:`solve` returns, in pieces: the plans of the planes, whether they
        were planned together, the items still short, and the parts they take from each
        drawer (by stock key); :func:`draw_down` puts them in one :class:`RotorOutcome`.

        Parameters
        ----------
        reading : RotorReading
            The rotor.
        drawer : Drawer, optional
            What is left in the drawers (default: full drawers).
        """
        planners = []
        for index, (plane, arrays, aim) in enumerate(self._rotor(reading)):
            planners.append(PlanePlanner(plane, arrays, self.searches[index],
                                         self.tolerances_gmm[index], aim, self.effort,
                                         drawer=None if drawer is None else drawer.left,
                                         tradeoff=False))
            if drawer is not None:
                planners[-1].search = self._search_for(index, planners[-1].stock())
        choices = [planner.choice() for planner in planners]
        together, short = set(), ()
        if self.shares_stock:
            choices, together, _, short = share_stock(planners, choices, self.effort)
        planes = []
        for index, (planner, choice) in enumerate(zip(planners, choices)):
            option = option_of(planner.plane, choice.chosen, planner.arrays, choice.kind)
            planes.append(self._outcome(index, planner.plane, option))
        use: dict[str, int] = {}
        for planner, choice in zip(planners, choices):
            for key, count in planner.drawer_use(choice).items():
                use[key] = use.get(key, 0) + count
        return tuple(planes), bool(together), short, use

    def _rotor(self, reading: RotorReading) -> tuple[tuple[PlaneJob, PlaneArrays, Aim], ...]:
        """Each plane of one rotor: the plane with the rotor's correction, its arrays (the
        target: the correction plus the plane's offset) and its aim.

        They depend on the rotor's corrections alone, not on the drawer, so a rotor
        planned twice (with full drawers, then with what is left) builds them once: the
        last rotor's are kept.
        """
        if self._last is not None and self._last[0] is reading:
            return self._last[1]
        if len(reading.corrections_gmm) != self.n_planes:
            raise ValueError(f"rotor {reading.serial} has {len(reading.corrections_gmm)} "
                             f"corrections for {self.n_planes} planes")
        planes = []
        for index, correction in enumerate(reading.corrections_gmm):
            same_plane, same_arrays = self._same[index]
            plane = _row_plane(self.template.planes[index], correction, same_plane)
            arrays = PlaneArrays(**same_arrays, target=np.array([complex(correction)
                                                                 + self.offsets_gmm[index]]))
            aim = aim_of(self.tolerances_gmm[index], abs(arrays.target[0]), *self.shares[index])
            planes.append((plane, arrays, aim))
        self._last = (reading, tuple(planes))
        return self._last[1]

    def _outcome(self, index: int, plane: PlaneJob, option: PlanOption) -> PlaneOutcome:
        tolerance = self.tolerances_gmm[index]
        within = None if tolerance is None else option.residual_gmm <= tolerance
        return PlaneOutcome(index + 1, plane.geometry.name, plane.catalog.name, option,
                            tolerance, within, complex(plane.correction_gmm))


def _row_plane(plane: PlaneJob, correction_gmm: complex,
               same: dict[str, Any] | None = None) -> PlaneJob:
    """The template's plane with one rotor's correction; ``same``: the plane's other
    fields (:func:`_fields_of`), when at hand (as ``dataclasses.replace``, without
    looking them up again)."""
    given_as = f"correction {abs(correction_gmm):g} g·mm from the batch readings"
    if same is None:
        return replace(plane, correction_gmm=complex(correction_gmm), given_as=given_as)
    return type(plane)(**same, correction_gmm=complex(correction_gmm), given_as=given_as)


def _fields_of(value: Any, *but: str) -> dict[str, Any]:
    """The fields of a dataclass value, but those named: what ``dataclasses.replace``
    copies when the named ones change."""
    return {f.name: getattr(value, f.name) for f in fields(value) if f.init and f.name not in but}


def draw_down(solver: BatchSolver, reading: RotorReading, drawer: Drawer,
              full: tuple[RotorOutcome, dict[str, int]] | None = None) -> RotorOutcome:
    """Plan one rotor with what is left in the drawers, and take its parts out.

    Parameters
    ----------
    solver : BatchSolver
        The batch's solver.
    reading : RotorReading
        The rotor, next in input order.
    drawer : Drawer
        What the rotors before it left; drawn down here.
    full : (RotorOutcome, use), optional
        The rotor's plans with full drawers, when solved already (in a
        worker process); solved here when not given.

    Returns
    -------
    RotorOutcome
        Planned with what was left; ``full_drawer`` holds the plans a full
        drawer would have given when they differ.
    """
    if full is None:
        planes, together, short, use = solver.plan(reading)
    else:
        outcome, use = full
        planes, together, short = outcome.planes, outcome.solved_together, outcome.stock_short
    full_planes = None
    if drawer.limited and not drawer.fits(use):
        full_planes = planes
        planes, together, short, use = solver.plan(reading, drawer)
    drawer.take(use)
    return RotorOutcome(reading.line, reading.serial, planes, solved_together=together,
                        stock_short=short, full_drawer=full_planes, drawer_left=drawer.state())
