"""Carrying on an interrupted batch: the rotors kept, checked against the readings and the
template, and every output checked to be this run's before it is replaced.

``PREFIX.jsonl`` is the run's log.  Its first line names the run::

    {"placer_batch": 1, "run": <12 hex digits>, "placer": <version>,
     "template": <template digest>, "readings": <readings digest>,
     "errors_csv": <digest of PREFIX.errors.csv>}

Each later line is a solved rotor's record, or (when a resumed run writes an errors
file of other content) ``{"placer_batch": 1, "run": ..., "errors_csv": ...}``.  A resumed
run replaces only outputs it can show are this run's: the log with this header;
``PREFIX.csv`` when it is the table of the log's first rotors, byte for byte;
``PREFIX.errors.csv`` when its digest is in the log; ``PREFIX.summary.json`` when it
names the run.  Anything else is refused, naming the file.

References
----------
REFERENCES.md [FIPS180-4] (SHA-256).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from placer.batch import (
    RotorReading,
)
from placer.errors import InputError, OutputError, printable, shown_path
from placer.io.batchreadings import RowError
from placer.io.batchrecords import csv_header, csv_row

LOG_KEY = "placer_batch"
"""The key that marks a line of ``PREFIX.jsonl`` as the run's own (not a rotor)."""

LOG_VERSION = 1
"""Version of the log's layout."""

DIGEST_CHARS = 12
"""Hex digits kept of a SHA-256 digest that names a file's content."""

_CHUNK_BYTES = 1 << 20
"""Bytes read at a time when a file is digested or compared [bytes]."""


def file_digest(path: Path) -> str:
    """First :data:`DIGEST_CHARS` hex digits of the SHA-256 of a file's bytes.

    Parameters
    ----------
    path : Path
        The file.

    References
    ----------
    [FIPS180-4] (SHA-256).
    """
    digest = hashlib.sha256()
    with Path(path).open("rb") as handle:
        while chunk := handle.read(_CHUNK_BYTES):
            digest.update(chunk)
    return digest.hexdigest()[:DIGEST_CHARS]


def text_digest(text: str) -> str:
    """:func:`file_digest` of a file holding ``text`` (UTF-8).

    Parameters
    ----------
    text : str
        The file's text.
    """
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:DIGEST_CHARS]


def run_header(template: str, readings: str, errors_csv: str, version: str) -> dict[str, Any]:
    """The first line of a new run's log.

    The run's name is the digest of the template's and the readings' digests, so that
    the same files give the same outputs.

    Parameters
    ----------
    template, readings : str
        Digests of the template and readings files.
    errors_csv : str
        :func:`text_digest` of the errors file this run writes first.
    version : str
        placer's version.
    """
    run = hashlib.sha256(f"{template}\n{readings}".encode()).hexdigest()[:DIGEST_CHARS]
    return {LOG_KEY: LOG_VERSION, "run": run, "placer": version, "template": template,
            "readings": readings, "errors_csv": errors_csv}


def errors_line(run: str, errors_csv: str) -> dict[str, Any]:
    """A log line saying the run wrote an errors file of this digest.

    Parameters
    ----------
    run : str
        The run's name (line 1 of the log).
    errors_csv : str
        :func:`text_digest` of the errors file.
    """
    return {LOG_KEY: LOG_VERSION, "run": run, "errors_csv": errors_csv}


@dataclass
class RunLog:
    """What a run's log holds, as read to resume it.

    Parameters
    ----------
    run : str
        The run's name.
    records : list of dict
        The rotors kept, in the order solved.
    keep : int
        Bytes of the log that hold them [bytes]; a partial last line is after them.
    errors_csv : set of str
        Digests of every errors file the run wrote.
    """

    run: str
    records: list[dict[str, Any]] = field(default_factory=list)
    keep: int = 0
    errors_csv: set[str] = field(default_factory=set)


def _not_this_run(path: Path, detail: str = "") -> OutputError:
    return OutputError(f"'{shown_path(path)}' was not written by this batch run{detail}",
                       option="out",
                       expected="outputs placer wrote for these files, {opt:force} to start "
                                "again, or another {opt:out}")


