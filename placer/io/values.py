"""The checks every reader applies to one value: a number in placer's range, text on one
line, the closest-match hint (capped in length), a whole number shown without its
thousands of digits, and strict JSON text (no NaN or infinity).

References
----------
[IEEE754] binary64 range; [RFC8259] JSON numbers; [Unicode] line separators;
[PythonDocs] the 4300-digit int/str limit.
"""

from __future__ import annotations

import difflib
import json
import math
from typing import Any

from placer.limits import (
    MAX_ECHO_CHARS,
    MAX_MAGNITUDE,
    MIN_MAGNITUDE,
    RANGE_EXPECTED,
)

LINE_EXPECTED = "text on one line, without control or line-separator characters"
"""What a single-line text value (a name, a grade, a serial) with such a character is told."""


def number_problem(value: float) -> str | None:
    """Why a float cannot be used as an input number, or None when it can.

    Non-finite values and values outside the range of :mod:`placer.limits`
    are refused; the text completes "<key> is ...".

    Parameters
    ----------
    value : float
        The number.

    Returns
    -------
    str or None
        "<value> (expected ...)", or None for a usable number.
    """
    problem = range_problem(value)
    return None if problem is None else f"{problem[0]} (expected {problem[1]})"


def range_problem(value: float) -> tuple[str, str] | None:
    """(the value as shown, what was expected) when ``value`` is not finite or out of
    the range of :mod:`placer.limits`; None when it can be used.

    Parameters
    ----------
    value : float
        The number.

    Returns
    -------
    (str, str) or None
        The value as text and what was expected; None for a usable number.
    """
    if not math.isfinite(value):
        return f"{value}", "a finite number"
    size = abs(value)
    if size > MAX_MAGNITUDE or 0.0 < size < MIN_MAGNITUDE:
        return f"{value:g}", RANGE_EXPECTED
    return None


def odd_character(text: str, multiline: bool = False) -> str | None:
    """The first character of ``text`` a text value may not hold, or None.

    Control characters, line and paragraph separators (U+2028, U+2029,
    U+0085, ...), unassigned code points and lone surrogates
    (:meth:`str.isprintable` is False for all of them) are refused; a
    ``multiline`` text may hold new lines and tabs.

    Parameters
    ----------
    text : str
        The value.
    multiline : bool
        Allow ``\\n`` and ``\\t``.

    Returns
    -------
    str or None
        The character, or None when the text may be used.
    """
    if text.isprintable():
        return None
    allowed = "\n\t" if multiline else ""
    return next((ch for ch in text if not ch.isprintable() and ch not in allowed), None)


def closest(text: str, choices: list[str] | tuple[str, ...]) -> str | None:
    """The choice closest in spelling to ``text`` (difflib, similarity 0.6), or None.

    A text longer than twice :data:`placer.limits.MAX_ECHO_CHARS` gets no hint: the
    comparison grows with the square of its length, and such a text is no misspelling.

    Parameters
    ----------
    text : str
        What was given.
    choices : list or tuple of str
        What it may be.

    Returns
    -------
    str or None
        The closest choice.

    References
    ----------
    [PythonDocs] :func:`difflib.get_close_matches`.
    """
    if len(text) > 2 * MAX_ECHO_CHARS:
        return None
    close = difflib.get_close_matches(text, choices, n=1)
    return close[0] if close else None


def whole_number_text(value: int) -> str:
    """A whole number as text, shortened to its digit count when it is long.

    Parameters
    ----------
    value : int
        The number.

    Returns
    -------
    str
        Its digits below 10**15 in size, else "a whole number of about N digits".
    """
    if abs(value) < 10**15:
        return str(value)
    digits = int(abs(value).bit_length() * 0.30102999566398120) + 1
    return f"a whole number of about {digits} digits"


def json_text(value: Any, indent: int | None = None) -> str:
    """Strict JSON text of ``value``: NaN and ±infinity are written as null.

    :func:`json.dumps` writes them as ``NaN`` / ``Infinity``, which no JSON
    parser but Python's accepts.

    Parameters
    ----------
    value : Any
        Anything :func:`json.dumps` takes (dicts, lists, tuples, numbers, text).
    indent : int or None
        Indentation of nested values; None for one line.

    Returns
    -------
    str
        The JSON text, non-ASCII characters kept.

    References
    ----------
    RFC 8259, section 6 (numbers: "Infinity and NaN are not permitted").
    """
    try:  # the usual case, all finite: no walk over the value
        return json.dumps(value, indent=indent, ensure_ascii=False, allow_nan=False)
    except ValueError:
        return json.dumps(_finite(value), indent=indent, ensure_ascii=False, allow_nan=False)


def _finite(value: Any) -> Any:
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: _finite(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite(v) for v in value]
    return value
