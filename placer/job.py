"""A balancing job: the rotor, its correction planes and what each plane needs."""

from __future__ import annotations

from dataclasses import dataclass

from placer import validate
from placer.catalog import Catalog
from placer.errors import InputError
from placer.geometry import ANGLE_SENSES, ROTATIONS, PlaneGeometry
from placer.limits import DEFAULT_MAX_PARTS, MAX_PARTS_LIMIT
from placer.units import UNIT_SYSTEMS

CORRECTION_BASES = ("further", "total")
"""How a plane's correction was measured: with the existing parts on, or without them."""

DEFAULT_ANGLE_SENSE = "against rotation"
"""Sense in which angles are counted from the reference mark when the job does not say."""

ENDS = ("front", "back")
"""The ends a plane is worked from: the front is the end the rotor's rotation (and
angles counted clockwise or counterclockwise) are seen from; the back is the other."""


@dataclass(frozen=True)
class Rotor:
    """The rotor as a whole.

    ``grade_mm_s``, ``mass_kg`` and ``service_rpm`` together give the
    permissible residual unbalance; ``com_distances_mm`` (distance from the
    centre of mass to each plane, in plane order) shares it between planes.
    ``rotation`` is how the rotor turns seen from the side the technician
    works on ("clockwise" or "counterclockwise"; None when the job does not
    say), so that a drawing of that face can show it.

    Parameters
    ----------
    name : str
        The rotor's name.
    mass_kg : float or None
        Rotor mass [kg].
    service_rpm : float or None
        Maximum service speed [r/min].
    grade_mm_s : float or None
        Balance quality grade G [mm/s].
    com_distances_mm : tuple of float or None
        Distance from the centre of mass to each plane [mm], in plane order.
    angle_sense : str
        How angles are counted from the reference mark (one of
        :data:`placer.geometry.ANGLE_SENSES`).
    placement_error_deg : float
        How far a part may be fitted from its angle [deg], either side.
    rotation : str or None
        "clockwise" or "counterclockwise", seen from the working side.
    aim_share : float or None
        Share of each plane's tolerance its plan aims at [1] (None: placer's
        default; a plane may give its own).
    reference_mark : str
        What marks 0° on the rotor ("valve", "keyway"), as the sheet labels it;
        "" for a plain reference mark.
    front_name, back_name : str
        What the shop calls the front and the back end ("drive end"); "" for
        "front" and "back".
    """

    name: str
    mass_kg: float | None = None
    service_rpm: float | None = None
    grade_mm_s: float | None = None
    com_distances_mm: tuple[float, ...] | None = None
    angle_sense: str = DEFAULT_ANGLE_SENSE
    placement_error_deg: float = 0.0
    rotation: str | None = None
    aim_share: float | None = None
    reference_mark: str = ""
    front_name: str = ""
    back_name: str = ""

    def end_name(self, end: str) -> str:
        """What the shop calls an end: its name, else "front" or "back".

        Parameters
        ----------
        end : {"front", "back"}
            The end.

        Returns
        -------
        str
            The name.
        """
        name = self.front_name if end == "front" else self.back_name
        return name or end

    def __post_init__(self) -> None:
        validate.share(self.aim_share, "aim_share")
        validate.number(self.mass_kg, "mass_kg", positive=True, allow_none=True)
        validate.number(self.service_rpm, "service_rpm", positive=True, allow_none=True)
        validate.number(self.grade_mm_s, "grade_mm_s", positive=True, allow_none=True)
        if self.com_distances_mm is not None:
            validate.numbers(self.com_distances_mm, "com_distances_mm", non_negative=True)
        validate.one_of(self.angle_sense, "angle_sense", ANGLE_SENSES)
        validate.number(self.placement_error_deg, "placement_error_deg", non_negative=True)
        if self.rotation is not None:
            validate.one_of(self.rotation, "rotation", ROTATIONS)


@dataclass(frozen=True)
class ExistingPart:
    """A part already on the rotor: ``count`` of catalogue item ``item`` on ``position``.

    Parameters
    ----------
    position : int
        Position number (from 1).
    item : int
        Index of the item in the plane's catalogue (from 0).
    count : int
        How many parts.
    """

    position: int
    item: int
    count: int = 1

    def __post_init__(self) -> None:
        validate.whole(self.position, "existing.position", 1)
        validate.whole(self.item, "existing.item", 0)
        validate.whole(self.count, "existing.count", 1)


