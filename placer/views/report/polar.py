"""Polar plots of the report: readings per sensor, the four-run construction, a residual check.

Data units are the readings' own amplitude (or g·mm nowhere: every plot is
in the unit and measure read), so a point's distance from the centre in the
figure's data is its amplitude.  Angles are drawn as on the rotor face: the
reference mark (0°) at the top, angles growing the way the session counts
them (:mod:`placer.views.sheet.convention`).  Scale rings step by 1, 2,
2.5 or 5 times a power of ten and are labelled with their value.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from placer.geometry import angle_of_deg
from placer.views.sheet.convention import page_angle_deg, xy
from placer.views.sheet.glyphs import draw_text
from placer.views.sheet.labels import Room
from placer.views.sheet.typeset import GREY, INK

MARKERS = {"reference": dict(marker="o", ms=7.5, mfc=INK, mec=INK),
           "trial": dict(marker="^", ms=8.0, mfc="white", mec=INK, mew=1.3),
           "check": dict(marker="s", ms=7.0, mfc="white", mec=INK, mew=1.3),
           "predicted": dict(marker="*", ms=12.0, mfc=INK, mec=INK),
           "position": dict(marker="o", ms=6.0, mfc="white", mec=INK, mew=1.2),
           "meeting": dict(marker="*", ms=13.0, mfc=INK, mec=INK)}
"""How each kind of point is marked (black and white)."""

LABEL_PT = 7.5
"""Size of a point's label [pt]."""

SCALE_PT = 6.5
"""Size of the ring and degree figures [pt]."""


@dataclass(frozen=True)
class PolarPoint:
    """A point of a polar plot.

    Parameters
    ----------
    label : str
        Its short label on the plot ("R", "T1", "C1", "P").
    value : complex
        Amplitude and angle [unit read; deg in the session's angle sense].
    kind : str
        A key of :data:`MARKERS`.
    """

    label: str
    value: complex
    kind: str


@dataclass(frozen=True)
class PolarDrawing:
    """Where a polar plot put things, in data units (the amplitude read).

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.
    rings : tuple of float
        The scale rings' values [unit read], the outermost last.
    points : dict of str to (float, float)
        Each point's label -> where it was drawn [data units].
    """

    ax: Any
    counterclockwise: bool
    rings: tuple[float, ...]
    points: dict[str, tuple[float, float]]


def nice_rings(largest: float) -> tuple[float, ...]:
    """Scale rings from zero past ``largest``: 3 to 5 rings, a step of 1, 2, 2.5 or 5 × 10^k.

    Parameters
    ----------
    largest : float
        The largest amplitude to show [unit read]; above zero.

    Returns
    -------
    tuple of float
        The rings' values, the outermost at least ``largest``.
    """
    largest = largest if largest > 0 and math.isfinite(largest) else 1.0
    for exponent in range(math.floor(math.log10(largest)) - 2, math.floor(
            math.log10(largest)) + 2):
        for mantissa in (1.0, 2.0, 2.5, 5.0):
            step = mantissa * 10.0 ** exponent
            count = math.ceil(largest / step - 1e-9)
            if 3 <= count <= 5:
                return tuple(round(step * k, 12) for k in range(1, count + 1))
    return (largest,)


def point_xy(value: complex, counterclockwise: bool) -> tuple[float, float]:
    """Where a reading goes on a polar plot [data units].

    Parameters
    ----------
    value : complex
        The reading, its angle in the session's angle sense [unit read].
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.

    Returns
    -------
    (float, float)
        x and y: at distance |value| from the centre, at the page angle of
        its angle (0° at the top).
    """
    return xy(abs(value), page_angle_deg(angle_of_deg(complex(value)), counterclockwise))


