"""Text the sheet's font can draw: a character it lacks is drawn as '?' and noted once.

A rotor, plane or blade name from a file may be in any script; the printed
sheets use matplotlib's default font (DejaVu Sans), which has no CJK or
Devanagari glyphs.  matplotlib would draw an empty box and warn on stderr
once per character; instead every text drawn passes through
:func:`drawable`, which writes each character the font lacks as '?' and
remembers the text it was in, and the command line says so once
(:func:`take_undrawn`).  Text is never read as mathtext: a '$' in a name
is a dollar sign, not the start of a formula (an unclosed formula would stop
the drawing).

References
----------
[Matplotlib] ``matplotlib.font_manager.findfont`` and ``get_font`` (the
FT2Font of the default font; ``get_charmap`` lists the characters it has),
``Text(parse_math=False)``.
"""

from __future__ import annotations

import functools

REPLACEMENT = "?"
"""What a character the font lacks is drawn as."""

_UNDRAWN: dict[str, None] = {}
"""Texts drawn with a character replaced since the last :func:`take_undrawn` (in order)."""


@functools.lru_cache(maxsize=1)
def _characters() -> frozenset[int]:
    """Code points both the normal and the bold default font can draw."""
    from matplotlib.font_manager import FontProperties, findfont, get_font

    common: set[int] | None = None
    for weight in ("normal", "bold"):
        codes = set(get_font(findfont(FontProperties(weight=weight))).get_charmap())
        common = codes if common is None else common & codes
    return frozenset(common or ())


def drawable(text: str, record: bool = True) -> str:
    """``text`` with every character the sheet's font cannot draw written as '?'.

    Parameters
    ----------
    text : str
        Text to draw.
    record : bool
        Remember the text for :func:`take_undrawn` when a character is
        replaced (False when the text is only measured).

    Returns
    -------
    str
        The text as it is drawn.
    """
    if text.isascii():
        return text
    have = _characters()
    out = "".join(ch if ch == "\n" or ord(ch) in have else REPLACEMENT for ch in text)
    if record and out != text:
        _UNDRAWN.setdefault(text, None)
    return out


def draw_text(ax, x: float, y: float, text: str, **kw):
    """``ax.text`` with :func:`drawable` text, never read as mathtext.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Where to draw.
    x, y : float
        Anchor in data coordinates.
    text : str
        The text.
    **kw
        Further text properties for matplotlib.

    Returns
    -------
    matplotlib.text.Text
        The text drawn.
    """
    return ax.text(x, y, drawable(text), parse_math=False, **kw)


def take_undrawn() -> list[str]:
    """The texts drawn with a replaced character since the last call (and forget them).

    Returns
    -------
    list of str
        In the order they were first drawn.
    """
    texts = list(_UNDRAWN)
    _UNDRAWN.clear()
    return texts
