"""The printable fitting sheet (PDF, PNG or SVG), drawn with matplotlib.

One A4 portrait page per correction plane: a header with the rotor and its
tolerances, the rotor face as the technician sees it with every position
marked and the parts drawn on, the work in the order to do it (parts to
remove, holes to drill, parts to fit), the residual against the tolerance,
the trade-off between parts and residual, and the cautions.  Everything
prints in black and white: symbols differ in shape, fill, hatch and line
style, never in colour alone, and the key lists only the symbols drawn.

Drawing convention
------------------
The face is drawn as seen from the working side, with the reference mark
(0°) at the top.  When the job says how the rotor turns (``[rotor]
rotation``, seen from the working side), the rotation arrow is drawn that
way and angles counted "against rotation" or "with rotation" grow the
other way or the same way on the page.  When it does not, and angles are
counted "against rotation" or "with rotation", the rotation arrow is drawn
clockwise (the sheet says the drawing is a mirror image if the rotor turns
the other way).  Angles counted "clockwise" or "counterclockwise" (as seen
from the working side) grow that way on the page; with no rotation given,
no rotation arrow is drawn.  Positions are drawn at their radius relative
to the largest one.

The arrows are the correction still needed with any existing parts on
(``PlaneJob.further_correction_gmm``) and the residual after the plan,
to one scale.  A residual too short to see at that scale is drawn enlarged
and labelled so; one that is zero to within ``ZERO_SHARE`` of the plane's
largest magnitude is not drawn but printed as "residual ≈ 0".

Files: a ``.pdf`` holds every plane, one page each.  A ``.png`` or ``.svg``
holds one page: a one-plane job writes the path given, a job with several
planes writes ``NAME-1.png``, ``NAME-2.png``... beside it, one per plane.

matplotlib is an optional dependency (``pip install 'placer[sheet]'``); it is
imported inside the functions here, never when placer starts.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import Any

from placer.errors import InputError
from placer.geometry import angle_of_deg
from placer.plan import FittedPart, JobResult, PlaneResult

SUFFIXES = (".pdf", ".png", ".svg")
"""File types the sheet is written as."""

PAGE_IN = (8.27, 11.69)
"""A4 portrait [in] (210 mm × 297 mm)."""

PNG_DPI = 150
"""Resolution of a PNG sheet [dots per inch]: A4 at 1240 × 1754 pixels."""

MATPLOTLIB_MISSING = "--sheet needs matplotlib: pip install 'placer[sheet]'"

INK, GREY = "black", "0.45"
MARGIN_IN = 0.55
DRAW_IN = 4.75
"""Side of the square drawing of the rotor face [in]."""
LIMIT = 1.62
"""Least half-width of the drawing in data units (the largest radius is 1)."""

ZERO_SHARE = 1e-6
"""A vector no longer than this share of the plane's largest magnitude (the correction
as given, the further correction, the tolerance) counts as zero on the sheet."""

ARROW_UNITS = 0.78
"""Length of the longer of the required and residual arrows [data units]."""

TO_SCALE_MIN_UNITS = 0.16
"""Shortest residual arrow drawn to the required arrow's scale [data units]."""

NUMBER_ALL_UP_TO = 36
"""Planes with at most this many positions have every position numbered; larger
ones number every few positions plus every position used or blocked."""


def require_matplotlib() -> None:
    """Raise InputError when matplotlib is not installed (without importing it)."""
    import importlib.util

    if importlib.util.find_spec("matplotlib") is None:
        raise InputError(MATPLOTLIB_MISSING)


# --- the drawing convention, as numbers -------------------------------------------------

def angles_counterclockwise(angle_sense: str, rotation: str | None = None) -> bool:
    """Whether the job's angles grow counterclockwise on the drawing.

    ``rotation`` is how the rotor turns seen from the working side
    ("clockwise", "counterclockwise" or None when the job does not say; it
    is then drawn clockwise).  "against rotation" grows the other way,
    "with rotation" the same way; "clockwise" and "counterclockwise" are
    taken as seen from the working side, as the drawing is.
    """
    if angle_sense in ("clockwise", "counterclockwise"):
        return angle_sense == "counterclockwise"
    turns_clockwise = rotation != "counterclockwise"
    return (angle_sense == "against rotation") == turns_clockwise


def rotation_clockwise(angle_sense: str, rotation: str | None = None) -> bool | None:
    """How the rotation arrow is drawn: True clockwise, False counterclockwise, None not drawn.

    Without a stated ``rotation`` it is drawn clockwise when the angles are
    counted with or against rotation, and not at all otherwise.
    """
    if rotation is not None:
        return rotation == "clockwise"
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


# --- what the sheet shows of a plane, read from the result ------------------------------

@dataclass(frozen=True)
class StayingPart:
    """Parts already on the rotor that the plan leaves on: ``count`` of ``item`` [g each]."""

    position: int
    item: str
    mass_g: float
    count: int


@dataclass(frozen=True)
class PlaneFacts:
    """The numbers one page shows beyond the plan itself, read from the result.

    ``further_gmm`` is the correction still needed with the existing parts
    on, which the plan answers; ``given_gmm`` the correction as the job
    gives it (the total without the existing parts when ``basis`` is
    "total"); ``basis`` is "none" when the plane carries no parts.
    ``zero_gmm`` is the magnitude at or below which a vector counts as zero.
    """

    further_gmm: complex
    given_gmm: complex
    basis: str
    zero_gmm: float
    staying: tuple[StayingPart, ...]

    def negligible(self, magnitude_gmm: float) -> bool:
        """True for a magnitude [g·mm] that counts as zero on this plane."""
        return magnitude_gmm <= self.zero_gmm

    @property
    def existing_gmm(self) -> complex:
        """The existing parts' own correction [g·mm] (basis "total" only; else 0)."""
        return self.given_gmm - self.further_gmm if self.basis == "total" else 0j


def plane_facts(plane: PlaneResult) -> PlaneFacts:
    """What one page shows of ``plane`` beside its plan (see :class:`PlaneFacts`)."""
    job = plane.plane
    further = complex(job.further_correction_gmm)
    given = complex(job.correction_gmm)
    basis = job.correction_basis if job.existing else "none"
    largest = max(abs(given), abs(further), plane.tolerance_gmm or 0.0)
    items = job.catalog.items
    off: dict[tuple[int, str], int] = {}
    for p in plane.chosen.parts:
        if p.action == "remove":
            off[(p.position, p.item)] = off.get((p.position, p.item), 0) + p.count
    staying = []
    for e in job.existing:
        key = (e.position, items[e.item].id)
        taken = min(e.count, off.get(key, 0))
        off[key] = off.get(key, 0) - taken
        if e.count > taken:
            staying.append(StayingPart(e.position, key[1], items[e.item].mass_g, e.count - taken))
    return PlaneFacts(further_gmm=further, given_gmm=given, basis=basis,
                      zero_gmm=ZERO_SHARE * largest, staying=tuple(staying))


def drills(parts: tuple[FittedPart, ...] | list[FittedPart]) -> bool:
    """True when the parts include a hole to drill (a part to fit of negative mass)."""
    return any(p.verb == "drill" for p in parts)


def action_word(part: FittedPart) -> str:
    """What the technician does with ``part``: REMOVE, DRILL or FIT."""
    return part.verb.upper()


def _fmt_gmm(value: float) -> str:
    """A magnitude for the sheet: one decimal from 10 up, else three significant digits."""
    if value == 0 or not math.isfinite(value):
        return "0" if value == 0 else str(value)
    if abs(value) >= 10:
        return f"{value:,.1f}".replace(",", " ")
    decimals = max(1, 2 - math.floor(math.log10(abs(value))))
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0")
        text = text + "0" if text.endswith(".") else text
    return text


def _fmt_vector(vector: complex, facts: PlaneFacts) -> str:
    """"X g·mm at Y°", or "≈ 0 g·mm" when it counts as zero."""
    if facts.negligible(abs(vector)):
        return "≈ 0 g·mm"
    return f"{_fmt_gmm(abs(vector))} g·mm at {angle_of_deg(vector):.1f}°"


