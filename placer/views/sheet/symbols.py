"""The symbols of the rotor face: parts to fit, holes, parts to remove or leave on, positions, arrows.

Everything prints in black and white: symbols differ in shape, fill, hatch and line
style, never in colour alone.
"""

from __future__ import annotations

from placer.plan import PlaneResult
from placer.views.sheet.convention import xy
from placer.views.sheet.facts import PlaneFace, PlaneFacts
from placer.views.sheet.typeset import INK


def draw_arc(ax, radius: float, start_deg: float, end_deg: float, **style) -> list:
    """An arrow along a circle from ``start_deg`` to ``end_deg`` (page angles); its points.

    Parameters
    ----------
    ax : matplotlib.axes.Axes or None
        The axes drawn into; None only to get the points.
    radius : float
        Radius of the arc [data units].
    start_deg, end_deg : float
        Page angles of its tail and its head [deg].
    **style
        Further arrow properties for matplotlib (lw, linestyle, zorder, ...).

    Returns
    -------
    list of (float, float)
        41 points along the arc [data units].
    """
    from matplotlib.patches import FancyArrowPatch
    from matplotlib.path import Path as MPath

    steps = 40
    verts = [xy(radius, start_deg + (end_deg - start_deg) * k / steps) for k in range(steps + 1)]
    if ax is not None:
        ax.add_patch(FancyArrowPatch(path=MPath(verts), arrowstyle="-|>", mutation_scale=13,
                                     color=INK, **style))
    return verts


def draw_vector(ax, start: tuple[float, float], tip: tuple[float, float], solid: bool) -> None:
    """A straight arrow from ``start`` to ``tip``: heavy and solid, or light and dashed.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    start, tip : (float, float)
        Tail and head [data units].
    solid : bool
        The required arrow (solid) or the residual (dashed).
    """
    from matplotlib.patches import FancyArrowPatch

    style = dict(arrowstyle="-|>", mutation_scale=16, lw=2.4, color=INK, zorder=4) if solid \
        else dict(arrowstyle="->", mutation_scale=14, lw=1.6, color=INK, linestyle=(0, (4, 2.5)),
                  zorder=4)
    ax.add_patch(FancyArrowPatch(start, tip, shrinkA=0, shrinkB=0, **style))


PART_VERBS = {"fit": "", "drill": "DRILL", "remove": "REMOVE", "stay": "stays:"}
"""The word before "item ×count" in a part's label on the drawing, by symbol."""


def part_label(stack: list[tuple[str, str, int]], split: bool) -> str:
    """The label of the symbols on one position; ``split`` puts each verb on its own line.

    Parameters
    ----------
    stack : list of (str, str, int)
        (kind, item, count) of each symbol (:func:`symbols_by_position`).
    split : bool
        Put each verb on a line of its own, above its item.

    Returns
    -------
    str
        One line per symbol: "DRILL D6 ×1", "M10 ×2".
    """
    lines = []
    for kind, item, count in stack:
        verb = PART_VERBS[kind]
        lines.append(f"{verb}{chr(10) if split else ' '}{item} ×{count}" if verb
                     else f"{item} ×{count}")
    return "\n".join(lines)


def symbols_by_position(plane: PlaneResult | PlaneFace,
                        facts: PlaneFacts) -> dict[int, list[tuple[str, str, int]]]:
    """Per position, (kind, item, count) of each symbol, in the order they stack inward.

    Parameters
    ----------
    plane : PlaneResult or PlaneFace
        The solved plane, or a plane's face; its chosen plan's parts.
    facts : PlaneFacts
        Its facts; the existing parts left on.

    Returns
    -------
    dict of int to list of (str, str, int)
        Position number -> symbols ("fit", "drill", "remove", "stay"), in that order.
    """
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


def draw_symbol(ax, kind: str, x: float, y: float, size: float) -> None:
    """Fit: solid disc.  Drill: open disc with centre lines.  Remove: open disc crossed
    out.  Stay: hatched disc.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    kind : {"fit", "drill", "remove", "stay"}
        The symbol.
    x, y : float
        Its centre [data units].
    size : float
        Its radius [data units].
    """
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


def position_marker(ax, x: float, y: float, kind: str, size_pt: float) -> None:
    """A position's marker: open with a centre dot by what it takes, or a crossed square.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    x, y : float
        The position [data units].
    kind : {"both", "add", "remove", "blocked"}
        What the position takes (:data:`POSITION_MARKERS`), or blocked.
    size_pt : float
        Marker size [pt].
    """
    if kind == "blocked":
        ax.plot([x], [y], marker="s", ms=size_pt * 1.15, mfc="white", mec=INK, mew=1.0,
                zorder=3)
        ax.plot([x], [y], marker="x", ms=size_pt * 0.9, mec=INK, mew=1.3, zorder=3)
        return
    grow = 1.0 if kind == "both" else 1.3
    ax.plot([x], [y], marker=POSITION_MARKERS[kind], ms=size_pt * grow, mfc="white", mec=INK,
            mew=1.0, zorder=3)
    ax.plot([x], [y], marker="o", ms=max(1.6, size_pt * 0.3), mfc=INK, mec=INK, zorder=3)
