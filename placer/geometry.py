"""Correction planes and their fixed positions.

A plane has numbered positions (bolt holes, blades, rim slots), each at an
angle from the reference mark and a radius.  Position numbers start at 1, as
they are painted or counted on the rotor; arrays inside placer are indexed
from 0 (position number = index + 1).
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

import numpy as np

from placer import validate
from placer.limits import MAX_CAPACITY, MAX_POSITIONS

ROTATIONS = ("clockwise", "counterclockwise")
"""How the rotor turns, seen from the side the technician works on."""
ACCEPTS = ("both", "add", "remove")
"""What a position takes: added parts and removal, or only one of them."""
ANGLE_SENSES = ("against rotation", "with rotation", "clockwise", "counterclockwise")
"""How angles are counted from the reference mark ("clockwise" and "counterclockwise" as
seen from the working side)."""


@dataclass(frozen=True)
class PlaneGeometry:
    """The positions of one correction plane.

    Parameters
    ----------
    name : str
        Free text, as the technician calls the plane ("drive side").
    angles_deg : tuple of float
        Angle of each position [deg] from the reference mark, in the job's
        angle sense; position i is ``angles_deg[i - 1]``.
    radii_mm : tuple of float
        Radius of each position [mm], the radius at which a part's mass acts.
    blocked : frozenset of int
        Position numbers that take no part.
    capacity : int
        Most parts on one position (different items may stack on it).
    accepts : tuple of str
        Per position: "add", "remove" or "both" (which kinds of correction the
        position takes); empty means "both" everywhere.
    """

    name: str
    angles_deg: tuple[float, ...]
    radii_mm: tuple[float, ...]
    blocked: frozenset[int] = frozenset()
    capacity: int = 1
    accepts: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        n = len(self.angles_deg)
        validate.whole(n, "angles_deg (count)", 1, MAX_POSITIONS)
        validate.numbers(self.angles_deg, "angles_deg")
        validate.same_length(self.radii_mm, n, "radii_mm", "position")
        validate.numbers(self.radii_mm, "radii_mm", positive=True)
        for number in self.blocked:
            validate.whole(number, "blocked", 1, n)
        validate.whole(self.capacity, "capacity", 1, MAX_CAPACITY)
        if self.accepts:
            validate.same_length(self.accepts, n, "accepts", "position")
            for i, kind in enumerate(self.accepts, start=1):
                validate.one_of(kind, f"accepts[{i}]", ACCEPTS)

    def takes(self, number: int, removal: bool) -> bool:
        """Whether position ``number`` takes a removal (or an added part).

        Parameters
        ----------
        number : int
            Position number (from 1).
        removal : bool
            True to ask about a removal, False about an added part.

        Returns
        -------
        bool
            Whether the position accepts that kind of correction.
        """
        kind = self.accepts[number - 1] if self.accepts else "both"
        return kind == "both" or kind == ("remove" if removal else "add")

    @property
    def n_positions(self) -> int:
        return len(self.angles_deg)

    def capacities(self) -> np.ndarray:
        """Parts each position may take, 0 where blocked (index = number - 1)."""
        caps = np.full(self.n_positions, self.capacity, dtype=np.int64)
        for number in self.blocked:
            caps[number - 1] = 0
        return caps

    def unit_vectors_mm(self) -> np.ndarray:
        """radius_mm·e^{i·angle} of each position [mm], complex."""
        angles = np.radians(np.asarray(self.angles_deg, dtype=float))
        return np.asarray(self.radii_mm, dtype=float) * np.exp(1j * angles)


def equally_spaced_deg(count: int, start_deg: float = 0.0) -> tuple[float, ...]:
    """Angles of ``count`` equally spaced positions, position 1 at ``start_deg`` [deg].

    Parameters
    ----------
    count : int
        Number of positions.
    start_deg : float
        Angle of position 1 [deg].

    Returns
    -------
    tuple of float
        The angles [deg], each in [0, 360).
    """
    return tuple((start_deg + 360.0 * i / count) % 360.0 for i in range(count))


def polar(magnitude: float, angle_deg: float) -> complex:
    """magnitude·e^{i·angle}: an unbalance, a correction or a reading as a complex number.

    Parameters
    ----------
    magnitude : float
        Size [g·mm for an unbalance, the reading's unit for a vibration].
    angle_deg : float
        Angle [deg] from the reference mark, in the sense the angles are counted.

    Returns
    -------
    complex
        The vector [as ``magnitude``].
    """
    return cmath.rect(magnitude, math.radians(angle_deg))


def angle_of_deg(vector: complex) -> float:
    """Angle of a complex vector in [0, 360) degrees (0 for the zero vector).

    Parameters
    ----------
    vector : complex
        The vector.

    Returns
    -------
    float
        Its angle [deg], in [0, 360).
    """
    if vector == 0:
        return 0.0
    return math.degrees(cmath.phase(vector)) % 360.0
