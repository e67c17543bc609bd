"""Every file placer writes, written whole or not at all.

A file is written beside its target under a temporary name (``.NAME.xxxxxxxx.part``
in the same folder), flushed to the storage device and then renamed over the target,
so that a reader sees the old file or the new one, never half of one.  Without
``force`` an existing target is never replaced, even one that appeared while the file
was being written: the new file is put in place by a hard link, which fails where a
name exists.  On any failure the temporary file is removed, and the target is as it
was (or absent).

Every failure is an :class:`~placer.errors.OutputError`: one line naming the option the
path came from, the file, what went wrong and what was expected.  :func:`check_target`
says most of them before anything is computed or printed (a missing folder, a folder
or a broken link where the file should go, a name too long, a folder placer cannot
write in); :func:`replacing` says the rest (a full disk) and that the file there
before is unchanged.

References
----------
REFERENCES.md [POSIX] (rename, link, fsync, NAME_MAX), [PythonDocs] (``os.replace``).
"""

from __future__ import annotations

import errno
import os
import stat
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import IO

from placer.errors import OutputError, shown_path
from placer.io.inputs import NAME_EXPECTED, name_problem
from placer.limits import MAX_NAME_BYTES

TEMPORARY_SUFFIX = ".part"
"""Suffix of the file written beside a target before it is renamed over it."""

_NAME_KEPT_BYTES = MAX_NAME_BYTES - 40
"""Bytes of the target's name kept in the temporary name (room for ``.``, the random
part and the suffix)."""

_EDQUOT = getattr(errno, "EDQUOT", errno.ENOSPC)
"""Disk quota exceeded (not every system names it)."""

_REASONS = {errno.ENOSPC: "the disk is full", _EDQUOT: "the disk quota is used up",
            errno.EACCES: "permission denied", errno.EPERM: "permission denied",
            errno.EROFS: "the file system is read-only",
            errno.ENAMETOOLONG: "the name or the path is too long",
            errno.EISDIR: "a folder is in the way", errno.ENOTDIR: "a file is in the way",
            errno.ELOOP: "too many links", errno.EIO: "an input/output error"}
"""What an operating-system error means for a file being written, in plain words."""


def reason(exc: OSError) -> str:
    """The cause of an operating-system error in plain words ("the disk is full").

    Parameters
    ----------
    exc : OSError
        The error.
    """
    if exc.errno in _REASONS:
        return _REASONS[exc.errno]
    return (exc.strerror or str(exc) or type(exc).__name__).lower()


def _fail(path: Path, detail: str, option: str, expected: str) -> OutputError:
    return OutputError(f"'{shown_path(path)}' {detail}", option=option, expected=expected)


def check_name(path: Path, option: str) -> None:
    """Refuse a path with a name part longer than the file system takes.

    Parameters
    ----------
    path : Path
        The path.
    option : str
        The argument it came from, for the message.

    Raises
    ------
    OutputError
        A part over :data:`placer.limits.MAX_NAME_BYTES`.
    """
    problem = name_problem(path)
    if problem is not None:
        raise OutputError(f"the path {problem}", file=shown_path(path), option=option,
                          expected=NAME_EXPECTED)


def check_folder(folder: Path, option: str) -> None:
    """Refuse a folder that is missing, is a file, or cannot be written in.

    Whether placer may write there is found by creating (and removing) a temporary
    file in it: permission bits do not tell for every user (root) or file system.

    Parameters
    ----------
    folder : Path
        The folder.
    option : str
        The argument the path came from, for the message.

    Raises
    ------
    OutputError
        Naming the folder, or the file that stands where a folder should be.
    """
    folder = Path(folder)
    check_name(folder, option)
    try:
        _check_folder(folder, option)
    except OSError as exc:      # a path the system cannot look up (too long, a loop)
        raise _fail(folder, f"cannot be looked up ({reason(exc)})", option,
                    "a shorter path to an existing folder") from None


def _check_folder(folder: Path, option: str) -> None:
    if not folder.is_dir():
        up = folder
        while not up.exists() and up != up.parent:
            up = up.parent
        if up.exists() and not up.is_dir():
            raise _fail(up, "is a file, not a folder", option, "a file in an existing folder")
        raise OutputError(f"folder '{shown_path(folder)}' does not exist", option=option,
                          expected="a file in an existing folder")
    try:
        handle, probe = tempfile.mkstemp(dir=folder, prefix=".placer.", suffix=TEMPORARY_SUFFIX)
    except OSError as exc:
        raise OutputError(f"cannot write in folder '{shown_path(folder)}': {reason(exc)}",
                          option=option,
                          expected="a folder placer may write in") from None
    os.close(handle)
    os.unlink(probe)


