"""Plans in domain terms, and the results of a solved plane and job."""

from __future__ import annotations

from dataclasses import dataclass

from placer.job import Job, PlaneJob
from placer.tolerance import PlaneShare


@dataclass(frozen=True)
class FittedPart:
    """Parts of one item on one position.

    ``position`` is the number on the rotor (1 = first position).  ``action``
    is "fit" for a part to add, "remove" for a part already on the rotor to
    take off (its ``mass_g`` is the part's own mass, positive for an added
    weight, negative for a drilled hole).

    Parameters
    ----------
    position : int
        Position number on the rotor (from 1).
    angle_deg : float
        The position's angle [deg], in the job's angle sense.
    radius_mm : float
        The position's radius [mm].
    item : str
        Catalogue item id.
    mass_g : float
        Mass of one part [g]; negative for a hole.
    count : int
        How many parts.
    action : {"fit", "remove"}
        Fit (or drill) the parts, or take parts on the rotor off.
    """

    position: int
    angle_deg: float
    radius_mm: float
    item: str
    mass_g: float
    count: int
    action: str = "fit"

    @property
    def verb(self) -> str:
        """What the technician does: "remove" a part on the rotor, "drill" a hole
        (a removal item, negative mass), or "fit" an added part."""
        if self.action == "remove":
            return "remove"
        return "drill" if self.mass_g < 0 else "fit"

    @property
    def signed_count(self) -> int:
        """+count for parts fitted, -count for parts removed."""
        return self.count if self.action == "fit" else -self.count


LEAST_RESIDUAL = "least residual"
"""A plan that is the least residual with its number of parts."""
LIGHTEST = "least mass within the aim"
"""A plan that is the least added mass with its number of parts within the aim."""


@dataclass(frozen=True)
class PlanOption:
    """One plan: the parts, and the residual they leave.

    ``residual_gmm`` is |required correction - sum of fitted parts| [g·mm];
    ``residual_angle_deg`` is the angle of that vector, where a further
    part would have to go.  ``lower_bound_gmm`` is the proven least
    residual with at most ``part_count`` parts.

    Parameters
    ----------
    part_count : int
        Parts used (fitted plus removed).
    parts : tuple of FittedPart
        The parts, those to remove first.
    residual_gmm : float
        Residual left [g·mm].
    residual_angle_deg : float
        Angle of the residual vector [deg].
    lower_bound_gmm : float
        Proven least residual with at most ``part_count`` parts [g·mm].
    proven : bool
        Whether ``residual_gmm`` is proven least for its part count.
    chance_within : float or None
        Chance of staying within tolerance once fitted [1] (Monte Carlo);
        None when not rated.
    residual_p95_gmm : float or None
        95th percentile of the fitted residual [g·mm]; None when not rated.
    kind : str
        :data:`LEAST_RESIDUAL` for the least residual with that many parts, or
        :data:`LIGHTEST` for the least added mass within the plane's aim.
    """

    part_count: int
    parts: tuple[FittedPart, ...]
    residual_gmm: float
    residual_angle_deg: float
    lower_bound_gmm: float
    proven: bool
    chance_within: float | None = None
    residual_p95_gmm: float | None = None
    kind: str = "least residual"

    @property
    def used_parts(self) -> int:
        """Operations: parts fitted plus parts removed."""
        return sum([p.count for p in self.parts])

    @property
    def mass_g(self) -> float:
        """Added mass [g]: every part by the magnitude of its mass (a hole drilled or a
        part taken off counts as what it moves)."""
        return float(sum([abs(p.mass_g) * p.count for p in self.parts]))


@dataclass(frozen=True)
class PlaneResult:
    """The outcome for one correction plane.

    Parameters
    ----------
    plane : PlaneJob
        The plane as the job gave it.
    tolerance_gmm : float or None
        Its permissible residual [g·mm]; None when it has none.
    tolerance_source : str
        Where the tolerance came from, for the sheet.
    front : tuple of PlanOption
        The trade-off front: plans with more parts and less residual than the
        one before, the plan of no parts left out.
    chosen : PlanOption
        The plan to fit.
    within_tolerance : bool or None
        Whether the chosen plan is within the tolerance; None without one.
    optimal : bool
        Whether every part count was proven.
    notes : tuple of str
        Sentences for the technician.
    elapsed_s : float
        Time the engine took [s].
    method : str
        How the front was found ("exact search", "exact search + CP-SAT", ...).
    aim_gmm : float or None
        The residual the plan aims at [g·mm] (see :mod:`placer.choice`).
    aim_text : str
        The aim as the sheet says it.
    rule : str
        Why the chosen plan was chosen, as the sheet says it.
    lighter : tuple of PlanOption
        Per part count, the least added mass within the aim where it is not
        the least-residual plan.
    """

    plane: PlaneJob
    tolerance_gmm: float | None
    tolerance_source: str
    front: tuple[PlanOption, ...]
    chosen: PlanOption
    within_tolerance: bool | None
    optimal: bool
    notes: tuple[str, ...]
    elapsed_s: float
    method: str
    aim_gmm: float | None = None
    aim_text: str = ""
    rule: str = ""
    lighter: tuple[PlanOption, ...] = ()

    @property
    def within_aim(self) -> bool | None:
        """Whether the chosen plan reaches the aim (None without one)."""
        return None if self.aim_gmm is None else self.chosen.residual_gmm <= self.aim_gmm

    @property
    def name(self) -> str:
        return self.plane.geometry.name

    @property
    def required_gmm(self) -> float:
        return abs(self.plane.correction_gmm)

    @property
    def trade_off(self) -> tuple[PlanOption, ...]:
        """The rows of the trade-off table: parts against residual, fewest first.

        Per part count the least residual, then the least added mass within
        the aim where it is another plan; the plan of no parts first when that
        is the choice, and the chosen plan added where it is not among them
        (chosen with other planes under shared stock, or asked for).
        """
        rows = [self.chosen] if self.chosen.used_parts == 0 else []
        rows += list(self.front) + list(self.lighter)
        if self.chosen.used_parts and all(o.parts != self.chosen.parts for o in rows):
            rows.append(self.chosen)
        rows.sort(key=lambda o: (o.used_parts, o.kind != LEAST_RESIDUAL, o.mass_g))
        return tuple(rows)


@dataclass(frozen=True)
class JobResult:
    """The outcome for a whole job.

    Parameters
    ----------
    job : Job
        The job solved.
    planes : tuple of PlaneResult
        Each plane's result, in the job's order.
    permissible_gmm : float or None
        U_per of the whole rotor [g·mm]; None without grade, mass and speed.
    shares : tuple of PlaneShare or None
        U_per shared between the planes.
    notes : tuple of str
        Notes on the whole job (tolerance, shared stock).
    stock_short : tuple of str
        Ids of items the plans still overdraw (no plan within the stock found).
    """

    job: Job
    planes: tuple[PlaneResult, ...]
    permissible_gmm: float | None
    shares: tuple[PlaneShare, ...] | None
    notes: tuple[str, ...]
    stock_short: tuple[str, ...] = ()

    @property
    def all_within(self) -> bool:
        """False when any plane with a tolerance is outside it, or the plans overdraw stock."""
        return not self.stock_short and not any(p.within_tolerance is False
                                                for p in self.planes)
