"""Setting text and tables on an A4 page, measured with matplotlib's own font metrics."""

from __future__ import annotations

import functools

from placer.views.sheet.glyphs import draw_text, drawable

INK, GREY = "black", "0.45"
"""Ink for everything drawn, and the grey of secondary text and lines."""

PAGE_IN = (8.27, 11.69)
"""A4 portrait [in] (210 mm × 297 mm)."""


MARGIN_IN = 0.55


class Page:
    """Drawing on one page in inches from its top-left corner.

    Parameters
    ----------
    fig : matplotlib.figure.Figure or None
        The page's figure (A4); None for a dry run that only measures.
    """

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
        """Text at (x, y), its top there unless ``va`` says otherwise.

        Parameters
        ----------
        x, y : float
            Anchor from the page's top-left corner [in].
        s : str
            The text.
        size : float
            Font size [pt].
        **kw
            Further text properties for matplotlib (ha, va, weight, ...).
        """
        if self.ax is None:
            return
        kw.setdefault("va", "top")
        draw_text(self.ax, x, y, s, fontsize=size, **kw)

    def rule(self, y: float, x0: float = MARGIN_IN, x1: float | None = None,
             lw: float = 0.6, **kw) -> None:
        """A horizontal line across the page at ``y``.

        Parameters
        ----------
        y : float
            Height from the top [in].
        x0 : float
            Left end [in].
        x1 : float or None
            Right end [in]; None for the right margin.
        lw : float
            Line width [pt].
        **kw
            Further line properties for matplotlib (color defaults to ink).
        """
        if self.ax is None:
            return
        x1 = PAGE_IN[0] - MARGIN_IN if x1 is None else x1
        self.ax.plot([x0, x1], [y, y], color=kw.pop("color", INK), lw=lw, **kw)

    def box(self, x: float, y: float, w: float, h: float, **kw) -> None:
        """A rectangle, unfilled and inked unless ``kw`` says otherwise.

        Parameters
        ----------
        x, y : float
            Its top-left corner [in].
        w, h : float
            Width and height [in].
        **kw
            Further patch properties for matplotlib.
        """
        if self.ax is None:
            return
        from matplotlib.patches import Rectangle

        kw.setdefault("fill", False)
        kw.setdefault("ec", INK)
        self.ax.add_patch(Rectangle((x, y), w, h, **kw))

    def mark(self, x: float, y: float, **kw) -> None:
        """A single marker at (x, y).

        Parameters
        ----------
        x, y : float
            Where [in].
        **kw
            Marker properties for matplotlib (marker, ms, mfc, ...).
        """
        if self.ax is not None:
            self.ax.plot([x], [y], **kw)

    def patch(self, make) -> None:
        """Add the patch ``make()`` returns (in page inches).

        Parameters
        ----------
        make : callable
            Builds the matplotlib patch; not called on a dry run.
        """
        if self.ax is not None:
            self.ax.add_patch(make())

    def table(self, x: float, y: float, columns: list[tuple[str, str]],
              rows: list[list[str]], width_in: float, bold: set[int] = frozenset(),
              ticks: bool = False, size: float = 8.0,
              notes: list[str] | None = None) -> float:
        """A table no wider than ``width_in``; returns the y below it.

        ``columns`` are (heading, "l" or "r"); each column is as wide as its
        widest cell, measured, and the type shrinks (to 6.5 pt) until the
        table fits.  A row's note (``notes``) is set under it in italics,
        wrapped to the table's width.

        Parameters
        ----------
        x, y : float
            Top-left corner [in].
        columns : list of (str, str)
            (heading, "l" or "r" alignment) per column.
        rows : list of list of str
            The cells, row by row; an empty cell is left blank.
        width_in : float
            Widest the table may be [in].
        bold : set of int
            Indices of rows set in bold.
        ticks : bool
            Put a tick box before each row.
        size : float
            Font size to start from [pt].
        notes : list of str or None
            A note under each row ("" for none).

        Returns
        -------
        float
            The y below the table [in].
        """
        tick_in = 0.28 if ticks else 0.0
        while True:
            widths = []
            for k, (head, _) in enumerate(columns):
                cells = [text_width_in(r[k], size, i in bold) for i, r in enumerate(rows) if r[k]]
                widths.append(max([text_width_in(head, size - 1, True)] + cells) + 0.10)
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
            note = notes[i] if notes else ""
            if note:
                lines = wrap_words(note, x + width - edges[0] - 0.1, size - 1)
                self.text(edges[0] + 0.05, y - 0.02, "\n".join(lines), size - 1,
                          style="italic", linespacing=1.2)
                y += lines_in(len(lines), size - 1, 1.2)
            self.rule(y - 0.02, x, x + width, lw=0.3, color=GREY)
        return y + 0.04

    def paragraph(self, x: float, y: float, text: str, width_in: float, size: float = 7.5,
                  **kw) -> float:
        """Text wrapped to ``width_in`` (measured word by word); returns the y below it.

        Parameters
        ----------
        x, y : float
            Top-left corner [in].
        text : str
            The text.
        width_in : float
            Widest a line may be [in].
        size : float
            Font size [pt].
        **kw
            Further text properties for matplotlib (weight="bold" is measured).

        Returns
        -------
        float
            The y below the paragraph [in].
        """
        lines = wrap_words(text, width_in, size, kw.get("weight") == "bold")
        self.text(x, y, "\n".join(lines), size, linespacing=1.3, **kw)
        return y + lines_in(len(lines), size) + 0.03