@dataclass(frozen=True)
class PlaneDrawing:
    """Where things were drawn on one rotor face, in data units (largest radius = 1).

    ``position_xy`` maps every position number to its marker; ``fit_xy``
    (parts to fit and holes to drill), ``drill_xy`` (holes only),
    ``remove_xy``, ``stay_xy`` (existing parts left on) and ``blocked_xy``
    the positions with those symbols.  ``rotation_clockwise`` is the way the
    rotation arrow turns on the page (None: not drawn).  ``required_xy`` and ``residual_xy``
    are the arrows as (tail, tip), None when not drawn.  ``kinds`` are the
    symbols drawn, in the order the key lists them.  ``ax`` is the matplotlib
    Axes (``ax.transData`` turns data units into pixels of the page).
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
    drill_xy: dict[int, tuple[float, float]]
    stay_xy: dict[int, tuple[float, float]]
    required_xy: tuple[tuple[float, float], tuple[float, float]] | None
    residual_xy: tuple[tuple[float, float], tuple[float, float]] | None
    kinds: tuple[str, ...]
    accepts_all: str
    """What every open position takes when they all take the same ("both", "add" or
    "remove"); "" when they differ and the add-only and remove-only ones are marked."""


@dataclass(frozen=True)
class SheetPage:
    """One page written: the file it is in, its plane (1-based) and its drawing."""

    path: Path
    plane: int
    drawing: PlaneDrawing


# --- keeping text clear of what is already drawn ------------------------------------------

Box = tuple[float, float, float, float]
"""(x0, y0, x1, y1) in data units."""



class _Room:
    """Boxes and lines already on the drawing [data units], to put text where it is free."""

    def __init__(self, unit_in: float) -> None:
        self.unit_in = unit_in
        self.boxes: list[Box] = []
        self.lines: list[tuple[tuple[float, float], tuple[float, float]]] = []

    def size(self, text: str, size_pt: float, bold: bool = False,
             linespacing: float = 1.2) -> tuple[float, float]:
        """Width and height of ``text`` [data units]."""
        lines = text.split("\n")
        w_in = max(_width_in(s, size_pt, bold) for s in lines)
        return w_in / self.unit_in, _lines_in(len(lines), size_pt, linespacing) / self.unit_in

    def centred(self, x: float, y: float, text: str, size_pt: float, bold: bool = False,
                linespacing: float = 1.2) -> Box:
        w, h = self.size(text, size_pt, bold, linespacing)
        return x - w / 2, y - h / 2, x + w / 2, y + h / 2

    def free(self, box: Box, pad: float = 0.02) -> bool:
        x0, y0, x1, y1 = box[0] - pad, box[1] - pad, box[2] + pad, box[3] + pad
        if any(x0 < b[2] and b[0] < x1 and y0 < b[3] and b[1] < y1 for b in self.boxes):
            return False
        return not any(_segment_meets_box(a, b, (x0, y0, x1, y1)) for a, b in self.lines)

    def take(self, box: Box) -> None:
        self.boxes.append(box)

    def line(self, a: tuple[float, float], b: tuple[float, float]) -> None:
        self.lines.append((a, b))

    def clear_path(self, points: list[tuple[float, float]], pad: float = 0.03) -> bool:
        """Whether a polyline keeps ``pad`` clear of every box and line."""
        for p, q in zip(points, points[1:]):
            if any(_segment_meets_box(p, q, (b[0] - pad, b[1] - pad, b[2] + pad, b[3] + pad))
                   for b in self.boxes):
                return False
            if any(_segments_within(p, q, a, b, pad) for a, b in self.lines):
                return False
        return True


def _segment_meets_box(a: tuple[float, float], b: tuple[float, float], box: Box) -> bool:
    """Whether the segment a-b enters the box (Liang-Barsky clipping)."""
    t0, t1 = 0.0, 1.0
    dx, dy = b[0] - a[0], b[1] - a[1]
    for p, q in ((-dx, a[0] - box[0]), (dx, box[2] - a[0]), (-dy, a[1] - box[1]),
                 (dy, box[3] - a[1])):
        if abs(p) < 1e-15:
            if q < 0:
                return False
            continue
        t = q / p
        if p < 0:
            t0 = max(t0, t)
        else:
            t1 = min(t1, t)
        if t0 > t1:
            return False
    return True


def _segments_within(p, q, a, b, pad: float) -> bool:
    """Whether segments p-q and a-b come closer than ``pad`` (sampled, fine enough here)."""
    for k in range(9):
        t = k / 8
        x, y = p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])
        if _point_segment_distance((x, y), a, b) < pad:
            return True
    return False


def _point_segment_distance(p, a, b) -> float:
    dx, dy = b[0] - a[0], b[1] - a[1]
    length2 = dx * dx + dy * dy
    t = 0.0 if length2 == 0 else max(0.0, min(1.0, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy)
                                               / length2))
    return math.hypot(p[0] - a[0] - t * dx, p[1] - a[1] - t * dy)


def _inside(box: Box, radius: float) -> bool:
    """Whether every corner of ``box`` lies within ``radius`` of the centre."""
    return all(math.hypot(x, y) < radius for x in (box[0], box[2]) for y in (box[1], box[3]))


def _put(ax, room: _Room, box: Box, text: str, size_pt: float, **kw) -> None:
    """Text centred in ``box``, and the box taken."""
    ax.text((box[0] + box[2]) / 2, (box[1] + box[3]) / 2, text, fontsize=size_pt,
            ha="center", va="center", zorder=6, **kw)
    room.take(box)


# --- the rotor face --------------------------------------------------------------------

NUMBER_PT = 8.0
PART_LABEL_PT = 8.5
SMALL_PT = 7.5


def _align(page_deg: float) -> tuple[str, str]:
    c, s = math.cos(math.radians(page_deg)), math.sin(math.radians(page_deg))
    ha = "left" if c > 0.35 else "right" if c < -0.35 else "center"
    va = "bottom" if s > 0.35 else "top" if s < -0.35 else "center"
    return ha, va


def _anchored_box(x: float, y: float, w: float, h: float, ha: str, va: str) -> Box:
    x0 = x if ha == "left" else x - w if ha == "right" else x - w / 2
    y0 = y if va == "bottom" else y - h if va == "top" else y - h / 2
    return x0, y0, x0 + w, y0 + h


def _arc(ax, radius: float, start_deg: float, end_deg: float, **style) -> list:
    """An arrow along a circle from ``start_deg`` to ``end_deg`` (page angles); its points."""
    from matplotlib.patches import FancyArrowPatch
    from matplotlib.path import Path as MPath

    steps = 40
    verts = [_xy(radius, start_deg + (end_deg - start_deg) * k / steps) for k in range(steps + 1)]
    if ax is not None:
        ax.add_patch(FancyArrowPatch(path=MPath(verts), arrowstyle="-|>", mutation_scale=13,
                                     color=INK, **style))
    return verts


def _vector(ax, start: tuple[float, float], tip: tuple[float, float], solid: bool) -> None:
    from matplotlib.patches import FancyArrowPatch

    style = dict(arrowstyle="-|>", mutation_scale=16, lw=2.4, color=INK, zorder=4) if solid \
        else dict(arrowstyle="->", mutation_scale=14, lw=1.6, color=INK, linestyle=(0, (4, 2.5)),
                  zorder=4)
    ax.add_patch(FancyArrowPatch(start, tip, shrinkA=0, shrinkB=0, **style))


def _label_beside(room: _Room, start: tuple[float, float], tip: tuple[float, float],
                  text: str, size_pt: float, fractions: tuple[float, ...],
                  inside_r: float) -> Box | None:
    """A free box for ``text`` beside the line start-tip (either side), or beyond its tip."""
    length = math.hypot(tip[0] - start[0], tip[1] - start[1])
    ux, uy = (tip[0] - start[0]) / length, (tip[1] - start[1]) / length
    nx, ny = -uy, ux
    w, h = room.size(text, size_pt)
    gap = 0.045
    across = abs(nx) * w / 2 + abs(ny) * h / 2
    along = abs(ux) * w / 2 + abs(uy) * h / 2
    candidates = []
    for f in fractions:
        for side in (1.0, -1.0):
            px, py = start[0] + f * (tip[0] - start[0]), start[1] + f * (tip[1] - start[1])
            cx, cy = px + side * nx * (gap + across), py + side * ny * (gap + across)
            candidates.append((cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2))
    cx, cy = tip[0] + ux * (gap + along), tip[1] + uy * (gap + along)
    candidates.append((cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2))
    return next((b for b in candidates if _inside(b, inside_r) and room.free(b)), None)


def _inner_r(radii: list[float]) -> float:
    """Radius [data units] inside which the degree figures and the angle arc go."""
    smallest = min(radii) / max(radii)
    return 0.80 if smallest > 0.999 else max(0.3, smallest - 0.32)


def _angle_gap_deg(a: float, b: float) -> float:
    return abs((a - b + 180.0) % 360.0 - 180.0)


def _frame(ax, ccw: bool, radii: list[float], room: _Room) -> None:
    """Rim, hub, degree ticks (every 10°, long every 30°), position circles, reference mark."""
    from matplotlib.patches import Circle, Polygon

    ax.add_patch(Circle((0, 0), 1.0, fill=False, lw=1.8, ec=INK, zorder=1))
    ax.add_patch(Circle((0, 0), 0.06, fill=False, lw=1.0, ec=INK, zorder=1))
    ax.plot([-0.035, 0.035], [0, 0], color=INK, lw=0.6)
    ax.plot([0, 0], [-0.035, 0.035], color=INK, lw=0.6)
    room.take((-0.07, -0.07, 0.07, 0.07))
    for r in sorted(set(radii))[:-1]:
        ax.add_patch(Circle((0, 0), r / max(radii), fill=False, lw=0.7, ec=GREY,
                            linestyle=(0, (1, 2)), zorder=1))
    for deg in range(0, 360, 10):
        a = page_angle_deg(deg, ccw)
        (x0, y0), (x1, y1) = _xy(0.955 if deg % 30 == 0 else 0.975, a), _xy(1.0, a)
        ax.plot([x0, x1], [y0, y1], color=INK, lw=0.9 if deg % 30 == 0 else 0.6, zorder=1)
    ax.add_patch(Polygon([(0, 0.91), (-0.045, 0.81), (0.045, 0.81)], closed=True, fc=INK,
                         ec=INK, zorder=5))
    room.take((-0.05, 0.80, 0.05, 0.92))


def _reference_label(ax, room: _Room, ccw: bool) -> None:
    """"REF 0°" beside the mark on the side the angles do not grow to, else below or across."""
    text = "REF 0°"
    w, h = room.size(text, SMALL_PT, bold=True)
    away = 1.0 if ccw else -1.0          # angles grow to the left when counterclockwise

    def beside(side: float) -> Box:
        x0 = 0.065 if side > 0 else -0.065 - w
        return x0, 0.815 - h / 2, x0 + w, 0.815 + h / 2

    candidates = [beside(away), beside(-away)]
    for top in (0.785, 0.70, 0.615, 0.53):
        for dx in (0.0, away * 0.6 * w, -away * 0.6 * w):
            candidates.append((dx - w / 2, top - h, dx + w / 2, top))
    box = next((b for b in candidates if _inside(b, 0.945) and room.free(b, pad=0.015)),
               candidates[2])
    _put(ax, room, box, text, SMALL_PT, weight="bold")


def _angle_sense_arc(ax, room: _Room, ccw: bool, rings: list[float]) -> None:
    """A dash-dot arc inside the rim pointing towards growing angle, clear of what is drawn.

    It starts at the reference mark when that is free, else at the nearest
    job angle (in 15° steps) that is; ``rings`` are the positions' radii
    [data units], which it keeps off.
    """
    starts = sorted(range(0, 360, 15), key=lambda d: (_angle_gap_deg(d, 0), d))
    inner = min(rings)
    tries = [0.72] if inner > 0.999 else [(inner + 1.0) / 2] if inner < 0.75 else []
    tries += [max(0.3, inner - 0.32) - 0.08, max(0.3, inner - 0.32) - 0.22, 0.55, 0.4]
    tries = [r for r in tries if r > 0.15 and all(abs(r - g) > 0.07 for g in rings)]
    radius = tries[0] if tries else 0.72
    for r in tries:
        for start in starts:
            verts = _arc(None, r, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw))
            mid = page_angle_deg(start + 22, ccw)
            w, h = room.size("+ angle", 7)
            c, s_ = abs(math.cos(math.radians(mid))), abs(math.sin(math.radians(mid)))
            out = c * w / 2 + s_ * h / 2
            x, y = _xy(r - 0.05 - out, mid)
            box = room.centred(x, y, "+ angle", 7)
            if room.clear_path(verts[::4] + [verts[-1]]) and _inside(box, 0.94) \
                    and room.free(box):
                _arc(ax, r, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw),
                     lw=1.0, linestyle="-.", zorder=3)
                for p, q in zip(verts[::4], verts[4::4]):
                    room.line(p, q)
                _put(ax, room, box, "+ angle", 7, style="italic")
                return
    start = starts[0]                                   # nowhere free: the mark, as drawn before
    _arc(ax, radius, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw), lw=1.0,
         linestyle="-.", zorder=3)


def _degree_figures(ax, room: _Room, ccw: bool, radius: float) -> None:
    """90°, 180° and 270° inside the rim where they are free."""
    for deg in (90, 180, 270):
        for r in (radius, radius - 0.12):
            x, y = _xy(r, page_angle_deg(deg, ccw))
            box = room.centred(x, y, f"{deg}°", 7)
            if _inside(box, 0.94) and room.free(box, pad=0.05):
                _put(ax, room, box, f"{deg}°", 7, color=GREY)
                break


def _number_step(n: int) -> int:
    """Every how many positions a large plane is numbered (about 12 numbers round)."""
    step = math.ceil(n / 12)
    return next((s for s in range(step, 2 * step + 1) if n % s == 0), step)


def _position_labels(n: int, blocked: frozenset[int], used: set[int]
                     ) -> list[tuple[str, list[int], bool]]:
    """(text, positions it numbers, must show) for the position numbers.

    Every position up to NUMBER_ALL_UP_TO; above, every few plus every
    position used or blocked, with runs of blocked neighbours as one range.
    """
    if n <= NUMBER_ALL_UP_TO:
        return [(str(k), [k], True) for k in range(1, n + 1)]
    step = _number_step(n)
    labels: list[tuple[str, list[int], bool]] = []
    run: list[int] = []
    for k in list(range(1, n + 1)) + [0]:
        if k in blocked and k not in used and (not run or k == run[-1] + 1):
            run.append(k)
            continue
        if run:
            text = str(run[0]) if len(run) == 1 else f"{run[0]}–{run[-1]}"
            labels.append((text, run, True))
            run = []
        if k in blocked and k not in used:
            run = [k]
        elif k in used or k in blocked:
            labels.append((str(k), [k], True))
        elif k and (k - 1) % step == 0:
            labels.append((str(k), [k], False))
    if run:
        labels.append((str(run[0]) if len(run) == 1 else f"{run[0]}–{run[-1]}", run, True))
    return labels


PART_VERBS = {"fit": "", "drill": "DRILL", "remove": "REMOVE", "stay": "stays:"}
"""The word before "item ×count" in a part's label on the drawing, by symbol."""


