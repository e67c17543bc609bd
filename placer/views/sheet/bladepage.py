"""The printed blade sheet: the disc with every slot's blade, the table to tick off, the trim.

Pages, in order:

1. the disc: a header with the rotor and its tolerance, the disc as seen from the working
   side with every slot numbered and its blade's mark beside it (blades that stay, blades
   to fit and swaps marked), the key, the residual against the tolerance with a plain
   verdict and how sure the arrangement is; up to :data:`TABLE_ON_DISC_UP_TO` slots
   also the slot table with a box to tick per slot;
2. for a larger disc, the slot table on pages of its own;
3. with a trim plane, its fitting sheet, as ``placer solve`` prints a plane.

Every page ends with the cautions and the lines to sign.  Files are written beside the
target and then renamed into place, so a sheet is never left half written.
"""

from __future__ import annotations

from datetime import date
from pathlib import Path

from placer.arrange import BladeJob, BladeResult, blade_tolerance
from placer.io.outputs import replacing
from placer.views.bladewording import (
    MOVE_TEXT,
    limit_texts,
    proof_text,
    verdict_text,
)
from placer.views.sheet.bladetable import (
    draw_slot_tables,
    slot_columns,
    table_plan,
    table_size_pt,
)
from placer.views.sheet.blocks import KEY_TEXT
from placer.views.sheet.compose import cautions_top, draw_cautions, plane_page
from placer.views.sheet.convention import convention_text
from placer.views.sheet.disc import (
    DRAW_IN,
    LEVEL_UP_TO,
    ZERO_SHARE,
    DiscDrawing,
    blade_patch,
    draw_disc,
)
from placer.views.sheet.facts import fmt_gmm
from placer.views.sheet.files import PNG_DPI, require_matplotlib, sheet_paths
from placer.views.sheet.typeset import (
    GREY,
    INK,
    MARGIN_IN,
    PAGE_IN,
    Page,
    fit_title,
    join_lines,
    lines_in,
    text_width_in,
    wrap_words,
)

TABLE_ON_DISC_UP_TO = 12
"""Discs with at most this many slots have their slot table on the disc page (when it fits
the page's width); larger ones list it on pages of their own."""
SWAPS_LISTED = 3
"""Most swaps the result block lists one by one; the table's "From" column has them all."""

BLADE_KEY_TEXT = {
    "stays": "blade that stays where it is",
    "moved": "blade to fit here: new, or from another slot",
    "in_place": "blade left in its slot",
    "fitted": "blade: slot number, then its mark",
    "swap": "swap step: exchange the two blades that carry the same number",
    "residual": "residual unbalance, towards its heavy spot (not to scale)",
    "angle": KEY_TEXT["angle"],
    "rotation": KEY_TEXT["rotation"],
}
"""What each symbol of the disc means, as the key says it."""

KEY_GUTTER_IN = 0.15
"""Space between a column of the key and the symbols of the next [in]."""
LABEL_IN = 0.68
"""Width of the labels of the result block [in]."""
MIN_DRAW_IN = 3.2
"""Narrowest the drawing of the disc shrinks to, to make room for the tables [in]."""


def _header(page: Page, job: BladeJob, when: date, number: int, total: int) -> float:
    """Title, the facts of the job on one or two lines, the rule; returns the y below."""
    rotor = job.rotor
    tolerance_gmm, _, permissible_gmm = blade_tolerance(job)
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    page.rule(0.42, lw=3.0)
    page.text(left, 0.50, "B L A D E   S H E E T", 8.5, weight="bold")
    page.text(left + width, 0.50, f"sheet {number} of {total}", 8.5, weight="bold",
              ha="right")
    lines, size = fit_title(rotor.name, width)
    page.text(left, 0.70, "\n".join(lines), size, weight="bold", linespacing=1.15)
    y = 0.70 + lines_in(len(lines), size, 1.15) + 0.11
    tolerance = ("none given" if tolerance_gmm is None else f"{fmt_gmm(tolerance_gmm)} g·mm")
    facts = [f"file {Path(job.source).name}", f"date {when.isoformat()}",
             f"{job.disc.slot_count} slots"]
    for value, words in ((rotor.service_rpm, "service speed {:g} r/min"),
                         (rotor.mass_kg, "rotor mass {:g} kg"), (rotor.grade_mm_s, "grade G {:g}")):
        if value is not None:
            facts.append(words.format(value))
    if permissible_gmm is not None:
        facts.append(f"U_per {fmt_gmm(permissible_gmm)} g·mm (ISO 21940-11)")
    facts.append(f"tolerance {tolerance}")
    rows = join_lines(facts, "   ·   ", width - 0.2, 8.5)
    page.text(left, y, "\n".join(rows), 8.5, linespacing=1.3)
    y += lines_in(len(rows), 8.5) + 0.08
    page.rule(y, lw=0.8)
    return y + 0.09


