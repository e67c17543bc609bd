"""The bladed disc as the technician sees it: every slot with its number and its blade.

The disc is drawn as seen from the working side, reference mark at the top, with the
drawing convention of :mod:`placer.views.sheet.convention`.  Each slot's blade is a
spoke from the hub; its style says what happens to it (stays, fitted here, left in
place), swaps are numbered on the blades they exchange, and the residual unbalance
points from the centre to its heavy spot (not to scale: the sheet gives its size).
Up to :data:`LEVEL_UP_TO` slots, the slot number stands outside the blade's tip and the
blade's mark beyond it; above, both stand on one line along the radius.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from placer.arrange import BladeResult, SlotRow, slot_gaps_deg
from placer.views.sheet.convention import (
    angle_gap_deg,
    angles_counterclockwise,
    page_angle_deg,
    rotation_clockwise,
    xy,
)
from placer.views.sheet.glyphs import draw_text
from placer.views.sheet.labels import (
    Room,
    align_for,
    anchored_box,
    box_inside,
    label_beside,
    plan_labels,
    put_text,
)
from placer.views.sheet.symbols import draw_arc, draw_vector
from placer.views.sheet.typeset import GREY, INK, text_width_in

DRAW_IN = 4.6
"""Side of the drawing beside the key [in]; larger discs take the page's width."""
HUB_R = 0.46
"""Radius of the hub [data units; the blades' tips are near 1]."""
ROOT_R, TIP_R = 0.49, 0.94
"""Where a blade starts and ends [data units]."""
NUMBER_R = 1.06
"""Centre of a slot number [data units]."""
MARK_R = 1.17
"""Where a blade's mark stands, outward from its slot number [data units]."""
ALONG_R = 1.0
"""Where a label along the radius starts [data units]."""
LIMIT = 1.5
"""Least half-width of the drawing [data units]."""
LEVEL_UP_TO = 24
"""Discs with at most this many slots have level labels; more, labels along the radius."""
NUMBER_PT, MARK_PT, SMALL_PT = 8.0, 7.5, 7.0
SWAP_R = (0.76, 0.62)
"""Where the step numbers of a swap sit on a blade (a second swap of the same slot
further in) [data units]."""
HEAD_IN = 0.07
"""Half the size of an arc's arrowhead on the page [in] (matplotlib sizes it in points)."""
ZERO_SHARE = 1e-9
"""A residual below this share of the blades' total moment weight is drawn as zero
(rounding; the sheet still prints its value)."""

KINDS = ("stays", "moved", "in_place", "fitted", "swap", "residual", "angle", "rotation")
"""Symbols a drawing may use, in the order the key lists them."""


@dataclass(frozen=True)
class DiscDrawing:
    """Where things were drawn on the disc, in data units.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into (``ax.transData`` gives the pixels of the page).
    counterclockwise : bool
        Whether angles grow counterclockwise on the page.
    rotation_clockwise : bool or None
        Way of the rotation arrow; None when not drawn.
    slot_xy : dict of int to (float, float)
        Slot number -> the middle of its blade [data units].
    blade_kind : dict of int to str
        Slot number -> how its blade is drawn ("stays", "moved", "in_place", "fitted").
    swap_steps : dict of int to tuple of int
        Slot number -> the swap steps marked on its blade.
    residual_xy : ((float, float), (float, float)) or None
        The residual arrow as (tail, tip); None when the residual is drawn as zero.
    kinds : tuple of str
        The symbols drawn, in the order the key lists them (:data:`KINDS`).
    along_radius : bool
        Whether the labels stand along the radius.
    """

    ax: Any
    counterclockwise: bool
    rotation_clockwise: bool | None
    slot_xy: dict[int, tuple[float, float]]
    blade_kind: dict[int, str]
    swap_steps: dict[int, tuple[int, ...]]
    residual_xy: tuple[tuple[float, float], tuple[float, float]] | None
    kinds: tuple[str, ...]
    along_radius: bool


