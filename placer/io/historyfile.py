"""Opening the history file: what it is, then a connection to read it or to write it.

Nothing is written to a file before it is known to be placer's own:

* The file is looked at before SQLite opens it: it must be a regular file
  (not a folder, a pipe or a device); a file of one byte or more must start
  with the SQLite header, and its header must say rollback journal, since
  placer never writes a file in write-ahead-log mode (bytes 18 and 19 are 2
  there).  Another program's file is refused untouched, its journal mode
  included.
* **Writing** (saving a visit, removing one): opened read-write; a new or
  empty file gets the schema; a file of an older version is upgraded in one
  transaction; the journal mode and sync level are set only then.
* **Reading** (``placer machines``, ``placer history``, coefficients reused by a
  visit): opened read-only, and nothing in the file changes.  An empty file
  reads as an empty history; a file of an older version is copied into
  memory and upgraded there.  A save killed mid-way leaves a hot journal
  beside the file, which only a writer may roll back: the file is then
  opened read-write once, for SQLite to roll the unfinished save back
  (what was committed before it is kept; :attr:`Opened.rolled_back` says
  so), and read-only again.

References
----------
[SQLite] "Database File Format" (the 100-byte header: the magic string,
bytes 18-19 = 1 for the rollback journal, 2 for WAL); "Atomic Commit In
SQLite" (hot journals, rolled back by the next writer); "URI Filenames"
(``mode=ro``); "The Online Backup API" (a copy in memory).
"""

from __future__ import annotations

import os
import sqlite3
import stat
import sys
from dataclasses import dataclass
from pathlib import Path

from placer.errors import HistoryError
from placer.io.historyschema import MIGRATIONS, SCHEMA_V1, SCHEMA_VERSION, TABLES

EXPECTED_FILE = "a placer history database"
DAMAGED = "a placer history database as placer wrote it (restore the file from a backup)"
SQLITE_MAGIC = b"SQLite format 3\x00"
"""The first 16 bytes of every SQLite database file [SQLite]."""
BUSY_TIMEOUT_S = 10.0
"""How long a connection waits for another placer holding the file [s]."""


@dataclass
class Opened:
    """A connection to the history and how it came about.

    Parameters
    ----------
    conn : sqlite3.Connection
        Autocommit connection (``isolation_level=None``), foreign keys on.
    read_only : bool
        Whether the file itself can be changed through it (False) or not.
    in_memory : bool
        A copy of an older file upgraded in memory (reading only).
    rolled_back : bool
        A save left unfinished was rolled back when the file was opened.
    """

    conn: sqlite3.Connection
    read_only: bool
    in_memory: bool = False
    rolled_back: bool = False


def _error(path: Path, detail: str, key: str | None = None,
           expected: str | None = EXPECTED_FILE) -> HistoryError:
    return HistoryError(detail, file=str(path), key=key, expected=expected)


def check_file(path: Path) -> bool:
    """Refuse what is not a placer history file, before SQLite touches it.

    Parameters
    ----------
    path : Path
        The database file.

    Returns
    -------
    bool
        Whether it holds anything (False: missing or empty, a new history).

    Raises
    ------
    HistoryError
        Not a regular file, not a SQLite database, or a database in
        write-ahead-log mode (another program's).

    References
    ----------
    [SQLite] "Database File Format": header magic, bytes 18-19.
    """
    try:
        info = path.stat()
    except FileNotFoundError:
        return False
    except OSError as exc:
        raise _error(path, f"cannot be read: {exc.strerror or exc}") from None
    if not stat.S_ISREG(info.st_mode):
        raise _error(path, "is not a regular file", expected="a placer history database file")
    if info.st_size == 0:
        return False
    try:
        with open(path, "rb") as handle:
            header = handle.read(100)
    except OSError as exc:
        raise _error(path, f"cannot be read: {exc.strerror or exc}") from None
    if len(header) < 100 or not header.startswith(SQLITE_MAGIC):
        raise _error(path, "is not a SQLite database")
    if header[18] == 2 or header[19] == 2:
        raise _error(path, "is a SQLite database of another program (write-ahead log mode; "
                           "placer never writes one)")
    return True