def _part_text(stack: list[tuple[str, str, int]], split: bool) -> str:
    """The label of the symbols on one position; ``split`` puts each verb on its own line."""
    lines = []
    for kind, item, count in stack:
        verb = PART_VERBS[kind]
        lines.append(f"{verb}{chr(10) if split else ' '}{item} ×{count}" if verb
                     else f"{item} ×{count}")
    return "\n".join(lines)


def _symbols(plane: PlaneResult, facts: PlaneFacts) -> dict[int, list[tuple[str, str, int]]]:
    """Per position, (kind, item, count) of each symbol, in the order they stack inward."""
    order = {"fit": 0, "drill": 1, "remove": 2, "stay": 3}
    out: dict[int, list[tuple[str, str, int]]] = {}
    for p in plane.chosen.parts:
        kind = p.verb
        out.setdefault(p.position, []).append((kind, p.item, p.count))
    for s in facts.staying:
        out.setdefault(s.position, []).append(("stay", s.item, s.count))
    for number in out:
        out[number].sort(key=lambda ks: order[ks[0]])
    return out


def _draw_symbol(ax, kind: str, x: float, y: float, size: float) -> None:
    """Fit: solid disc.  Drill: open disc with centre lines.  Remove: open disc crossed
    out.  Stay: hatched disc."""
    from matplotlib.patches import Circle

    if kind == "fit":
        ax.add_patch(Circle((x, y), size, fc=INK, ec=INK, zorder=4))
    elif kind == "drill":
        ax.add_patch(Circle((x, y), size, fc="white", ec=INK, lw=1.8, zorder=4))
        ax.plot([x - 1.3 * size, x + 1.3 * size], [y, y], color=INK, lw=1.1, zorder=4)
        ax.plot([x, x], [y - 1.3 * size, y + 1.3 * size], color=INK, lw=1.1, zorder=4)
    elif kind == "remove":
        ax.add_patch(Circle((x, y), size, fc="white", ec=INK, lw=1.3, zorder=4))
        d = size * 1.15
        ax.plot([x - d, x + d], [y - d, y + d], color=INK, lw=2.0, zorder=4,
                solid_capstyle="butt")
        ax.plot([x - d, x + d], [y + d, y - d], color=INK, lw=2.0, zorder=4,
                solid_capstyle="butt")
    else:
        ax.add_patch(Circle((x, y), size, fc="white", ec=INK, lw=1.1, hatch="/////", zorder=4))


