"""One page per correction plane, and the file they are written to.

A header with the rotor and its tolerances, the rotor face with every position marked and
the parts drawn on, the work in the order to do it (parts to remove, holes to drill, parts
to fit), the residual against the tolerance, the trade-off between parts and residual, and
the cautions.  The key lists only the symbols drawn.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import date
from pathlib import Path

from placer.io.outputs import replacing
from placer.plan import JobResult, PlaneResult
from placer.views.sheet.blocks import (
    KEY_ROW_IN,
    draw_header,
    draw_key,
    plane_band,
    result_box,
    trade_off_table,
    work_tables,
)
from placer.views.sheet.convention import convention_text
from placer.views.sheet.face import DRAW_IN, draw_plane
from placer.views.sheet.facts import PlaneFacts, SheetPage, basis_sentence, plane_facts
from placer.views.sheet.files import PNG_DPI, require_matplotlib, sheet_paths
from placer.views.sheet.typeset import (
    GREY,
    INK,
    MARGIN_IN,
    PAGE_IN,
    Page,
    lines_in,
    text_width_in,
    wrap_words,
)
from placer.views.wording import (
    AS_LEFT_LINES,
    at_radius,
    cautions_for,
    drills,
    plane_radius_mm,
    units_of,
)

CAUTION_PT = 7.5


FOOTER_IN = 0.45
"""Distance of the footer rule from the bottom of the page [in]."""


def _wrapped(cautions: Sequence[str]) -> list[list[str]]:
    return [wrap_words(c, PAGE_IN[0] - 2 * MARGIN_IN - 0.7, CAUTION_PT) for c in cautions]


def safety_box_height(cautions: Sequence[str]) -> float:
    """Height of the safety box that holds ``cautions`` [in].

    Parameters
    ----------
    cautions : sequence of str
        The cautions, one paragraph each.

    Returns
    -------
    float
        The height [in].
    """
    return sum(lines_in(len(w), CAUTION_PT) + 0.04 for w in _wrapped(cautions)) + 0.30


def safety_box(page: Page, top: float, cautions: Sequence[str]) -> float:
    """The cautions across the page in a heavy box with a black "!" band; returns its height.

    Parameters
    ----------
    page : Page
        The page.
    top : float
        Top of the box [in from the top of the page].
    cautions : sequence of str
        The cautions, one paragraph each.

    Returns
    -------
    float
        The box's height [in].
    """
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    box_h = safety_box_height(cautions)
    page.box(left, top, width, box_h, lw=2.0)
    page.box(left, top, 0.36, box_h, fill=True, fc=INK, ec=INK)
    page.text(left + 0.18, top + box_h / 2, "!", 18, weight="bold", color="white",
              ha="center", va="center")
    page.text(left + 0.48, top + 0.07, "SAFETY", 8, weight="bold")
    cy = top + 0.23
    for lines in _wrapped(cautions):
        page.text(left + 0.48, cy, "\n".join(lines), CAUTION_PT, linespacing=1.3)
        cy += lines_in(len(lines), CAUTION_PT) + 0.04
    return box_h


def _caution_height(drilling: bool) -> float:
    return safety_box_height(cautions_for(drilling=drilling))


AS_LEFT_IN = 0.34
"""Height of the "as left" line above the sign-off [in]."""


MIN_DRAW_IN = 2.8
"""Narrowest the rotor face is drawn when the tables need the room [in]."""


def cautions_top(drilling: bool) -> float:
    """Top of the safety box [in from the top of the page]; the box sits above the "as left"
    lines and the sign-off.

    Parameters
    ----------
    drilling : bool
        The plan drills a hole (the drilling caution makes the box taller).

    Returns
    -------
    float
        The top of the box when the page has room for it [in].
    """
    return PAGE_IN[1] - FOOTER_IN - 0.55 - 0.25 - AS_LEFT_IN - _caution_height(drilling)


def _as_left(page: Page, y: float, plane: PlaneResult, result: JobResult) -> None:
    """The lines the technician fills in after the check run: the residual as left."""
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    units = units_of(result.job)
    page.text(left, y, "AS LEFT", 8, weight="bold")
    tolerance = ("" if plane.tolerance_gmm is None else
                 f"(tolerance {at_radius(plane.tolerance_gmm, plane.plane.geometry, units)})")
    label = f"{AS_LEFT_LINES[0]}:"
    page.text(left + 0.7, y, label, 7.5, va="top")
    x = left + 0.7 + text_width_in(label, 7.5) + 0.08
    radius = units.length_text(plane_radius_mm(plane.plane.geometry))
    for blank, words in ((0.7, f"{units.mass_unit} at r {radius}, at"), (0.5, "°")):
        page.rule(y + 0.14, x, x + blank, lw=0.6)
        page.text(x + blank + 0.04, y, words, 7.5)
        x += blank + 0.04 + text_width_in(words, 7.5) + 0.1
    page.text(x, y, tolerance.strip(), 7, color=GREY)


def draw_cautions(page: Page, top: float, when: date, index: int, total: int,
                  job_name: str, drilling: bool, plane: PlaneResult | None = None,
                  result: JobResult | None = None) -> None:
    """The safety box (the shared cautions), the "as left" lines, the sign-off and the footer.

    Parameters
    ----------
    page : Page
        The page.
    top : float
        Top of the safety box [in from the top of the page].
    when : date
        The date in the footer.
    index : int
        Number of this sheet (from 1).
    total : int
        Sheets in all.
    job_name : str
        The job file's name, for the footer.
    drilling : bool
        The plan drills a hole (adds the drilling caution).
    plane : PlaneResult or None
        The page's plane, for the "as left" lines (None: none drawn).
    result : JobResult or None
        The solved job (its units).
    """
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    bottom = PAGE_IN[1] - FOOTER_IN
    box_h = _caution_height(drilling)
    sign_y = max(bottom - 0.55, top + box_h + 0.25 + AS_LEFT_IN)
    if plane is not None and result is not None:
        _as_left(page, sign_y - AS_LEFT_IN + 0.12, plane, result)
    safety_box(page, top, cautions_for(drilling=drilling))
    signed = plane is None or plane.within_tolerance is not False
    for k, label in enumerate(("Fitted by", "Date", "Test run checked by") if signed else ()):
        sx = left + k * width / 3
        page.text(sx, sign_y + 0.2, label, 7.5, va="bottom")
        page.rule(sign_y + 0.2, sx + text_width_in(label, 7.5) + 0.1, sx + width / 3 - 0.15, lw=0.6)
    page.rule(bottom, lw=0.6)
    page.text(left, bottom + 0.05, f"placer · {job_name} · {when.isoformat()}", 6.5, color=GREY)
    page.text(left + width, bottom + 0.05, f"sheet {index} of {total}", 6.5, color=GREY,
              ha="right")


def _lower(page: Page, y: float, result: JobResult, plane: PlaneResult,
           facts: PlaneFacts) -> float:
    """Convention, the work and the trade-off, notes; returns the y below them."""
    width = PAGE_IN[0] - 2 * MARGIN_IN
    job = result.job
    basis = basis_sentence(plane, facts, units_of(job))
    if basis:
        y = page.paragraph(MARGIN_IN, y, basis, width, 7.5, weight="bold") + 0.02
    rotor = job.rotor
    back = plane.plane.worked_from == "back"
    named = bool(rotor.front_name or rotor.back_name or any(
        p.worked_from == "back" for p in job.planes))
    seen_from = rotor.end_name(plane.plane.worked_from) if named else ""
    other = rotor.end_name("front" if back else "back") if named else ""
    text = convention_text(rotor.angle_sense, rotor.rotation, back, seen_from, other,
                           rotor.reference_mark)
    y = page.paragraph(MARGIN_IN, y, text, width, 7, style="italic",
                       weight="bold" if back else "normal") + 0.1
    page.rule(y - 0.04, lw=0.4, color=GREY)
    half = width / 2 - 0.1
    y_left = work_tables(page, MARGIN_IN, y + 0.04, half, plane, facts, job)
    y_right = trade_off_table(page, MARGIN_IN + width / 2 + 0.1, y + 0.04, half, plane,
                              facts, job)
    y = max(y_left, y_right)
    notes = list(plane.notes) + list(result.notes)
    if not plane.optimal:
        notes.append("Not every plan in the trade-off was proven optimal with the effort given.")
    for note in notes:
        y = page.paragraph(MARGIN_IN, y, f"Note: {note}", width, 7.5, weight="bold")
    return y


def _job_date(result: JobResult, when: date | None) -> date:
    """The date printed: the one asked for, else the job's ([job] date), else today."""
    if when is not None:
        return when
    if result.job.paperwork.date:
        return date.fromisoformat(result.job.paperwork.date)
    return date.today()


