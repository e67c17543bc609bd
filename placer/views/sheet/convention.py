"""The drawing convention as numbers: which way angles grow and the rotor turns on the page.

The face is drawn as seen from the end the plane is worked from, with the reference mark
(0°) at the top.  The job states the rotation (``[rotor] rotation``) and angles counted
"clockwise" or "counterclockwise" as seen from the front end; a plane worked from the back
is drawn as seen from there, which is the mirror image: what turns clockwise seen from the
front turns counterclockwise seen from the back.  (Fitting a back plane from a front view is
the classic mirror-image mistake.)  Angles counted "against rotation" or "with rotation"
grow the other way or the same way as the rotor turns on the page.  The rotation arrow is
drawn only when the job states the rotation; without it, angles counted with or against
rotation are drawn as if the rotor turned clockwise seen from the front, and the sheet says
that the drawing is a mirror image if it turns the other way.
"""

from __future__ import annotations

import math


def angles_counterclockwise(angle_sense: str, rotation: str | None = None,
                            back: bool = False) -> bool:
    """Whether the job's angles grow counterclockwise on the drawing.

    ``rotation`` is how the rotor turns seen from the front end
    ("clockwise", "counterclockwise" or None when the job does not say; it
    is then taken as clockwise).  "against rotation" grows the other way,
    "with rotation" the same way; "clockwise" and "counterclockwise" are
    taken as seen from the front.  Seen from the back everything turns the
    other way.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense (:data:`placer.geometry.ANGLE_SENSES`).
    rotation : str or None
        How the rotor turns, seen from the front end.
    back : bool
        The face is drawn as seen from the back end.

    Returns
    -------
    bool
        True when job angles grow counterclockwise on the page.
    """
    if angle_sense in ("clockwise", "counterclockwise"):
        front = angle_sense == "counterclockwise"
    else:
        turns_clockwise = rotation != "counterclockwise"
        front = (angle_sense == "against rotation") == turns_clockwise
    return front != back


def rotation_clockwise(angle_sense: str, rotation: str | None = None,
                       back: bool = False) -> bool | None:
    """How the rotation arrow is drawn: True clockwise, False counterclockwise, None not drawn.

    It is drawn only when the job states the rotation; seen from the back it
    turns the other way.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense (the arrow does not depend on it).
    rotation : str or None
        How the rotor turns, seen from the front end.
    back : bool
        The face is drawn as seen from the back end.

    Returns
    -------
    bool or None
        True clockwise, False counterclockwise, None no arrow.
    """
    if rotation is None:
        return None
    return (rotation == "clockwise") != back


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


def convention_text(angle_sense: str, rotation: str | None = None, back: bool = False,
                    seen_from: str = "", other_end: str = "", mark: str = "") -> str:
    """The sheet's sentence on how the face is drawn and how angles are counted.

    Parameters
    ----------
    angle_sense : str
        The job's angle sense.
    rotation : str or None
        How the rotor turns, seen from the front end; None when not given.
    back : bool
        The face is drawn as seen from the back end.
    seen_from : str
        The name of the end it is drawn as seen from ("" for "the working side").
    other_end : str
        The name of the other end ("" when the job names no ends).
    mark : str
        What marks 0° ("" for "the reference mark").

    Returns
    -------
    str
        The sentence(s), as printed on the sheet.
    """
    on_page = ("counterclockwise" if angles_counterclockwise(angle_sense, rotation, back)
               else "clockwise")
    mark = f"the {mark}" if mark else "the reference mark"
    where = f"the {seen_from}" if seen_from else "the working side"
    text = f"Drawn as seen from {where}, {mark} at the top"
    if back:
        text += (f": the mirror image of the view from the {other_end or 'front'}. Do not work "
                 "this plane from the other end's drawing")
    text += (f". Angles: degrees from {mark}, counted {angle_sense} ({on_page} on this "
             "drawing). ")
    if rotation is not None:
        turns = "clockwise" if rotation_clockwise(angle_sense, rotation, back) \
            else "counterclockwise"
        text += f"The rotor turns {turns} as seen from here, as drawn. Fit by position number."
    elif angle_sense in ("against rotation", "with rotation"):
        text += ("The job does not say which way the rotor turns: the angles are drawn as if "
                 "it turned clockwise seen from the front; if it turns the other way, this "
                 "drawing is its mirror image. Fit by position number: the numbers hold "
                 "either way.")
    else:
        text += "The job file does not say which way the rotor turns. Fit by position number."
    return text