def blade_kind(row: SlotRow, fitted: bool) -> str:
    """How a slot's blade is drawn.

    Parameters
    ----------
    row : SlotRow
        The slot.
    fitted : bool
        Whether any blade is on the disc now.

    Returns
    -------
    str
        "stays", "moved" (new, or from another slot), "in_place" or, for a disc
        with no blade on yet, "fitted".
    """
    if row.stays:
        return "stays"
    if not fitted:
        return "fitted"
    return "moved" if row.from_slot is None or row.moves else "in_place"


def draw_blade(ax, kind: str, page_deg: float, half_root: float, half_tip: float,
               root_r: float = ROOT_R, tip_r: float = TIP_R) -> list[tuple[float, float]]:
    """One blade as a tapered spoke from the hub, styled by ``kind``; its corners.

    Stays: hatched.  Moved (new or from another slot): solid.  In place, or
    fitted on a bare disc: outlined.

    Parameters
    ----------
    ax : matplotlib.axes.Axes or None
        The axes drawn into; None only to get the corners.
    kind : str
        "stays", "moved", "in_place" or "fitted".
    page_deg : float
        The blade's page angle [deg].
    half_root, half_tip : float
        Half its width at the root and at the tip [data units].
    root_r, tip_r : float
        Where it starts and ends [data units].

    Returns
    -------
    list of (float, float)
        The four corners [data units].
    """
    a = math.radians(page_deg)
    ux, uy, nx, ny = math.cos(a), math.sin(a), -math.sin(a), math.cos(a)
    corners = [(root_r * ux + s * half_root * nx, root_r * uy + s * half_root * ny)
               for s in (1, -1)]
    corners += [(tip_r * ux + s * half_tip * nx, tip_r * uy + s * half_tip * ny)
                for s in (-1, 1)]
    if ax is not None:
        ax.add_patch(blade_patch(corners, kind))
    return corners


def blade_patch(corners: list[tuple[float, float]], kind: str):
    """The patch of a blade (or of its symbol in the key) with the style of ``kind``.

    Parameters
    ----------
    corners : list of (float, float)
        Its outline [in the axes' units].
    kind : str
        "stays" (hatched), "moved" (solid), "in_place" or "fitted" (outlined).

    Returns
    -------
    matplotlib.patches.Polygon
        The patch, to add to an axes.
    """
    from matplotlib.patches import Polygon

    style = {"stays": dict(fc="white", hatch="/////", lw=1.0),
             "moved": dict(fc=INK, lw=1.0)}.get(kind, dict(fc="white", lw=1.1))
    return Polygon(corners, closed=True, ec=INK, zorder=3, **style)


def draw_step(ax, x: float, y: float, step: int, radius: float) -> None:
    """A swap's step number in a white disc.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    x, y : float
        Its centre [data units].
    step : int
        The step number (from 1).
    radius : float
        Radius of the disc [data units].
    """
    from matplotlib.patches import Circle

    ax.add_patch(Circle((x, y), radius, fc="white", ec=INK, lw=1.2, zorder=6))
    ax.text(x, y, str(step), fontsize=SMALL_PT, weight="bold", ha="center", va="center",
            zorder=7)


def _label_reach(texts: list[str], page_deg: list[float], size_pt: float, unit_in: float,
                 bold: list[bool]) -> float:
    """How far from the centre labels along the radius reach [data units]."""
    gap = text_width_in("  ", size_pt) / unit_in
    return max(ALONG_R + gap + text_width_in(t, size_pt, b) / unit_in
               for t, b in zip(texts, bold)) if texts else ALONG_R


