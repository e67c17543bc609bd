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
LIMIT = 1.62
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


def spread_deg(wanted_deg: list[float], gaps_deg: list[float]) -> list[float]:
    """Label angles near ``wanted_deg`` (page angles), neighbours at least their gap apart.

    Two neighbours must be the mean of their gaps apart.  Labels that would
    overlap are merged into runs, each run spaced at exactly those distances
    and centred on its members' wanted angles (least squares), and runs
    merge until none overlap (pool-adjacent-violators).  The circle is cut
    at the widest empty arc between wanted angles; the angles returned may
    lie outside [0, 360).
    """
    n = len(wanted_deg)
    if n < 2:
        return list(wanted_deg)
    order = sorted(range(n), key=lambda i: wanted_deg[i] % 360.0)
    angles = [wanted_deg[i] % 360.0 for i in order]
    widest = max(range(n), key=lambda k: (angles[(k + 1) % n] - angles[k]) % 360.0 or 360.0)
    cut = (widest + 1) % n
    order, angles = order[cut:] + order[:cut], angles[cut:] + angles[:cut]
    angles = [a if k == 0 or a >= angles[0] else a + 360.0 for k, a in enumerate(angles)]
    gaps = [gaps_deg[i] for i in order]
    total = sum(gaps)
    if total > 360.0:
        gaps = [g * 360.0 / total for g in gaps]
    offsets = [0.0]
    for k in range(1, n):
        offsets.append(offsets[-1] + (gaps[k - 1] + gaps[k]) / 2.0)

    # Each run: (first index, last index, start angle of its first member).
    runs: list[tuple[int, int, float]] = []
    for k in range(n):
        first, last, start = k, k, angles[k] - offsets[k]
        while runs:
            a_first, a_last, a_start = runs[-1]
            need = (gaps[a_last] + gaps[first]) / 2.0
            if a_start + offsets[a_last] + need <= start + offsets[first] + 1e-12:
                break
            runs.pop()
            first = a_first
            members = range(first, last + 1)
            start = sum(angles[i] - offsets[i] for i in members) / len(members)
        runs.append((first, last, start))
    placed = [0.0] * n
    for first, last, start in runs:
        for k in range(first, last + 1):
            placed[k] = start + offsets[k]
    wrap = (gaps[-1] + gaps[0]) / 2.0
    if placed[-1] + wrap > placed[0] + 360.0 + 1e-9:
        start = sum(angles[i] - offsets[i] for i in range(n)) / n
        placed = [start + offsets[k] for k in range(n)]
    out = [0.0] * n
    for slot, i in enumerate(order):
        out[i] = placed[slot]
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


def _vector(ax, tip: tuple[float, float], solid: bool,
            start: tuple[float, float] = (0.0, 0.0)) -> None:
    from matplotlib.patches import FancyArrowPatch

    if math.hypot(tip[0] - start[0], tip[1] - start[1]) < 1e-6:
        return
    style = dict(arrowstyle="-|>", mutation_scale=16, lw=2.4, color=INK, zorder=4) if solid \
        else dict(arrowstyle="->", mutation_scale=14, lw=1.6, color=INK, linestyle=(0, (4, 2.5)),
                  zorder=4)
    ax.add_patch(FancyArrowPatch(start, tip, shrinkA=0, shrinkB=0, **style))


def _vector_label(ax, tip: tuple[float, float], text: str, along: float = 0.6,
                  side: float = 1.0) -> None:
    """Text parallel to the vector from the centre to ``tip``, ``along`` of the way out.

    ``side`` +1 puts it left of the vector (seen from the centre), -1 right.
    A vector shorter than 0.3 units gets its label beyond the tip instead.
    """
    length = math.hypot(*tip)
    if length < 1e-9:
        return
    angle = math.degrees(math.atan2(tip[1], tip[0]))
    flipped = not -90 < angle <= 90
    upright = angle - 180 if flipped else angle
    box = dict(boxstyle="square,pad=0.1", fc="white", ec="none")
    if length < 0.3:
        ux, uy = tip[0] / length, tip[1] / length
        x, y = tip[0] + 0.04 * ux, tip[1] + 0.04 * uy
        ax.text(x, y, text, fontsize=7, rotation=upright, rotation_mode="anchor",
                ha="right" if flipped else "left", va="center", zorder=6, bbox=box,
                linespacing=1.1)
        return
    nx, ny = -tip[1] / length * side, tip[0] / length * side
    x, y = along * tip[0] + 0.05 * nx, along * tip[1] + 0.05 * ny
    above = (side > 0) != flipped
    ax.text(x, y, text, fontsize=7, rotation=upright, rotation_mode="anchor", ha="center",
            va="bottom" if above else "top", zorder=6, bbox=box)


def _inner_r(radii: list[float]) -> float:
    """Radius [data units] inside which the degree figures and the angle arc go."""
    smallest = min(radii) / max(radii)
    return 0.80 if smallest > 0.999 else max(0.3, smallest - 0.32)