POSITION_MARKERS = {"both": "o", "add": "^", "remove": "v"}
"""Open marker of a position by what it takes (only where a plane's positions differ)."""


def _position_marker(ax, x: float, y: float, kind: str, size_pt: float) -> None:
    if kind == "blocked":
        ax.plot([x], [y], marker="s", ms=size_pt * 1.15, mfc="white", mec=INK, mew=1.0,
                zorder=3)
        ax.plot([x], [y], marker="x", ms=size_pt * 0.9, mec=INK, mew=1.3, zorder=3)
        return
    grow = 1.0 if kind == "both" else 1.3
    ax.plot([x], [y], marker=POSITION_MARKERS[kind], ms=size_pt * grow, mfc="white", mec=INK,
            mew=1.0, zorder=3)
    ax.plot([x], [y], marker="o", ms=max(1.6, size_pt * 0.3), mfc=INK, mec=INK, zorder=3)


def _label_plan(texts: list[str], wanted: list[float], label_r: float, unit_in: float,
                size_pt: float, bold: bool) -> tuple[list[float], list[tuple[float, float]]]:
    """Spread label angles; returns the placed angles and each label's (width, height) [units]."""
    gaps, sizes = [], []
    for a, t in zip(wanted, texts):
        lines = t.split("\n")
        h_in = _lines_in(len(lines), size_pt, 1.15)
        w_in = max(_width_in(s, size_pt, bold) for s in lines)
        sizes.append((w_in / unit_in, h_in / unit_in))
        c, s = abs(math.cos(math.radians(a))), abs(math.sin(math.radians(a)))
        gaps.append(math.degrees((c * h_in + s * w_in + 0.07) / (label_r * unit_in)))
    return spread_deg(wanted, gaps), sizes


