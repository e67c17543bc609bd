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
    """:func:`number` for every value of a sequence (``key[1]``, ``key[2]``, ...)."""
    for i, value in enumerate(values, start=1):
        number(value, f"{key}[{i}]", **rules)


def whole(value: Any, key: str, minimum: int | None = None, maximum: int | None = None) -> None:
    """Refuse a value that is not a whole number within ``minimum`` .. ``maximum``."""
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError(f"is {value!r}", key=key, expected="a whole number")
    if minimum is not None and value < minimum:
        raise InputError(f"is {value}", key=key, expected=f"a whole number of at least {minimum}")
    if maximum is not None and value > maximum:
        raise InputError(f"is {value}", key=key, expected=f"a whole number of at most {maximum}")


def one_of(value: Any, key: str, choices: Iterable[Any]) -> None:
    """Refuse a value that is not one of ``choices``."""
    choices = tuple(choices)
    if value not in choices:
        raise InputError(f"is {value!r}", key=key,
                         expected="one of " + ", ".join(map(str, choices)))


def same_length(values: Iterable[Any], count: int, key: str, what: str) -> None:
    """Refuse a sequence that does not have ``count`` entries (one per ``what``)."""
    n = len(tuple(values))
    if n != count:
        raise InputError(f"has {n} entries for {count} {what}s", key=key,
                         expected=f"one per {what}")