def _frame(ax, ccw: bool, radii: list[float], avoid_deg: list[float]) -> None:
    """Rim, hub, degree ticks (every 10°, long every 30°), position circles, reference mark.

    The 90°, 180° and 270° figures are left out where a vector (job angles
    ``avoid_deg``) would run through them.
    """
    from matplotlib.patches import Circle, Polygon

    ax.add_patch(Circle((0, 0), 1.0, fill=False, lw=1.8, ec=INK, zorder=1))
    ax.add_patch(Circle((0, 0), 0.06, fill=False, lw=1.0, ec=INK, zorder=1))
    ax.plot([-0.035, 0.035], [0, 0], color=INK, lw=0.6)
    ax.plot([0, 0], [-0.035, 0.035], color=INK, lw=0.6)
    for r in sorted(set(radii))[:-1]:
        ax.add_patch(Circle((0, 0), r / max(radii), fill=False, lw=0.7, ec=GREY,
                            linestyle=(0, (1, 2)), zorder=1))
    for deg in range(0, 360, 10):
        a = page_angle_deg(deg, ccw)
        (x0, y0), (x1, y1) = _xy(0.955 if deg % 30 == 0 else 0.975, a), _xy(1.0, a)
        ax.plot([x0, x1], [y0, y1], color=INK, lw=0.9 if deg % 30 == 0 else 0.6, zorder=1)
    for deg in (90, 180, 270):
        if any(_angle_gap_deg(deg, v) < 12 for v in avoid_deg):
            continue
        x, y = _xy(_inner_r(radii), page_angle_deg(deg, ccw))
        ax.text(x, y, f"{deg}°", fontsize=7, color=GREY, ha="center", va="center")
    ax.add_patch(Polygon([(0, 0.91), (-0.045, 0.81), (0.045, 0.81)], closed=True, fc=INK,
                         ec=INK, zorder=5))
    ax.text(0, 0.79, "REF 0°", fontsize=7.5, weight="bold", ha="center", va="top", zorder=5)


def _angle_gap_deg(a: float, b: float) -> float:
    return abs((a - b + 180.0) % 360.0 - 180.0)


