"""Opening an input file: a regular file of bounded size, read as UTF-8 text.

Every reader of placer (job, catalogue, session, batch template, blade
file and blade list, batch readings) takes its text from :func:`read_text`,
so that every file kind is refused the same way, in one line naming the
file and what was expected:

* a path with a part longer than :data:`placer.limits.MAX_NAME_BYTES`;
* a missing file, a folder, a file that may not be read;
* anything that is not a regular file: a named pipe (FIFO) would block the
  read until a writer comes, ``/dev/zero`` would never end;
* a file larger than its kind's limit (:data:`placer.limits.MAX_FILE_BYTES`,
  :data:`placer.limits.MAX_READINGS_BYTES`): at most limit + 1 bytes are
  read, whatever the file system said its size was;
* bytes that are not UTF-8.

A UTF-8 byte-order mark at the start is dropped, for every kind.

References
----------
[POSIX] ``open`` with ``O_NONBLOCK`` (a FIFO opens at once), ``fstat`` and
``S_ISREG``; [Unicode] chapter 23.8 (the byte-order mark, U+FEFF, as
EF BB BF in UTF-8).
"""

from __future__ import annotations

import errno
import os
import stat
import tomllib
from pathlib import Path
from typing import Any

from placer.errors import InputError, shown_path
from placer.io.values import whole_number_text
from placer.limits import MAX_FILE_BYTES, MAX_NAME_BYTES, MAX_WHOLE, RANGE_EXPECTED

BOM = b"\xef\xbb\xbf"
"""The byte-order mark U+FEFF in UTF-8 ([Unicode] 23.8)."""
NAME_EXPECTED = f"a name or a path of at most {MAX_NAME_BYTES} bytes per part"


def size_text(limit_bytes: int) -> str:
    """A byte limit as text: "1 MB", "64 MB" (decimal megabytes), else in bytes.

    Parameters
    ----------
    limit_bytes : int
        The limit [bytes].

    Returns
    -------
    str
        The limit for a message.
    """
    if limit_bytes >= 1_000_000 and limit_bytes % 1_000_000 == 0:
        return f"{limit_bytes // 1_000_000} MB"
    return f"{limit_bytes} bytes"


def name_problem(path: Path | str) -> str | None:
    """Why a path cannot name a file on any usual file system, or None when it can.

    Parameters
    ----------
    path : Path or str
        The path as given.

    Returns
    -------
    str or None
        "has a part of N bytes" for a part longer than
        :data:`placer.limits.MAX_NAME_BYTES`; "holds a NUL character"; else None.
    """
    text = str(path)
    if "\x00" in text:
        return "holds a NUL character"
    longest = max((len(os.fsencode(part)) for part in Path(text).parts), default=0)
    if longest > MAX_NAME_BYTES:
        return f"has a part of {longest} bytes"
    return None


def read_text(path: Path, error: type[InputError], what: str,
              limit_bytes: int = MAX_FILE_BYTES) -> str:
    """The text of an input file, its byte-order mark dropped.

    Parameters
    ----------
    path : Path
        The file.
    error : type of InputError
        The reader's error class (JobError, CatalogError, SessionError, ...).
    what : str
        What the file is, for the message ("job file").
    limit_bytes : int
        Largest size accepted [bytes].

    Returns
    -------
    str
        The file's text.

    Raises
    ------
    InputError
        Of class ``error``, naming the file and what was expected: see the
        module docstring.
    """
    file = str(path)
    regular = f"a regular file of at most {size_text(limit_bytes)}"
    problem = name_problem(path)
    if problem is not None:
        raise error(f"the path {problem}", file=shown_path(file), expected=NAME_EXPECTED)
    try:
        handle = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_BINARY", 0))
    except OSError as exc:
        raise _open_error(exc, file, error, what, regular) from None
    try:
        info = os.fstat(handle)
        if stat.S_ISDIR(info.st_mode):
            raise error(f"is a folder, not a {what}", file=file, expected=regular)
        if not stat.S_ISREG(info.st_mode):
            raise error(f"is not a regular file (a pipe, a device or a socket), not a {what}",
                        file=file, expected=regular)
        if info.st_size > limit_bytes:
            raise error(f"is {info.st_size} bytes, too large for a {what}", file=file,
                        expected=regular)
        data = _read_at_most(handle, limit_bytes + 1)
    except OSError as exc:
        raise _open_error(exc, file, error, what, regular) from None
    finally:
        os.close(handle)
    if len(data) > limit_bytes:
        raise error(f"is more than {size_text(limit_bytes)}, too large for a {what}",
                    file=file, expected=regular)
    skip = len(BOM) if data.startswith(BOM) else 0
    try:
        return data[skip:].decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(f"cannot read {what}: byte {exc.start + skip} is not UTF-8", file=file,
                    expected="a text file in UTF-8") from None


