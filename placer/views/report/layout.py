"""The report's page furniture: heading, section titles, facts in columns, footer, sign-off.

Built on the fitting sheet's page setting (:mod:`placer.views.sheet.typeset`):
inches from the top-left corner of an A4 page, text measured before it is
placed.
"""

from __future__ import annotations

from collections.abc import Sequence

from placer.views.sheet.compose import safety_box, safety_box_height
from placer.views.sheet.typeset import (
    GREY,
    INK,
    MARGIN_IN,
    PAGE_IN,
    Page,
    fit_title,
    lines_in,
    text_width_in,
    wrap_chars,
    wrap_words,
)
from placer.views.wording import cautions_for

HEADING = "V I S I T   R E P O R T"
"""The words across the top of every page."""

WIDTH_IN = PAGE_IN[0] - 2 * MARGIN_IN
"""Width between the margins [in]."""

FOOTER_IN = 0.45
"""Distance of the footer rule from the bottom of the page [in]."""

BODY_PT = 7.5
"""Size of running text [pt]."""

RASTER_SLACK = 0.95
"""Share of the width a paragraph is wrapped to (room for hinting on PNG pages)."""


def page_top(page: Page, index: int, total: int, title: str | None) -> float:
    """The rule and heading across the top, the page number, and a title; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    index : int
        This page's number (from 1).
    total : int
        Pages in all.
    title : str or None
        The page's title (the machine's name on the first page); None for none.

    Returns
    -------
    float
        The y below [in].
    """
    left, right = MARGIN_IN, PAGE_IN[0] - MARGIN_IN
    page.rule(0.42, lw=3.0)
    page.text(left, 0.50, HEADING, 8.5, weight="bold")
    page.text(right, 0.50, f"page {index} of {total}", 8.5, weight="bold", ha="right")
    y = 0.72
    if title:
        lines, size = fit_title(title, WIDTH_IN)
        page.text(left, y, "\n".join(lines), size, weight="bold", linespacing=1.15)
        y += lines_in(len(lines), size, 1.15) + 0.08
    return y


def section(page: Page, y: float, text: str, band: bool = False) -> float:
    """A section title, in capitals; as a black band when ``band``; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    y : float
        Top [in].
    text : str
        The title.
    band : bool
        Set it white on a black band (a plane's title).

    Returns
    -------
    float
        The y below [in].
    """
    if band:
        return black_band(page, y, text.upper(), 10.5) + 0.04
    page.text(MARGIN_IN, y, text.upper(), 8.5, weight="bold")
    page.rule(y + 0.19, lw=0.6)
    return y + 0.26


def black_band(page: Page, y: float, text: str, size: float = 9.0) -> float:
    """White words on a black band across the page; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    y : float
        Top [in].
    text : str
        The words.
    size : float
        Font size [pt].

    Returns
    -------
    float
        The y below [in].
    """
    lines = wrap_words(text, WIDTH_IN - 0.24, size, True)
    height = 0.12 + lines_in(len(lines), size, 1.1)
    page.box(MARGIN_IN, y, WIDTH_IN, height, fill=True, fc=INK, ec=INK)
    page.text(MARGIN_IN + 0.12, y + 0.06, "\n".join(lines), size, weight="bold",
              color="white", linespacing=1.1)
    return y + height + 0.06


def facts_row(page: Page, y: float, facts: Sequence[tuple[str, str]]) -> float:
    """Labelled facts in columns as wide as they need, wrapping to new rows; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    y : float
        Top [in].
    facts : sequence of (str, str)
        (label, value) pairs.

    Returns
    -------
    float
        The y below [in].
    """
    left, right = MARGIN_IN, PAGE_IN[0] - MARGIN_IN
    x, gap, row_h = left, 0.26, 0.0
    for label, value in facts:
        value_lines = [value] if text_width_in(value, 8.5) <= WIDTH_IN else wrap_chars(
            value, WIDTH_IN, 8.5)
        w = max(text_width_in(label, 6.5, True), max(text_width_in(s, 8.5) for s in value_lines))
        if x > left and x + w > right:
            x, y, row_h = left, y + 0.2 + row_h, 0.0
        page.text(x, y, label, 6.5, color=GREY, weight="bold")
        page.text(x, y + 0.12, "\n".join(value_lines), 8.5)
        row_h = max(row_h, lines_in(len(value_lines), 8.5, 1.2))
        x += w + gap
    return y + 0.12 + row_h + 0.1


def paragraphs(page: Page, y: float, texts: Sequence[str], size: float = BODY_PT,
               x: float = MARGIN_IN, width: float = WIDTH_IN, **kw) -> float:
    """Paragraphs one under the other; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    y : float
        Top [in].
    texts : sequence of str
        The paragraphs.
    size : float
        Font size [pt].
    x : float
        Left edge [in].
    width : float
        Width [in].
    **kw
        Text properties (weight, style, color).

    Returns
    -------
    float
        The y below [in].
    """
    for text in texts:
        # wrapped a little short of the width: a raster page's hinting draws small type up
        # to a few per cent wider than the outline measure
        y = page.paragraph(x, y, text, width * RASTER_SLACK, size, **kw) + 0.02
    return y


def footer(page: Page, index: int, total: int, left_text: str) -> None:
    """The rule and footer line at the bottom of a page.

    Parameters
    ----------
    page : Page
        The page.
    index : int
        This page's number (from 1).
    total : int
        Pages in all.
    left_text : str
        What the footer says on the left (machine and visit).
    """
    bottom = PAGE_IN[1] - FOOTER_IN
    page.rule(bottom, lw=0.6)
    page.text(MARGIN_IN, bottom + 0.05, left_text, 6.5, color=GREY)
    page.text(PAGE_IN[0] - MARGIN_IN, bottom + 0.05, f"page {index} of {total}", 6.5,
              color=GREY, ha="right")


SIGNATURES = (("Balanced by", 0.38), ("Accepted by (customer)", 0.42), ("Date", 0.20))
"""The sign-off lines of the last page, with the share of the width each takes."""


def safety_height(drilling: bool, trial_runs: bool) -> float:
    """Height of the safety box and the sign-off lines under it [in].

    Parameters
    ----------
    drilling : bool
        The plan drills a hole.
    trial_runs : bool
        The visit had trial runs.

    Returns
    -------
    float
        The height [in].
    """
    return safety_box_height(cautions_for(drilling=drilling, trial_runs=trial_runs)) + 0.75


def safety_and_signoff(page: Page, top: float, drilling: bool, trial_runs: bool) -> float:
    """The cautions in the fitting sheet's safety box, then the sign-off lines; returns the y
    below.

    Parameters
    ----------
    page : Page
        The page.
    top : float
        Top of the box [in].
    drilling : bool
        The plan drills a hole (its caution).
    trial_runs : bool
        The visit had trial runs (their caution).

    Returns
    -------
    float
        The y below the sign-off lines [in].
    """
    box_h = safety_box(page, top, cautions_for(drilling=drilling, trial_runs=trial_runs))
    sign_y = top + box_h + 0.55
    sx = MARGIN_IN
    for label, share in SIGNATURES:
        page.text(sx, sign_y, label, BODY_PT, va="bottom")
        page.rule(sign_y, sx + text_width_in(label, BODY_PT) + 0.1, sx + share * WIDTH_IN - 0.2,
                  lw=0.6)
        sx += share * WIDTH_IN
    return sign_y + 0.1