def open_to_write(path: Path) -> Opened:
    """Open (create) the file read-write, its schema brought up to this placer's.

    Parameters
    ----------
    path : Path
        The database file; missing parent folders are created.

    Returns
    -------
    Opened
        The connection.

    Raises
    ------
    HistoryError
        Not placer's file, written by a newer placer, damaged, or not writable.
    """
    check_file(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        conn = sqlite3.connect(path, timeout=BUSY_TIMEOUT_S, isolation_level=None)
    except (OSError, sqlite3.Error) as exc:
        raise _error(path, f"cannot be opened: {exc}") from None
    try:
        _guarded(path, lambda: _prepare_to_write(path, conn))
    except BaseException:
        conn.close()
        raise
    return Opened(conn, read_only=False)


def open_to_read(path: Path) -> Opened:
    """Open the file read-only; an older version is upgraded in a copy in memory.

    Parameters
    ----------
    path : Path
        The database file (it must exist).

    Returns
    -------
    Opened
        The connection; nothing done through it changes the file.

    Raises
    ------
    HistoryError
        Missing, not placer's file, written by a newer placer or damaged.
    """
    if not path.exists():
        raise _error(path, "does not exist",
                     expected="a database written by 'placer field --save'")
    if not check_file(path):
        return Opened(_new_in_memory(path), read_only=True, in_memory=True)
    rolled_back = False
    conn = _connect_read_only(path)
    try:
        try:
            version = _stored_version(path, conn)
        except sqlite3.OperationalError as exc:
            if getattr(exc, "sqlite_errorname", "") != "SQLITE_READONLY_ROLLBACK":
                raise
            conn.close()
            _roll_back_unfinished_save(path)
            rolled_back = True
            conn = _connect_read_only(path)
            version = _stored_version(path, conn)
        if version is None:
            conn.close()
            return Opened(_new_in_memory(path), True, in_memory=True, rolled_back=rolled_back)
        _refuse_newer(path, version)
        if version < SCHEMA_VERSION:
            memory = sqlite3.connect(":memory:", isolation_level=None)
            conn.backup(memory)
            conn.close()
            conn = memory
            _guarded(path, lambda: _upgrade(path, memory))
            return Opened(memory, True, in_memory=True, rolled_back=rolled_back)
        _check_tables(path, conn)
        conn.execute("PRAGMA foreign_keys = ON")
        return Opened(conn, True, rolled_back=rolled_back)
    except (sqlite3.DatabaseError, UnicodeDecodeError) as exc:
        conn.close()
        raise _sqlite_error(path, exc) from None
    except BaseException:
        conn.close()
        raise


def _connect_read_only(path: Path) -> sqlite3.Connection:
    try:
        return sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True,
                               timeout=BUSY_TIMEOUT_S, isolation_level=None)
    except (OSError, sqlite3.Error) as exc:
        raise _error(path, f"cannot be opened: {exc}") from None


def _roll_back_unfinished_save(path: Path) -> None:
    """Let SQLite roll back the hot journal of a save that was killed [SQLite]."""
    try:
        conn = sqlite3.connect(path, timeout=BUSY_TIMEOUT_S, isolation_level=None)
        try:
            conn.execute("SELECT COUNT(*) FROM sqlite_master").fetchone()
        finally:
            conn.close()
    except sqlite3.Error as exc:
        raise _error(path, "holds a save that was left unfinished, and it cannot be rolled "
                           f"back here: {exc}",
                     expected="write access to the file and its folder") from None


def _new_in_memory(path: Path) -> sqlite3.Connection:
    """An empty history of this version, in memory (for reading an empty file)."""
    conn = sqlite3.connect(":memory:", isolation_level=None)
    _guarded(path, lambda: _upgrade(path, conn))
    return conn


def _guarded(path: Path, action) -> None:
    try:
        action()
    except (sqlite3.DatabaseError, UnicodeDecodeError) as exc:
        raise _sqlite_error(path, exc) from None


def _sqlite_error(path: Path, exc: Exception) -> HistoryError:
    if getattr(exc, "sqlite_errorname", "") == "SQLITE_NOTADB":
        return _error(path, "is not a SQLite database")
    if isinstance(exc, UnicodeDecodeError):
        return _error(path, "is damaged: it holds text that is not UTF-8", expected=DAMAGED)
    return _error(path, f"cannot be used: {exc}")


def _prepare_to_write(path: Path, conn: sqlite3.Connection) -> None:
    conn.execute("PRAGMA foreign_keys = ON")
    version = _stored_version(path, conn)
    if version is not None:
        _refuse_newer(path, version)
    # Only now is the file known to be placer's (or new): its journal mode may be set.
    conn.execute("PRAGMA journal_mode = DELETE")
    conn.execute("PRAGMA synchronous = FULL")
    if version == SCHEMA_VERSION:
        _check_tables(path, conn)
        return
    _upgrade(path, conn)