@dataclass(frozen=True)
class PlaneJob:
    """One correction plane: where parts can go, which parts, what is needed.

    ``correction_gmm`` is the required correction as a complex number
    [g·mm] at the angle where mass must be added; ``given_as`` says how the
    job stated it, for the sheet.  ``existing`` are parts already on the
    rotor; with the rotor's ``correction_basis`` "further" the correction was
    measured with them on, with "total" it is for the rotor without them.

    Parameters
    ----------
    geometry : PlaneGeometry
        The plane's positions.
    catalog : Catalog
        The parts that may be fitted.
    correction_gmm : complex
        Required correction [g·mm], at the angle where mass must be added.
    given_as : str
        How the job stated it, for the sheet.
    tolerance_gmm : float or None
        The plane's own permissible residual [g·mm]; None for its share of U_per.
    max_parts : int
        Longest plan.
    existing : tuple of ExistingPart
        Parts already on the rotor.
    correction_basis : {"further", "total"}
        Whether the correction was measured with the existing parts on.
    aim_share : float or None
        Share of the plane's tolerance its plan aims at [1] (None: the
        rotor's, else placer's default).
    worked_from : {"front", "back"}
        The end the plane is worked from; the sheet draws its face as seen
        from there.
    tolerance_given_as : str
        How the job stated ``tolerance_gmm``, for the sheet ("5 g at r 190 mm");
        "" for a tolerance in g·mm or none.
    """

    geometry: PlaneGeometry
    catalog: Catalog
    correction_gmm: complex
    given_as: str
    tolerance_gmm: float | None = None
    max_parts: int = DEFAULT_MAX_PARTS
    existing: tuple[ExistingPart, ...] = ()
    correction_basis: str = "further"
    aim_share: float | None = None
    worked_from: str = "front"
    tolerance_given_as: str = ""

    def __post_init__(self) -> None:
        validate.share(self.aim_share, "aim_share")
        validate.one_of(self.worked_from, "worked_from", ENDS)
        z = complex(self.correction_gmm)
        validate.number(z.real, "correction_gmm")
        validate.number(z.imag, "correction_gmm")
        validate.number(self.tolerance_gmm, "tolerance_gmm", non_negative=True, allow_none=True)
        validate.whole(self.max_parts, "max_parts", 1, MAX_PARTS_LIMIT)
        validate.one_of(self.correction_basis, "correction_basis", CORRECTION_BASES)
        for part in self.existing:
            validate.whole(part.position, "existing.position", 1, self.geometry.n_positions)
            validate.whole(part.item, "existing.item", 0, len(self.catalog.items) - 1)

    @property
    def further_correction_gmm(self) -> complex:
        """The correction still needed with the existing parts on [g·mm].

        With correction_basis "further" that is the correction as measured; with
        "total" the existing parts' own correction is taken off it.

        References
        ----------
        Vector addition of unbalances in one plane [StaticCouple].
        """
        if self.correction_basis != "total" or not self.existing:
            return self.correction_gmm
        unit = self.geometry.unit_vectors_mm()
        items = self.catalog.items
        return complex(self.correction_gmm - sum(items[o.item].mass_g * o.count
                                                 * unit[o.position - 1] for o in self.existing))


@dataclass(frozen=True)
class Paperwork:
    """What a shop writes on a job's sheet besides the rotor, and the units it reads.

    Parameters
    ----------
    customer : str
        Customer or site.
    work_order : str
        Work order number.
    technician : str
        Who does the work.
    date : str
        Date of the job (ISO 8601, "2026-03-14"); "" for the day the sheet is printed.
    units : {"metric", "imperial"}
        The unit system every output of the job is shown in
        (:data:`placer.units.UNIT_SYSTEMS`).
    """

    customer: str = ""
    work_order: str = ""
    technician: str = ""
    date: str = ""
    units: str = "metric"

    def __post_init__(self) -> None:
        validate.one_of(self.units, "units", UNIT_SYSTEMS)


@dataclass(frozen=True)
class Job:
    """Everything one ``placer solve`` run works on.

    Parameters
    ----------
    rotor : Rotor
        The rotor as a whole.
    planes : tuple of PlaneJob
        Its correction planes, at least one.
    source : str
        The job file, or "(built in Python)".
    paperwork : Paperwork
        Customer, work order, technician, date and the units shown.
    """

    rotor: Rotor
    planes: tuple[PlaneJob, ...]
    source: str = "(built in Python)"
    paperwork: Paperwork = Paperwork()

    def __post_init__(self) -> None:
        if not self.planes:
            raise InputError("has no planes", key="planes", expected="at least one plane")
        distances = self.rotor.com_distances_mm
        if distances is not None:
            validate.same_length(distances, len(self.planes), "rotor.com_distances_mm", "plane")