def _frame(ax, rings: Sequence[float], ccw: bool, unit: str, room: Room) -> float:
    """Rings, spokes every 30°, degree figures outside; returns the half-width drawn."""
    from matplotlib.patches import Circle

    outer = rings[-1]
    for k, r in enumerate(rings):
        ax.add_patch(Circle((0, 0), r, fill=False, lw=1.0 if k == len(rings) - 1 else 0.5,
                            ec=INK if k == len(rings) - 1 else GREY, zorder=1))
    for deg in range(0, 360, 30):
        a = page_angle_deg(deg, ccw)
        (x0, y0), (x1, y1) = xy(0, a), xy(outer, a)
        ax.plot([x0, x1], [y0, y1], color=GREY, lw=0.4 if deg else 0.9, zorder=1)
        tx, ty = xy(outer * 1.09, a)
        text = f"{deg}°"
        draw_text(ax, tx, ty, text, fontsize=SCALE_PT, ha="center", va="center", color=INK)
        room.take(room.centred(tx, ty, text, SCALE_PT))
    for k, r in enumerate(rings):
        text = f"{r:g}" + (f" {unit}" if k == len(rings) - 1 else "")
        w, h = room.size(text, SCALE_PT)
        x, y = xy(r, page_angle_deg(15.0, ccw))
        box = (x + 0.01 * outer, y - h / 2, x + 0.01 * outer + w, y + h / 2)
        draw_text(ax, box[0], y, text, fontsize=SCALE_PT, ha="left", va="center", color=GREY,
                  bbox=dict(boxstyle="square,pad=0.05", fc="white", ec="none"), zorder=2)
        room.take(box)
    return outer * 1.2


def _label(ax, room: Room, x: float, y: float, text: str, outer: float) -> None:
    """A point's label beside it, where it is free (eight tries, then the first)."""
    w, h = room.size(text, LABEL_PT, bold=True)
    gap = 0.045 * outer
    tries = []
    for dx, dy in ((1, 1), (1, -1), (-1, 1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1)):
        cx = x + dx * (gap + w / 2)
        cy = y + dy * (gap + h / 2)
        tries.append((cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2))
    for scale in (1.0, 2.0, 3.0):
        for box in tries:
            grown = (x + (box[0] - x) * scale, y + (box[1] - y) * scale,
                     x + (box[0] - x) * scale + w, y + (box[1] - y) * scale + h)
            if room.free(grown, pad=0.01 * outer):
                box = grown
                break
        else:
            continue
        break
    else:
        box = tries[0]
    cx, cy = (box[0] + box[2]) / 2, (box[1] + box[3]) / 2
    if math.hypot(cx - x, cy - y) > 2.5 * gap + max(w, h):
        ax.plot([x, cx], [y, cy], color=GREY, lw=0.5, zorder=2)
    draw_text(ax, cx, cy, text, fontsize=LABEL_PT, weight="bold", ha="center", va="center",
              zorder=6, bbox=dict(boxstyle="square,pad=0.05", fc="white", ec="none"))
    room.take(box)


def _start(ax, largest: float, ccw: bool, width_in: float, unit: str
           ) -> tuple[tuple[float, ...], float, Room]:
    """The scale rings past ``largest``, the half-width drawn and the room, frame drawn."""
    rings = nice_rings(largest * 1.02)
    half = rings[-1] * 1.2
    room = Room(width_in / (2 * half))
    _frame(ax, rings, ccw, unit, room)
    return rings, half, room


def _mark(ax, room: Room, where: dict[str, tuple[float, float]], kinds: dict[str, str],
          outer: float) -> None:
    """Each point with its marker (its line labelled "point X"), then its label beside it."""
    for label, (x, y) in where.items():
        ax.plot([x], [y], linestyle="none", zorder=5, label=f"point {label}",
                **MARKERS[kinds[label]])
        m = 0.03 * outer
        room.take((x - m, y - m, x + m, y + m))
    for label, (x, y) in where.items():
        _label(ax, room, x, y, label, outer)


def _finish(ax, half: float) -> None:
    ax.set_xlim(-half, half)
    ax.set_ylim(-half, half)
    ax.set_aspect("equal")
    ax.axis("off")


def draw_readings(ax, points: Sequence[PolarPoint], counterclockwise: bool, width_in: float,
                  unit: str, effects: Sequence[tuple[str, str]] = ()) -> PolarDrawing:
    """One sensor's readings on a polar plot.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        A square axes ``width_in`` wide.
    points : sequence of PolarPoint
        The readings of every run and the prediction after the plan.
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.
    width_in : float
        Width of the plot on the page [in].
    unit : str
        The unit and measure read, on the outer ring.
    effects : sequence of (str, str)
        (from, to) labels of points joined by a dashed line: a trial run's
        change from the run it adds to, the plan's from the reading it starts at.

    Returns
    -------
    PolarDrawing
        Rings and where each point went.
    """
    rings, half, room = _start(ax, max([abs(p.value) for p in points] + [1e-12]),
                               counterclockwise, width_in, unit)
    where = {p.label: point_xy(p.value, counterclockwise) for p in points}
    for start, end in effects:
        (x0, y0), (x1, y1) = where[start], where[end]
        ax.plot([x0, x1], [y0, y1], color=INK, lw=0.7, linestyle=(0, (3, 2)), zorder=3)
    _mark(ax, room, where, {p.label: p.kind for p in points}, rings[-1])
    _finish(ax, half)
    return PolarDrawing(ax, counterclockwise, rings, where)


