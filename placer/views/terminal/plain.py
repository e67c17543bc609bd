"""Plain terminal output: no trailing padding when piped, and ASCII where the terminal
cannot show more.

rich pads every line of a table to its width; on a terminal that is invisible, but
piped into a file or another program it leaves trailing blanks.  :func:`console`
gives a rich console that strips them when the output is not a terminal, at 80
columns.  :func:`ascii_safe` lets a terminal whose encoding is ASCII (or another
that cannot show "·", "°", "≈") print every character placer writes, each replaced
by one ASCII character so that columns stay aligned, instead of stopping with an
error.
"""

from __future__ import annotations

import codecs
import sys
from typing import TextIO

from rich.cells import cell_len

PLAIN_WIDTH = 80
"""Columns of the output when it is not a terminal."""

ASCII_FOR = {
    "·": ".", "°": "d", "×": "x", "≈": "~", "−": "-", "–": "-", "—": "-", "◀": "<",
    "←": "<", "→": ">", "²": "2", "³": "3", "µ": "u", "Ø": "D", "±": "+", "…": ".",
    "‘": "'", "’": "'", "“": '"', "”": '"', "ω": "w", "⁻": "-", "¹": "1", "ᴴ": "H",
    "∠": "@",
}
"""One ASCII character for each non-ASCII character placer prints (columns keep their
width); any other becomes "?" once for each column it takes."""

ERROR_HANDLER = "placer-ascii"


def _replace(error: UnicodeError) -> tuple[str, int]:
    if not isinstance(error, UnicodeEncodeError):
        raise error
    text = error.object[error.start:error.end]
    # A character without its own ASCII stand-in takes as many "?" as the columns rich
    # gave it (two for a wide one, none for a combining mark), so that borders stay put.
    return "".join(ASCII_FOR.get(ch) or "?" * cell_len(ch) for ch in text), error.end


codecs.register_error(ERROR_HANDLER, _replace)


def ascii_safe(*streams: TextIO) -> None:
    """Let each stream print any text: characters its encoding lacks become ASCII.

    Parameters
    ----------
    *streams : text stream
        Usually ``sys.stdout`` and ``sys.stderr``; streams that cannot be
        reconfigured, or that take every character, are left alone.
    """
    for stream in streams:
        encoding = getattr(stream, "encoding", None) or "ascii"
        try:
            "·°≈×◀".encode(encoding)
            continue
        except (UnicodeEncodeError, LookupError):
            pass
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            try:
                reconfigure(errors=ERROR_HANDLER)
            except (ValueError, OSError):
                pass


class TrimmedStream:
    """A text stream that writes each line without its trailing blanks.

    Parameters
    ----------
    target : text stream
        Where the lines go.
    """

    def __init__(self, target: TextIO) -> None:
        self.target = target
        self.pending = ""

    @property
    def encoding(self) -> str:
        """The target's encoding (rich reads it to choose box characters)."""
        return getattr(self.target, "encoding", None) or "utf-8"

    def write(self, text: str) -> int:
        """Write ``text``; complete lines go out trimmed, a partial one waits.

        Parameters
        ----------
        text : str
            The text.

        Returns
        -------
        int
            Characters taken.
        """
        lines = (self.pending + text).split("\n")
        self.pending = lines.pop()
        if lines:
            self.target.write("".join(line.rstrip(" ") + "\n" for line in lines))
        return len(text)

    def flush(self) -> None:
        """Write what is pending (trimmed) and flush the target."""
        if self.pending:
            self.target.write(self.pending.rstrip(" "))
            self.pending = ""
        self.target.flush()

    def isatty(self) -> bool:
        """False: trimming is for output that is not a terminal."""
        return False

    def fileno(self) -> int:
        """The target's file descriptor.

        Returns
        -------
        int
            The descriptor.
        """
        return self.target.fileno()


def console(width: int | None = None, stream: TextIO | None = None):
    """A rich console for placer's sheets: the terminal's width on a terminal; 80
    columns and no trailing blanks otherwise.

    Parameters
    ----------
    width : int or None
        Columns; None for the terminal's (80 when not a terminal).
    stream : text stream or None
        Where to print (default ``sys.stdout``).

    Returns
    -------
    rich.console.Console
        The console; call ``.file.flush()`` after the last print when not a
        terminal (:func:`finish` does).
    """
    from rich.console import Console

    stream = sys.stdout if stream is None else stream
    if stream.isatty():
        return Console(file=stream, width=width, highlight=False)
    return Console(file=TrimmedStream(stream), width=width or PLAIN_WIDTH, highlight=False,
                   force_terminal=False)


def finish(output) -> None:
    """Flush a console made by :func:`console` (its last line, trimmed).

    Parameters
    ----------
    output : rich.console.Console
        The console.
    """
    output.file.flush()