def draw_plane(ax, result: PlaneResult, angle_sense: str, width_in: float = DRAW_IN,
               rotation: str | None = None) -> PlaneDrawing:
    """Draw one rotor face into ``ax``; returns where each thing was drawn.

    The drawing is ``width_in`` wide; its height follows what is drawn (read
    ``ax.get_xlim()`` and ``ax.get_ylim()``), so the caller sizes the axes
    to keep the aspect equal.

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
    rotation : str, optional
        The job's ``rotor.rotation`` ("clockwise", "counterclockwise", None).
    """
    geometry = result.plane.geometry
    facts = plane_facts(result)
    ccw = angles_counterclockwise(angle_sense, rotation)
    clockwise_rotation = rotation_clockwise(angle_sense, rotation)
    r_max = max(geometry.radii_mm)
    n = geometry.n_positions
    ax.set_aspect("equal")
    ax.axis("off")
    chosen = result.chosen
    symbols = _symbols(result, facts)
    kinds: list[str] = []

    radius = [geometry.radii_mm[k - 1] / r_max for k in range(1, n + 1)]
    page_deg = [page_angle_deg(geometry.angles_deg[k - 1], ccw) for k in range(1, n + 1)]
    open_kinds = [geometry.accepts[k - 1] if geometry.accepts else "both"
                  for k in range(1, n + 1) if k not in geometry.blocked]
    accepts_all = open_kinds[0] if open_kinds and len(set(open_kinds)) == 1 else \
        ("both" if not open_kinds else "")

    # The labels outside the rim fix how wide the drawing must be: widen it until they fit.
    labels = _position_labels(n, geometry.blocked, set(symbols))
    number_r = 1.14 if n > NUMBER_ALL_UP_TO else 1.13
    label_r = number_r + 0.14
    numbers = sorted(symbols)
    wanted = [math.degrees(math.atan2(*reversed(_xy(radius[k - 1], page_deg[k - 1]))))
              for k in numbers]
    half, split = LIMIT, set()
    for _ in range(4 + len(numbers)):
        unit_in = width_in / (2 * half)
        part_texts = [_part_text(symbols[k], k in split) for k in numbers]
        placed, sizes = _label_plan(part_texts, wanted, label_r, unit_in, PART_LABEL_PT, True)
        reach = []
        for a, (w, h) in zip(placed, sizes):
            ha, _ = _align(a)
            reach.append(abs(label_r * math.cos(math.radians(a)))
                         + (w if ha != "center" else w / 2) + 0.03)
        need = max([LIMIT] + reach)
        if need <= half + 1e-6:
            break
        # A label that would widen the drawing first puts its verbs on lines of their own.
        wide = [i for i, r in enumerate(reach) if r > LIMIT and numbers[i] not in split
                and any(PART_VERBS[kind] for kind, _, _ in symbols[numbers[i]])]
        if wide:
            split.add(numbers[max(wide, key=lambda i: reach[i])])
            continue
        half = need
    unit_in = width_in / (2 * half)
    room = _Room(unit_in)
    _frame(ax, ccw, list(geometry.radii_mm), room)

    # Positions: open marker with a centre dot; blocked: a square with a cross.
    spacing_in = unit_in * 2 * math.pi / max(n, 1)
    marker_pt = max(3.5, min(7.0, spacing_in * 72 * 0.62))
    number_pt = NUMBER_PT if n <= 24 else 7.0
    position_xy, blocked_xy = {}, {}
    for number in range(1, n + 1):
        x, y = _xy(radius[number - 1], page_deg[number - 1])
        position_xy[number] = (x, y)
        if number in geometry.blocked:
            blocked_xy[number] = (x, y)
            kind = "blocked"
        else:
            kind = geometry.accepts[number - 1] if geometry.accepts and not accepts_all \
                else "both"
        _position_marker(ax, x, y, kind, marker_pt)
        key = kind if kind == "blocked" else f"pos_{kind}"
        if key not in kinds:
            kinds.append(key)
        m = marker_pt / 72 / unit_in * 0.7
        room.take((x - m, y - m, x + m, y + m))
    _numbers(ax, room, labels, radius, page_deg, symbols, number_pt, unit_in)

    # Parts: symbols stacked inward from their position, labels outside the numbers.
    size = max(0.04, min(0.07, marker_pt / 72 / unit_in * 0.85))
    fit_xy, drill_xy, remove_xy, stay_xy = {}, {}, {}, {}
    for number, stack in symbols.items():
        r, a = radius[number - 1], page_deg[number - 1]
        for depth, (kind, _, _) in enumerate(stack):
            x, y = _xy(r - 0.16 * depth, a)
            _draw_symbol(ax, kind, x, y, size)
            {"fit": fit_xy, "drill": drill_xy, "remove": remove_xy, "stay": stay_xy}[kind][
                number] = (x, y)
            if kind == "drill":
                fit_xy[number] = (x, y)
            if kind not in kinds:
                kinds.append(kind)
            room.take((x - size, y - size, x + size, y + size))
    reach_bottom = 1.22
    for number, a, text, (w, h) in zip(numbers, placed, part_texts, sizes):
        ha, va = _align(a)
        r = radius[number - 1]
        start_r = r + size * 1.4 if r < 0.999 else number_r + 0.06
        beside = abs(math.cos(math.radians(a))) > 0.9 and r >= 0.999
        if not beside or _angle_gap_deg(a, wanted[numbers.index(number)]) > 3.0:
            start = _xy(start_r, wanted[numbers.index(number)])
            end = _xy(label_r - 0.02, a)
            ax.plot([start[0], end[0]], [start[1], end[1]], color=INK, lw=0.6, zorder=2)
            tx, ty = _xy(label_r, a)
        else:                                   # right after the number, no leader needed
            number_w, _ = room.size(str(number), number_pt, True)
            tx, ty = _xy(number_r + number_w / 2 + 0.05, a)
        ax.text(tx, ty, text, fontsize=PART_LABEL_PT, weight="bold", ha=ha, va=va,
                multialignment="right" if ha == "right" else "left", zorder=6,
                linespacing=1.15)
        box = _anchored_box(tx, ty, w, h, ha, va)
        room.take(box)
        reach_bottom = max(reach_bottom, -box[1])

    # Rotation: a heavy arc across the top, clear of the labels there.
    top_labels = [b for b in room.boxes if b[1] > 0.9 and abs((b[0] + b[2]) / 2) < 0.75]
    arc_r = max([1.24] + [b[3] for b in top_labels]) + 0.14
    drawn = clockwise_rotation is not None
    if drawn:
        _arc(ax, arc_r, *((116, 64) if clockwise_rotation else (64, 116)), lw=2.0, zorder=3)
        text, style = "ROTATION", dict(weight="bold")
        kinds.append("rotation")
    else:
        text, style = "sense of rotation not stated in the job file", dict(style="italic")
    w, h = room.size(text, 8 if drawn else 7, bold=drawn)
    box = (-w / 2, arc_r + 0.04, w / 2, arc_r + 0.04 + h)
    _put(ax, room, box, text, 8 if drawn else 7, **style)
    ax.set_xlim(-half, half)
    ax.set_ylim(-(max(reach_bottom, 1.22) + 0.06), box[3] + 0.05)

    # The further correction (solid) and the residual (dashed), to one scale.
    required_v = facts.further_gmm
    residual_v = complex(chosen.residual_gmm * math.cos(math.radians(chosen.residual_angle_deg)),
                         chosen.residual_gmm * math.sin(math.radians(chosen.residual_angle_deg)))
    required_zero = facts.negligible(abs(required_v))
    residual_zero = facts.negligible(chosen.residual_gmm)
    same = not residual_zero and facts.negligible(abs(residual_v - required_v))
    scale = ARROW_UNITS / max(abs(required_v), chosen.residual_gmm, 1e-300)
    tip_c = _xy(abs(required_v) * scale, page_angle_deg(angle_of_deg(required_v), ccw)) \
        if not required_zero else (0.0, 0.0)
    residual_deg = page_angle_deg(chosen.residual_angle_deg, ccw)
    tip_r = _xy(chosen.residual_gmm * scale, residual_deg) if not residual_zero else (0.0, 0.0)
    required_xy = residual_xy = None
    if not required_zero:
        required_xy = ((0.0, 0.0), tip_c)
        _vector(ax, *required_xy, solid=True)
        room.line(*required_xy)
        kinds.append("required")
    residual_text = "residual"
    if not residual_zero and not same:
        if math.hypot(*tip_r) >= TO_SCALE_MIN_UNITS:
            residual_xy = ((0.0, 0.0), tip_r)
        else:
            residual_xy = (_xy(0.09, residual_deg), _xy(0.32, residual_deg))
            residual_text = "residual\n(enlarged)"
        _vector(ax, *residual_xy, solid=False)
        room.line(*residual_xy)
        kinds.append("residual")
    _reference_label(ax, room, ccw)
    if required_xy is not None:
        text = "required = residual" if same else "required"
        box = _label_beside(room, *required_xy, text, SMALL_PT, (0.55, 0.7, 0.4, 0.85, 0.25),
                            0.94)
        if box is not None:
            _put(ax, room, box, text, SMALL_PT, bbox=dict(boxstyle="square,pad=0.1", fc="white",
                                                         ec="none"))
    if residual_xy is not None:
        box = _label_beside(room, *residual_xy, residual_text, SMALL_PT,
                            (0.5, 0.65, 0.35, 0.8, 0.2), 0.94)
        if box is not None:
            _put(ax, room, box, residual_text, SMALL_PT, linespacing=1.1,
                 bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none"))
    zero_lines = (["required ≈ 0"] if required_zero else []) + \
        (["residual ≈ 0"] if residual_zero else [])
    if zero_lines:
        text = "\n".join(zero_lines)
        w, h = room.size(text, SMALL_PT, bold=True)
        candidates = [(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)
                      for cx, cy in ((0.0, -0.12 - h / 2), (0.0, 0.12 + h / 2),
                                     (0.1 + w / 2, 0.0), (-0.1 - w / 2, 0.0),
                                     (0.0, -0.3 - h / 2), (0.0, 0.3 + h / 2))]
        box = next((b for b in candidates if room.free(b)), candidates[0])
        _put(ax, room, box, text, SMALL_PT, weight="bold", linespacing=1.2)
    _angle_sense_arc(ax, room, ccw, sorted(set(radius)))
    kinds.append("angle")
    _degree_figures(ax, room, ccw, _inner_r(list(geometry.radii_mm)))
    order = ["pos_both", "pos_add", "pos_remove", "blocked", "fit", "drill", "remove", "stay",
             "required", "residual", "angle", "rotation"]
    return PlaneDrawing(ax=ax, counterclockwise=ccw, rotation_clockwise=clockwise_rotation,
                        position_xy=position_xy, fit_xy=fit_xy, remove_xy=remove_xy,
                        blocked_xy=blocked_xy, correction_tip_xy=tip_c, residual_tip_xy=tip_r,
                        drill_xy=drill_xy, stay_xy=stay_xy, required_xy=required_xy,
                        residual_xy=residual_xy,
                        kinds=tuple(k for k in order if k in kinds), accepts_all=accepts_all)


def _circular_mean_deg(angles_deg: list[float]) -> float:
    x = sum(math.cos(math.radians(a)) for a in angles_deg)
    y = sum(math.sin(math.radians(a)) for a in angles_deg)
    return math.degrees(math.atan2(y, x))


def _numbers(ax, room: _Room, labels: list[tuple[str, list[int], bool]], radius: list[float],
             page_deg: list[float], symbols: dict, number_pt: float, unit_in: float) -> None:
    """Position numbers: outside the rim for outer positions, inside for inner ones.

    On a large plane the numbers that must show (used, blocked) push the
    regular ones aside, and any number moved off its marker gets a leader.
    """
    outer, inner = [], []
    for text, members, must in labels:
        r = sum(radius[k - 1] for k in members) / len(members)
        a = _circular_mean_deg([page_deg[k - 1] for k in members])
        (outer if r >= 0.999 else inner).append((text, members, must, r, a))
    for text, members, _, r, a in inner:
        x, y = _xy(r - 0.12, a)
        bold = any(k in symbols for k in members)
        box = room.centred(x, y, text, number_pt, bold)
        ax.text(x, y, text, fontsize=number_pt, ha="center", va="center", zorder=5,
                weight="bold" if bold else "normal")
        room.take(box)
    if not outer:
        return
    many = len(radius) > NUMBER_ALL_UP_TO
    number_r = 1.14 if many else 1.13
    sizes = [room.size(t, number_pt, True) for t, *_ in outer]

    def gap_deg(i: int) -> float:
        w, h = sizes[i]
        a = math.radians(outer[i][4])
        return math.degrees((abs(math.sin(a)) * w + abs(math.cos(a)) * h + 0.05 / unit_in)
                            / number_r)

    keep = list(range(len(outer)))
    if many:
        must = [i for i in keep if outer[i][2]]
        keep = [i for i in keep if outer[i][2] or all(
            _angle_gap_deg(outer[i][4], outer[j][4]) >= (gap_deg(i) + gap_deg(j)) / 2 * 1.2
            for j in must)]
        placed = spread_deg([outer[i][4] for i in keep], [gap_deg(i) for i in keep])
    else:
        placed = [outer[i][4] for i in keep]
    for i, a in zip(keep, placed):
        text, members, _, r, wanted = outer[i]
        bold = any(k in symbols for k in members)
        if _angle_gap_deg(a, wanted) > 0.5:
            s, e = _xy(r + 0.035, wanted), _xy(number_r - 0.045, a)
            ax.plot([s[0], e[0]], [s[1], e[1]], color=INK, lw=0.5, zorder=2)
        x, y = _xy(number_r, a)
        ax.text(x, y, text, fontsize=number_pt, ha="center", va="center", zorder=5,
                weight="bold" if bold else "normal")
        room.take(room.centred(x, y, text, number_pt, True))


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

    def patch(self, make) -> None:
        """Add the patch ``make()`` returns (in page inches)."""
        if self.ax is not None:
            self.ax.add_patch(make())

    def table(self, x: float, y: float, columns: list[tuple[str, str]],
              rows: list[list[str]], width_in: float, bold: set[int] = frozenset(),
              ticks: bool = False, size: float = 8.0) -> float:
        """A table no wider than ``width_in``; returns the y below it.

        ``columns`` are (heading, "l" or "r"); each column is as wide as its
        widest cell, measured, and the type shrinks (to 6.5 pt) until the
        table fits.
        """
        tick_in = 0.28 if ticks else 0.0
        while True:
            widths = []
            for k, (head, _) in enumerate(columns):
                cells = [_width_in(r[k], size, i in bold) for i, r in enumerate(rows) if r[k]]
                widths.append(max([_width_in(head, size - 1, True)] + cells) + 0.10)
            if tick_in + sum(widths) <= width_in or size <= 6.5:
                break
            size -= 0.5
        row_h = size * 1.75 / 72
        width = tick_in + sum(widths)
        edges = [x + tick_in]
        for w in widths:
            edges.append(edges[-1] + w)
        for k, (head, align) in enumerate(columns):
            tx = edges[k] + 0.05 if align == "l" else edges[k + 1] - 0.05
            self.text(tx, y, head, size - 1, weight="bold", ha="left" if align == "l" else "right")
        y += row_h
        self.rule(y - 0.04, x, x + width, lw=0.9)
        for i, row in enumerate(rows):
            cy = y + row_h / 2 - 0.02
            if ticks:
                self.mark(x + 0.1, cy, marker="s", ms=7.5, mfc="white", mec=INK, mew=0.9)
            for k, (cell, (_, align)) in enumerate(zip(row, columns)):
                if not cell:
                    continue
                tx = edges[k] + 0.05 if align == "l" else edges[k + 1] - 0.05
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
        return y + _lines_in(len(lines), size) + 0.03


def _lines_in(count: int, size: float, linespacing: float = 1.3) -> float:
    """Height [in] matplotlib gives ``count`` lines of text at ``size`` [pt]."""
    return count * linespacing * size / 72


def _wrap(text: str, width_in: float, size: float, bold: bool = False) -> list[str]:
    """Words of ``text`` in lines no wider than ``width_in`` [in]."""
    lines: list[str] = []
    for word in text.split():
        if lines and _width_in(f"{lines[-1]} {word}", size, bold) <= width_in:
            lines[-1] = f"{lines[-1]} {word}"
        else:
            lines.append(word)
    return lines or [""]


@functools.lru_cache(maxsize=8192)
def _width_in(text: str, size: float, bold: bool = False) -> float:
    """Width of one line of text on the page [in] (the default font, measured by matplotlib)."""
    from matplotlib.font_manager import FontProperties

    prop = FontProperties(weight="bold" if bold else "normal", size=size)
    width, _, _ = _TEXT_TO_PATH().get_text_width_height_descent(text, prop, ismath=False)
    return width / 72.0


@functools.lru_cache(maxsize=1)
def _TEXT_TO_PATH():  # noqa: N802 - one shared measurer
    from matplotlib.textpath import TextToPath

    return TextToPath()


def _join_lines(pieces: list[str], sep: str, width_in: float, size: float) -> list[str]:
    """Pieces joined by ``sep`` in lines no wider than ``width_in``, never split inside one."""
    lines: list[str] = []
    for piece in pieces:
        if lines and _width_in(lines[-1] + sep + piece, size) <= width_in:
            lines[-1] += sep + piece
        else:
            lines.append(piece)
    return lines


def _title_lines(title: str, width_in: float) -> tuple[list[str], float]:
    """The rotor's name on one line at 15 pt down to 11 pt, else wrapped (at most 3 lines)."""
    for size in (15.0, 14.0, 13.0, 12.0, 11.0):
        if _width_in(title, size, True) <= width_in:
            return [title], size
    for size in (12.0, 11.0, 10.0):
        lines = _wrap(title, width_in, size, True)
        if len(lines) <= 2 and all(_width_in(s, size, True) <= width_in for s in lines):
            return lines, size
    lines = _wrap(title, width_in, 10.0, True)
    if len(lines) > 3:
        lines = lines[:3]
        while lines[2] and _width_in(lines[2] + " …", 10.0, True) > width_in:
            lines[2] = lines[2][:-1]
        lines[2] = lines[2].rstrip() + " …"
    return lines, 10.0


def _header(page: _Page, result: JobResult, index: int, heading: str, when: date) -> float:
    """Title, the job's facts in columns as wide as they need, tolerance per plane."""
    rotor = result.job.rotor
    left, right = MARGIN_IN, PAGE_IN[0] - MARGIN_IN
    width = right - left
    page.rule(0.42, lw=3.0)
    page.text(left, 0.50, "F I T T I N G   S H E E T", 8.5, weight="bold")
    page.text(right, 0.50, f"plane {index} of {len(result.planes)}", 8.5, weight="bold",
              ha="right")
    lines, size = _title_lines(heading, width)
    page.text(left, 0.70, "\n".join(lines), size, weight="bold", linespacing=1.15)
    y = 0.70 + _lines_in(len(lines), size, 1.15) + 0.11
    facts = [
        ("JOB FILE", Path(result.job.source).name),
        ("DATE", when.isoformat()),
        ("SERVICE SPEED", "-" if rotor.service_rpm is None else f"{rotor.service_rpm:g} r/min"),
        ("ROTOR MASS", "-" if rotor.mass_kg is None else f"{rotor.mass_kg:g} kg"),
        ("GRADE", "-" if rotor.grade_mm_s is None else f"G {rotor.grade_mm_s:g}"),
        ("U_per (ISO 21940-11)", "-" if result.permissible_gmm is None
         else f"{_fmt_gmm(result.permissible_gmm)} g·mm"),
    ]
    if len(result.planes) == 1:
        facts.append(("TOLERANCE", _tolerance_text(result.planes[0])))
    x, gap, row_h = left, 0.28, 0.0
    for label, value in facts:
        value_lines = [value] if _width_in(value, 9) <= width else _wrap_chars(value, width, 9)
        w = max(_width_in(label, 6.5, True), max(_width_in(s, 9) for s in value_lines))
        if x > left and x + w > right:
            x, y, row_h = left, y + 0.21 + row_h, 0.0
        page.text(x, y, label, 6.5, color=GREY, weight="bold")
        page.text(x, y + 0.13, "\n".join(value_lines), 9)
        row_h = max(row_h, _lines_in(len(value_lines), 9, 1.2))
        x += w + gap
    y += 0.13 + row_h + 0.06
    if len(result.planes) > 1:
        y += 0.02
        page.text(left, y, "TOLERANCE PER PLANE", 6.5, color=GREY, weight="bold")
        lines = _join_lines([f"{p.name}: {_tolerance_text(p)}" for p in result.planes],
                            "   ·   ", width, 9)
        page.text(left, y + 0.13, "\n".join(lines), 9, linespacing=1.3)
        y += 0.13 + _lines_in(len(lines), 9) + 0.06
    page.rule(y, lw=0.8)
    return y + 0.09


def _wrap_chars(text: str, width_in: float, size: float) -> list[str]:
    """A word too long for one line, cut into lines no wider than ``width_in``."""
    lines = [""]
    for ch in text:
        if lines[-1] and _width_in(lines[-1] + ch, size) > width_in:
            lines.append("")
        lines[-1] += ch
    return lines


def _tolerance_text(plane: PlaneResult) -> str:
    return "none given" if plane.tolerance_gmm is None else f"{_fmt_gmm(plane.tolerance_gmm)} g·mm"


def _plane_band(page: _Page, plane: PlaneResult, index: int, y: float) -> float:
    """A black band with the plane's name; its facts beside it, or on lines below."""
    geometry = plane.plane.geometry
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    title = f"PLANE {index}:  {geometry.name.upper()}"
    title_lines, title_pt = [title], 11.0
    if _width_in(title, 11, True) > width - 0.24:
        title_lines, title_pt = _wrap(title, width - 0.24, 10, True), 10.0
    radii = sorted(set(geometry.radii_mm))
    radius = f"r {radii[0]:g} mm" if len(radii) == 1 else f"r {radii[0]:g} to {radii[-1]:g} mm"
    room = ("one part per position" if geometry.capacity == 1
            else f"up to {geometry.capacity} parts per position")
    facts = (f"{geometry.n_positions} positions, {radius}, {room}   ·   "
             f"{plane.plane.catalog.name}")
    fits = len(title_lines) == 1 and \
        _width_in(title, 11, bold=True) + _width_in(facts, 7.5) + 0.5 < width
    title_h = _lines_in(len(title_lines), title_pt, 1.1)
    if fits:
        height = 0.34
    else:
        fact_lines = _wrap(facts, width - 0.24, 7.5)
        height = 0.10 + title_h + 0.06 + _lines_in(len(fact_lines), 7.5) + 0.06
    page.box(left, y, width, height, fill=True, fc=INK, ec=INK)
    if fits:
        page.text(left + 0.12, y + 0.17, title, 11, weight="bold", color="white", va="center")
        page.text(left + width - 0.12, y + 0.17, facts, 7.5, color="white", va="center",
                  ha="right")
    else:
        page.text(left + 0.12, y + 0.08, "\n".join(title_lines), title_pt, weight="bold",
                  color="white", linespacing=1.1)
        page.paragraph(left + 0.12, y + 0.08 + title_h + 0.06, facts, width - 0.24, 7.5,
                       color="white")
    return y + height


KEY_TEXT = {
    "pos_both": "position, number as on the rotor",
    "pos_add": "position for added parts only",
    "pos_remove": "position for drilling only",
    "blocked": "blocked: takes no part",
    "fit": "part to fit",
    "drill": "hole to drill",
    "remove": "part on the rotor: remove it",
    "stay": "part on the rotor: leave it on",
    "required": "required correction",
    "residual": "residual after the plan",
    "angle": "angles grow this way",
    "rotation": "sense of rotation",
}


def _key_rows(drawing: PlaneDrawing) -> list[tuple[str, str]]:
    rows = []
    for kind in drawing.kinds:
        text = KEY_TEXT[kind]
        if kind == "pos_both" and drawing.accepts_all in ("add", "remove"):
            text = ("position for added parts only" if drawing.accepts_all == "add"
                    else "position for drilling only")
        elif kind == "pos_both" and not drawing.accepts_all:
            text = "position for parts or drilling"
        rows.append((kind, text))
    return rows


KEY_ROW_IN = 0.215


def _key(page: _Page, x: float, y: float, w: float, drawing: PlaneDrawing,
         row_in: float = KEY_ROW_IN) -> float:
    """The symbols drawn on this plane, each beside its meaning; returns the y below."""
    from matplotlib.patches import Circle, FancyArrowPatch

    page.text(x, y, "KEY", 8, weight="bold")
    y += 0.22
    sx = x + 0.14
    for kind, text in _key_rows(drawing):
        cy = y + 0.06
        if kind.startswith("pos_"):
            marker = POSITION_MARKERS[kind[4:]]
            page.mark(sx, cy, marker=marker, ms=7 if marker == "o" else 9, mfc="white", mec=INK,
                      mew=1.0)
            page.mark(sx, cy, marker="o", ms=2.1, mfc=INK, mec=INK)
        elif kind == "blocked":
            page.mark(sx, cy, marker="s", ms=8, mfc="white", mec=INK, mew=1.0)
            page.mark(sx, cy, marker="x", ms=6.3, mec=INK, mew=1.3)
        elif kind == "fit":
            page.patch(lambda: Circle((sx, cy), 0.065, fc=INK, ec=INK))
        elif kind == "drill":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.8))
            page.mark(sx, cy, marker="+", ms=13, mec=INK, mew=1.1)
        elif kind == "remove":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.3))
            page.mark(sx, cy, marker="x", ms=10.5, mec=INK, mew=2.0)
        elif kind == "stay":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.1,
                                      hatch="/////"))
        elif kind:
            style = {"required": dict(arrowstyle="-|>", lw=2.4),
                     "residual": dict(arrowstyle="->", lw=1.6, linestyle=(0, (4, 2.5))),
                     "angle": dict(arrowstyle="-|>", lw=1.0, linestyle="-."),
                     "rotation": dict(arrowstyle="-|>", lw=2.0)}[kind]
            page.patch(lambda: FancyArrowPatch((sx - 0.13, cy), (sx + 0.15, cy), color=INK,
                                               mutation_scale=12, shrinkA=0, shrinkB=0,
                                               **style))
        end = page.paragraph(x + 0.40, cy - _lines_in(1, 7.5) / 2, text, w - 0.40, 7.5)
        y = max(y + row_in, end + 0.04)
    return y


