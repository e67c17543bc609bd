"""The printable fitting sheet (PDF, PNG or SVG), drawn with matplotlib.

One A4 portrait page per correction plane: a header with the rotor and its
tolerances, the rotor face as the technician sees it with every position
numbered and the parts drawn on, the parts to take off and to fit, the
residual against the tolerance, the trade-off between parts and residual,
and the cautions.  Everything prints in black and white: symbols differ in
shape, fill, hatch and line style, never in colour alone.

Drawing convention
------------------
The face is drawn as seen from the working side, with the reference mark
(0°) at the top.  When the job counts angles "against rotation" or "with
rotation", the rotation arrow is drawn clockwise and angles grow
counterclockwise ("against rotation") or clockwise ("with rotation") on the
page.  When the job counts angles "clockwise" or "counterclockwise" (as seen
from the working side), angles grow that way on the page and no rotation
arrow is drawn, since the job does not say which way the rotor turns.
Positions are drawn at their radius relative to the largest one.

Files: a ``.pdf`` holds every plane, one page each.  A ``.png`` or ``.svg``
holds one page: a one-plane job writes the path given, a job with several
planes writes ``NAME-1.png``, ``NAME-2.png``... beside it, one per plane.

matplotlib is an optional dependency (``pip install 'placer[sheet]'``); it is
imported inside the functions here, never when placer starts.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import Any

from placer.errors import InputError
from placer.geometry import angle_of_deg
from placer.plan import FittedPart, PlanOption
from placer.solve import JobResult, PlaneResult

SUFFIXES = (".pdf", ".png", ".svg")
"""File types the sheet is written as."""

PAGE_IN = (8.27, 11.69)
"""A4 portrait [in] (210 mm × 297 mm)."""

PNG_DPI = 150
"""Resolution of a PNG sheet [dots per inch]: A4 at 1240 × 1754 pixels."""

MATPLOTLIB_MISSING = "--sheet needs matplotlib: pip install 'placer[sheet]'"

INK, GREY, PALE = "black", "0.45", "0.85"
MARGIN_IN = 0.55
DRAW_IN = 4.75
"""Side of the square drawing of the rotor face [in]."""
LIMIT = 1.92
"""Half-width of the drawing in data units (the largest radius is 1)."""


def require_matplotlib() -> None:
    """Raise InputError when matplotlib is not installed (without importing it)."""
    import importlib.util

    if importlib.util.find_spec("matplotlib") is None:
        raise InputError(MATPLOTLIB_MISSING)


# --- the drawing convention, as numbers -------------------------------------------------

def angles_counterclockwise(angle_sense: str) -> bool:
    """Whether the job's angles grow counterclockwise on the drawing.

    The rotation is drawn clockwise, so "against rotation" means
    counterclockwise on the page; "clockwise" and "counterclockwise" are
    taken as seen from the working side, as the drawing is.
    """
    return angle_sense in ("against rotation", "counterclockwise")


def rotation_clockwise(angle_sense: str) -> bool | None:
    """True when the rotation arrow is drawn (clockwise); None when the job does not say."""
    return True if angle_sense in ("against rotation", "with rotation") else None


def page_angle_deg(angle_deg: float, counterclockwise: bool) -> float:
    """Angle on the page [deg, counterclockwise from the +x axis] of a job angle.

    The reference mark (job angle 0) is at the top of the drawing (90° on the page).
    """
    return 90.0 + (angle_deg if counterclockwise else -angle_deg)


def _xy(radius: float, page_deg: float) -> tuple[float, float]:
    a = math.radians(page_deg)
    return radius * math.cos(a), radius * math.sin(a)


def spread_deg(wanted_deg: list[float], gaps_deg: list[float], rounds: int = 400) -> list[float]:
    """Label angles near ``wanted_deg`` (page angles), neighbours at least their gap apart.

    Neighbours on the circle that are closer than the mean of their two gaps
    are pushed apart symmetrically until none overlap (or ``rounds`` runs).
    """
    n = len(wanted_deg)
    if n < 2:
        return list(wanted_deg)
    order = sorted(range(n), key=lambda i: wanted_deg[i] % 360.0)
    angles = [wanted_deg[i] % 360.0 for i in order]
    gaps = [gaps_deg[i] for i in order]
    total = sum(gaps)
    if total > 360.0:
        gaps = [g * 360.0 / total for g in gaps]
    for _ in range(rounds):
        moved = False
        for k in range(n):
            j = (k + 1) % n
            step = (angles[j] - angles[k]) % 360.0 if n > 1 else 360.0
            need = (gaps[k] + gaps[j]) / 2.0
            if step < need - 1e-9:
                push = (need - step) / 2.0
                angles[k] -= push
                angles[j] += push
                moved = True
        if not moved:
            break
    out = [0.0] * n
    for slot, i in enumerate(order):
        out[i] = angles[slot]
    return out


# --- output files ----------------------------------------------------------------------

def sheet_paths(path: Path, n_planes: int, *, force: bool = False) -> list[Path]:
    """The files ``write_sheet`` writes for a job with ``n_planes`` planes.

    Raises
    ------
    InputError
        Unknown suffix, missing folder, or a file that exists without ``force``.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in SUFFIXES:
        raise InputError(f"'{path.name}' has no known suffix", key="--sheet",
                         expected=".pdf, .png or .svg")
    if not path.parent.is_dir():
        raise InputError(f"folder '{path.parent}' does not exist", key="--sheet",
                         expected="a file in an existing folder")
    if suffix == ".pdf" or n_planes == 1:
        paths = [path]
    else:
        paths = [path.with_name(f"{path.stem}-{i}{path.suffix}") for i in range(1, n_planes + 1)]
    for p in paths:
        if p.exists() and not force:
            raise InputError(f"'{p}' exists", key="--sheet",
                             expected="a new file name, or --force")
    return paths