def _band(page: Page, job: BladeJob, y: float) -> float:
    """A black band saying how the blades may move, with the blades' range; the y below."""
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    title = "BLADES: " + MOVE_TEXT[job.move].upper()
    weights = [b.moment_gmm for b in job.blades]
    facts = (f"{len(weights)} blades, moment weights {fmt_gmm(min(weights))} to "
             f"{fmt_gmm(max(weights))} g·mm")
    title_lines = wrap_words(title, width - 0.24, 10, True)
    one_line = len(title_lines) == 1 and \
        text_width_in(title, 10, True) + text_width_in(facts, 7.5) + 0.5 < width
    fact_lines = [] if one_line else wrap_words(facts, width - 0.24, 7.5)
    height = 0.34 if one_line else (0.10 + lines_in(len(title_lines), 10, 1.1) + 0.06
                                    + lines_in(len(fact_lines), 7.5) + 0.06)
    page.box(left, y, width, height, fill=True, fc=INK, ec=INK)
    if one_line:
        page.text(left + 0.12, y + 0.17, title, 10, weight="bold", color="white", va="center")
        page.text(left + width - 0.12, y + 0.17, facts, 7.5, color="white", va="center",
                  ha="right")
    else:
        page.text(left + 0.12, y + 0.08, "\n".join(title_lines), 10, weight="bold",
                  color="white", linespacing=1.1)
        page.text(left + 0.12, y + 0.14 + lines_in(len(title_lines), 10, 1.1),
                  "\n".join(fact_lines), 7.5, color="white", linespacing=1.3)
    return y + height


def _key_symbol(page: Page, kind: str, sx: float, cy: float) -> None:
    """The symbol of one key row, centred at (sx, cy) [in]."""
    from matplotlib.patches import Circle, FancyArrowPatch

    if kind in ("stays", "moved", "in_place", "fitted"):
        corners = [(sx - 0.13, cy - 0.03), (sx - 0.13, cy + 0.03), (sx + 0.14, cy + 0.05),
                   (sx + 0.14, cy - 0.05)]
        page.patch(lambda: blade_patch(corners, kind))
    elif kind == "swap":
        page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.2))
        page.text(sx, cy, "1", 7, weight="bold", ha="center", va="center")
    else:
        style = {"residual": dict(arrowstyle="->", lw=1.6, linestyle=(0, (4, 2.5))),
                 "angle": dict(arrowstyle="-|>", lw=1.0, linestyle="-."),
                 "rotation": dict(arrowstyle="-|>", lw=2.0)}[kind]
        page.patch(lambda: FancyArrowPatch((sx - 0.13, cy), (sx + 0.15, cy), color=INK,
                                           mutation_scale=12, shrinkA=0, shrinkB=0, **style))