def _basis_lines(plane: PlaneResult, facts: PlaneFacts) -> list[str]:
    """How the job gave the correction, and what the plan answers."""
    if facts.basis == "none":
        return [plane.plane.given_as]
    if facts.basis == "further":
        return [plane.plane.given_as, "measured with the existing parts on"]
    return ["with the existing parts on (sum below)"]


def _basis_sentence(plane: PlaneResult, facts: PlaneFacts) -> str | None:
    """For a correction given without the existing parts: total − existing = further."""
    if facts.basis != "total":
        return None
    return (f"Required correction: total {_fmt_vector(facts.given_gmm, facts)} as the job "
            f"gives it ({plane.plane.given_as}, without the existing parts) − existing parts "
            f"{_fmt_vector(facts.existing_gmm, facts)} = further "
            f"{_fmt_vector(facts.further_gmm, facts)}, which the arrows and the plan use.")


def _result_box(page: _Page, x: float, y: float, w: float, plane: PlaneResult,
                facts: PlaneFacts) -> float:
    chosen = plane.chosen
    page.text(x, y, "RESULT", 8, weight="bold")
    y += 0.22
    lines = [("Required", _fmt_vector(facts.further_gmm, facts))]
    lines += [("", s) for s in _basis_lines(plane, facts)]
    residual = ("≈ 0 g·mm" if facts.negligible(chosen.residual_gmm) else
                f"{_fmt_gmm(chosen.residual_gmm)} g·mm at {chosen.residual_angle_deg:.1f}°")
    lines += [("Residual", residual),
              ("Tolerance", "none given" if plane.tolerance_gmm is None
               else f"{_fmt_gmm(plane.tolerance_gmm)} g·mm")]
    if plane.tolerance_gmm is not None:
        lines.append(("", plane.tolerance_source))
    for label, value in lines:
        page.text(x, y, label, 7.5, weight="bold")
        y = page.paragraph(x + 0.68, y, value, w - 0.68, 7.5) + 0.02
    y += 0.06
    words = ""
    if plane.tolerance_gmm:
        share = chosen.residual_gmm / plane.tolerance_gmm
        words = ("residual ≈ 0" if facts.negligible(chosen.residual_gmm)
                 else f"residual = {share:.0%} of the tolerance" if share <= 10
                 else f"residual = {share:,.0f} times the tolerance".replace(",", " "))
    height = 0.56 if words else 0.42
    verdict_y = y + (0.19 if words else 0.21)
    ink = INK
    if plane.within_tolerance is None:
        page.box(x, y, w, height, lw=1.2, linestyle=(0, (3, 2)))
        page.text(x + w / 2, verdict_y, "NO TOLERANCE GIVEN", 10, weight="bold", ha="center",
                  va="center")
    elif plane.within_tolerance:
        page.box(x, y, w, height, lw=2.6)
        page.text(x + w / 2, verdict_y, "WITHIN TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center")
    else:
        page.box(x, y, w, height, fill=True, fc=INK, ec=INK)
        page.text(x + w / 2, verdict_y, "OUTSIDE TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center", color="white")
        ink = "white"
    if words:
        page.text(x + w / 2, y + 0.42, words, 7.5, ha="center", va="center", color=ink)
    return y + height + 0.06


