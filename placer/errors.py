"""Error classes of placer.

Every error a user can cause carries the file it came from, the key path
inside that file (``planes[1].correction.angle_deg``) and what was expected.
Only the command line maps errors to exit codes and messages.
"""

from __future__ import annotations


class PlacerError(Exception):
    """Base class of every error placer raises on purpose."""

    def __init__(self, message: str, *, file: str | None = None, key: str | None = None,
                 expected: str | None = None) -> None:
        self.file = file
        self.key = key
        self.expected = expected
        self.detail = message
        super().__init__(self.one_line())

    def one_line(self) -> str:
        """The message as one line: ``file: key: detail (expected ...)``."""
        parts = []
        if self.file:
            parts.append(str(self.file))
        if self.key:
            parts.append(self.key)
        text = self.detail
        if self.expected:
            text = f"{text} (expected {self.expected})"
        parts.append(text)
        return " ".join(": ".join(parts).splitlines())


class InputError(PlacerError, ValueError):
    """Bad input in a file or on the command line."""


class JobError(InputError):
    """A job file is missing, unreadable or holds a bad value."""


class CatalogError(InputError):
    """A catalogue file or name is missing, unreadable or holds a bad value."""


class ToleranceError(InputError):
    """A balance-quality grade, mass or speed that gives no tolerance."""