def draw_construction(ax, reference: float, angles_deg: Sequence[float],
                      amplitudes: Sequence[float], meeting: complex, counterclockwise: bool,
                      width_in: float, unit: str) -> PolarDrawing:
    """The four-run construction: the reference circle, the trial marks, their circles.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        A square axes ``width_in`` wide.
    reference : float
        The reference amplitude O [unit read].
    angles_deg : sequence of float
        The trial weight's angles [deg, session's angle sense].
    amplitudes : sequence of float
        The trial runs' amplitudes [unit read].
    meeting : complex
        Where the circles meet [unit read]: the trial's effect and the correction's angle.
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.
    width_in : float
        Width of the plot on the page [in].
    unit : str
        The unit and measure read.

    Returns
    -------
    PolarDrawing
        Rings and where each mark went ("T1".., the meeting point "P").

    References
    ----------
    [FourRun]: circle of radius O, trial marks on it, circles of radius A_k about them.
    """
    from matplotlib.patches import Circle

    reach = max(reference + a for a in amplitudes)
    rings, half, room = _start(ax, max(reach, abs(meeting)), counterclockwise, width_in, unit)
    ax.add_patch(Circle((0, 0), reference, fill=False, lw=1.6, ec=INK, zorder=3))
    where = {}
    for k, (angle, a) in enumerate(zip(angles_deg, amplitudes), start=1):
        x, y = xy(reference, page_angle_deg(angle, counterclockwise))
        ax.add_patch(Circle((x, y), a, fill=False, lw=0.9, ec=INK, linestyle=(0, (4, 2)),
                            zorder=3))
        where[f"T{k}"] = (x, y)
    where["P"] = point_xy(meeting, counterclockwise)
    ax.annotate("", xy=where["P"], xytext=(0, 0), zorder=4,
                arrowprops=dict(arrowstyle="-|>", color=INK, lw=1.8, shrinkA=0, shrinkB=4))
    room.line((0.0, 0.0), where["P"])
    _mark(ax, room, where, {label: "meeting" if label == "P" else "position"
                            for label in where}, rings[-1])
    _finish(ax, half)
    return PolarDrawing(ax, counterclockwise, rings, where)


def draw_residual(ax, angles_deg: Sequence[float], amplitudes: Sequence[float], centre: complex,
                  radius: float, counterclockwise: bool, width_in: float,
                  unit: str) -> PolarDrawing:
    """A residual check: each reading at its trial angle, and the circle fitted through them.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        A square axes ``width_in`` wide.
    angles_deg : sequence of float
        The trial angles [deg, session's angle sense].
    amplitudes : sequence of float
        The reading at each [unit read].
    centre : complex
        The fitted circle's centre [unit read].
    radius : float
        Its radius [unit read].
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.
    width_in : float
        Width of the plot on the page [in].
    unit : str
        The unit and measure read.

    Returns
    -------
    PolarDrawing
        Rings and where each reading went ("1".. in order, the centre "c").

    References
    ----------
    [API617] (readings plotted at the trial angles), [Kasa1976] (the circle).
    """
    from matplotlib.patches import Circle

    rings, half, room = _start(ax, max(list(amplitudes) + [abs(centre) + radius]),
                               counterclockwise, width_in, unit)
    c = point_xy(centre, counterclockwise)
    ax.add_patch(Circle(c, radius, fill=False, lw=1.0, ec=INK, linestyle=(0, (4, 2)), zorder=3))
    ax.plot([0, c[0]], [0, c[1]], color=INK, lw=1.4, zorder=4)
    room.line((0.0, 0.0), c)
    where = {str(k): xy(a, page_angle_deg(angle, counterclockwise))
             for k, (angle, a) in enumerate(zip(angles_deg, amplitudes), start=1)}
    ax.plot([c[0]], [c[1]], linestyle="none", marker="+", ms=9, mew=1.5, color=INK, zorder=5,
            label="point c")
    _mark(ax, room, where, dict.fromkeys(where, "position"), rings[-1])
    where["c"] = c
    _finish(ax, half)
    return PolarDrawing(ax, counterclockwise, rings, where)