def _convention(angle_sense: str, rotation: str | None = None) -> str:
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


def _parts_tables(page: _Page, x: float, y: float, w: float, plane: PlaneResult,
                  facts: PlaneFacts) -> float:
    """The work in the order to do it: remove, then drill, then fit; what stays on."""
    parts = sorted(plane.chosen.parts, key=lambda p: (
        ["REMOVE", "DRILL", "FIT"].index(action_word(p)), p.position, p.item))
    if parts:
        steps = []
        for p in parts:
            if action_word(p) not in steps:
                steps.append(action_word(p))
        heading = ", THEN ".join(steps) if len(steps) > 1 else steps[0]
        page.text(x, y, heading + (" (IN THIS ORDER)" if len(steps) > 1 else ""), 8.5,
                  weight="bold")
        columns = [("Do", "l"), ("Pos.", "r"), ("Angle °", "r"), ("Item", "l"),
                   ("Count", "r"), ("Mass g", "r"), ("g·mm", "r")]
        rows = [[action_word(p), str(p.position), f"{p.angle_deg:.1f}", p.item, str(p.count),
                 f"{abs(p.mass_g) * p.count:g}",
                 f"{abs(p.mass_g) * p.count * p.radius_mm:.0f}"] for p in parts]
        y = page.table(x, y + 0.22, columns, rows, w, ticks=True)
        if drills(parts):
            y = page.paragraph(x, y, "DRILL: a hole; mass = metal the hole takes out.", w, 7)
        y += 0.10
    else:
        page.text(x, y, "NOTHING TO REMOVE, DRILL OR FIT", 8.5, weight="bold")
        why = ("The plane is within tolerance as it is." if plane.within_tolerance
               else "No part improves the plane.")
        y = page.paragraph(x, y + 0.22, why, w) + 0.1
    if facts.staying:
        staying = ", ".join(f"position {s.position}: {s.item} ×{s.count}" for s in facts.staying)
        y = page.paragraph(x, y, "Already on the rotor and staying: " + staying, w, 7.5) + 0.06
    return y


