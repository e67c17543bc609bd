"""The rotor face as the technician sees it: positions, numbers, parts, correction and residual.

Positions are drawn at their radius relative to the largest one.  A residual too short to
see at the correction's scale is drawn enlarged and labelled so.
"""

from __future__ import annotations

import math

from placer.geometry import angle_of_deg
from placer.plan import PlaneResult
from placer.views.sheet.convention import (
    angle_gap_deg,
    angles_counterclockwise,
    circular_mean_deg,
    page_angle_deg,
    rotation_clockwise,
    xy,
)
from placer.views.sheet.facts import PlaneDrawing, PlaneFace, plane_face
from placer.views.sheet.glyphs import draw_text
from placer.views.sheet.labels import (
    Box,
    Room,
    align_for,
    anchored_box,
    box_inside,
    label_beside,
    plan_labels,
    put_text,
    spread_deg,
)
from placer.views.sheet.symbols import (
    PART_VERBS,
    draw_arc,
    draw_symbol,
    draw_vector,
    part_label,
    position_marker,
    symbols_by_position,
)
from placer.views.sheet.typeset import GREY, INK

DRAW_IN = 4.75
"""Side of the square drawing of the rotor face [in]."""


LIMIT = 1.62
"""Least half-width of the drawing in data units (the largest radius is 1)."""


ARROW_UNITS = 0.78
"""Length of the longer of the required and residual arrows [data units]."""


TO_SCALE_MIN_UNITS = 0.16
"""Shortest residual arrow drawn to the required arrow's scale [data units]."""


NUMBER_ALL_UP_TO = 36
"""Planes with at most this many positions have every position numbered; larger
ones number every few positions plus every position used or blocked."""


NUMBER_PT = 8.0


PART_LABEL_PT = 8.5


SMALL_PT = 7.5


def _inner_r(radii: list[float]) -> float:
    """Radius [data units] inside which the degree figures and the angle arc go."""
    smallest = min(radii) / max(radii)
    return 0.80 if smallest > 0.999 else max(0.3, smallest - 0.32)


def _frame(ax, ccw: bool, radii: list[float], room: Room) -> None:
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
        (x0, y0), (x1, y1) = xy(0.955 if deg % 30 == 0 else 0.975, a), xy(1.0, a)
        ax.plot([x0, x1], [y0, y1], color=INK, lw=0.9 if deg % 30 == 0 else 0.6, zorder=1)
    ax.add_patch(Polygon([(0, 0.91), (-0.045, 0.81), (0.045, 0.81)], closed=True, fc=INK,
                         ec=INK, zorder=5))
    room.take((-0.05, 0.80, 0.05, 0.92))


def _reference_label(ax, room: Room, ccw: bool, mark: str = "") -> None:
    """"REF 0°" (or the mark's name) beside the mark on the side the angles do not grow to,
    else below or across."""
    text = f"{mark.upper() if mark else 'REF'} 0°"
    w, h = room.size(text, SMALL_PT, bold=True)
    away = 1.0 if ccw else -1.0          # angles grow to the left when counterclockwise

    def beside(side: float) -> Box:
        x0 = 0.065 if side > 0 else -0.065 - w
        return x0, 0.815 - h / 2, x0 + w, 0.815 + h / 2

    candidates = [beside(away), beside(-away)]
    for top in (0.785, 0.70, 0.615, 0.53):
        for dx in (0.0, away * 0.6 * w, -away * 0.6 * w):
            candidates.append((dx - w / 2, top - h, dx + w / 2, top))
    box = next((b for b in candidates if box_inside(b, 0.945) and room.free(b, pad=0.015)),
               candidates[2])
    put_text(ax, room, box, text, SMALL_PT, weight="bold")