def check_target(path: Path, option: str, *, force: bool = False) -> Path:
    """Refuse a target placer cannot, or may not, write: say it before any work is done.

    Parameters
    ----------
    path : Path
        The file to be written.
    option : str
        The argument the path came from (``sheet``, ``out``, ``file``...).
    force : bool
        A file there may be replaced.

    Returns
    -------
    Path
        ``path``.

    Raises
    ------
    OutputError
        A name part too long, a missing folder (or a file in its place), a folder
        placer cannot write in, a folder or a broken link where the file should go,
        or a file that exists without ``force``.
    """
    path = Path(path)
    check_name(path, option)
    check_folder(path.parent, option)
    try:
        return _check_file(path, option, force)
    except OSError as exc:
        raise _fail(path, f"cannot be looked up ({reason(exc)})", option,
                    "a shorter path in an existing folder") from None


def _check_file(path: Path, option: str, force: bool) -> Path:
    if path.is_dir():
        raise _fail(path, "is a folder", option, "a file name")
    if path.is_symlink() and not path.exists():
        raise _fail(path, f"is a link to '{shown_path(os.readlink(path))}', which does not exist",
                    option,
                    "a file name that is not a broken link")
    if path.exists() and not force:
        raise _fail(path, "exists already", option,
                    "a new file name, or {opt:force} to replace it")
    return path


def _temporary(path: Path) -> tuple[int, str]:
    """A new file beside ``path``: its descriptor and name.

    It gets the permissions of the file it replaces, or those ``open()`` gives a new
    file (0o666 less the umask [POSIX]), not the owner-only ones of a temporary file.
    """
    name = os.fsencode(path.name)[:_NAME_KEPT_BYTES].decode(errors="ignore")
    handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=f".{name}.",
                                         suffix=TEMPORARY_SUFFIX)
    try:
        try:
            mode = stat.S_IMODE(os.stat(path).st_mode)
        except OSError:
            mask = os.umask(0)
            os.umask(mask)
            mode = 0o666 & ~mask
        if hasattr(os, "fchmod"):
            os.fchmod(handle, mode)
    except BaseException:
        os.close(handle)
        os.unlink(temporary)
        raise
    return handle, temporary


def _put_in_place(temporary: str, path: Path, option: str, force: bool) -> None:
    """Rename ``temporary`` to ``path``; without ``force`` only where no file is."""
    if force:
        os.replace(temporary, path)
        return
    try:
        os.link(temporary, path)
    except FileExistsError:
        raise _fail(path, "exists already (it appeared while placer was writing)", option,
                    "a new file name, or {opt:force} to replace it") from None
    except OSError as exc:        # a file system without hard links
        if exc.errno in (errno.ENOSPC, _EDQUOT, errno.EROFS, errno.EACCES):
            raise
        if os.path.lexists(path):
            raise _fail(path, "exists already", option,
                        "a new file name, or {opt:force} to replace it") from None
        os.replace(temporary, path)


def _sync_folder(folder: Path) -> None:
    """Flush the folder's entry for a renamed file (where the system allows it)."""
    try:
        handle = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(handle)
    except OSError:
        pass
    finally:
        os.close(handle)


@contextmanager
def replacing(path: Path, option: str, *, force: bool = False, text: bool = False,
              what: str = "file") -> Iterator[IO]:
    """A stream to write ``path`` through: whole on leaving the block, or not at all.

    Parameters
    ----------
    path : Path
        The file to write.
    option : str
        The argument the path came from, for the message.
    force : bool
        Replace a file that exists.
    text : bool
        A text stream (UTF-8, lines as written) instead of a binary one.
    what : str
        What the file is, for the message ("sheet", "visit report").

    Yields
    ------
    IO
        The stream.

    Raises
    ------
    OutputError
        Nothing was written: the target exists without ``force`` or the system
        refused (a full disk...); the file there before is unchanged.
    """
    path = Path(path)
    try:
        handle, temporary = _temporary(path)
    except OSError as exc:
        raise _not_written(path, exc, option, what) from None
    try:
        with os.fdopen(handle, "w" if text else "wb",
                       **({"encoding": "utf-8", "newline": ""} if text else {})) as stream:
            yield stream
            stream.flush()
            os.fsync(stream.fileno())
        _put_in_place(temporary, path, option, force)
    except OSError as exc:
        raise _not_written(path, exc, option, what) from None
    finally:
        try:
            os.unlink(temporary)
        except OSError:
            pass
    _sync_folder(path.parent)


def _not_written(path: Path, exc: OSError, option: str, what: str) -> OutputError:
    before = ("the file there before is unchanged" if os.path.lexists(path)
              else "no file was left there")
    return OutputError(f"the {what} '{shown_path(path)}' was not written ({reason(exc)}); "
                       f"{before}",
                       option=option, expected="room and write access in its folder")


def write_text(path: Path, text: str, option: str, *, force: bool = False,
               what: str = "file") -> Path:
    """Write ``text`` (UTF-8) to ``path`` whole or not at all (see :func:`replacing`).

    Parameters
    ----------
    path : Path
        The file.
    text : str
        Its text.
    option : str
        The argument the path came from.
    force : bool
        Replace a file that exists.
    what : str
        What the file is, for the message.

    Returns
    -------
    Path
        ``path``.
    """
    with replacing(path, option, force=force, text=True, what=what) as stream:
        stream.write(text)
    return Path(path)