def read_log(path: Path, digest: str, n_planes: int | None = None) -> RunLog:
    """Read a run's log to carry it on (see :func:`read_done` for the rotors).

    Parameters
    ----------
    path : Path
        ``PREFIX.jsonl``.
    digest : str
        The template's digest now.
    n_planes : int or None
        Planes every record must have; None not to check.

    Raises
    ------
    OutputError
        The first line is not a placer batch header (an empty file, another
        program's file, a log of an older placer).
    InputError
        As :func:`read_done`.
    """
    path = Path(path)
    with path.open("rb") as handle:
        first = handle.readline()
    try:
        header = json.loads(first.decode("utf-8")) if first.endswith(b"\n") else None
    except (ValueError, RecursionError):
        header = None
    if not (isinstance(header, dict) and header.get(LOG_KEY) == LOG_VERSION
            and isinstance(header.get("run"), str)):
        raise _not_this_run(path, " (line 1 is not the header of a placer batch run)")
    if header.get("template") != digest:
        raise InputError(f"was written from another template "
                         f"({printable(str(header.get('template')))[:20]}, now {digest})",
                         file=str(path), key="line 1",
                         expected="the same template, or {opt:force} to start again")
    log = RunLog(header["run"])
    log.records, log.keep = read_done(path, digest, n_planes, log)
    return log


def check_outputs(paths, log: RunLog | None, n_planes: int, errors_text: str) -> None:
    """Refuse to resume over an output that is not this run's (see the module's text).

    Parameters
    ----------
    paths : BatchPaths
        The outputs.
    log : RunLog or None
        The run's log as read; None when there is none.
    n_planes : int
        Planes of the template.
    errors_text : str
        The errors file this run writes now (a file already holding it loses nothing).

    Raises
    ------
    OutputError
        Naming the first output that is not this run's.
    """
    if paths.summary_json.exists():
        try:
            summary = json.loads(paths.summary_json.read_text(encoding="utf-8"))
        except (OSError, ValueError, RecursionError):
            summary = None
        if log is None or not isinstance(summary, dict) or summary.get("run") != log.run:
            raise _not_this_run(paths.summary_json)
    if paths.errors_csv.exists():
        found = file_digest(paths.errors_csv)
        if found != text_digest(errors_text) and (log is None or found not in log.errors_csv):
            raise _not_this_run(paths.errors_csv)
    if paths.results_csv.exists() and not _is_table_of(
            paths.results_csv, [] if log is None else log.records, n_planes):
        raise _not_this_run(paths.results_csv)


def csv_line(cells: list[str]) -> str:
    """One line of a CSV file as placer writes it (RFC 4180 quoting, ``\\n`` ending).

    Parameters
    ----------
    cells : list of str
        The line's cells.
    """
    out = io.StringIO()
    csv.writer(out, lineterminator="\n").writerow(cells)
    return out.getvalue()


def _is_table_of(path: Path, records: list[dict[str, Any]], n_planes: int) -> bool:
    """Whether ``path`` is placer's results table of the first rotors of ``records``."""
    with Path(path).open("rb") as handle:
        lines = [csv_header(n_planes)] + [csv_row(record) for record in records]
        for number, cells in enumerate(lines):
            want = csv_line(cells).encode("utf-8")
            got = handle.read(len(want))
            if got == b"" and number > 0:
                return True
            if got != want:
                return False
        return handle.read(1) == b""