def _read_at_most(handle: int, count: int) -> bytes:
    """Up to ``count`` bytes from ``handle`` (a regular file: never blocks)."""
    chunks, left = [], count
    while left > 0:
        chunk = os.read(handle, min(left, 1 << 20))
        if not chunk:
            break
        chunks.append(chunk)
        left -= len(chunk)
    return b"".join(chunks)


def _open_error(exc: OSError, file: str, error: type[InputError], what: str,
                regular: str) -> InputError:
    """One error line for an ``OSError`` raised opening or reading ``file``."""
    if exc.errno in (errno.ENOENT, errno.ENOTDIR):
        return error(f"{what} not found", file=file, expected="an existing file")
    if exc.errno in (errno.EACCES, errno.EPERM):
        return error(f"cannot read {what}: permission denied", file=file,
                     expected="a file you may read")
    if exc.errno == errno.ENAMETOOLONG:
        return error("the path is too long", file=shown_path(file), expected=NAME_EXPECTED)
    if exc.errno == errno.EISDIR:
        return error(f"is a folder, not a {what}", file=file, expected=regular)
    return error(f"cannot read {what}: {exc.strerror or type(exc).__name__}", file=file,
                 expected=regular)


def read_toml(path: Path, error: type[InputError], what: str) -> dict[str, Any]:
    """Parse a TOML file (read by :func:`placer.io.inputs.read_text`); any failure
    becomes one ``error`` naming the file.

    Parameters
    ----------
    path : Path
        The file.
    error : type of InputError
        The reader's error class (JobError, CatalogError, SessionError).
    what : str
        What the file is, for the message ("job file").

    Returns
    -------
    dict
        The parsed file.

    Raises
    ------
    InputError
        Of class ``error``: a file :func:`placer.io.inputs.read_text` refuses, bad
        TOML, nesting too deep, or a whole number out of range (with its key).

    References
    ----------
    [PythonDocs] (the 4300-digit limit on int/str conversion).
    """
    text = read_text(path, error, what)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise error(f"not valid TOML: {exc}", file=str(path),
                    expected="TOML syntax at that line and column") from None
    except RecursionError:
        raise error(f"cannot read {what}: lists or tables nested too deeply", file=str(path),
                    expected="a few levels of [ ] and { } at most") from None
    except ValueError:
        # tomllib turns digits into int() itself; past 4300 digits that refuses.
        raise error(f"cannot read {what}: a whole number has more than 4300 digits",
                    file=str(path), expected=RANGE_EXPECTED) from None
    _check_whole_numbers(data, str(path), error)
    return data


def _check_whole_numbers(data: dict[str, Any], file: str, error: type[InputError]) -> None:
    """Refuse any whole number past :data:`MAX_WHOLE`, naming its key path."""
    stack: list[tuple[str, Any]] = [("", data)]
    while stack:
        path, value = stack.pop()
        if isinstance(value, dict):
            stack.extend(reversed([(f"{path}.{k}" if path else k, v)
                                   for k, v in value.items()]))
        elif isinstance(value, list):
            stack.extend(reversed([(f"{path}[{i + 1}]", v) for i, v in enumerate(value)]))
        elif isinstance(value, int) and not isinstance(value, bool) and abs(value) > MAX_WHOLE:
            raise error(f"is {whole_number_text(value)}", file=file, key=path,
                        expected=RANGE_EXPECTED)
