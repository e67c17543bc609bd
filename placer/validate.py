"""Checks the domain values run on construction, so that a bad value is refused where it
is made (with an :class:`~placer.errors.InputError` naming the field), not deep in numpy.

The file readers check first, with the file and key path; these checks are the same
rules for values built in Python.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

from placer.errors import InputError
from placer.limits import MAX_MAGNITUDE


def number(value: Any, key: str, *, positive: bool = False, non_negative: bool = False,
           allow_none: bool = False) -> None:
    """Refuse a value that is not a finite real number in placer's range.

    Parameters
    ----------
    value : Any
        The value.
    key : str
        The field it is, for the message (``radii_mm[3]``).
    positive, non_negative : bool
        Also refuse zero and below, or below zero.
    allow_none : bool
        Let None through (an optional field).

    Raises
    ------
    InputError
        When the value is not a number (a bool is not one), is not finite, is
        larger than 1e12 in size, or breaks ``positive`` or ``non_negative``.
    """
    if value is None and allow_none:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"is {value!r}", key=key, expected="a number")
    if not math.isfinite(value) or abs(value) > MAX_MAGNITUDE:
        raise InputError(f"is {value!r}", key=key, expected="a finite number within 1e12")
    if positive and value <= 0:
        raise InputError(f"is {value!r}", key=key, expected="a number above zero")
    if non_negative and value < 0:
        raise InputError(f"is {value!r}", key=key, expected="zero or more")


def numbers(values: Iterable[Any], key: str, **rules: bool) -> None:
    """:func:`number` for every value of a sequence (``key[1]``, ``key[2]``, ...).

    Parameters
    ----------
    values : iterable
        The values.
    key : str
        The field they are; value i is named ``key[i]``, counted from 1.
    **rules : bool
        ``positive``, ``non_negative`` or ``allow_none``, as for :func:`number`.

    Raises
    ------
    InputError
        At the first value :func:`number` refuses.
    """
    for i, value in enumerate(values, start=1):
        number(value, f"{key}[{i}]", **rules)


def whole(value: Any, key: str, minimum: int | None = None, maximum: int | None = None) -> None:
    """Refuse a value that is not a whole number within ``minimum`` .. ``maximum``.

    Parameters
    ----------
    value : Any
        The value; it must be an ``int`` (not a bool).
    key : str
        The field it is, for the message.
    minimum, maximum : int or None
        Least and greatest value allowed, both included; None for no bound.

    Raises
    ------
    InputError
        When the value is not an ``int``, or is outside the bounds.
    """
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError(f"is {value!r}", key=key, expected="a whole number")
    if minimum is not None and value < minimum:
        raise InputError(f"is {value}", key=key, expected=f"a whole number of at least {minimum}")
    if maximum is not None and value > maximum:
        raise InputError(f"is {value}", key=key, expected=f"a whole number of at most {maximum}")


def share(value: Any, key: str) -> None:
    """Refuse a share that is not above 0 and at most 1 (None lets it through).

    Parameters
    ----------
    value : Any
        The share [1].
    key : str
        The field it is, for the message.
    """
    if value is None:
        return
    number(value, key)
    if not 0 < value <= 1:
        raise InputError(f"is {value!r}", key=key, expected="a share above 0 and at most 1")


def one_of(value: Any, key: str, choices: Iterable[Any]) -> None:
    """Refuse a value that is not one of ``choices``.

    Parameters
    ----------
    value : Any
        The value.
    key : str
        The field it is, for the message.
    choices : iterable
        The values allowed; the message lists them.

    Raises
    ------
    InputError
        When the value is not among ``choices``.
    """
    choices = tuple(choices)
    if value not in choices:
        raise InputError(f"is {value!r}", key=key,
                         expected="one of " + ", ".join(map(str, choices)))


def same_length(values: Iterable[Any], count: int, key: str, what: str) -> None:
    """Refuse a sequence that does not have ``count`` entries (one per ``what``).

    Parameters
    ----------
    values : iterable
        The sequence.
    count : int
        How many entries it must have.
    key : str
        The field it is, for the message.
    what : str
        What each entry stands for ("position", "plane"), for the message.

    Raises
    ------
    InputError
        When the sequence has another number of entries.
    """
    n = len(tuple(values))
    if n != count:
        raise InputError(f"has {n} entries for {count} {what}s", key=key,
                         expected=f"one per {what}")