def _front_table(page: _Page, x: float, y: float, w: float, plane: PlaneResult,
                 facts: PlaneFacts) -> float:
    rows_of = plane.trade_off
    rated = any(o.chance_within is not None for o in rows_of)
    page.text(x, y, "TRADE-OFF: PARTS AGAINST RESIDUAL", 8.5, weight="bold")
    columns = [("Parts", "r"), ("Residual", "r"), ("% req.", "r"), ("Verdict", "l")]
    if rated:
        columns += [("Chance", "r"), ("95 %", "r")]
    columns.append(("", "l"))
    required = abs(facts.further_gmm)
    rows, bold, unproven = [], set(), False
    for i, option in enumerate(rows_of):
        star = "" if option.proven else " *"
        unproven |= not option.proven
        residual = "≈ 0" if facts.negligible(option.residual_gmm) else \
            _fmt_gmm(option.residual_gmm)
        row = [str(option.used_parts), f"{residual}{star}",
               "" if facts.negligible(required) else f"{option.residual_gmm / required:.0%}",
               "-" if plane.tolerance_gmm is None else
               "within" if option.residual_gmm <= plane.tolerance_gmm else "outside"]
        if rated:
            row.append("-" if option.chance_within is None else f"{option.chance_within:.0%}")
            row.append("-" if option.residual_p95_gmm is None
                       else _fmt_gmm(option.residual_p95_gmm))
        chosen = option.parts == plane.chosen.parts
        row.append("◀" if chosen else "")
        if chosen:
            bold.add(i)
        rows.append(row)
    y = page.table(x, y + 0.22, columns, rows, w, bold=bold)
    note = "Parts: parts fitted plus parts removed. Residuals in g·mm. ◀ the plan on this sheet."
    if unproven:
        note += " * not proven optimal in the time limit."
    if rated:
        note += (" Chance: share of simulated fits (part masses within their tolerance, angles "
                 "within the job's placement error) that stay within tolerance; 95 %: the "
                 "residual 95 % of them stay below.")
    y = page.paragraph(x, y, note, w, 7)
    return y + 0.06


CAUTION_PT = 7.5
FOOTER_IN = 0.45
"""Distance of the footer rule from the bottom of the page [in]."""


def _caution_lines(drilling: bool) -> list[list[str]]:
    from placer.views.terminal.job import CAUTIONS, DRILL_CAUTION

    cautions = CAUTIONS + ((DRILL_CAUTION,) if drilling else ())
    return [_wrap(c, PAGE_IN[0] - 2 * MARGIN_IN - 0.7, CAUTION_PT) for c in cautions]


def _caution_height(drilling: bool) -> float:
    return sum(_lines_in(len(w), CAUTION_PT) + 0.04 for w in _caution_lines(drilling)) + 0.30


def _cautions_top(drilling: bool) -> float:
    """Top of the safety box [in from the top of the page]; the box sits above the sign-off."""
    return PAGE_IN[1] - FOOTER_IN - 0.55 - 0.25 - _caution_height(drilling)


def _cautions(page: _Page, top: float, when: date, index: int, total: int,
              job_name: str, drilling: bool) -> None:
    """The safety box (the shared cautions), the sign-off line and the footer."""
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    bottom = PAGE_IN[1] - FOOTER_IN
    wrapped = _caution_lines(drilling)
    box_h = _caution_height(drilling)
    sign_y = max(bottom - 0.55, top + box_h + 0.25)
    page.box(left, top, width, box_h, lw=2.0)
    page.box(left, top, 0.36, box_h, fill=True, fc=INK, ec=INK)
    page.text(left + 0.18, top + box_h / 2, "!", 18, weight="bold", color="white",
              ha="center", va="center")
    page.text(left + 0.48, top + 0.07, "SAFETY", 8, weight="bold")
    cy = top + 0.23
    for lines in wrapped:
        page.text(left + 0.48, cy, "\n".join(lines), CAUTION_PT, linespacing=1.3)
        cy += _lines_in(len(lines), CAUTION_PT) + 0.04
    for k, label in enumerate(("Fitted by", "Date", "Test run checked by")):
        sx = left + k * width / 3
        page.text(sx, sign_y + 0.2, label, 7.5, va="bottom")
        page.rule(sign_y + 0.2, sx + _width_in(label, 7.5) + 0.1, sx + width / 3 - 0.15, lw=0.6)
    page.rule(bottom, lw=0.6)
    page.text(left, bottom + 0.05, f"placer · {job_name} · {when.isoformat()}", 6.5, color=GREY)
    page.text(left + width, bottom + 0.05, f"sheet {index} of {total}", 6.5, color=GREY,
              ha="right")


def _lower(page: _Page, y: float, result: JobResult, plane: PlaneResult,
           facts: PlaneFacts) -> float:
    """Convention, the work and the trade-off, notes; returns the y below them."""
    width = PAGE_IN[0] - 2 * MARGIN_IN
    basis = _basis_sentence(plane, facts)
    if basis:
        y = page.paragraph(MARGIN_IN, y, basis, width, 7.5, weight="bold") + 0.02
    rotor = result.job.rotor
    y = page.paragraph(MARGIN_IN, y, _convention(rotor.angle_sense, rotor.rotation), width, 7,
                       style="italic") + 0.1
    page.rule(y - 0.04, lw=0.4, color=GREY)
    half = width / 2 - 0.1
    y_left = _parts_tables(page, MARGIN_IN, y + 0.04, half, plane, facts)
    y_right = _front_table(page, MARGIN_IN + width / 2 + 0.1, y + 0.04, half, plane, facts)
    y = max(y_left, y_right)
    notes = list(plane.notes) + list(result.notes)
    if not plane.optimal:
        notes.append("Not every plan in the trade-off was proven optimal in the time limit.")
    for note in notes:
        y = page.paragraph(MARGIN_IN, y, f"Note: {note}", width, 7.5, weight="bold")
    return y


def plane_page(result: JobResult, index: int, *, title: str | None = None,
               when: date | None = None, dpi: float = PNG_DPI):
    """One page of the sheet as a matplotlib Figure; returns (figure, drawing).

    ``index`` counts planes from 1.  The figure is at ``dpi`` (PNG_DPI by
    default), so that ``drawing.ax.transData`` gives the pixels of a PNG
    written from it at that resolution.  The drawing shrinks when the tables
    below it would otherwise run into the safety box.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    when = date.today() if when is None else when
    plane = result.planes[index - 1]
    facts = plane_facts(plane)
    drilling = drills(plane.chosen.parts)
    fig = Figure(figsize=PAGE_IN, dpi=dpi)
    FigureCanvasAgg(fig)
    page = _Page(fig)
    y = _header(page, result, index, title or result.job.rotor.name, when)
    top = _plane_band(page, plane, index, y) + 0.12
    side_x = MARGIN_IN + DRAW_IN + 0.25
    side_w = PAGE_IN[0] - MARGIN_IN - side_x
    ax = fig.add_axes((0, 0, 1, 1))
    sense, rotation = result.job.rotor.angle_sense, result.job.rotor.rotation
    drawing = draw_plane(ax, plane, sense, DRAW_IN, rotation)
    room = _cautions_top(drilling) - 0.12 - _lower(_Page(None), 0.0, result, plane, facts) \
        - 0.06 - top

    def side(on: _Page, row_in: float) -> float:
        key_end = _key(on, side_x, top + 0.1, side_w, drawing, row_in)
        return _result_box(on, side_x, key_end + 0.12, side_w, plane, facts)

    row_in = next((r for r in (KEY_ROW_IN, 0.19, 0.17) if side(_Page(None), r) - top <= room),
                  0.16)
    side_end = side(page, row_in)
    width = DRAW_IN

    def height(w: float) -> float:
        (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
        return w * (y1 - y0) / (x1 - x0)

    draw_h = height(width)
    if draw_h > max(room, side_end - top) + 1e-6:
        width = max(3.2, width * max(room, side_end - top) / draw_h)
        ax.cla()
        drawing = draw_plane(ax, plane, sense, width, rotation)
        draw_h = height(width)
    left = MARGIN_IN + (DRAW_IN - width) / 2
    ax.set_position((left / PAGE_IN[0], 1 - (top + draw_h) / PAGE_IN[1],
                     width / PAGE_IN[0], draw_h / PAGE_IN[1]))
    end = _lower(page, max(top + draw_h, side_end) + 0.06, result, plane, facts)
    _cautions(page, max(end + 0.08, _cautions_top(drilling)), when, index, len(result.planes),
              Path(result.job.source).name, drilling)
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