def lines_in(count: int, size: float, linespacing: float = 1.3) -> float:
    """Height [in] matplotlib gives ``count`` lines of text at ``size`` [pt].

    Parameters
    ----------
    count : int
        Lines.
    size : float
        Font size [pt].
    linespacing : float
        Line height as a multiple of the font size.

    Returns
    -------
    float
        The height [in].
    """
    return count * linespacing * size / 72


def wrap_words(text: str, width_in: float, size: float, bold: bool = False) -> list[str]:
    """Words of ``text`` in lines no wider than ``width_in`` [in].

    Parameters
    ----------
    text : str
        The text; split at white space.
    width_in : float
        Widest a line may be [in]; a longer word stands on a line alone.
    size : float
        Font size [pt].
    bold : bool
        Bold type.

    Returns
    -------
    list of str
        The lines; ``[""]`` for no words.
    """
    lines: list[str] = []
    for word in text.split():
        if lines and text_width_in(f"{lines[-1]} {word}", size, bold) <= width_in:
            lines[-1] = f"{lines[-1]} {word}"
        else:
            lines.append(word)
    return lines or [""]


@functools.lru_cache(maxsize=8192)
def text_width_in(text: str, size: float, bold: bool = False) -> float:
    """Width of one line of text on the page [in] (the default font, measured by matplotlib).

    Parameters
    ----------
    text : str
        One line.
    size : float
        Font size [pt].
    bold : bool
        Bold type.

    Returns
    -------
    float
        The width [in].
    """
    from matplotlib.font_manager import FontProperties

    prop = FontProperties(weight="bold" if bold else "normal", size=size)
    width, _, _ = text_to_path().get_text_width_height_descent(drawable(text, record=False),
                                                               prop, ismath=False)
    return width / 72.0


@functools.lru_cache(maxsize=1)
def text_to_path():  # noqa: N802 - one shared measurer
    from matplotlib.textpath import TextToPath

    return TextToPath()


def join_lines(pieces: list[str], sep: str, width_in: float, size: float) -> list[str]:
    """Pieces joined by ``sep`` in lines no wider than ``width_in``, never split inside one.

    Parameters
    ----------
    pieces : list of str
        The pieces.
    sep : str
        What joins two pieces on one line.
    width_in : float
        Widest a line may be [in]; a longer piece stands on a line alone.
    size : float
        Font size [pt].

    Returns
    -------
    list of str
        The lines.
    """
    lines: list[str] = []
    for piece in pieces:
        if lines and text_width_in(lines[-1] + sep + piece, size) <= width_in:
            lines[-1] += sep + piece
        else:
            lines.append(piece)
    return lines


def fit_title(title: str, width_in: float) -> tuple[list[str], float]:
    """The rotor's name on one line at 15 pt down to 11 pt, else wrapped (at most 3 lines).

    Wrapped, it takes two lines at 12 pt down to 10 pt, else up to three at
    10 pt, the third cut short with " …".

    Parameters
    ----------
    title : str
        The rotor's name.
    width_in : float
        Width available [in].

    Returns
    -------
    lines : list of str
        The title's lines.
    size : float
        Font size [pt].
    """
    for size in (15.0, 14.0, 13.0, 12.0, 11.0):
        if text_width_in(title, size, True) <= width_in:
            return [title], size
    for size in (12.0, 11.0, 10.0):
        lines = wrap_words(title, width_in, size, True)
        if len(lines) <= 2 and all(text_width_in(s, size, True) <= width_in for s in lines):
            return lines, size
    lines = wrap_words(title, width_in, 10.0, True)
    if len(lines) > 3:
        lines = lines[:3]
        while lines[2] and text_width_in(lines[2] + " …", 10.0, True) > width_in:
            lines[2] = lines[2][:-1]
        lines[2] = lines[2].rstrip() + " …"
    return lines, 10.0


def wrap_chars(text: str, width_in: float, size: float) -> list[str]:
    """A word too long for one line, cut into lines no wider than ``width_in``.

    Parameters
    ----------
    text : str
        The word.
    width_in : float
        Widest a line may be [in].
    size : float
        Font size [pt].

    Returns
    -------
    list of str
        The pieces, at least one character each.
    """
    lines = [""]
    for ch in text:
        if lines[-1] and text_width_in(lines[-1] + ch, size) > width_in:
            lines.append("")
        lines[-1] += ch
    return lines