def read_done(path: Path, digest: str, n_planes: int | None = None,
              log: RunLog | None = None) -> tuple[list[dict[str, Any]], int]:
    """The rotors already in ``PREFIX.jsonl`` and how many bytes of it to keep.

    A partial last line (a batch killed while writing it) is left out of
    both; :func:`cut_to` cuts it off the file once the batch goes on.

    Parameters
    ----------
    path : Path
        ``PREFIX.jsonl``.
    digest : str
        :func:`template_digest` of the template now given.
    n_planes : int or None
        Planes every record must have; None not to check.
    log : RunLog, optional
        The run whose log this is: its own lines (of this run) are taken into it,
        not read as rotors.

    Returns
    -------
    records : list of dict
        The result records kept.
    keep : int
        Bytes of the file that hold them.

    Raises
    ------
    InputError
        When a line other than the last is not a result record (of
        ``n_planes`` planes, when given), or a record was written from
        another template.
    """
    path = Path(path)
    data = path.read_bytes()
    keep = data.rfind(b"\n") + 1
    lines = data[:keep].split(b"\n")[:-1]
    records: list[dict[str, Any]] = []
    for number, raw in enumerate(lines, start=1):
        try:
            record = json.loads(raw.decode("utf-8"))
            if log is not None and isinstance(record, dict) and LOG_KEY in record:
                if record.get("run") != log.run or not isinstance(record.get("errors_csv"), str):
                    raise ValueError("another run")
                log.errors_csv.add(record["errors_csv"])
                continue
            _check_record(record, n_planes)
        except (ValueError, KeyError, IndexError, TypeError, RecursionError):
            if number == len(lines) and keep == len(data):
                keep -= len(raw) + 1
                break
            raise InputError("is not a result record", file=str(path), key=f"line {number}",
                             expected="a file written by placer batch, or {opt:force} to start "
                                      "again") from None
        if record.get("template") != digest:
            raise InputError(f"was written from another template "
                             f"({printable(str(record.get('template')))[:20]}, "
                             f"now {digest})", file=str(path), key=f"line {number}",
                             expected="the same template, or {opt:force} to start again")
        records.append(record)
    return records, keep


def _check_record(record: Any, n_planes: int | None) -> None:
    """Raise ValueError unless ``record`` has what resuming reads from it."""
    if not isinstance(record, dict) or not isinstance(record.get("serial"), str):
        raise ValueError("no serial")
    planes = record["planes"]
    if not isinstance(planes, list) or not planes or (n_planes and len(planes) != n_planes):
        raise ValueError("planes")
    for plane in planes:
        if not isinstance(plane["parts"], str) or not isinstance(plane["catalog"], str):
            raise ValueError("plane")
        residual = plane["residual_gmm"]
        if residual is not None and not isinstance(residual, (int, float)):
            raise ValueError("residual")
        for part in plane["fitted"]:
            if not isinstance(part["item"], str) or not isinstance(part["count"], int):
                raise ValueError("part")


def cut_to(path: Path, keep: int) -> None:
    """Cut ``path`` to its first ``keep`` bytes (a no-op when it is that long).

    Parameters
    ----------
    path : Path
        The file.
    keep : int
        Bytes to keep [bytes].
    """
    if Path(path).stat().st_size != keep:
        with Path(path).open("r+b") as handle:
            handle.truncate(keep)


def check_unchanged(done: list[dict[str, Any]], rows: list[RotorReading | RowError],
                    results_path: Path) -> None:
    """Refuse to resume when a kept result's row is gone or its corrections changed.

    Parameters
    ----------
    done : list of dict
        The result records kept (:func:`read_done`).
    rows : list of RotorReading or RowError
        The rows of the readings file; the first row of each serial counts.
    results_path : Path
        ``PREFIX.jsonl``, for the message.

    Raises
    ------
    InputError
        Naming the results file, the record's line and serial.
    """
    readings: dict[str, RotorReading | RowError] = {}
    for row in rows:
        if row.serial is not None:
            readings.setdefault(row.serial, row)
    again = "the readings the results were solved from, or {opt:force} to start again"
    for number, record in enumerate(done, start=1):
        serial = record["serial"]
        row = readings.get(serial)
        if row is None:
            raise InputError(f"rotor {serial} is no longer in the readings file",
                             file=str(results_path), key=f"line {number}", expected=again)
        if isinstance(row, RowError) or record.get("input") != row.digest:
            what = "is now a bad row" if isinstance(row, RowError) else \
                "has other corrections in the readings file than when it was solved"
            raise InputError(f"rotor {serial} {what}", file=str(results_path),
                             key=f"line {number}", expected=again)


def drawer_use(template, done: list[dict[str, Any]]) -> dict[str, int]:
    """Parts the kept rotors took from each drawer (by stock key), for a resumed batch.

    Parameters
    ----------
    template : Job
        The batch's template (its planes' catalogues name the drawers).
    done : list of dict
        The kept rotors' records.
    """
    used: dict[str, int] = {}
    for record in done:
        for plane in record["planes"]:
            items = {item.id: item for item in template.planes[plane["plane"] - 1].catalog.items}
            for part in plane["fitted"]:
                item = items.get(part["item"])
                if part["action"] != "remove" and item is not None and item.stock is not None:
                    used[item.stock_key] = used.get(item.stock_key, 0) + int(part["count"])
    return used