def _angle_sense_arc(ax, room: Room, ccw: bool, rings: list[float]) -> None:
    """A dash-dot arc inside the rim pointing towards growing angle, clear of what is drawn.

    It starts at the reference mark when that is free, else at the nearest
    job angle (in 15° steps) that is; ``rings`` are the positions' radii
    [data units], which it keeps off.
    """
    starts = sorted(range(0, 360, 15), key=lambda d: (angle_gap_deg(d, 0), d))
    inner = min(rings)
    tries = [0.72] if inner > 0.999 else [(inner + 1.0) / 2] if inner < 0.75 else []
    tries += [max(0.3, inner - 0.32) - 0.08, max(0.3, inner - 0.32) - 0.22, 0.55, 0.4]
    tries = [r for r in tries if r > 0.15 and all(abs(r - g) > 0.07 for g in rings)]
    radius = tries[0] if tries else 0.72
    for r in tries:
        for start in starts:
            verts = draw_arc(None, r, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw))
            mid = page_angle_deg(start + 22, ccw)
            w, h = room.size("+ angle", 7)
            c, s_ = abs(math.cos(math.radians(mid))), abs(math.sin(math.radians(mid)))
            out = c * w / 2 + s_ * h / 2
            x, y = xy(r - 0.05 - out, mid)
            box = room.centred(x, y, "+ angle", 7)
            if room.clear_path(verts[::4] + [verts[-1]]) and box_inside(box, 0.94) \
                    and room.free(box):
                draw_arc(ax, r, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw),
                     lw=1.0, linestyle="-.", zorder=3)
                for p, q in zip(verts[::4], verts[4::4]):
                    room.line(p, q)
                put_text(ax, room, box, "+ angle", 7, style="italic")
                return
    start = starts[0]                                   # nowhere free: the mark, as drawn before
    draw_arc(ax, radius, page_angle_deg(start + 4, ccw), page_angle_deg(start + 40, ccw), lw=1.0,
         linestyle="-.", zorder=3)


def _degree_figures(ax, room: Room, ccw: bool, radius: float) -> None:
    """90°, 180° and 270° inside the rim where they are free."""
    for deg in (90, 180, 270):
        for r in (radius, radius - 0.12):
            x, y = xy(r, page_angle_deg(deg, ccw))
            box = room.centred(x, y, f"{deg}°", 7)
            if box_inside(box, 0.94) and room.free(box, pad=0.05):
                put_text(ax, room, box, f"{deg}°", 7, color=GREY)
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