def _angle_sense_arc(ax, ccw: bool, avoid_deg: list[float], radius: float) -> None:
    """A dash-dot arc inside the rim pointing towards growing angle, clear of the vectors.

    It starts at the reference mark when the vectors leave room there, else
    at the nearest job angle (in 15° steps) that does.
    """
    def clear(start: float) -> bool:
        span = [start + 4 + 36 * k / 8 for k in range(9)]
        return (all(_angle_gap_deg(a, v) >= 18 for a in span for v in avoid_deg)
                and all(_angle_gap_deg(a, d) >= 8 for a in span for d in (90, 180, 270)))

    starts = sorted(range(0, 360, 15), key=lambda d: (_angle_gap_deg(d, 0), d))
    start = next((d for d in starts if clear(d)), 0)
    _arc(ax, radius, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw), lw=1.0,
         linestyle="-.", zorder=3)
    x, y = _xy(radius - 0.11, page_angle_deg(start + 22, ccw))
    ax.text(x, y, "+ angle", fontsize=7, ha="center", va="center", style="italic", zorder=6,
            bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none"))


def _part_symbols(ax, by_position: dict[int, list[FittedPart]],
                  position_xy: dict[int, tuple[float, float]], size: float
                  ) -> tuple[dict[int, tuple[float, float]], dict[int, tuple[float, float]]]:
    """Fit = solid disc, drill = ring with a cross, take off = hatched square."""
    from matplotlib.patches import Circle, Rectangle

    fit_xy, remove_xy = {}, {}
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
    return fit_xy, remove_xy


PART_LABEL_PT = 8.5


def _part_labels(ax, by_position: dict[int, list[FittedPart]],
                 position_xy: dict[int, tuple[float, float]], number_r: dict[int, float],
                 label_r: float, unit_in: float) -> list[tuple[float, float]]:
    """Labels "item ×count" outside the numbers, spread so that none overlap.

    Returns the far corner (page angle, outer radius) each label reaches.
    """
    numbers = sorted(by_position)
    wanted = [math.degrees(math.atan2(position_xy[k][1], position_xy[k][0])) for k in numbers]
    texts = [_part_label(by_position[k]) for k in numbers]
    gaps, heights = [], []
    for a, t in zip(wanted, texts):
        lines = t.split("\n")
        h_in = len(lines) * PART_LABEL_PT * 1.25 / 72
        w_in = max(len(s) for s in lines) * PART_LABEL_PT * 0.6 / 72
        heights.append(h_in / unit_in)
        c, s = abs(math.cos(math.radians(a))), abs(math.sin(math.radians(a)))
        gaps.append(math.degrees((c * h_in + s * w_in + 0.06) / (label_r * unit_in)))
    reach = []
    for number, a, placed, text, h in zip(numbers, wanted, spread_deg(wanted, gaps), texts,
                                          heights):
        ha, va = _align(placed)
        sx, sy = _xy(max(number_r[number], math.hypot(*position_xy[number])) + 0.055, a)
        ex, ey = _xy(label_r - 0.02, placed)
        ax.plot([sx, ex], [sy, ey], color=INK, lw=0.6, zorder=2)
        tx, ty = _xy(label_r, placed)
        ax.text(tx, ty, text, fontsize=PART_LABEL_PT, weight="bold", ha=ha, va=va,
                multialignment="right" if ha == "right" else "left", zorder=6,
                linespacing=1.15)
        reach.append((placed, label_r * abs(math.sin(math.radians(placed))) + h))
    return reach


def draw_plane(ax, result: PlaneResult, angle_sense: str,
               width_in: float = DRAW_IN) -> PlaneDrawing:
    """Draw one rotor face into ``ax``; returns where each thing was drawn.

    The drawing is ``width_in`` wide; its height follows what is drawn (read
    ``ax.get_ylim()``), so the caller sizes the axes to keep the aspect equal.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        An empty axes ``width_in`` wide.
    result : PlaneResult
        The solved plane.
    angle_sense : str
        The job's ``rotor.angle_sense`` (see the module's drawing convention).
    width_in : float
        Width of the drawing on the page [in]; spacing of the labels follows it.
    """
    geometry = result.plane.geometry
    ccw = angles_counterclockwise(angle_sense)
    clockwise_rotation = rotation_clockwise(angle_sense)
    r_max = max(geometry.radii_mm)
    n = geometry.n_positions
    ax.set_aspect("equal")
    ax.axis("off")
    chosen = result.chosen
    avoid = [angle_of_deg(result.plane.correction_gmm), chosen.residual_angle_deg]
    _frame(ax, ccw, list(geometry.radii_mm), avoid)

    # Positions: open ring with a centre dot; blocked: a square with a cross.
    by_position: dict[int, list[FittedPart]] = {}
    for part in result.chosen.parts:
        by_position.setdefault(part.position, []).append(part)
    unit_in = width_in / (2 * LIMIT)
    spacing_in = unit_in * 2 * math.pi / max(n, 1)
    marker_pt = max(3.5, min(7.0, spacing_in * 72 * 0.62))
    number_pt = 8.0 if n <= 24 else 7.0 if n <= 36 else 6.5
    stagger = n > 36
    position_xy, blocked_xy, number_r = {}, {}, {}
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
        if r < 0.999:
            number_r[number] = r - 0.12
        else:
            number_r[number] = r + (0.13 if not stagger else 0.10 if number % 2 else 0.19)
        lx, ly = _xy(number_r[number], a)
        ax.text(lx, ly, str(number), fontsize=number_pt, ha="center", va="center", zorder=5,
                weight="bold" if number in by_position else "normal")

    size = max(0.04, min(0.07, marker_pt / 72 / unit_in * 0.85))
    fit_xy, remove_xy = _part_symbols(ax, by_position, position_xy, size)
    reach = _part_labels(ax, by_position, position_xy, number_r, 1.33 if stagger else 1.27,
                         unit_in)

    # Rotation: a heavy arc across the top, clear of the labels there.
    ring = 1.30 if stagger else 1.24
    top = max([ring] + [h for a, h in reach if 30 < a % 360 < 150])
    bottom = max([ring] + [h for a, h in reach if 210 < a % 360 < 330])
    arc_r = top + 0.16
    if clockwise_rotation:
        _arc(ax, arc_r, 116, 64, lw=2.0, zorder=3)
        ax.text(0, arc_r + 0.04, "ROTATION", fontsize=8, weight="bold", ha="center",
                va="bottom")
    else:
        ax.text(0, arc_r, "sense of rotation not stated in the job file", fontsize=7,
                style="italic", ha="center", va="bottom")
    ax.set_xlim(-LIMIT, LIMIT)
    ax.set_ylim(-(bottom + 0.06), arc_r + 0.2)

    # The required correction (solid) and the residual (dashed), to one scale.
    required = abs(result.plane.correction_gmm)
    scale = 0.78 / max(required, chosen.residual_gmm, 1e-12)
    correction_deg = page_angle_deg(angle_of_deg(result.plane.correction_gmm), ccw)
    residual_deg = page_angle_deg(chosen.residual_angle_deg, ccw)
    tip_c = _xy(required * scale, correction_deg)
    tip_r = _xy(chosen.residual_gmm * scale, residual_deg)
    # Labels on opposite sides of the two arrows, so that they cannot meet.
    turn = (residual_deg - correction_deg) % 360.0
    side_c = -1.0 if turn < 180.0 else 1.0
    _vector(ax, tip_c, solid=True)
    _vector_label(ax, tip_c, "required", along=0.7, side=side_c)
    if math.hypot(*tip_r) >= 0.25:
        _vector(ax, tip_r, solid=False)
        _vector_label(ax, tip_r, "residual", along=0.5, side=-side_c)
    elif chosen.residual_gmm > 0:
        _vector(ax, _xy(0.30, residual_deg), solid=False, start=_xy(0.08, residual_deg))
        _vector_label(ax, _xy(0.27, residual_deg), "residual\nnot to scale")
    _angle_sense_arc(ax, ccw, avoid, _inner_r(list(geometry.radii_mm)) - 0.08)
    return PlaneDrawing(ax=ax, counterclockwise=ccw, rotation_clockwise=clockwise_rotation,
                        position_xy=position_xy, fit_xy=fit_xy, remove_xy=remove_xy,
                        blocked_xy=blocked_xy, correction_tip_xy=tip_c, residual_tip_xy=tip_r)


# --- the page --------------------------------------------------------------------------

class _Page:
    """Drawing on one page in inches from its top-left corner."""

    def __init__(self, fig) -> None:
        """``fig`` None: a dry run that only measures (every drawing call does nothing)."""
        self.fig = fig
        self.ax = None
        if fig is not None:
            ax = fig.add_axes((0, 0, 1, 1))
            ax.set_xlim(0, PAGE_IN[0])
            ax.set_ylim(PAGE_IN[1], 0)
            ax.axis("off")
            self.ax = ax

    def text(self, x: float, y: float, s: str, size: float = 8.0, **kw) -> None:
        if self.ax is None:
            return
        kw.setdefault("va", "top")
        self.ax.text(x, y, s, fontsize=size, **kw)

    def rule(self, y: float, x0: float = MARGIN_IN, x1: float | None = None,
             lw: float = 0.6, **kw) -> None:
        if self.ax is None:
            return
        x1 = PAGE_IN[0] - MARGIN_IN if x1 is None else x1
        self.ax.plot([x0, x1], [y, y], color=kw.pop("color", INK), lw=lw, **kw)

    def box(self, x: float, y: float, w: float, h: float, **kw) -> None:
        if self.ax is None:
            return
        from matplotlib.patches import Rectangle

        kw.setdefault("fill", False)
        kw.setdefault("ec", INK)
        self.ax.add_patch(Rectangle((x, y), w, h, **kw))

    def mark(self, x: float, y: float, **kw) -> None:
        if self.ax is not None:
            self.ax.plot([x], [y], **kw)

    def table(self, x: float, y: float, columns: list[tuple[str, float, str]],
              rows: list[list[str]], bold: set[int] = frozenset(), ticks: bool = False,
              size: float = 8.0) -> float:
        """Columns are (heading, width [in], "l" or "r"); returns the y below the table."""
        row_h = size * 1.75 / 72
        width = sum(w for _, w, _ in columns) + (0.28 if ticks else 0.0)
        left = x + (0.28 if ticks else 0.0)
        edges = [left]
        for _, w, _ in columns:
            edges.append(edges[-1] + w)
        for k, (head, w, align) in enumerate(columns):
            tx = edges[k] + 0.04 if align == "l" else edges[k + 1] - 0.04
            self.text(tx, y, head, size - 1, weight="bold", ha="left" if align == "l" else "right")
        y += row_h
        self.rule(y - 0.04, x, x + width, lw=0.9)
        for i, row in enumerate(rows):
            cy = y + row_h / 2 - 0.02
            if ticks:
                self.mark(x + 0.1, cy, marker="s", ms=7.5, mfc="white", mec=INK, mew=0.9)
            for k, (cell, (_, w, align)) in enumerate(zip(row, columns)):
                tx = edges[k] + 0.04 if align == "l" else edges[k + 1] - 0.04
                self.text(tx, cy, cell, size, va="center", ha="left" if align == "l" else "right",
                          weight="bold" if i in bold else "normal")
            y += row_h
            self.rule(y - 0.02, x, x + width, lw=0.3, color=GREY)
        return y + 0.04

    def paragraph(self, x: float, y: float, text: str, width_in: float, size: float = 7.5,
                  **kw) -> float:
        """Text wrapped to ``width_in`` (measured word by word); returns the y below it."""
        lines = _wrap(text, width_in, size, kw.get("weight") == "bold")
        self.text(x, y, "\n".join(lines), size, linespacing=1.3, **kw)
        return y + len(lines) * size * 1.3 / 72 + 0.03


def _wrap(text: str, width_in: float, size: float, bold: bool = False) -> list[str]:
    """Words of ``text`` in lines no wider than ``width_in`` [in]."""
    lines: list[str] = []
    for word in text.split():
        if lines and _width_in(f"{lines[-1]} {word}", size, bold) <= width_in:
            lines[-1] = f"{lines[-1]} {word}"
        else:
            lines.append(word)
    return lines or [""]


def _width_in(text: str, size: float, bold: bool = False) -> float:
    """Width of one line of text on the page [in] (the default font, measured by matplotlib)."""
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import TextPath

    prop = FontProperties(weight="bold" if bold else "normal")
    return TextPath((0, 0), text, size=size, prop=prop).get_extents().width / 72.0


def _fmt_gmm(value: float) -> str:
    return f"{value:,.1f}".replace(",", " ")


def _tolerance_line(result: JobResult) -> str:
    bits = []
    for plane in result.planes:
        tol = "none given" if plane.tolerance_gmm is None else f"{_fmt_gmm(plane.tolerance_gmm)} g·mm"
        bits.append(f"{plane.name}: {tol}")
    return "   ·   ".join(bits)


def _header(page: _Page, result: JobResult, index: int, heading: str, when: date) -> float:
    rotor = result.job.rotor
    left, right = MARGIN_IN, PAGE_IN[0] - MARGIN_IN
    page.rule(0.42, lw=3.0)
    page.text(left, 0.50, "F I T T I N G   S H E E T", 8.5, weight="bold")
    page.text(right, 0.50, f"plane {index} of {len(result.planes)}", 8.5, weight="bold",
              ha="right")
    page.text(left, 0.70, heading, 15, weight="bold")
    facts = [
        ("JOB FILE", Path(result.job.source).name),
        ("DATE", when.isoformat()),
        ("SERVICE SPEED", "-" if rotor.service_rpm is None else f"{rotor.service_rpm:g} r/min"),
        ("ROTOR MASS", "-" if rotor.mass_kg is None else f"{rotor.mass_kg:g} kg"),
        ("GRADE", "-" if rotor.grade_mm_s is None else f"G {rotor.grade_mm_s:g}"),
        ("U_per (ISO 21940-11)", "-" if result.permissible_gmm is None
         else f"{_fmt_gmm(result.permissible_gmm)} g·mm"),
    ]
    widths = [1.75, 0.95, 1.15, 0.95, 0.75, 1.6]
    x, y = left, 1.02
    for (label, value), w in zip(facts, widths):
        page.text(x, y, label, 6.5, color=GREY, weight="bold")
        page.text(x, y + 0.13, value, 9)
        x += w
    page.text(left, y + 0.36, "TOLERANCE PER PLANE", 6.5, color=GREY, weight="bold")
    page.text(left, y + 0.49, _tolerance_line(result), 9)
    page.rule(1.76, lw=0.8)
    return 1.85


def _plane_band(page: _Page, plane: PlaneResult, index: int, y: float) -> float:
    """A black band with the plane's name; its facts beside it, or on a second line."""
    geometry = plane.plane.geometry
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    title = f"PLANE {index}:  {geometry.name.upper()}"
    radii = sorted(set(geometry.radii_mm))
    radius = f"r {radii[0]:g} mm" if len(radii) == 1 else f"r {radii[0]:g} to {radii[-1]:g} mm"
    room = ("one part per position" if geometry.capacity == 1
            else f"up to {geometry.capacity} parts per position")
    facts = (f"{geometry.n_positions} positions, {radius}, {room}   ·   "
             f"{plane.plane.catalog.name}")
    fits = _width_in(title, 11, bold=True) + _width_in(facts, 7.5) + 0.5 < width
    height = 0.34 if fits else 0.54
    page.box(left, y, width, height, fill=True, fc=INK, ec=INK)
    page.text(left + 0.12, y + 0.17, title, 11, weight="bold", color="white", va="center")
    if fits:
        page.text(left + width - 0.12, y + 0.17, facts, 7.5, color="white", va="center",
                  ha="right")
    else:
        page.text(left + 0.12, y + 0.40, facts, 7.5, color="white", va="center")
    return y + height


def _key(page: _Page, x: float, y: float, parts: tuple[FittedPart, ...], nothing: bool,
         rotation: bool | None) -> float:
    """The symbols used on the drawing, each beside its meaning; returns the y below."""
    from matplotlib.patches import FancyArrowPatch

    page.text(x, y, "KEY", 8, weight="bold")
    y += 0.22
    rows: list[tuple[str, str]] = [("position", "position, number as on the rotor"),
                                   ("blocked", "blocked: takes no part")]
    if any(p.action == "fit" and p.mass_g > 0 for p in parts) or nothing:
        rows.append(("fit", "part to fit"))
    if any(p.action == "fit" and p.mass_g < 0 for p in parts):
        rows.append(("drill", "hole to drill"))
    if any(p.action == "remove" for p in parts):
        rows.append(("remove", "part to take off"))
    rows += [("required", "required correction"), ("residual", "residual after the plan"),
             ("angle", "angles grow this way")]
    if rotation:
        rows.append(("rotation", "sense of rotation"))
    sx = x + 0.14
    for kind, text in rows:
        cy = y + 0.06
        if kind == "position":
            page.mark(sx, cy, marker="o", ms=7, mfc="white", mec=INK, mew=1.0)
            page.mark(sx, cy, marker="o", ms=2.1, mfc=INK, mec=INK)
        elif kind == "blocked":
            page.mark(sx, cy, marker="s", ms=8, mfc="white", mec=INK, mew=1.0)
            page.mark(sx, cy, marker="x", ms=6.3, mec=INK, mew=1.3)
        elif kind == "fit":
            page.mark(sx, cy, marker="o", ms=10, mfc=INK, mec=INK)
        elif kind == "drill":
            page.mark(sx, cy, marker="o", ms=10, mfc="white", mec=INK, mew=1.6)
            page.mark(sx, cy, marker="+", ms=10, mec=INK, mew=1.2)
        elif kind == "remove":
            page.box(sx - 0.065, cy - 0.065, 0.13, 0.13, fill=True, fc="white", ec=INK, lw=1.2,
                     hatch="/////")
        else:
            style = {"required": dict(arrowstyle="-|>", lw=2.4),
                     "residual": dict(arrowstyle="->", lw=1.6, linestyle=(0, (4, 2.5))),
                     "angle": dict(arrowstyle="-|>", lw=1.0, linestyle="-."),
                     "rotation": dict(arrowstyle="-|>", lw=2.0)}[kind]
            page.ax.add_patch(FancyArrowPatch((sx - 0.13, cy), (sx + 0.15, cy), color=INK,
                                              mutation_scale=12, shrinkA=0, shrinkB=0, **style))
        page.text(x + 0.40, cy, text, 7.5, va="center")
        y += 0.215
    return y


def _result_box(page: _Page, x: float, y: float, w: float, plane: PlaneResult) -> float:
    chosen = plane.chosen
    page.text(x, y, "RESULT", 8, weight="bold")
    y += 0.22
    lines = [("Required", f"{_fmt_gmm(plane.required_gmm)} g·mm at "
                          f"{angle_of_deg(plane.plane.correction_gmm):.1f}°"),
             ("", plane.plane.given_as),
             ("Residual", f"{_fmt_gmm(chosen.residual_gmm)} g·mm at "
                          f"{chosen.residual_angle_deg:.1f}°"),
             ("Tolerance", "none given" if plane.tolerance_gmm is None
              else f"{_fmt_gmm(plane.tolerance_gmm)} g·mm")]
    if plane.tolerance_gmm is not None:
        lines.append(("", plane.tolerance_source))
    for label, value in lines:
        page.text(x, y, label, 7.5, weight="bold")
        y = page.paragraph(x + 0.68, y, value, w - 0.68, 7.5) + 0.02
    y += 0.06
    if plane.within_tolerance is None:
        page.box(x, y, w, 0.42, lw=1.2, linestyle=(0, (3, 2)))
        page.text(x + w / 2, y + 0.21, "NO TOLERANCE GIVEN", 10, weight="bold", ha="center",
                  va="center")
    elif plane.within_tolerance:
        page.box(x, y, w, 0.42, lw=2.6)
        page.text(x + w / 2, y + 0.21, "WITHIN TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center")
    else:
        page.box(x, y, w, 0.42, fill=True, fc=INK, ec=INK)
        page.text(x + w / 2, y + 0.21, "OUTSIDE TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center", color="white")
    y += 0.48
    if plane.tolerance_gmm:
        share = chosen.residual_gmm / plane.tolerance_gmm
        words = (f"residual = {share:.0%} of the tolerance" if share <= 10
                 else f"residual = {share:.0f} times the tolerance")
        page.text(x + w / 2, y, words, 7.5, ha="center")
        y += 0.18
    return y


def _convention(angle_sense: str) -> str:
    on_page = "counterclockwise" if angles_counterclockwise(angle_sense) else "clockwise"
    text = (f"Drawn as seen from the working side, reference mark at the top. Angles: degrees "
            f"from the mark, counted {angle_sense} ({on_page} on this drawing). ")
    if rotation_clockwise(angle_sense):
        text += ("Rotation is drawn clockwise; if the rotor turns the other way as you face it, "
                 "this drawing is its mirror image. Fit by position number: the numbers hold "
                 "either way.")
    else:
        text += "The job file does not say which way the rotor turns. Fit by position number."
    return text


def _parts_tables(page: _Page, x: float, y: float, plane: PlaneResult) -> float:
    parts = plane.chosen.parts
    removes = [p for p in parts if p.action == "remove"]
    fits = [p for p in parts if p.action == "fit"]
    columns = [("Pos.", 0.38, "r"), ("Angle °", 0.56, "r"), ("Item", 0.78, "l"),
               ("Count", 0.44, "r"), ("Total g", 0.5, "r"), ("g·mm", 0.48, "r")]

    def rows(items: list[FittedPart]) -> list[list[str]]:
        return [[str(p.position), f"{p.angle_deg:.1f}", p.item, str(p.count),
                 f"{abs(p.mass_g) * p.count:g}", f"{abs(p.mass_g) * p.count * p.radius_mm:.0f}"]
                for p in items]

    step = 1
    if removes:
        page.text(x, y, f"STEP {step}: TAKE OFF FIRST", 8.5, weight="bold")
        y = page.table(x, y + 0.22, columns, rows(removes), ticks=True) + 0.12
        step += 1
    if fits:
        verb = "DRILL AND FIT" if any(p.mass_g < 0 for p in fits) else "FIT"
        page.text(x, y, f"STEP {step}: {verb}" if removes else verb, 8.5, weight="bold")
        y = page.table(x, y + 0.22, columns, rows(fits), ticks=True)
        if any(p.mass_g < 0 for p in fits):
            y = page.paragraph(x, y, "Negative-mass items are holes: drill them, do not fit a "
                               "part (mass column: mass taken off).", 3.7, 7)
        y += 0.12
    if not parts:
        page.text(x, y, "NOTHING TO FIT", 8.5, weight="bold")
        y = page.paragraph(x, y + 0.22, "The plane is already as good as the parts allow.",
                           3.6) + 0.1
    existing = getattr(plane.plane, "existing", ())
    items = plane.plane.catalog.items
    off = {}
    for p in removes:
        off[(p.position, p.item)] = off.get((p.position, p.item), 0) + p.count
    staying = []
    for e in existing:
        key = (e.position, items[e.item].id)
        left = e.count - off.get(key, 0)
        off[key] = max(0, off.get(key, 0) - e.count)
        if left > 0:
            staying.append(f"position {e.position}: {key[1]} ×{left}")
    if staying:
        y = page.paragraph(x, y, "Already on the rotor and staying: " + ", ".join(staying), 3.4,
                           7.5) + 0.06
    return y


def _front_table(page: _Page, x: float, y: float, plane: PlaneResult) -> float:
    rows_of = ([plane.chosen] if plane.chosen.used_parts == 0 else []) + list(plane.front)
    chance = any(o.chance_within is not None for o in rows_of)
    p95 = any(o.residual_p95_gmm is not None for o in rows_of)
    page.text(x, y, "TRADE-OFF: PARTS AGAINST RESIDUAL", 8.5, weight="bold")
    columns = [("Parts", 0.42, "r"), ("Residual", 0.72, "r"), ("% req.", 0.5, "r"),
               ("Verdict", 0.6, "l")]
    if chance:
        columns.append(("Chance", 0.52, "r"))
    if p95:
        columns.append(("95 %", 0.55, "r"))
    columns.append(("", 0.18, "l"))
    required = plane.required_gmm
    rows, bold, unproven = [], set(), False
    for i, option in enumerate(rows_of):
        star = "" if option.proven else " *"
        unproven |= not option.proven
        row = [str(option.used_parts), f"{_fmt_gmm(option.residual_gmm)}{star}",
               "" if required == 0 else f"{option.residual_gmm / required:.0%}",
               "-" if plane.tolerance_gmm is None else
               "within" if option.residual_gmm <= plane.tolerance_gmm else "outside"]
        if chance:
            row.append("-" if option.chance_within is None else f"{option.chance_within:.0%}")
        if p95:
            row.append("-" if option.residual_p95_gmm is None
                       else _fmt_gmm(option.residual_p95_gmm))
        chosen = option.parts == plane.chosen.parts
        row.append("◀" if chosen else "")
        if chosen:
            bold.add(i)
        rows.append(row)
    y = page.table(x, y + 0.22, columns, rows, bold=bold)
    note = "Residuals in g·mm. ◀ the plan on this sheet."
    if unproven:
        note += " * not proven optimal in the time limit."
    if chance or p95:
        note += (" Chance: share of simulated fits (part masses within their tolerance, angles "
                 "within the job's placement error) that stay within tolerance; 95 %: the "
                 "residual 95 % of them stay below.")
    y = page.paragraph(x, y, note, 3.5, 7)
    return y + 0.06


CAUTION_PT = 7.5
FOOTER_IN = 0.45
"""Distance of the footer rule from the bottom of the page [in]."""


def _caution_lines() -> list[list[str]]:
    from placer.report import CAUTIONS

    return [_wrap(c, PAGE_IN[0] - 2 * MARGIN_IN - 0.7, CAUTION_PT) for c in CAUTIONS]


def _cautions_top() -> float:
    """Top of the safety box [in from the top of the page]; the box sits above the sign-off."""
    lines = _caution_lines()
    box_h = sum(len(w) * CAUTION_PT * 1.3 / 72 + 0.04 for w in lines) + 0.30
    return PAGE_IN[1] - FOOTER_IN - 0.55 - 0.25 - box_h


def _cautions(page: _Page, top: float, when: date, index: int, total: int,
              job_name: str) -> None:
    """The safety box (the shared cautions), the sign-off line and the footer."""
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    bottom = PAGE_IN[1] - FOOTER_IN
    wrapped = _caution_lines()
    box_h = sum(len(w) * CAUTION_PT * 1.3 / 72 + 0.04 for w in wrapped) + 0.30
    sign_y = max(bottom - 0.55, top + box_h + 0.25)
    page.box(left, top, width, box_h, lw=2.0)
    page.box(left, top, 0.36, box_h, fill=True, fc=INK, ec=INK)
    page.text(left + 0.18, top + box_h / 2, "!", 18, weight="bold", color="white",
              ha="center", va="center")
    page.text(left + 0.48, top + 0.07, "SAFETY", 8, weight="bold")
    cy = top + 0.23
    for lines in wrapped:
        page.text(left + 0.48, cy, "\n".join(lines), CAUTION_PT, linespacing=1.3)
        cy += len(lines) * CAUTION_PT * 1.3 / 72 + 0.04
    for k, label in enumerate(("Fitted by", "Date", "Test run checked by")):
        sx = left + k * width / 3
        page.text(sx, sign_y + 0.2, label, 7.5, va="bottom")
        page.rule(sign_y + 0.2, sx + 0.1 + len(label) * 0.055, sx + width / 3 - 0.15, lw=0.6)
    page.rule(bottom, lw=0.6)
    page.text(left, bottom + 0.05, f"placer · {job_name} · {when.isoformat()}", 6.5, color=GREY)
    page.text(left + width, bottom + 0.05, f"sheet {index} of {total}", 6.5, color=GREY,
              ha="right")


def _lower(page: _Page, y: float, result: JobResult, plane: PlaneResult) -> float:
    """Convention, tables of parts and trade-off, notes; returns the y below them."""
    width = PAGE_IN[0] - 2 * MARGIN_IN
    y = page.paragraph(MARGIN_IN, y, _convention(result.job.rotor.angle_sense), width, 7,
                       style="italic") + 0.1
    page.rule(y - 0.04, lw=0.4, color=GREY)
    y_left = _parts_tables(page, MARGIN_IN, y + 0.04, plane)
    y_right = _front_table(page, MARGIN_IN + width / 2 + 0.05, y + 0.04, plane)
    y = max(y_left, y_right)
    notes = list(plane.notes) + list(result.notes)
    if not plane.optimal:
        notes.append("Not every plan in the trade-off was proven optimal in the time limit.")
    for note in notes:
        y = page.paragraph(MARGIN_IN, y, f"Note: {note}", width, 7.5, weight="bold")
    return y


def plane_page(result: JobResult, index: int, *, title: str | None = None,
               when: date | None = None):
    """One page of the sheet as a matplotlib Figure; returns (figure, drawing).

    ``index`` counts planes from 1.  The figure is at PNG_DPI, so that
    ``drawing.ax.transData`` gives the pixels of the PNG written from it.
    The drawing shrinks when the tables below it would otherwise run into
    the safety box.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    when = date.today() if when is None else when
    plane = result.planes[index - 1]
    fig = Figure(figsize=PAGE_IN, dpi=PNG_DPI)
    FigureCanvasAgg(fig)
    page = _Page(fig)
    y = _header(page, result, index, title or result.job.rotor.name, when)
    top = _plane_band(page, plane, index, y) + 0.12
    side_x = MARGIN_IN + DRAW_IN + 0.25
    key_end = _key(page, side_x, top + 0.1, plane.chosen.parts, plane.chosen.used_parts == 0,
                   rotation_clockwise(result.job.rotor.angle_sense))
    side_end = _result_box(page, side_x, key_end + 0.12, PAGE_IN[0] - MARGIN_IN - side_x, plane)
    room = _cautions_top() - 0.12 - _lower(_Page(None), 0.0, result, plane) - 0.06 - top
    ax = fig.add_axes((0, 0, 1, 1))
    width = DRAW_IN
    for _ in range(2):
        ax.cla()
        drawing = draw_plane(ax, plane, result.job.rotor.angle_sense, width)
        low, high = ax.get_ylim()
        draw_h = width * (high - low) / (2 * LIMIT)
        if draw_h <= max(room, side_end - top) + 1e-6 or width < DRAW_IN:
            break
        width = max(3.2, width * max(room, side_end - top) / draw_h)
    left = MARGIN_IN + (DRAW_IN - width) / 2
    ax.set_position((left / PAGE_IN[0], 1 - (top + draw_h) / PAGE_IN[1],
                     width / PAGE_IN[0], draw_h / PAGE_IN[1]))
    end = _lower(page, max(top + draw_h, side_end) + 0.06, result, plane)
    _cautions(page, max(end + 0.08, _cautions_top()), when, index, len(result.planes),
              Path(result.job.source).name)
    return fig, drawing


def write_sheet(result: JobResult, path: Path, *, title: str | None = None,
                when: date | None = None, force: bool = False) -> list[SheetPage]:
    """Write the fitting sheet of a solved job; returns the pages written.

    Parameters
    ----------
    result : JobResult
        The solved job.
    path : Path
        ``.pdf`` (one file, a page per plane), ``.png`` or ``.svg`` (a file
        per plane, ``NAME-1.png``... when the job has several planes).
    title : str, optional
        Heading of every page (default: the rotor's name).
    when : date, optional
        Date printed on the sheet (default: today).
    force : bool
        Overwrite files that exist.

    Raises
    ------
    InputError
        matplotlib missing, unknown suffix, missing folder, or an existing
        file without ``force``.
    """
    require_matplotlib()
    paths = sheet_paths(Path(path), len(result.planes), force=force)
    when = date.today() if when is None else when
    mode = "wb" if force else "xb"
    pages = [plane_page(result, i, title=title, when=when)
             for i in range(1, len(result.planes) + 1)]
    written = []
    if paths[0].suffix.lower() == ".pdf":
        from matplotlib.backends.backend_pdf import PdfPages

        with open(paths[0], mode) as stream, PdfPages(stream, metadata={
                "Title": f"Fitting sheet: {title or result.job.rotor.name}",
                "Creator": "placer"}) as pdf:
            for fig, _ in pages:
                pdf.savefig(fig)
        written = [SheetPage(paths[0], i, d) for i, (_, d) in enumerate(pages, start=1)]
    else:
        for i, ((fig, drawing), target) in enumerate(zip(pages, paths), start=1):
            with open(target, mode) as stream:
                fig.savefig(stream, format=target.suffix.lower()[1:], dpi=PNG_DPI)
            written.append(SheetPage(target, i, drawing))
    return written