def _upgrade(path: Path, conn: sqlite3.Connection) -> None:
    """Create the schema in an empty database, or bring an older one up, in one transaction."""
    conn.execute("PRAGMA foreign_keys = ON")
    conn.execute("BEGIN IMMEDIATE")
    try:
        version = _stored_version(path, conn)
        if version is None:
            # one statement at a time: executescript() would commit first
            for statement in SCHEMA_V1.split(";"):
                if statement.strip():
                    conn.execute(statement)
            conn.execute("INSERT INTO schema_version VALUES (1)")
            version = 1
        _refuse_newer(path, version)
        _check_tables(path, conn, version)
        for step in range(version, SCHEMA_VERSION):
            if step not in MIGRATIONS:
                raise _error(path, f"no migration from schema version {step}",
                             key="schema_version", expected=f"schema version {SCHEMA_VERSION}")
            MIGRATIONS[step](conn)
        conn.execute("UPDATE schema_version SET version = ?", (SCHEMA_VERSION,))
        conn.execute("COMMIT")
    except BaseException:
        if conn.in_transaction:
            conn.execute("ROLLBACK")
        raise


def _stored_version(path: Path, conn: sqlite3.Connection) -> int | None:
    """The file's schema version, or None for a database with no tables."""
    tables = {name for (name,) in conn.execute(
        "SELECT name FROM sqlite_master WHERE type = 'table'")}
    if not tables:
        return None
    if "schema_version" not in tables:
        raise _error(path, "is a SQLite database of another program")
    rows = conn.execute("SELECT version FROM schema_version").fetchall()
    if len(rows) != 1 or not isinstance(rows[0][0], int) or rows[0][0] < 1:
        raise _error(path, f"schema_version holds {rows!r}", key="schema_version",
                     expected="one integer version, 1 or more")
    return rows[0][0]


def _check_tables(path: Path, conn: sqlite3.Connection, version: int = SCHEMA_VERSION) -> None:
    """Every table of the version is there (a damaged file fails here, not mid-query)."""
    present = {name for (name,) in conn.execute(
        "SELECT name FROM sqlite_master WHERE type = 'table'")}
    missing = [name for name in TABLES if name not in present]
    if missing:
        raise _error(path, f"is damaged: schema version {version} but no table "
                           + ", ".join(missing), key="schema_version",
                     expected="a placer history database with all its tables (restore it "
                              "from a backup)")


def _refuse_newer(path: Path, version: int) -> None:
    if version > SCHEMA_VERSION:
        raise _error(path, f"was written by a newer placer (schema version {version}; this "
                           f"placer reads up to {SCHEMA_VERSION}); update placer to use it",
                     key="schema_version",
                     expected=f"schema version {SCHEMA_VERSION} or older")


DB_FILE_NAME = "history.sqlite"


def default_db_path() -> Path:
    """Where the history database lives unless ``--db`` names one.

    In this order: the environment variable ``PLACER_DB`` if set and not
    empty; else ``$XDG_DATA_HOME/placer/history.sqlite`` if ``XDG_DATA_HOME``
    is an absolute path; else on Windows ``%APPDATA%/placer/history.sqlite``
    (``~/AppData/Roaming`` when ``APPDATA`` is unset) and elsewhere
    ``~/.local/share/placer/history.sqlite``.

    Returns
    -------
    Path
        The file (it need not exist yet).

    References
    ----------
    XDG Base Directory Specification 0.8: ``$XDG_DATA_HOME``, default
    ``$HOME/.local/share``; relative paths in it are to be ignored.
    """
    explicit = os.environ.get("PLACER_DB")
    if explicit:
        return Path(explicit).expanduser()
    xdg = os.environ.get("XDG_DATA_HOME")
    if xdg and Path(xdg).is_absolute():
        return Path(xdg) / "placer" / DB_FILE_NAME
    if sys.platform == "win32":
        appdata = os.environ.get("APPDATA")
        base = Path(appdata) if appdata else Path.home() / "AppData" / "Roaming"
        return base / "placer" / DB_FILE_NAME
    return Path.home() / ".local" / "share" / "placer" / DB_FILE_NAME