def draw_disc(ax, result: BladeResult, width_in: float = DRAW_IN) -> DiscDrawing:
    """Draw the bladed disc into ``ax``; returns where each thing was drawn.

    The drawing is ``width_in`` wide; its height follows what is drawn (read
    ``ax.get_xlim()`` and ``ax.get_ylim()``), so the caller sizes the axes to
    keep the aspect equal.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        An empty axes ``width_in`` wide.
    result : BladeResult
        The arranged blades.
    width_in : float
        Width of the drawing on the page [in].

    Returns
    -------
    DiscDrawing
        Where each slot, blade, label and arrow was drawn [data units].
    """
    rotor = result.job.rotor
    ccw = angles_counterclockwise(rotor.angle_sense, rotor.rotation)
    turns = rotation_clockwise(rotor.angle_sense, rotor.rotation)
    rows = result.rows()
    fitted = any(s is not None for s in result.job.slots_now)
    page = [page_angle_deg(row.angle_deg, ccw) for row in rows]
    kinds = {row.slot: blade_kind(row, fitted) for row in rows}
    along = len(rows) > LEVEL_UP_TO
    bold = [kinds[row.slot] == "moved" for row in rows]
    ax.set_aspect("equal")
    ax.axis("off")

    pitch = math.radians(min(slot_gaps_deg(result.job.disc)))   # the closest two slots
    half, size_pt = LIMIT, MARK_PT
    for _ in range(4):
        unit_in = width_in / (2 * half)
        if along:
            pitch_in = ALONG_R * pitch * unit_in
            size_pt = max(4.5, min(MARK_PT, pitch_in * 72 * 0.78))
            texts = [f"{row.slot}  {row.blade.blade_id}" for row in rows]
            need = _label_reach(texts, page, size_pt, unit_in, bold) + 0.04
        else:
            placed, sizes = plan_labels([row.blade.blade_id for row in rows], page, MARK_R,
                                        unit_in, MARK_PT, True)
            if _crowded(placed, sizes):
                along = True            # the marks do not fit round the disc level
                continue
            need = max([LIMIT] + [abs(MARK_R * math.cos(math.radians(a)))
                                  + (w if align_for(a)[0] != "center" else w / 2) + 0.04
                                  for a, (w, _) in zip(placed, sizes)])
        if need <= half + 1e-6:
            break
        half = need
    unit_in = width_in / (2 * half)
    room = Room(unit_in)

    # The hub, its centre and the reference mark.
    from matplotlib.patches import Circle, Polygon

    ax.add_patch(Circle((0, 0), HUB_R, fill=False, lw=1.8, ec=INK, zorder=2))
    ax.plot([-0.035, 0.035], [0, 0], color=INK, lw=0.6)
    ax.plot([0, 0], [-0.035, 0.035], color=INK, lw=0.6)
    room.take((-0.05, -0.05, 0.05, 0.05))
    ax.add_patch(Polygon([(0, HUB_R - 0.03), (-0.04, HUB_R - 0.12), (0.04, HUB_R - 0.12)],
                         closed=True, fc=INK, ec=INK, zorder=5))
    room.take((-0.05, HUB_R - 0.13, 0.05, HUB_R - 0.02))

    # The blades, one per slot.
    half_root = min(0.055, 0.30 * pitch * ROOT_R)
    half_tip = min(0.085, 0.30 * pitch * TIP_R)
    slot_xy = {}
    for row, a in zip(rows, page):
        corners = draw_blade(ax, kinds[row.slot], a, half_root, half_tip)
        slot_xy[row.slot] = xy((ROOT_R + TIP_R) / 2, a)
        xs, ys = [c[0] for c in corners], [c[1] for c in corners]
        if not along and len(rows) <= 12:
            room.take((min(xs), min(ys), max(xs), max(ys)))

    # Slot numbers and blade marks.
    if along:
        _labels_along(ax, room, rows, page, bold, size_pt)
    else:
        _labels_level(ax, room, rows, page, bold, unit_in)

    # Swaps, numbered on the blades they exchange.
    swap_steps: dict[int, list[int]] = {}
    for step, (a_slot, b_slot, _, _) in enumerate(result.swap_steps(), start=1):
        for slot in (a_slot, b_slot):
            swap_steps.setdefault(slot, []).append(step)
    step_r = max(0.03, min(0.06, 0.42 * pitch * SWAP_R[0]))
    for slot, steps in swap_steps.items():
        a = page[slot - 1]
        for depth, step in enumerate(steps[:len(SWAP_R)]):
            x, y = xy(SWAP_R[depth], a)
            draw_step(ax, x, y, step, step_r)
            room.take((x - step_r, y - step_r, x + step_r, y + step_r))

    # Rotation: a heavy arc across the top, above the labels there.
    top = [b[3] for b in room.boxes if b[1] > 0.8 and abs((b[0] + b[2]) / 2) < 0.7]
    arc_r = max([1.2] + top) + 0.12
    used = {kinds[row.slot] for row in rows}
    drawn = [k for k in ("stays", "moved", "in_place", "fitted") if k in used]
    if swap_steps:
        drawn.append("swap")
    if turns is not None:
        draw_arc(ax, arc_r, *((116, 64) if turns else (64, 116)), lw=2.0, zorder=3)
        label, style, pt = "ROTATION", dict(weight="bold"), 8.0
    else:
        label, style, pt = "sense of rotation not stated in the file", dict(style="italic"), 7.0
    w, h = room.size(label, pt, bold=turns is not None)
    box = (-w / 2, arc_r + 0.04, w / 2, arc_r + 0.04 + h)
    put_text(ax, room, box, label, pt, **style)
    bottom = min([-1.2] + [b[1] for b in room.boxes])
    ax.set_xlim(-half, half)
    ax.set_ylim(bottom - 0.06, box[3] + 0.05)

    # The residual unbalance from the centre towards its heavy spot, inside the hub; the
    # reference mark's label under the mark or beside it, then the residual's label.
    a = result.arrangement
    residual_xy = None
    if a.residual_gmm > ZERO_SHARE * result.total_moment_gmm:
        angle = page_angle_deg(a.residual_angle_deg, ccw)
        residual_xy = (xy(0.06, angle), xy(HUB_R - 0.08, angle))
        draw_vector(ax, *residual_xy, solid=False)
        room.line(*residual_xy)
        drawn.append("residual")
    w, h = room.size("REF 0°", SMALL_PT, bold=True)
    away = 1.0 if ccw else -1.0                    # the side angles do not grow to
    centres = [(0.0, HUB_R - 0.15 - h / 2), (away * (0.06 + w / 2), HUB_R - 0.075),
               (-away * (0.06 + w / 2), HUB_R - 0.075), (0.0, -0.12), (0.0, 0.12)]
    boxes = [(x - w / 2, y - h / 2, x + w / 2, y + h / 2) for x, y in centres]
    box = next((b for b in boxes if room.free(b, pad=0.01) and box_inside(b, HUB_R - 0.01)),
               boxes[0])
    put_text(ax, room, box, "REF 0°", SMALL_PT, weight="bold")
    if residual_xy is not None:
        box = label_beside(room, *residual_xy, "residual", SMALL_PT,
                           (0.55, 0.75, 0.35, 0.9, 0.2), HUB_R - 0.01)
        if box is not None:
            put_text(ax, room, box, "residual", SMALL_PT, style="italic")
    else:
        w, h = room.size("residual ≈ 0", SMALL_PT, bold=True)
        put_text(ax, room, (-w / 2, -0.1 - h, w / 2, -0.1), "residual ≈ 0", SMALL_PT,
                 weight="bold")
    if _angle_arc(ax, room, ccw):
        drawn.append("angle")
    if turns is not None:
        drawn.append("rotation")
    return DiscDrawing(ax=ax, counterclockwise=ccw, rotation_clockwise=turns,
                       slot_xy=slot_xy, blade_kind=kinds,
                       swap_steps={k: tuple(v) for k, v in swap_steps.items()},
                       residual_xy=residual_xy,
                       kinds=tuple(k for k in KINDS if k in drawn), along_radius=along)