def plane_page(result: JobResult, index: int, *, title: str | None = None,
               when: date | None = None, dpi: float = PNG_DPI,
               sheet: tuple[int, int] | None = None):
    """One page of the sheet as a matplotlib Figure; returns (figure, drawing).

    ``index`` counts planes from 1.  The figure is at ``dpi`` (PNG_DPI by
    default), so that ``drawing.ax.transData`` gives the pixels of a PNG
    written from it at that resolution.  The drawing shrinks when the tables
    below it would otherwise run into the safety box.

    Parameters
    ----------
    result : JobResult
        The solved job.
    index : int
        The plane (from 1).
    title : str or None
        Heading of the page; None for the rotor's name.
    when : date or None
        Date printed; None for today.
    dpi : float
        Resolution of the figure [dots per inch].
    sheet : (int, int) or None
        The page's number and the pages in all, for the footer, when it is part
        of a longer document; None for plane ``index`` of the job's planes.

    Returns
    -------
    figure : matplotlib.figure.Figure
        The page.
    drawing : PlaneDrawing
        Where things were drawn on the rotor face.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    when = _job_date(result, when)
    plane = result.planes[index - 1]
    facts = plane_facts(plane)
    drilling = drills(plane.chosen.parts)
    fig = Figure(figsize=PAGE_IN, dpi=dpi)
    FigureCanvasAgg(fig)
    page = Page(fig)
    y = draw_header(page, result, index, title or result.job.rotor.name, when)
    top = plane_band(page, plane, index, y, result) + 0.12
    side_x = MARGIN_IN + DRAW_IN + 0.25
    side_w = PAGE_IN[0] - MARGIN_IN - side_x
    ax = fig.add_axes((0, 0, 1, 1))
    sense, rotation = result.job.rotor.angle_sense, result.job.rotor.rotation
    mark = result.job.rotor.reference_mark
    drawing = draw_plane(ax, plane, sense, DRAW_IN, rotation, mark)
    room = cautions_top(drilling) - 0.12 - _lower(Page(None), 0.0, result, plane, facts) \
        - 0.06 - top

    def side(on: Page, row_in: float) -> float:
        key_end = draw_key(on, side_x, top + 0.1, side_w, drawing, row_in)
        return result_box(on, side_x, key_end + 0.12, side_w, plane, facts, result.job)

    row_in = next((r for r in (KEY_ROW_IN, 0.19, 0.17, 0.16)
                   if side(Page(None), r) - top <= room), None)
    # When the key and the result do not fit beside the drawing, the key goes under the
    # drawing in two columns and the drawing shrinks to make room for it.
    key_below = row_in is None
    if key_below:
        row_in = 0.17
        key_h = draw_key(Page(None), MARGIN_IN, 0.0, DRAW_IN, drawing, row_in, columns=2)
        side_end = result_box(page, side_x, top + 0.1, side_w, plane, facts, result.job)
    else:
        key_h = 0.0
        side_end = side(page, row_in)
    width = DRAW_IN

    def height(w: float) -> float:
        (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
        return w * (y1 - y0) / (x1 - x0)

    draw_h = height(width)
    fit_h = room - key_h if key_below else max(room, side_end - top)
    if draw_h > fit_h + 1e-6:
        width = max(MIN_DRAW_IN, width * fit_h / draw_h)
        ax.cla()
        drawing = draw_plane(ax, plane, sense, width, rotation, mark)
        draw_h = height(width)
    left = MARGIN_IN + (DRAW_IN - width) / 2
    ax.set_position((left / PAGE_IN[0], 1 - (top + draw_h) / PAGE_IN[1],
                     width / PAGE_IN[0], draw_h / PAGE_IN[1]))
    below = top + draw_h
    if key_below:
        below = draw_key(page, MARGIN_IN, below + 0.04, DRAW_IN, drawing, row_in, columns=2)
    end = _lower(page, max(below, side_end) + 0.06, result, plane, facts)
    number, total = sheet or (index, len(result.planes))
    draw_cautions(page, max(end + 0.08, cautions_top(drilling)), when, number, total,
                  Path(result.job.source).name, drilling, plane, result)
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

    Returns
    -------
    list of SheetPage
        One per plane, with the file it is in.

    Raises
    ------
    InputError
        matplotlib missing, unknown suffix, missing folder, or an existing
        file without ``force``.
    """
    require_matplotlib()
    paths = sheet_paths(Path(path), len(result.planes), force=force)
    when = _job_date(result, when)
    pages = [plane_page(result, i, title=title, when=when)
             for i in range(1, len(result.planes) + 1)]
    written = []
    if paths[0].suffix.lower() == ".pdf":
        from matplotlib.backends.backend_pdf import PdfPages

        with replacing(paths[0], "sheet", force=force, what="sheet") as stream, PdfPages(
                stream, metadata={"Title": f"Fitting sheet: {title or result.job.rotor.name}",
                                  "Creator": "placer"}) as pdf:
            for fig, _ in pages:
                pdf.savefig(fig)
        written = [SheetPage(paths[0], i, d) for i, (_, d) in enumerate(pages, start=1)]
    else:
        for i, ((fig, drawing), target) in enumerate(zip(pages, paths), start=1):
            with replacing(target, "sheet", force=force, what="sheet") as stream:
                fig.savefig(stream, format=target.suffix.lower()[1:], dpi=PNG_DPI)
            written.append(SheetPage(target, i, drawing))
    return written