def _key(page: Page, x: float, y: float, w: float, drawing: DiscDrawing,
         columns: int = 1) -> float:
    """The symbols drawn on the disc, each beside its meaning; returns the y below."""
    page.text(x, y, "KEY", 8, weight="bold")
    kinds = list(drawing.kinds)
    per = -(-len(kinds) // columns)
    ends = [y + 0.22]
    for c in range(columns):
        cx, cy = x + c * w / columns, y + 0.22
        for kind in kinds[c * per:(c + 1) * per]:
            _key_symbol(page, kind, cx + 0.14, cy + 0.06)
            end = page.paragraph(cx + 0.40, cy + 0.06 - lines_in(1, 7.5) / 2,
                                 BLADE_KEY_TEXT[kind], w / columns - 0.40 - KEY_GUTTER_IN, 7.5)
            cy = max(cy + 0.2, end + 0.04)
        ends.append(cy)
    return max(ends)


def _trim_words(result: BladeResult) -> str:
    """The trim in a few words: what goes where, and the residual it leaves."""
    plane = result.trim.planes[0]
    on_blades = result.job.trim.on_blades
    parts = [f"{p.verb} {p.item} ×{p.count} on "
             + (f"slot {p.position} ({result.arrangement.blade_in(p.position)})" if on_blades
                else f"position {p.position}") for p in plane.chosen.parts]
    what = "; ".join(parts) if parts else "nothing to fit"
    return f"{what}; residual {fmt_gmm(plane.chosen.residual_gmm)} g·mm"


def _result(page: Page, x: float, y: float, w: float, result: BladeResult,
            trim_sheet: int | None) -> float:
    """Residual, couple, tolerance, proof and trim, then the verdict in a box; the y below."""
    a = result.arrangement
    page.text(x, y, "RESULT", 8, weight="bold")
    y += 0.22
    zero = a.residual_gmm <= ZERO_SHARE * result.total_moment_gmm
    lines = [("Residual", f"{fmt_gmm(a.residual_gmm)} g·mm at {a.residual_angle_deg:.1f}°"
              + (" (heavy spot)" if not zero else ", too small to draw"))]
    if a.couple_gmm2 is not None:
        limit = result.job.disc.limits.couple_gmm2
        lines.append(("Couple", f"{fmt_gmm(a.couple_gmm2)} g·mm²" + (
            f", limit {fmt_gmm(limit)} g·mm²" if limit is not None else ", no limit given")))
    lines.append(("Tolerance", "none given" if result.tolerance_gmm is None else
                  f"{fmt_gmm(result.tolerance_gmm)} g·mm, {result.tolerance_source}"))
    if result.trim is not None:
        lines.append(("Blades", verdict_text(result.within_tolerance).lower()
                      + " before the trim"))
    lines.append(("Proof", proof_text(result)))
    steps = result.swap_steps()
    if steps:
        listed = "; ".join(f"{k}: slots {a} ↔ {b} ({in_a} ↔ {in_b})"
                           for k, (a, b, in_a, in_b) in enumerate(steps[:SWAPS_LISTED], 1))
        more = len(steps) - SWAPS_LISTED
        lines.append(("Swaps", listed + (f"; {more} more: see the table, column From"
                                         if more > 0 else "")))
    if result.trim is not None:
        lines.append(("Trim", f"sheet {trim_sheet}: {_trim_words(result)}"))
    for label, value in lines:
        page.text(x, y, label, 7.5, weight="bold")
        y = page.paragraph(x + LABEL_IN, y, value, w - LABEL_IN, 7.5) + 0.02
    y += 0.06
    final = result.final_within
    words = verdict_text(final)
    caption = "" if final is None else (
        "with the trim fitted" if result.trim is not None and
        result.trim.planes[0].chosen.parts else "the blades as listed")
    height = 0.56 if caption else 0.42
    ink = INK
    if final is None:
        page.box(x, y, w, height, lw=1.2, linestyle=(0, (3, 2)))
    elif final:
        page.box(x, y, w, height, lw=2.6)
    else:
        page.box(x, y, w, height, fill=True, fc=INK, ec=INK)
        ink = "white"
    page.text(x + w / 2, y + (0.19 if caption else 0.21), words,
              10 if final is None else 11.5, weight="bold", ha="center", va="center", color=ink)
    if caption:
        page.text(x + w / 2, y + 0.42, caption, 7.5, ha="center", va="center", color=ink)
    return y + height + 0.06


def _table_top(job: BladeJob) -> float:
    """Where the slot table starts on a page of its own [in from the top]."""
    dry = Page(None)
    y = _band(dry, job, _header(dry, job, date(2000, 1, 1), 1, 1)) + 0.16
    return y + 0.2 + lines_in(2, 7) + 0.04 + 0.07


def table_pages_of(job: BladeJob) -> int:
    """Pages of the slot table on their own (0 when it goes on the disc page).

    Parameters
    ----------
    job : BladeJob
        The job.

    Returns
    -------
    int
        0 up to :data:`TABLE_ON_DISC_UP_TO` slots when the table fits the page's width,
        else as many as the rows need.
    """
    n = job.disc.slot_count
    if n <= TABLE_ON_DISC_UP_TO and table_size_pt(slot_columns(job), PAGE_IN[0] - 2 * MARGIN_IN):
        return 0
    count, rows, _ = table_plan(job, PAGE_IN[0] - 2 * MARGIN_IN,
                                 cautions_top(False) - 0.12 - _table_top(job))
    return -(-n // (count * rows))


def _lower(page: Page, y: float, result: BladeResult, tables: bool) -> float:
    """The convention and the limits, the slot table when it goes here, the notes; the y
    below."""
    width = PAGE_IN[0] - 2 * MARGIN_IN
    rotor = result.job.rotor
    text = convention_text(rotor.angle_sense, rotor.rotation).replace(
        "position number", "slot number").replace("job file", "blade file")
    y = page.paragraph(MARGIN_IN, y, text, width, 7, style="italic") + 0.02
    limits = limit_texts(result.job.disc)
    if limits:
        y = page.paragraph(MARGIN_IN, y, "Limits kept: " + "; ".join(limits) + ".", width, 7.5)
    if tables:
        page.rule(y + 0.02, lw=0.4, color=GREY)
        y = draw_slot_tables(page, MARGIN_IN, y + 0.08, width, result, 0,
                    table_plan(result.job, width, None))
    for note in result.notes:
        y = page.paragraph(MARGIN_IN, y, f"Note: {note}", width, 7.5, weight="bold")
    return y


def _new_page(dpi: float):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=PAGE_IN, dpi=dpi)
    FigureCanvasAgg(fig)
    return fig, Page(fig)


def disc_page(result: BladeResult, when: date, number: int, total: int,
              dpi: float = PNG_DPI):
    """The disc page as a matplotlib Figure; returns (figure, drawing).

    Parameters
    ----------
    result : BladeResult
        The arranged blades.
    when : date
        The date printed.
    number : int
        This page's number (from 1).
    total : int
        Pages in all.
    dpi : float
        Resolution of the figure [dots per inch].

    Returns
    -------
    figure : matplotlib.figure.Figure
        The page.
    drawing : DiscDrawing
        Where things were drawn on the disc.
    """
    fig, page = _new_page(dpi)
    y = _header(page, result.job, when, number, total)
    top = _band(page, result.job, y) + 0.12
    small = result.job.disc.slot_count <= LEVEL_UP_TO
    here = table_pages_of(result.job) == 0
    trim_sheet = total if result.trim is not None else None
    ax = fig.add_axes((0, 0, 1, 1))
    full = PAGE_IN[0] - 2 * MARGIN_IN
    frame = DRAW_IN if small else full
    width = frame
    drawing = draw_disc(ax, result, width)

    def height(w: float) -> float:
        (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
        return w * (y1 - y0) / (x1 - x0)

    room = cautions_top(False) - 0.12 - _lower(Page(None), 0.0, result, here) - 0.06 - top
    side_x = MARGIN_IN + DRAW_IN + 0.25
    side_w = PAGE_IN[0] - MARGIN_IN - side_x
    half = full / 2 - 0.1
    key_beside = False
    if small:
        # The key goes under the result when both fit beside the drawing, else under the
        # drawing across the page.
        result_h = _result(Page(None), side_x, 0.0, side_w, result, trim_sheet)
        key_beside = result_h + 0.22 + _key(Page(None), side_x, 0.0, side_w, drawing) <= room
        fit_h = room if key_beside else \
            room - _key(Page(None), MARGIN_IN, 0.0, full, drawing, columns=3) - 0.06
        side_end = _result(page, side_x, top + 0.1, side_w, result, trim_sheet)
        if key_beside:
            side_end = _key(page, side_x, side_end + 0.12, side_w, drawing)
    else:
        under = max(_key(Page(None), 0.0, 0.0, half, drawing),
                    _result(Page(None), 0.0, 0.0, half, result, trim_sheet))
        fit_h = room - under - 0.1
        side_end = top
    draw_h = height(width)
    for _ in range(4):          # labels keep their size, so the height shrinks less than the width
        if draw_h <= fit_h + 1e-6 or width <= MIN_DRAW_IN:
            break
        width = max(MIN_DRAW_IN, width * fit_h / draw_h)
        ax.cla()
        drawing = draw_disc(ax, result, width)
        draw_h = height(width)
    left = MARGIN_IN + (frame - width) / 2
    ax.set_position((left / PAGE_IN[0], 1 - (top + draw_h) / PAGE_IN[1],
                     width / PAGE_IN[0], draw_h / PAGE_IN[1]))
    below = top + draw_h
    if small and not key_beside:
        below = _key(page, MARGIN_IN, max(below, side_end) + 0.06, full, drawing, columns=3)
        side_end = below
    elif not small:
        below = max(_key(page, MARGIN_IN, below + 0.1, half, drawing),
                    _result(page, MARGIN_IN + full / 2 + 0.1, below + 0.1, half, result,
                            trim_sheet))
    end = _lower(page, max(below, side_end) + 0.06, result, here)
    draw_cautions(page, max(end + 0.08, cautions_top(False)), when, number, total,
                  Path(result.job.source).name, False)
    return fig, drawing


def table_page(result: BladeResult, when: date, number: int, total: int, first: int,
               dpi: float = PNG_DPI):
    """A page of the slot table, from slot ``first + 1``, for a disc too large to list it
    beside the drawing.

    Parameters
    ----------
    result : BladeResult
        The arranged blades.
    when : date
        The date printed.
    number : int
        This page's number (from 1).
    total : int
        Pages in all.
    first : int
        Index of the first slot on this page (slot ``first + 1``).
    dpi : float
        Resolution of the figure [dots per inch].

    Returns
    -------
    matplotlib.figure.Figure
        The page.
    """
    fig, page = _new_page(dpi)
    job = result.job
    y = _band(page, job, _header(page, job, when, number, total)) + 0.16
    width = PAGE_IN[0] - 2 * MARGIN_IN
    plan = table_plan(job, width, cautions_top(False) - 0.12 - _table_top(job))
    end = draw_slot_tables(page, MARGIN_IN, y, width, result, first, plan)
    draw_cautions(page, max(end + 0.08, cautions_top(False)), when, number, total,
                  Path(job.source).name, False)
    return fig


def blade_page_count(job: BladeJob) -> int:
    """Pages the sheet of ``job`` has (known before the blades are arranged).

    Parameters
    ----------
    job : BladeJob
        The job.

    Returns
    -------
    int
        The disc page, the pages of the slot table for a disc of more than
        :data:`TABLE_ON_DISC_UP_TO` slots, and the trim page when there is one.
    """
    return 1 + table_pages_of(job) + (job.trim is not None)


def blade_pages(result: BladeResult, when: date | None = None, dpi: float = PNG_DPI) -> list:
    """Every page of the blade sheet, in order, as matplotlib Figures.

    Parameters
    ----------
    result : BladeResult
        The arranged blades (and the trim).
    when : date or None
        The date printed; None for today.
    dpi : float
        Resolution of the figures [dots per inch].

    Returns
    -------
    list of matplotlib.figure.Figure
        The disc page, the table pages (large discs) and the trim page.
    """
    when = date.today() if when is None else when
    job = result.job
    total = blade_page_count(job)
    figures = [disc_page(result, when, 1, total, dpi)[0]]
    pages = table_pages_of(job)
    if pages:
        width = PAGE_IN[0] - 2 * MARGIN_IN
        count, per, _ = table_plan(job, width, cautions_top(False) - 0.12 - _table_top(job))
        for k in range(pages):
            figures.append(table_page(result, when, 2 + k, total, k * count * per, dpi))
    if result.trim is not None:
        title = f"{job.rotor.name}: trim after the blades"
        figures.append(plane_page(result.trim, 1, title=title, when=when, dpi=dpi,
                                  sheet=(total, total))[0])
    return figures


def write_blade_sheet(result: BladeResult, path: Path, *, when: date | None = None,
                      force: bool = False) -> list[Path]:
    """Write the blade sheet; returns the files written.

    Parameters
    ----------
    result : BladeResult
        The arranged blades (and the trim).
    path : Path
        ``.pdf`` (one file, every page), ``.png`` or ``.svg`` (a file per page,
        ``NAME-1.png``... when there are several).
    when : date, optional
        Date printed (default: today).
    force : bool
        Replace files that exist.

    Returns
    -------
    list of Path
        One per page (the same PDF for every page).

    Raises
    ------
    InputError
        matplotlib missing, unknown suffix, missing folder, or a file that
        exists without ``force``.
    """
    require_matplotlib()
    total = blade_page_count(result.job)
    paths = sheet_paths(Path(path), total, force=force)
    figures = blade_pages(result, when)
    if paths[0].suffix.lower() == ".pdf":
        from matplotlib.backends.backend_pdf import PdfPages

        def save(stream) -> None:
            with PdfPages(stream, metadata={"Title": f"Blade sheet: {result.job.rotor.name}",
                                            "Creator": "placer"}) as pdf:
                for fig in figures:
                    pdf.savefig(fig)

        with replacing(paths[0], "sheet", force=force, what="sheet") as stream:
            save(stream)
        return [paths[0]] * total
    for fig, target in zip(figures, paths):
        with replacing(target, "sheet", force=force, what="sheet") as stream:
            fig.savefig(stream, format=target.suffix.lower()[1:], dpi=PNG_DPI)
    return paths