def _crowded(placed: list[float], sizes: list[tuple[float, float]]) -> bool:
    """Whether two level marks, spread as far as the circle allows, still touch."""
    boxes = [anchored_box(*xy(MARK_R, a), w, h, *align_for(a)) for a, (w, h) in zip(placed, sizes)]
    return any(a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]
               for i, a in enumerate(boxes) for b in boxes[i + 1:])


def _labels_level(ax, room: Room, rows: tuple[SlotRow, ...], page: list[float],
                  bold: list[bool], unit_in: float) -> None:
    """Slot numbers outside the tips, each blade's mark beyond its number (spread apart)."""
    for row, a in zip(rows, page):
        x, y = xy(NUMBER_R, a)
        ax.text(x, y, str(row.slot), fontsize=NUMBER_PT, weight="bold", ha="center",
                va="center", zorder=5)
        room.take(room.centred(x, y, str(row.slot), NUMBER_PT, True))
    marks = [row.blade.blade_id for row in rows]
    placed, sizes = plan_labels(marks, page, MARK_R, unit_in, MARK_PT, True)
    for row, a, wanted, text, (w, h), strong in zip(rows, placed, page, marks, sizes, bold):
        ha, va = align_for(a)
        tx, ty = xy(MARK_R, a)
        if angle_gap_deg(a, wanted) > 3.0:
            start, end = xy(NUMBER_R + 0.06, wanted), xy(MARK_R - 0.02, a)
            ax.plot([start[0], end[0]], [start[1], end[1]], color=INK, lw=0.5, zorder=2)
        draw_text(ax, tx, ty, text, fontsize=MARK_PT, weight="bold" if strong else "normal",
                  ha=ha, va=va, zorder=5)
        room.take(anchored_box(tx, ty, w, h, ha, va))


