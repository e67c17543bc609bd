"""Every error class of placer.

Every error a user can cause carries the file it came from, the key path
inside that file (``planes[1].correction.angle_deg``) or the name of the
argument it concerns (``time_limit_s``), and what was expected.  The core
never speaks of command-line flags: an argument is named by its Python
name, and a text may refer to another argument as ``{opt:force}``.  Only
the command line renders those as flags (``--force``, see
:meth:`PlacerError.one_line`) and maps errors to exit codes.
"""

from __future__ import annotations

import os
import re
from collections.abc import Mapping

from placer.limits import MAX_ECHO_CHARS

_OPTION = re.compile(r"\{opt:([a-z_]+)\}")
"""An argument named inside a message: ``{opt:force}``."""


def fill_options(text: str, flags: Mapping[str, str] | None = None) -> str:
    """``text`` with every ``{opt:name}`` shown as ``flags[name]`` (else as ``name``).

    Parameters
    ----------
    text : str
        A message that may name arguments as ``{opt:name}``.
    flags : mapping of str to str, optional
        How to show an argument: its Python name -> what the user typed.
    """
    return _OPTION.sub(lambda m: (flags or {}).get(m.group(1), m.group(1)), text)


def printable(text: str) -> str:
    """``text`` with every character that is not printable written as its escape.

    An error line must stay one line: line and paragraph separators
    (``\\n``, ``\\r``, U+0085, U+2028, ...), other control and unassigned
    characters from a file are shown as ``\\u2028`` etc. (:meth:`str.isprintable`).

    Parameters
    ----------
    text : str
        Text from a file or an argument.

    Returns
    -------
    str
        The text, on one line.
    """
    if text.isprintable():
        return text
    return "".join(ch if ch.isprintable() else repr(ch)[1:-1] if ch != "'" else ch
                   for ch in text)


def shown(text: str, limit: int = MAX_ECHO_CHARS) -> str:
    """``text`` as an error line repeats it: printable, at most ``limit`` characters and "...".

    Parameters
    ----------
    text : str
        Text from a file or an argument, of any length.
    limit : int
        Most characters kept (:data:`placer.limits.MAX_ECHO_CHARS`).

    Returns
    -------
    str
        The text, cut after ``limit`` characters (marked "..."), on one line.
    """
    return printable(text if len(text) <= limit else text[:limit] + "...")


def shown_path(file: str | os.PathLike) -> str:
    """A path short enough for an error line.

    Parameters
    ----------
    file : str or os.PathLike
        The path as given.

    Returns
    -------
    str
        Its first and last :data:`placer.limits.MAX_ECHO_CHARS` characters when it is
        long, printable.
    """
    file = os.fsdecode(file)
    if len(file) > 2 * MAX_ECHO_CHARS + 20:
        file = f"{file[:MAX_ECHO_CHARS]}...{file[-MAX_ECHO_CHARS:]}"
    return printable(file)


class PlacerError(Exception):
    """Base class of every error placer raises on purpose.

    Parameters
    ----------
    message : str
        What is wrong.
    file : str, optional
        The file the bad value came from.
    key : str, optional
        The key path inside that file.
    expected : str, optional
        What was expected instead.
    option : str, optional
        The argument (Python name) the bad value came from, when it did not
        come from a file.
    """

    def __init__(self, message: str, *, file: str | None = None, key: str | None = None,
                 expected: str | None = None, option: str | None = None) -> None:
        self.file = file
        self.key = key
        self.expected = expected
        self.option = option
        self.detail = message
        super().__init__(self.one_line())

    def one_line(self, flags: Mapping[str, str] | None = None) -> str:
        """The message as one line: ``file: key: detail (expected ...)``.

        Parameters
        ----------
        flags : mapping of str to str, optional
            How to show an argument: its Python name -> what the user typed
            (``{"force": "--force"}``).  Arguments not in it, or all of them
            without it, are shown by their Python name.
        """
        parts = []
        if self.file:
            parts.append(str(self.file))
        if self.key:
            parts.append(fill_options(self.key, flags))
        elif self.option:
            parts.append((flags or {}).get(self.option, self.option))
        text = fill_options(self.detail, flags)
        if self.expected:
            text = f"{text} (expected {fill_options(self.expected, flags)})"
        parts.append(text)
        return " ".join(": ".join(parts).splitlines())


class InputError(PlacerError, ValueError):
    """Bad input in a file or in an argument."""


class JobError(InputError):
    """A job file is missing, unreadable or holds a bad value."""


class OutputError(InputError):
    """An output file cannot be written where asked; what was there is unchanged."""


class CatalogError(InputError):
    """A catalogue file or name is missing, unreadable or holds a bad value."""


class ToleranceError(InputError):
    """A balance-quality grade, mass or speed that gives no tolerance."""


class SessionError(JobError):
    """A session file is missing, unreadable or holds a bad value."""


class CoefficientMismatch(InputError):
    """Stored coefficients that cannot serve this visit; ``key`` and ``expected`` say why."""


class LimitReached(PlacerError):
    """A command stopped at a limit of time or size before its result was final."""


class HistoryError(PlacerError):
    """The history database cannot be opened, read or written."""