def draw_plane(ax, result: PlaneResult | PlaneFace, angle_sense: str, width_in: float = DRAW_IN,
               rotation: str | None = None, mark: str = "") -> PlaneDrawing:
    """Draw one rotor face into ``ax``; returns where each thing was drawn.

    The drawing is ``width_in`` wide; its height follows what is drawn (read
    ``ax.get_xlim()`` and ``ax.get_ylim()``), so the caller sizes the axes
    to keep the aspect equal.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        An empty axes ``width_in`` wide.
    result : PlaneResult or PlaneFace
        The solved plane of a job, or the face of any plane (a field visit's).
    angle_sense : str
        The job's ``rotor.angle_sense`` (see the module's drawing convention).
    width_in : float
        Width of the drawing on the page [in]; spacing of the labels follows it.
    rotation : str, optional
        The job's ``rotor.rotation`` ("clockwise", "counterclockwise", None), seen
        from the front end; a plane worked from the back
        (``result.plane.worked_from``) is drawn as seen from there, mirrored.
    mark : str, optional
        What marks 0° on the rotor, for its label ("" for "REF").

    Returns
    -------
    PlaneDrawing
        Where each position, symbol and arrow was drawn [data units].
    """
    face = result if isinstance(result, PlaneFace) else plane_face(result)
    geometry = face.geometry
    facts = face.facts
    back = face.back
    ccw = angles_counterclockwise(angle_sense, rotation, back)
    clockwise_rotation = rotation_clockwise(angle_sense, rotation, back)
    r_max = max(geometry.radii_mm)
    n = geometry.n_positions
    ax.set_aspect("equal")
    ax.axis("off")
    chosen = face.chosen
    symbols = symbols_by_position(face, facts)
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
    wanted = [math.degrees(math.atan2(*reversed(xy(radius[k - 1], page_deg[k - 1]))))
              for k in numbers]
    half, split = LIMIT, set()
    for _ in range(4 + len(numbers)):
        unit_in = width_in / (2 * half)
        part_texts = [part_label(symbols[k], k in split) for k in numbers]
        placed, sizes = plan_labels(part_texts, wanted, label_r, unit_in, PART_LABEL_PT, True)
        reach = []
        for a, (w, h) in zip(placed, sizes):
            ha, _ = align_for(a)
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
    room = Room(unit_in)
    _frame(ax, ccw, list(geometry.radii_mm), room)

    # Positions: open marker with a centre dot; blocked: a square with a cross.
    spacing_in = unit_in * 2 * math.pi / max(n, 1)
    marker_pt = max(3.5, min(7.0, spacing_in * 72 * 0.62))
    number_pt = NUMBER_PT if n <= 24 else 7.0
    position_xy, blocked_xy = {}, {}
    for number in range(1, n + 1):
        x, y = xy(radius[number - 1], page_deg[number - 1])
        position_xy[number] = (x, y)
        if number in geometry.blocked:
            blocked_xy[number] = (x, y)
            kind = "blocked"
        else:
            kind = geometry.accepts[number - 1] if geometry.accepts and not accepts_all \
                else "both"
        position_marker(ax, x, y, kind, marker_pt)
        key = kind if kind == "blocked" else f"pos_{kind}"
        if key not in kinds:
            kinds.append(key)
        m = marker_pt / 72 / unit_in * 0.7
        room.take((x - m, y - m, x + m, y + m))
    draw_numbers(ax, room, labels, radius, page_deg, symbols, number_pt, unit_in)

    # Parts: symbols stacked inward from their position, labels outside the numbers.
    size = max(0.04, min(0.07, marker_pt / 72 / unit_in * 0.85))
    fit_xy, drill_xy, remove_xy, stay_xy = {}, {}, {}, {}
    for number, stack in symbols.items():
        r, a = radius[number - 1], page_deg[number - 1]
        for depth, (kind, _, _) in enumerate(stack):
            x, y = xy(r - 0.16 * depth, a)
            draw_symbol(ax, kind, x, y, size)
            # The outermost symbol of each kind marks the position.
            {"fit": fit_xy, "drill": drill_xy, "remove": remove_xy, "stay": stay_xy}[
                kind].setdefault(number, (x, y))
            if kind == "drill":
                fit_xy.setdefault(number, (x, y))
            if kind not in kinds:
                kinds.append(kind)
            room.take((x - size, y - size, x + size, y + size))
    reach_bottom = 1.22
    for number, a, text, (w, h) in zip(numbers, placed, part_texts, sizes):
        ha, va = align_for(a)
        r = radius[number - 1]
        start_r = r + size * 1.4 if r < 0.999 else number_r + 0.06
        beside = abs(math.cos(math.radians(a))) > 0.9 and r >= 0.999
        if not beside or angle_gap_deg(a, wanted[numbers.index(number)]) > 3.0:
            start = xy(start_r, wanted[numbers.index(number)])
            end = xy(label_r - 0.02, a)
            ax.plot([start[0], end[0]], [start[1], end[1]], color=INK, lw=0.6, zorder=2)
            tx, ty = xy(label_r, a)
        else:                                   # right after the number, no leader needed
            number_w, _ = room.size(str(number), number_pt, True)
            tx, ty = xy(number_r + number_w / 2 + 0.05, a)
        draw_text(ax, tx, ty, text, fontsize=PART_LABEL_PT, weight="bold", ha=ha, va=va,
                  multialignment="right" if ha == "right" else "left", zorder=6,
                  linespacing=1.15)
        box = anchored_box(tx, ty, w, h, ha, va)
        room.take(box)
        reach_bottom = max(reach_bottom, -box[1])

    # Rotation: a heavy arc across the top, clear of the labels there.
    top_labels = [b for b in room.boxes if b[1] > 0.9 and abs((b[0] + b[2]) / 2) < 0.75]
    arc_r = max([1.24] + [b[3] for b in top_labels]) + 0.14
    drawn = clockwise_rotation is not None
    if drawn:
        draw_arc(ax, arc_r, *((116, 64) if clockwise_rotation else (64, 116)), lw=2.0, zorder=3)
        text, style = "ROTATION", dict(weight="bold")
        kinds.append("rotation")
    else:
        text, style = "sense of rotation not stated in the job file", dict(style="italic")
    w, h = room.size(text, 8 if drawn else 7, bold=drawn)
    box = (-w / 2, arc_r + 0.04, w / 2, arc_r + 0.04 + h)
    put_text(ax, room, box, text, 8 if drawn else 7, **style)
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
    tip_c = xy(abs(required_v) * scale, page_angle_deg(angle_of_deg(required_v), ccw)) \
        if not required_zero else (0.0, 0.0)
    residual_deg = page_angle_deg(chosen.residual_angle_deg, ccw)
    tip_r = xy(chosen.residual_gmm * scale, residual_deg) if not residual_zero else (0.0, 0.0)
    required_xy = residual_xy = None
    if not required_zero:
        required_xy = ((0.0, 0.0), tip_c)
        draw_vector(ax, *required_xy, solid=True)
        room.line(*required_xy)
        kinds.append("required")
    residual_text = "residual"
    if not residual_zero and not same:
        if math.hypot(*tip_r) >= TO_SCALE_MIN_UNITS:
            residual_xy = ((0.0, 0.0), tip_r)
        else:
            residual_xy = (xy(0.09, residual_deg), xy(0.32, residual_deg))
            residual_text = "residual\n(enlarged)"
        draw_vector(ax, *residual_xy, solid=False)
        room.line(*residual_xy)
        kinds.append("residual")
    _reference_label(ax, room, ccw, mark)
    if required_xy is not None:
        text = "required = residual" if same else "required"
        box = label_beside(room, *required_xy, text, SMALL_PT, (0.55, 0.7, 0.4, 0.85, 0.25),
                            0.94)
        if box is not None:
            put_text(ax, room, box, text, SMALL_PT, bbox=dict(boxstyle="square,pad=0.1", fc="white",
                                                         ec="none"))
    if residual_xy is not None:
        box = label_beside(room, *residual_xy, residual_text, SMALL_PT,
                            (0.5, 0.65, 0.35, 0.8, 0.2), 0.94)
        if box is not None:
            put_text(ax, room, box, residual_text, SMALL_PT, linespacing=1.1,
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
        put_text(ax, room, box, text, SMALL_PT, weight="bold", linespacing=1.2)
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


def draw_numbers(ax, room: Room, labels: list[tuple[str, list[int], bool]], radius: list[float],
             page_deg: list[float], symbols: dict, number_pt: float, unit_in: float) -> None:
    """Position numbers: outside the rim for outer positions, inside for inner ones.

    On a large plane the numbers that must show (used, blocked) push the
    regular ones aside, and any number moved off its marker gets a leader.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    room : Room
        What is taken on the drawing; the numbers are added to it.
    labels : list of (str, list of int, bool)
        (text, positions it numbers, must show) for each number.
    radius : list of float
        Radius of each position [data units], index = number - 1.
    page_deg : list of float
        Page angle of each position [deg], index = number - 1.
    symbols : dict
        Position number -> its symbols (:func:`symbols_by_position`); the
        numbers of those positions are bold.
    number_pt : float
        Font size of the numbers [pt].
    unit_in : float
        Inches per data unit [in].
    """
    outer, inner = [], []
    for text, members, must in labels:
        r = sum(radius[k - 1] for k in members) / len(members)
        a = circular_mean_deg([page_deg[k - 1] for k in members])
        (outer if r >= 0.999 else inner).append((text, members, must, r, a))
    for text, members, _, r, a in inner:
        x, y = xy(r - 0.12, a)
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
            angle_gap_deg(outer[i][4], outer[j][4]) >= (gap_deg(i) + gap_deg(j)) / 2 * 1.2
            for j in must)]
        placed = spread_deg([outer[i][4] for i in keep], [gap_deg(i) for i in keep])
    else:
        placed = [outer[i][4] for i in keep]
    for i, a in zip(keep, placed):
        text, members, _, r, wanted = outer[i]
        bold = any(k in symbols for k in members)
        if angle_gap_deg(a, wanted) > 0.5:
            s, e = xy(r + 0.035, wanted), xy(number_r - 0.045, a)
            ax.plot([s[0], e[0]], [s[1], e[1]], color=INK, lw=0.5, zorder=2)
        x, y = xy(number_r, a)
        ax.text(x, y, text, fontsize=number_pt, ha="center", va="center", zorder=5,
                weight="bold" if bold else "normal")
        room.take(room.centred(x, y, text, number_pt, True))
