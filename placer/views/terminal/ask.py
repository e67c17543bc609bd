"""Questions on a terminal for ``placer new``: what the options did not say."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from placer.errors import InputError


def ask(question: str, convert: Callable[[str], Any], default: Any = None,
        read: Callable[[str], str] | None = None) -> Any:
    """Ask until the answer converts; an empty answer takes ``default`` when there is one.

    Parameters
    ----------
    question : str
        The question, without the default.
    convert : callable
        Turns the answer into the value; raises ValueError (or InputError) for a
        bad one, whose text is shown before asking again.
    default : Any
        What an empty answer gives; None to insist on an answer.
    read : callable or None
        Reads one answer after showing its prompt; None for ``input``.

    Returns
    -------
    Any
        The converted answer.

    Raises
    ------
    InputError
        When the input ends (end of file) before a good answer.
    """
    prompt = f"{question}" + (f" [{default}]" if default is not None else "") + ": "
    while True:
        try:
            answer = (read or input)(prompt).strip()
        except EOFError:
            raise InputError("no answer", key=question,
                             expected="an answer, or the option on the command line") from None
        if not answer and default is not None:
            return default
        try:
            return convert(answer)
        except (ValueError, InputError) as exc:
            print(f"  not taken: {exc}")


def positive_number(text: str) -> float:
    """A number above zero from an answer.

    Parameters
    ----------
    text : str
        The answer.

    Returns
    -------
    float
        The number.

    Raises
    ------
    ValueError
        Not a number above zero.
    """
    value = float(text)
    if not value > 0 or value >= 1e12:
        raise ValueError("expected a number above zero")
    return value


def whole_number(text: str) -> int:
    """A whole number of at least 1 from an answer.

    Parameters
    ----------
    text : str
        The answer.

    Returns
    -------
    int
        The number.

    Raises
    ------
    ValueError
        Not a whole number of at least 1.
    """
    value = int(text)
    if value < 1:
        raise ValueError("expected a whole number of at least 1")
    return value
