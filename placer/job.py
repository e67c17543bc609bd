"""A balancing job: the rotor, its correction planes and what each plane needs."""

from __future__ import annotations

from dataclasses import dataclass

from placer import validate
from placer.catalog import Catalog
from placer.errors import InputError
from placer.geometry import ANGLE_SENSES, ROTATIONS, PlaneGeometry
from placer.limits import DEFAULT_MAX_PARTS, MAX_PARTS_LIMIT

CORRECTION_BASES = ("further", "total")
"""How a plane's correction was measured: with the existing parts on, or without them."""

DEFAULT_ANGLE_SENSE = "against rotation"
"""Sense in which angles are counted from the reference mark when the job does not say."""


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

    def __post_init__(self) -> None:
        validate.share(self.aim_share, "aim_share")
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
    """

    rotor: Rotor
    planes: tuple[PlaneJob, ...]
    source: str = "(built in Python)"

    def __post_init__(self) -> None:
        if not self.planes:
            raise InputError("has no planes", key="planes", expected="at least one plane")
        distances = self.rotor.com_distances_mm
        if distances is not None:
            validate.same_length(distances, len(self.planes), "rotor.com_distances_mm", "plane")