@dataclass(frozen=True)
class PlaneDrawing:
    """Where things were drawn on one rotor face, in data units (largest radius = 1).

    ``position_xy`` maps every position number to its marker; ``fit_xy``,
    ``remove_xy`` and ``blocked_xy`` the positions that get a part, lose a
    part, or take none.  ``ax`` is the matplotlib Axes (``ax.transData``
    turns data units into pixels of the page).
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


@dataclass(frozen=True)
class SheetPage:
    """One page written: the file it is in, its plane (1-based) and its drawing."""

    path: Path
    plane: int
    drawing: PlaneDrawing


# --- the rotor face --------------------------------------------------------------------

def _part_label(parts: list[FittedPart]) -> str:
    lines = []
    for p in parts:
        verb = "off " if p.action == "remove" else ("drill " if p.mass_g < 0 else "")
        lines.append(f"{verb}{p.item} ×{p.count}")
    return "\n".join(lines)


def _align(page_deg: float) -> tuple[str, str]:
    c, s = math.cos(math.radians(page_deg)), math.sin(math.radians(page_deg))
    ha = "left" if c > 0.35 else "right" if c < -0.35 else "center"
    va = "bottom" if s > 0.35 else "top" if s < -0.35 else "center"
    return ha, va


def _arc(ax, radius: float, start_deg: float, end_deg: float, **style) -> None:
    from matplotlib.patches import FancyArrowPatch
    from matplotlib.path import Path as MPath

    steps = 40
    verts = [_xy(radius, start_deg + (end_deg - start_deg) * k / steps) for k in range(steps + 1)]
    ax.add_patch(FancyArrowPatch(path=MPath(verts), arrowstyle="-|>", mutation_scale=13,
                                 color=INK, **style))


def _vector(ax, tip: tuple[float, float], solid: bool) -> None:
    from matplotlib.patches import FancyArrowPatch

    if math.hypot(*tip) < 1e-6:
        return
    style = dict(arrowstyle="-|>", mutation_scale=16, lw=2.4, color=INK, zorder=4) if solid \
        else dict(arrowstyle="->", mutation_scale=14, lw=1.6, color=INK, linestyle=(0, (4, 2.5)),
                  zorder=4)
    ax.add_patch(FancyArrowPatch((0, 0), tip, shrinkA=0, shrinkB=0, **style))


def _vector_label(ax, tip: tuple[float, float], text: str) -> None:
    length = math.hypot(*tip)
    if length < 1e-6:
        ax.text(0.06, -0.06, text, fontsize=7, ha="left", va="top", zorder=6,
                bbox=dict(boxstyle="square,pad=0.15", fc="white", ec="none"))
        return
    angle = math.degrees(math.atan2(tip[1], tip[0]))
    upright = angle if -90 < angle <= 90 else angle - 180
    if length < 0.3:
        x, y = tip[0] * 1.15, tip[1] * 1.15
        ha, va = _align(angle)
        ax.text(x, y, text, fontsize=7, ha=ha, va=va, zorder=6,
                bbox=dict(boxstyle="square,pad=0.15", fc="white", ec="none"))
        return
    nx, ny = -tip[1] / length, tip[0] / length
    x, y = 0.55 * tip[0] + 0.055 * nx, 0.55 * tip[1] + 0.055 * ny
    ax.text(x, y, text, fontsize=7, rotation=upright, rotation_mode="anchor", ha="center",
            va="bottom" if -90 < angle <= 90 else "top", zorder=6,
            bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none"))


def draw_plane(ax, result: PlaneResult, angle_sense: str) -> PlaneDrawing:
    """Draw one rotor face into ``ax``; returns where each thing was drawn.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        An empty, square axes.
    result : PlaneResult
        The solved plane.
    angle_sense : str
        The job's ``rotor.angle_sense`` (see the module's drawing convention).
    """
    from matplotlib.patches import Circle, Polygon, Rectangle

    geometry = result.plane.geometry
    ccw = angles_counterclockwise(angle_sense)
    clockwise_rotation = rotation_clockwise(angle_sense)
    r_max = max(geometry.radii_mm)
    n = geometry.n_positions
    ax.set_xlim(-LIMIT, LIMIT)
    ax.set_ylim(-LIMIT, LIMIT)
    ax.set_aspect("equal")
    ax.axis("off")

    # Rim, hub, degree ticks every 10° (long every 30°), and circles of the positions.
    ax.add_patch(Circle((0, 0), 1.0, fill=False, lw=1.8, ec=INK, zorder=1))
    ax.add_patch(Circle((0, 0), 0.1, fill=False, lw=1.0, ec=INK, zorder=1))
    ax.plot([-0.05, 0.05], [0, 0], color=INK, lw=0.6)
    ax.plot([0, 0], [-0.05, 0.05], color=INK, lw=0.6)
    for r in sorted(set(geometry.radii_mm)):
        if r < r_max:
            ax.add_patch(Circle((0, 0), r / r_max, fill=False, lw=0.7, ec=GREY,
                                linestyle=(0, (1, 2)), zorder=1))
    for deg in range(0, 360, 10):
        a = page_angle_deg(deg, ccw)
        inner = 0.955 if deg % 30 == 0 else 0.975
        (x0, y0), (x1, y1) = _xy(inner, a), _xy(1.0, a)
        ax.plot([x0, x1], [y0, y1], color=INK, lw=0.6 if deg % 30 else 0.9, zorder=1)
    for deg in (90, 180, 270):
        x, y = _xy(0.86, page_angle_deg(deg, ccw))
        ax.text(x, y, f"{deg}°", fontsize=7, color=GREY, ha="center", va="center")

    # Reference mark: a solid wedge on the rim at 0°.
    ax.add_patch(Polygon([(0, 1.0), (-0.045, 0.9), (0.045, 0.9)], closed=True, fc=INK,
                         ec=INK, zorder=5))
    ax.text(0, 0.87, "REF 0°", fontsize=7.5, weight="bold", ha="center", va="top", zorder=5)

    # Angle sense: a dash-dot arc just inside the rim, from the mark towards +angle.
    start = page_angle_deg(4, ccw)
    _arc(ax, 0.72, start, page_angle_deg(40, ccw), lw=1.0, linestyle="-.", zorder=3)
    x, y = _xy(0.62, page_angle_deg(24, ccw))
    ax.text(x, y, "+ angle", fontsize=7, ha="center", va="center", style="italic")

    # Rotation: a heavy arc across the top, outside every label.
    if clockwise_rotation:
        _arc(ax, 1.80, 118, 62, lw=2.0, zorder=3)
        ax.text(0, 1.86, "ROTATION", fontsize=8, weight="bold", ha="center", va="bottom")
    else:
        ax.text(0, 1.80, "sense of rotation not stated in the job file", fontsize=7,
                style="italic", ha="center", va="bottom")

    # Positions: open ring with a centre dot; blocked: a square with a cross.
    by_position: dict[int, list[FittedPart]] = {}
    for part in result.chosen.parts:
        by_position.setdefault(part.position, []).append(part)
    spacing_in = DRAW_IN / (2 * LIMIT) * 2 * math.pi / max(n, 1)
    marker_pt = max(3.5, min(7.0, spacing_in * 72 * 0.62))
    label_pt = 8.0 if n <= 24 else 7.0 if n <= 36 else 6.5
    stagger = n > 36
    position_xy, blocked_xy, fit_xy, remove_xy = {}, {}, {}, {}
    for number in range(1, n + 1):
        r = geometry.radii_mm[number - 1] / r_max
        a = page_angle_deg(geometry.angles_deg[number - 1], ccw)
        x, y = _xy(r, a)
        position_xy[number] = (x, y)
        if number in geometry.blocked:
            blocked_xy[number] = (x, y)
            ax.plot([x], [y], marker="s", ms=marker_pt * 1.15, mfc="white", mec=INK, mew=1.0,
                    zorder=3)
            ax.plot([x], [y], marker="x", ms=marker_pt * 0.9, mec=INK, mew=1.3, zorder=3)
        else:
            ax.plot([x], [y], marker="o", ms=marker_pt, mfc="white", mec=INK, mew=1.0,
                    zorder=3)
            ax.plot([x], [y], marker="o", ms=max(1.6, marker_pt * 0.3), mfc=INK, mec=INK,
                    zorder=3)
        ring = r + (0.10 if not stagger or number % 2 else 0.19)
        lx, ly = _xy(ring, a)
        ax.text(lx, ly, str(number), fontsize=label_pt, ha="center", va="center", zorder=5,
                weight="bold" if number in by_position else "normal")

    # Parts: fit = solid disc, drill = ring with a cross, take off = hatched square.
    size = max(0.055, min(0.085, marker_pt / 72 / (DRAW_IN / (2 * LIMIT)) * 0.85))
    for number, parts in by_position.items():
        x, y = position_xy[number]
        fits = [p for p in parts if p.action == "fit"]
        if any(p.action == "remove" for p in parts):
            r, a = math.hypot(x, y), math.degrees(math.atan2(y, x))
            rx, ry = _xy(r - 0.17, a) if fits else (x, y)
            remove_xy[number] = (rx, ry)
            ax.add_patch(Rectangle((rx - size, ry - size), 2 * size, 2 * size, fc="white",
                                   ec=INK, lw=1.2, hatch="/////", zorder=4))
        if fits:
            fit_xy[number] = (x, y)
            if all(p.mass_g < 0 for p in fits):
                ax.add_patch(Circle((x, y), size, fc="white", ec=INK, lw=1.6, zorder=4))
                ax.plot([x - size, x + size], [y, y], color=INK, lw=1.2, zorder=4)
                ax.plot([x, x], [y - size, y + size], color=INK, lw=1.2, zorder=4)
            else:
                ax.add_patch(Circle((x, y), size, fc=INK, ec=INK, zorder=4))

    # Part labels outside the numbers, spread apart so that none overlap.
    numbers = sorted(by_position)
    wanted = [page_angle_deg(geometry.angles_deg[k - 1], ccw) for k in numbers]
    texts = [_part_label(by_position[k]) for k in numbers]
    unit_in = DRAW_IN / (2 * LIMIT)
    label_r = (1.40 if stagger else 1.31)
    gaps = []
    for a, t in zip(wanted, texts):
        lines = t.split("\n")
        h_in = len(lines) * 8.5 * 1.25 / 72
        w_in = max(len(s) for s in lines) * 8.5 * 0.6 / 72
        c, s = abs(math.cos(math.radians(a))), abs(math.sin(math.radians(a)))
        extent_in = c * h_in + s * w_in + 0.06
        gaps.append(math.degrees(extent_in / (label_r * unit_in)))
    for number, a, placed, text in zip(numbers, wanted, spread_deg(wanted, gaps), texts):
        x, y = position_xy[number]
        r = math.hypot(x, y)
        ha, va = _align(placed)
        tx, ty = _xy(label_r, placed)
        if abs(((placed - a + 180) % 360) - 180) > 1.0 or r < 0.999:
            ex, ey = _xy(label_r - 0.03, placed)
            sx, sy = _xy(r + 0.04, a)
            ax.plot([sx, ex], [sy, ey], color=INK, lw=0.6, zorder=2)
        ax.text(tx, ty, text, fontsize=8.5, weight="bold", ha=ha, va=va,
                multialignment="left" if ha != "right" else "right", zorder=6,
                linespacing=1.15)

    # The required correction (solid) and the residual (dashed), to one scale.
    chosen = result.chosen
    required = abs(result.plane.correction_gmm)
    scale = 0.78 / max(required, chosen.residual_gmm, 1e-12)
    tip_c = _xy(required * scale, page_angle_deg(angle_of_deg(result.plane.correction_gmm), ccw))
    tip_r = _xy(chosen.residual_gmm * scale, page_angle_deg(chosen.residual_angle_deg, ccw))
    _vector(ax, tip_c, solid=True)
    _vector(ax, tip_r, solid=False)
    _vector_label(ax, tip_c, "required")
    _vector_label(ax, tip_r, "residual")
    return PlaneDrawing(ax=ax, counterclockwise=ccw, rotation_clockwise=clockwise_rotation,
                        position_xy=position_xy, fit_xy=fit_xy, remove_xy=remove_xy,
                        blocked_xy=blocked_xy, correction_tip_xy=tip_c, residual_tip_xy=tip_r)
