"""The drawing convention as numbers: which way angles grow and the rotor turns on the page.

The face is drawn as seen from the working side, with the reference mark (0°) at the top.
When the job says how the rotor turns (``[rotor] rotation``, seen from the working side),
the rotation arrow is drawn that way and angles counted "against rotation" or "with
rotation" grow the other way or the same way on the page.  When it does not, and angles
are counted "against rotation" or "with rotation", the rotation arrow is drawn clockwise
(the sheet says the drawing is a mirror image if the rotor turns the other way).  Angles
counted "clockwise" or "counterclockwise" (as seen from the working side) grow that way on
the page; with no rotation given, no rotation arrow is drawn.
"""

from __future__ import annotations

import math


def angles_counterclockwise(angle_sense: str, rotation: str | None = None) -> bool:
    """Whether the job's angles grow counterclockwise on the drawing.

    ``rotation`` is how the rotor turns seen from the working side
    ("clockwise", "counterclockwise" or None when the job does not say; it
    is then drawn clockwise).  "against rotation" grows the other way,
    "with rotation" the same way; "clockwise" and "counterclockwise" are
    taken as seen from the working side, as the drawing is.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense (:data:`placer.geometry.ANGLE_SENSES`).
    rotation : str or None
        How the rotor turns, seen from the working side.

    Returns
    -------
    bool
        True when job angles grow counterclockwise on the page.
    """
    if angle_sense in ("clockwise", "counterclockwise"):
        return angle_sense == "counterclockwise"
    turns_clockwise = rotation != "counterclockwise"
    return (angle_sense == "against rotation") == turns_clockwise


def rotation_clockwise(angle_sense: str, rotation: str | None = None) -> bool | None:
    """How the rotation arrow is drawn: True clockwise, False counterclockwise, None not drawn.

    Without a stated ``rotation`` it is drawn clockwise when the angles are
    counted with or against rotation, and not at all otherwise.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense.
    rotation : str or None
        How the rotor turns, seen from the working side.

    Returns
    -------
    bool or None
        True clockwise, False counterclockwise, None no arrow.
    """
    if rotation is not None:
        return rotation == "clockwise"
    return True if angle_sense in ("against rotation", "with rotation") else None


def page_angle_deg(angle_deg: float, counterclockwise: bool) -> float:
    """Angle on the page [deg, counterclockwise from the +x axis] of a job angle.

    The reference mark (job angle 0) is at the top of the drawing (90° on the page).

    Parameters
    ----------
    angle_deg : float
        The job angle [deg], from the reference mark in the job's sense.
    counterclockwise : bool
        Whether job angles grow counterclockwise on the page
        (:func:`angles_counterclockwise`).

    Returns
    -------
    float
        The page angle [deg], not wrapped to [0, 360).
    """
    return 90.0 + (angle_deg if counterclockwise else -angle_deg)


def xy(radius: float, page_deg: float) -> tuple[float, float]:
    """The point at ``radius`` and page angle ``page_deg`` (polar to Cartesian).

    Parameters
    ----------
    radius : float
        Distance from the centre [drawing units].
    page_deg : float
        Page angle [deg], counterclockwise from the +x axis.

    Returns
    -------
    (float, float)
        x and y [drawing units].
    """
    a = math.radians(page_deg)
    return radius * math.cos(a), radius * math.sin(a)


def angle_gap_deg(a: float, b: float) -> float:
    """The smaller angle between two directions [deg], 0 to 180.

    Parameters
    ----------
    a, b : float
        The directions [deg].

    Returns
    -------
    float
        |a − b| taken round the circle [deg].
    """
    return abs((a - b + 180.0) % 360.0 - 180.0)


def circular_mean_deg(angles_deg: list[float]) -> float:
    """The mean direction of some angles: the angle of the sum of their unit vectors [deg].

    Parameters
    ----------
    angles_deg : list of float
        The angles [deg].

    Returns
    -------
    float
        The mean direction [deg], in (-180, 180]; 0 for no angles or a zero sum.
    """
    x = sum(math.cos(math.radians(a)) for a in angles_deg)
    y = sum(math.sin(math.radians(a)) for a in angles_deg)
    return math.degrees(math.atan2(y, x))


def convention_text(angle_sense: str, rotation: str | None = None) -> str:
    """The sheet's sentence on how the face is drawn and how angles are counted.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense.
    rotation : str or None
        How the rotor turns, seen from the working side; None when not given.

    Returns
    -------
    str
        The sentence(s), as printed on the sheet.
    """
    on_page = ("counterclockwise" if angles_counterclockwise(angle_sense, rotation)
               else "clockwise")
    text = (f"Drawn as seen from the working side, reference mark at the top. Angles: degrees "
            f"from the mark, counted {angle_sense} ({on_page} on this drawing). ")
    if rotation is not None:
        text += (f"The rotor turns {rotation} as seen from the working side, as drawn. Fit by "
                 "position number.")
    elif rotation_clockwise(angle_sense):
        text += ("Rotation is drawn clockwise; if the rotor turns the other way as you face it, "
                 "this drawing is its mirror image. Fit by position number: the numbers hold "
                 "either way.")
    else:
        text += "The job file does not say which way the rotor turns. Fit by position number."
    return text
