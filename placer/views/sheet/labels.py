"""Putting text where it is free: boxes and lines already drawn, and spreading labels round a circle."""

from __future__ import annotations

import math

from placer.views.sheet.glyphs import draw_text
from placer.views.sheet.typeset import lines_in, text_width_in


def spread_deg(wanted_deg: list[float], gaps_deg: list[float]) -> list[float]:
    """Label angles near ``wanted_deg`` (page angles), neighbours at least their gap apart.

    Two neighbours must be the mean of their gaps apart.  Labels that would
    overlap are merged into runs, each run spaced at exactly those distances
    and centred on its members' wanted angles (least squares), and runs
    merge until none overlap (pool-adjacent-violators).  The circle is cut
    at the widest empty arc between wanted angles; the angles returned may
    lie outside [0, 360).

    Parameters
    ----------
    wanted_deg : list of float
        Where each label would go [deg, page angles].
    gaps_deg : list of float
        Room each label needs round the circle [deg]; scaled down together
        when they add up to more than 360°.

    Returns
    -------
    list of float
        The placed angles [deg], in the order of ``wanted_deg``.
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


Box = tuple[float, float, float, float]
"""(x0, y0, x1, y1) in data units."""


class Room:
    """Boxes and lines already on the drawing [data units], to put text where it is free.

    Parameters
    ----------
    unit_in : float
        Inches per data unit on the page [in].
    """

    def __init__(self, unit_in: float) -> None:
        self.unit_in = unit_in
        self.boxes: list[Box] = []
        self.lines: list[tuple[tuple[float, float], tuple[float, float]]] = []

    def size(self, text: str, size_pt: float, bold: bool = False,
             linespacing: float = 1.2) -> tuple[float, float]:
        """Width and height of ``text`` [data units].

        Parameters
        ----------
        text : str
            The text; lines separated by newlines.
        size_pt : float
            Font size [pt].
        bold : bool
            Bold type.
        linespacing : float
            Line height as a multiple of the font size.

        Returns
        -------
        (float, float)
            Width of the longest line and height of all lines [data units].
        """
        lines = text.split("\n")
        w_in = max(text_width_in(s, size_pt, bold) for s in lines)
        return w_in / self.unit_in, lines_in(len(lines), size_pt, linespacing) / self.unit_in

    def centred(self, x: float, y: float, text: str, size_pt: float, bold: bool = False,
                linespacing: float = 1.2) -> Box:
        """The box ``text`` takes when centred on (x, y).

        Parameters
        ----------
        x, y : float
            The centre [data units].
        text : str
            The text.
        size_pt : float
            Font size [pt].
        bold : bool
            Bold type.
        linespacing : float
            Line height as a multiple of the font size.

        Returns
        -------
        Box
            (x0, y0, x1, y1) [data units].
        """
        w, h = self.size(text, size_pt, bold, linespacing)
        return x - w / 2, y - h / 2, x + w / 2, y + h / 2

    def free(self, box: Box, pad: float = 0.02) -> bool:
        """Whether ``box``, grown by ``pad``, meets no box or line taken.

        Parameters
        ----------
        box : Box
            (x0, y0, x1, y1) [data units].
        pad : float
            Margin round it [data units].

        Returns
        -------
        bool
            True when it is free.
        """
        x0, y0, x1, y1 = box[0] - pad, box[1] - pad, box[2] + pad, box[3] + pad
        if any(x0 < b[2] and b[0] < x1 and y0 < b[3] and b[1] < y1 for b in self.boxes):
            return False
        return not any(_segment_meets_box(a, b, (x0, y0, x1, y1)) for a, b in self.lines)

    def take(self, box: Box) -> None:
        """Mark ``box`` as taken.

        Parameters
        ----------
        box : Box
            (x0, y0, x1, y1) [data units].
        """
        self.boxes.append(box)

    def line(self, a: tuple[float, float], b: tuple[float, float]) -> None:
        """Mark the segment a-b as taken.

        Parameters
        ----------
        a, b : (float, float)
            Its ends [data units].
        """
        self.lines.append((a, b))

    def clear_path(self, points: list[tuple[float, float]], pad: float = 0.03) -> bool:
        """Whether a polyline keeps ``pad`` clear of every box and line.

        Parameters
        ----------
        points : list of (float, float)
            The polyline's points [data units].
        pad : float
            Clearance [data units].

        Returns
        -------
        bool
            True when it is clear.
        """
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


def box_inside(box: Box, radius: float) -> bool:
    """Whether every corner of ``box`` lies within ``radius`` of the centre.

    Parameters
    ----------
    box : Box
        (x0, y0, x1, y1) [data units].
    radius : float
        Distance from the centre [data units].

    Returns
    -------
    bool
        True when all four corners are closer than ``radius``.
    """
    return all(math.hypot(x, y) < radius for x in (box[0], box[2]) for y in (box[1], box[3]))


def put_text(ax, room: Room, box: Box, text: str, size_pt: float, **kw) -> None:
    """Text centred in ``box``, and the box taken.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes drawn into.
    room : Room
        What is taken; ``box`` is added.
    box : Box
        Where the text goes [data units].
    text : str
        The text.
    size_pt : float
        Font size [pt].
    **kw
        Further text properties for matplotlib (weight, style, bbox, ...).
    """
    draw_text(ax, (box[0] + box[2]) / 2, (box[1] + box[3]) / 2, text, fontsize=size_pt,
              ha="center", va="center", zorder=6, **kw)
    room.take(box)


def align_for(page_deg: float) -> tuple[str, str]:
    """How a label at page angle ``page_deg`` is aligned to its anchor, outward.

    Parameters
    ----------
    page_deg : float
        The label's page angle [deg].

    Returns
    -------
    (str, str)
        Horizontal ("left", "right", "center") and vertical ("bottom", "top",
        "center") alignment.
    """
    c, s = math.cos(math.radians(page_deg)), math.sin(math.radians(page_deg))
    ha = "left" if c > 0.35 else "right" if c < -0.35 else "center"
    va = "bottom" if s > 0.35 else "top" if s < -0.35 else "center"
    return ha, va


def anchored_box(x: float, y: float, w: float, h: float, ha: str, va: str) -> Box:
    """The box of a ``w`` by ``h`` text anchored at (x, y) with alignment ``ha``, ``va``.

    Parameters
    ----------
    x, y : float
        The anchor [data units].
    w, h : float
        Width and height of the text [data units].
    ha : str
        Horizontal alignment: "left", "right" or "center".
    va : str
        Vertical alignment: "bottom", "top" or "center".

    Returns
    -------
    Box
        (x0, y0, x1, y1) [data units].
    """
    x0 = x if ha == "left" else x - w if ha == "right" else x - w / 2
    y0 = y if va == "bottom" else y - h if va == "top" else y - h / 2
    return x0, y0, x0 + w, y0 + h


def label_beside(room: Room, start: tuple[float, float], tip: tuple[float, float],
                  text: str, size_pt: float, fractions: tuple[float, ...],
                  inside_r: float) -> Box | None:
    """A free box for ``text`` beside the line start-tip (either side), or beyond its tip.

    Parameters
    ----------
    room : Room
        What is taken.
    start, tip : (float, float)
        The line's ends [data units]; they must differ.
    text : str
        The label.
    size_pt : float
        Font size [pt].
    fractions : tuple of float
        Points along the line, from ``start`` (0) to ``tip`` (1), tried in order.
    inside_r : float
        The box must lie within this distance of the centre [data units].

    Returns
    -------
    Box or None
        The first free box, or None when none is.
    """
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
    return next((b for b in candidates if box_inside(b, inside_r) and room.free(b)), None)


def plan_labels(texts: list[str], wanted: list[float], label_r: float, unit_in: float,
                size_pt: float, bold: bool) -> tuple[list[float], list[tuple[float, float]]]:
    """Spread label angles; returns the placed angles and each label's (width, height) [units].

    Parameters
    ----------
    texts : list of str
        The labels.
    wanted : list of float
        Where each would go [deg, page angles].
    label_r : float
        Radius the labels stand at [data units].
    unit_in : float
        Inches per data unit [in].
    size_pt : float
        Font size [pt].
    bold : bool
        Bold type.

    Returns
    -------
    angles : list of float
        The placed angles [deg] (:func:`spread_deg`).
    sizes : list of (float, float)
        Each label's width and height [data units].
    """
    gaps, sizes = [], []
    for a, t in zip(wanted, texts):
        lines = t.split("\n")
        h_in = lines_in(len(lines), size_pt, 1.15)
        w_in = max(text_width_in(s, size_pt, bold) for s in lines)
        sizes.append((w_in / unit_in, h_in / unit_in))
        c, s = abs(math.cos(math.radians(a))), abs(math.sin(math.radians(a)))
        gaps.append(math.degrees((c * h_in + s * w_in + 0.07) / (label_r * unit_in)))
    return spread_deg(wanted, gaps), sizes
