"""The visit report's pages: the blocks in the order a visit is read, flowed onto A4 pages.

First the visit and the verdict on its data, then the coefficients, the
correction and the predicted vibration against the limit; the readings of
every run on a polar plot per sensor (or, without a phase reference, the
four-run construction); a page per plane with the plan drawn on the rotor
face as on the fitting sheet; the residual checks; what is on the rotor when
the technician leaves; cautions and sign-off.  Each block measures itself
on a dry run first, so that none is cut by a page's end.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import date
from typing import Any

from placer.views.report.blocks import (
    checks_block,
    coefficients_block,
    correction_block,
    leaving_block,
    notes_block,
    prediction_block,
)
from placer.views.report.figures import (
    construction_block,
    plane_block,
    readings_blocks,
    residual_block,
)
from placer.views.report.layout import (
    FOOTER_IN,
    facts_row,
    footer,
    page_top,
    safety_and_signoff,
    safety_height,
)
from placer.views.sheet.files import PNG_DPI
from placer.views.sheet.typeset import PAGE_IN, Page
from placer.views.wording import drills
from placer.visitreport import VisitReport

Block = Callable[[Page, float, "Drawn"], float]
"""A block draws itself at a height [in] and returns the height below it [in]."""

NEW_PAGE = None
"""In a list of blocks: start a new page here."""

GAP_IN = 0.14
"""Space between two blocks [in]."""

BOTTOM_IN = PAGE_IN[1] - FOOTER_IN - 0.12
"""Lowest a block may reach [in from the top]."""


@dataclass
class Drawn:
    """What a page drew, for the tests and the caller: polar plots and rotor faces.

    Parameters
    ----------
    polars : list of (str, PolarDrawing)
        What each polar plot is of ("readings at drive end horizontal"), and its drawing.
    faces : list of (int, PlaneDrawing)
        Each rotor face drawn, by plane index.
    """

    polars: list[tuple[str, Any]] = field(default_factory=list)
    faces: list[tuple[int, Any]] = field(default_factory=list)


@dataclass(frozen=True)
class ReportPage:
    """One page of the report: its figure and what was drawn on it.

    Parameters
    ----------
    figure : matplotlib.figure.Figure
        The page.
    drawn : Drawn
        Its polar plots and rotor faces.
    """

    figure: Any
    drawn: Drawn


def _title_block(report: VisitReport) -> Block:
    record = report.record

    def draw(page: Page, y: float, drawn: Drawn) -> float:
        phase = ("none: amplitudes only" if report.amplitude_only
                 else f"{record.phase_sense}, as angles counted {record.angle_sense}")
        facts = [("MACHINE", record.machine_id), ("VISIT", report.when),
                 ("ROTOR", report.rotor_name),
                 ("SPEED", "-" if record.service_rpm is None else f"{record.service_rpm:g} r/min"),
                 ("READINGS", f"{record.unit} {record.measure}"), ("PHASE", phase),
                 ("SESSION FILE", record.session_file)]
        return facts_row(page, y, facts)

    return draw


def report_blocks(report: VisitReport) -> list[Block | None]:
    """The report's blocks in order, with the page breaks.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    list of Block or None
        None where a new page starts.
    """
    blocks: list[Block | None] = [_title_block(report), checks_block(report),
                                  coefficients_block(report), correction_block(report),
                                  prediction_block(report), notes_block(report), NEW_PAGE]
    if report.four_run is not None:
        blocks.append(construction_block(report))
    else:
        blocks += readings_blocks(report)
    for index in range(len(report.planes)):
        blocks += [NEW_PAGE, plane_block(report, index)]
    if report.residual_checks:
        blocks.append(NEW_PAGE)
        blocks += [residual_block(report, k) for k in range(len(report.residual_checks))]
    blocks += [leaving_block(report), _safety_block(report)]
    return blocks


def _safety_block(report: VisitReport) -> Block:
    drilling = drills(p for plane in report.planes for p in plane.parts)
    trials = any(r.kind == "trial" for r in report.record.runs)

    def draw(page: Page, y: float, drawn: Drawn) -> float:
        if page.ax is None:
            return y + safety_height(drilling, trials)
        return safety_and_signoff(page, y, drilling, trials)

    return draw


def paginate(blocks: list[Block | None], first_top: float, top: float) -> list[list[Block]]:
    """Blocks onto pages: each on the current page if it fits, else on the next.

    Parameters
    ----------
    blocks : list of Block or None
        The blocks; None starts a new page.
    first_top : float
        Where the first page's first block starts [in from the top].
    top : float
        Where the other pages' first block starts [in].

    Returns
    -------
    list of list of Block
        The blocks of each page.
    """
    pages: list[list[Block]] = [[]]
    y = first_top
    for block in blocks:
        if block is NEW_PAGE:
            if pages[-1]:
                pages.append([])
                y = top
            continue
        height = block(Page(None), 0.0, Drawn())
        if pages[-1] and y + height > BOTTOM_IN:
            pages.append([])
            y = top
        pages[-1].append(block)
        y += height + GAP_IN
    return [p for p in pages if p]


def report_pages(report: VisitReport, when: date | None = None,
                 dpi: float = PNG_DPI) -> list[ReportPage]:
    """The visit report as matplotlib figures, one per A4 page.

    Parameters
    ----------
    report : VisitReport
        The visit (:func:`placer.visitreport.visit_report`).
    when : date or None
        The date printed in the footer; None for today.
    dpi : float
        Resolution of the figures [dots per inch].

    Returns
    -------
    list of ReportPage
        The pages, with what each drew.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    when = date.today() if when is None else when
    title = report.record.machine_name
    first_top = page_top(Page(None), 1, 1, title)
    top = page_top(Page(None), 2, 2, None)
    plan = paginate(report_blocks(report), first_top, top)
    pages = []
    label = (f"placer · {report.record.machine_id} · visit of {report.when} · printed "
             f"{when.isoformat()}")
    for index, blocks in enumerate(plan, start=1):
        fig = Figure(figsize=PAGE_IN, dpi=dpi)
        FigureCanvasAgg(fig)
        page = Page(fig)
        drawn = Drawn()
        y = page_top(page, index, len(plan), title if index == 1 else None)
        for block in blocks:
            y = block(page, y, drawn) + GAP_IN
        footer(page, index, len(plan), label)
        pages.append(ReportPage(fig, drawn))
    return pages