def _labels_along(ax, room: Room, rows: tuple[SlotRow, ...], page: list[float],
                  bold: list[bool], size_pt: float) -> None:
    """"NUMBER  MARK" along the radius, outward from each tip, read from outside in
    on the left half."""
    for row, a, strong in zip(rows, page, bold):
        right = math.cos(math.radians(a)) >= -1e-9
        x, y = xy(ALONG_R, a)
        ax.text(x, y, f"{row.slot}  {row.blade.blade_id}", fontsize=size_pt,
                weight="bold" if strong else "normal", rotation=a if right else a + 180.0,
                rotation_mode="anchor", ha="left" if right else "right", va="center",
                zorder=5)
        reach = ALONG_R + text_width_in(f"{row.slot}  {row.blade.blade_id}", size_pt,
                                        strong) / room.unit_in
        (x1, y1) = xy(reach, a)
        room.line((x, y), (x1, y1))
        room.take((min(x, x1) - 0.01, min(y, y1) - 0.01, max(x, x1) + 0.01, max(y, y1) + 0.01))


def _angle_arc(ax, room: Room, ccw: bool) -> bool:
    """A dash-dot arc inside the hub pointing the way angles grow, where it is free."""
    starts = sorted(range(0, 360, 15), key=lambda d: (angle_gap_deg(d, 30), d))
    for labelled in (True, False):          # the arc alone, as the key explains it
        for radius in (HUB_R - 0.1, HUB_R - 0.17):
            for start in starts:
                a0, a1 = page_angle_deg(start, ccw), page_angle_deg(start + 50, ccw)
                verts = draw_arc(None, radius, a0, a1)
                head = HEAD_IN / room.unit_in           # the arrowhead is sized in points
                (hx, hy) = verts[-1]
                if not room.clear_path(verts[::4] + [verts[-1]], pad=0.02) or \
                        not room.free((hx - head, hy - head, hx + head, hy + head), pad=0.0):
                    continue
                box = _arc_label(room, radius, page_angle_deg(start + 25, ccw), verts) \
                    if labelled else None
                if labelled and box is None:
                    continue
                draw_arc(ax, radius, a0, a1, lw=1.0, linestyle="-.", zorder=3)
                for p, q in zip(verts[::4], verts[4::4]):
                    room.line(p, q)
                if box is not None:
                    put_text(ax, room, box, "+ angle", 6.5, style="italic", color=GREY)
                return True
    return False


def _arc_label(room: Room, radius: float, mid_deg: float, verts: list) -> tuple | None:
    """A free box for "+ angle" beside the arc, inside the hub; None when there is none."""
    for inward in (0.11, -0.07):
        x, y = xy(radius - inward, mid_deg)
        box = room.centred(x, y, "+ angle", 6.5)
        apart = Room(room.unit_in)
        apart.take(box)
        if room.free(box, pad=0.01) and apart.clear_path(verts, pad=0.015) \
                and box_inside(box, HUB_R - 0.01):
            return box
    return None
