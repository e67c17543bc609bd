"""Carrying on an interrupted batch: the rotors kept, checked against the readings and the template."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from placer.batch import (
    RotorReading,
)
from placer.errors import InputError
from placer.io.batchreadings import RowError
from placer.io.tables import printable


def read_done(path: Path, digest: str, n_planes: int | None = None
              ) -> tuple[list[dict[str, Any]], int]:
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
