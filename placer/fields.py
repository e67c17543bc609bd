"""Reading typed values out of parsed TOML tables, with errors that name file and key.

Used by every reader (job, catalogue).  Each getter raises the reader's
error class with the file, the key path and what was expected.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from pathlib import Path
from typing import Any

from placer.errors import InputError


def read_toml(path: Path, error: type[InputError], what: str) -> dict[str, Any]:
    """Parse a TOML file; any failure becomes one ``error`` naming the file."""
    try:
        text = path.read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise error(f"{what} not found", file=str(path), expected="an existing file") from None
    except IsADirectoryError:
        raise error(f"is a folder, not a {what}", file=str(path), expected="a file") from None
    except UnicodeDecodeError as exc:
        raise error(f"cannot read {what}: byte {exc.start} is not UTF-8", file=str(path),
                    expected="a text file in UTF-8") from None
    except OSError as exc:
        raise error(f"cannot read {what}: {exc.strerror or exc}", file=str(path),
                    expected="a readable file") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise error(f"not valid TOML: {exc}", file=str(path),
                    expected="TOML syntax at that line and column") from None


class Table:
    """A TOML table with the file it came from and its key path."""

    def __init__(self, data: Any, file: str, path: str, error: type[InputError]) -> None:
        self.file = file
        self.path = path
        self.error = error
        if not isinstance(data, dict):
            raise self.fail(None, f"is {_kind(data)}", "a table")
        self.data = data

    def key(self, name: str | None) -> str:
        if name is None:
            return self.path
        return f"{self.path}.{name}" if self.path else name

    def fail(self, name: str | None, detail: str, expected: str | None = None) -> InputError:
        return self.error(detail, file=self.file, key=self.key(name) or None, expected=expected)

    def allow_only(self, allowed: tuple[str, ...]) -> None:
        """Reject keys that are not in ``allowed``, suggesting the closest one."""
        for name in self.data:
            if name not in allowed:
                close = difflib.get_close_matches(name, allowed, n=1)
                hint = f"did you mean '{close[0]}'?" if close else "one of " + ", ".join(allowed)
                raise self.fail(name, "unknown key", hint)

    def has(self, name: str) -> bool:
        return name in self.data

    def text(self, name: str, default: str | None = None, required: bool = False) -> str | None:
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a text value")
            return default
        value = self.data[name]
        if not isinstance(value, str):
            raise self.fail(name, f"is {_kind(value)}", "a text value in quotes")
        return value

    def number(self, name: str, default: float | None = None, required: bool = False,
               positive: bool = False, non_negative: bool = False) -> float | None:
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a number")
            return default
        return self.check_number(name, self.data[name], positive, non_negative)

    def check_number(self, name: str, value: Any, positive: bool = False,
                     non_negative: bool = False) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(name, f"is {_kind(value)}", "a number")
        value = float(value)
        if not math.isfinite(value):
            raise self.fail(name, f"is {value}", "a finite number")
        if positive and value <= 0:
            raise self.fail(name, f"is {value:g}", "a number above zero")
        if non_negative and value < 0:
            raise self.fail(name, f"is {value:g}", "zero or more")
        return value

    def integer(self, name: str, default: int | None = None, required: bool = False,
                minimum: int | None = None, maximum: int | None = None) -> int | None:
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a whole number")
            return default
        return self.check_integer(name, self.data[name], minimum, maximum)

    def check_integer(self, name: str, value: Any, minimum: int | None = None,
                      maximum: int | None = None) -> int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.fail(name, f"is {_kind(value)}", "a whole number")
        if minimum is not None and value < minimum:
            raise self.fail(name, f"is {value}", f"a whole number of at least {minimum}")
        if maximum is not None and value > maximum:
            raise self.fail(name, f"is {value}", f"a whole number of at most {maximum}")
        return value

    def sub(self, name: str, required: bool = False) -> Table | None:
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a table")
            return None
        return Table(self.data[name], self.file, self.key(name), self.error)

    def array(self, name: str, required: bool = False) -> list | None:
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a list [ ... ]")
            return None
        value = self.data[name]
        if not isinstance(value, list):
            raise self.fail(name, f"is {_kind(value)}", "a list [ ... ]")
        return value

    def tables(self, name: str, required: bool = False) -> list[Table]:
        values = self.array(name, required=required) or []
        if required and not values:
            raise self.fail(name, "is empty", f"at least one [[{name}]] table")
        return [Table(v, self.file, f"{self.key(name)}[{i + 1}]", self.error)
                for i, v in enumerate(values)]


def _kind(value: Any) -> str:
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, (int, float)):
        return f"the number {value}"
    if isinstance(value, str):
        return f"the text '{value[:40]}'"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a table"
    return type(value).__name__
