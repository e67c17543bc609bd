"""Files of ``placer batch``: the template, the readings, the results, the summary.

The I/O edge of :mod:`placer.batch` (which stays pure): it reads the
template job and the readings, writes every result as it is found, and
prints progress and the summary.

Template
--------
A normal job file (``[rotor]`` and ``[[planes]]``, see ``placer solve``).
A plane's ``correction`` / ``unbalance`` may be left out; if given it is
checked like any job file's and then not used.

Readings, CSV (``.csv``)
------------------------
UTF-8 (a leading byte-order mark is allowed), comma separated, first line
the header.  Columns, in any order, ``<plane>`` being the plane number in
template order (1, 2, ...)::

    serial,1_mass_g,1_angle_deg,2_gmm,2_angle_deg
    WM-FH-0001,4.2,117.5,630.0,12.0

* ``serial``: the rotor's serial, 1 to 40 characters, ASCII letters,
  digits, ``-``, ``_`` and ``.`` only; each serial once per file.
* per plane ``<plane>_angle_deg`` and exactly one of ``<plane>_mass_g``
  (at the plane's ``radius_mm``; not for planes with ``radii_mm``) or
  ``<plane>_gmm``: the required **correction** (where mass must be added,
  as ``correction = {...}`` in a job file), magnitude zero or more.

No other columns.  A bad header stops the batch (exit 2); a bad row (wrong
number of values, a value missing, not a number, NaN or infinite, outside
the range of every placer number, a negative magnitude, a bad or repeated
serial) goes to the errors file and the other rows go on.  Blank lines are
skipped.

Numbers are plain decimals: an optional sign, digits with an optional
decimal point, an optional exponent (``12.5``, ``-3``, ``.5``, ``1.25e3``).
Forms Python's ``float`` also reads but a spreadsheet or a balancing
machine does not write (``1_000``, ``0x1p3``, digits of other scripts) are
refused, and so are ``nan`` and ``inf``.  Every number is zero or between
1e-12 and 1e12 in size, as in every placer file (:mod:`placer.io.tables`).

Readings, JSON lines (``.jsonl``)
---------------------------------
One object per line, the planes in template order::

    {"serial": "WM-FH-0001", "planes": [{"mass_g": 4.2, "angle_deg": 117.5},
                                        {"gmm": 630.0, "angle_deg": 12.0}]}

Numbers are JSON numbers (not text), with the range of the CSV's; a line
that is not JSON, or nests lists and objects too deeply to read, is a bad
row like any other.

Results (``PREFIX`` from ``--out``; default the readings file's name with
its suffix replaced by ``.results``)
--------------------------------------------------------------------------
* ``PREFIX.jsonl``: one object per solved rotor, written and flushed row by
  row::

      {"serial": ..., "line": <line in the readings file>, "template": <digest>,
       "input": <digest of the row's corrections>,
       "within_tolerance": true | false | null, "solved_together": false,
       "stock_short": [ids of items no plan within the stock could spare],
       "planes": [{"plane": 1, "name": ..., "catalog": ...,
                   "correction_gmm": ..., "correction_angle_deg": ...,
                   "parts": "3:M10×2;7:M6×1",
                   "fitted": [{"position": 3, "angle_deg": ..., "item": "M10",
                               "mass_g": ..., "count": 2,
                               "action": "fit" | "drill" | "remove"}, ...],
                   "part_count": 3, "residual_gmm": ..., "residual_angle_deg": ...,
                   "tolerance_gmm": ... | null, "within_tolerance": ... | null}, ...]}

* ``PREFIX.csv``: ``serial``, then per plane ``<plane>_parts``,
  ``<plane>_residual_gmm``, ``<plane>_within_tolerance``, then
  ``within_tolerance`` (all planes); flags are ``true`` / ``false``, empty
  where no tolerance is given; ``parts`` is ``position:item×count`` joined
  by ``;`` (empty for no parts; a negative count for parts the plan takes
  off, action "remove").  Rewritten from ``PREFIX.jsonl`` when a
  batch is resumed, so the two always hold the same rotors.
* ``PREFIX.errors.csv``: ``line,serial,message`` for each bad row.
* ``PREFIX.summary.json``: the :class:`placer.batch.BatchSummary` fields
  (rows_read, solved, already_done, errors, within, outside, no_tolerance,
  share_within, parts_used, elapsed_s, jobs) plus template, template_digest,
  readings, solved_now and outputs, written at the end.  ``jobs`` is the
  number of processes that solved (``--jobs`` capped at the usable cores
  and at the rotors to solve).

All JSON written is strict JSON (RFC 8259): a number that is not finite
would be written as null (none is expected: the readers keep every input
in range).

Results come in input order.  Existing outputs are never overwritten
without ``resume`` (keep the rotors of ``PREFIX.jsonl``, drop a partial
last line, solve the rest) or ``force`` (start again).  Rows are flushed to
the operating system one by one, which survives an interrupted or killed
batch (not a power cut).

Resume checks that the readings are the ones the kept results were solved
from: every kept result's serial must still be in the readings file, with
the same corrections (the ``input`` digest, exact to the last bit of every
number).  Otherwise the batch stops with exit 2 before writing anything,
naming the results file, the line and the serial; ``--force`` starts
again, or another ``--out`` keeps both.  A row that was bad before and is
good now is simply solved.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import math
import re
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import asdict, dataclass, replace
from pathlib import Path
from typing import Any, TextIO

from placer.batch import (
    BatchSummary,
    BatchTally,
    RotorOutcome,
    RotorReading,
    default_jobs,
    processes_used,
    reading_digest,
    solve_readings,
    usable_cores,
)
from placer.errors import InputError, JobError
from placer.geometry import angle_of_deg, polar
from placer.io.jobfile import _plane, _rotor
from placer.io.tables import (
    Table,
    json_text,
    number_problem,
    printable,
    read_toml,
    whole_number_text,
)
from placer.job import Job
from placer.limits import DEFAULT_TIME_LIMIT_S, MAX_WHOLE, RANGE_EXPECTED

SERIAL_PATTERN = re.compile(r"[A-Za-z0-9._-]{1,40}")
"""A serial: 1 to 40 ASCII letters, digits, '-', '_' or '.'."""
SERIAL_EXPECTED = "1 to 40 letters, digits, '-', '_' or '.'"
COLUMN_PATTERN = re.compile(r"([0-9]+)_(mass_g|gmm|angle_deg)")
PLAIN_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
"""A number as a spreadsheet or a balancing machine writes it (ASCII digits only)."""
PLAIN_EXPECTED = "a plain decimal number such as 12.5, -3 or 1.25e3"
NON_FINITE = frozenset(sign + word for sign in ("", "+", "-")
                       for word in ("nan", "inf", "infinity"))
JSON_INT_DIGITS = 30
"""JSON whole numbers longer than this are not converted (they are out of range anyway)."""
PLACEHOLDER_CORRECTION = {"gmm": 0.0, "angle_deg": 0.0}
"""Put into template planes that give no correction, so that the job reader accepts them."""
PLAIN_PROGRESS_EVERY_S = 10.0
"""Seconds between progress lines when stderr is not a terminal."""


@dataclass(frozen=True)
class RowError:
    """A readings row that cannot be solved: its line, its serial if known, why."""

    line: int
    serial: str | None
    message: str


@dataclass(frozen=True)
class BatchPaths:
    """The four output files of a batch."""

    results_csv: Path
    results_jsonl: Path
    errors_csv: Path
    summary_json: Path

    @classmethod
    def from_prefix(cls, prefix: Path) -> BatchPaths:
        prefix = str(prefix)
        return cls(Path(prefix + ".csv"), Path(prefix + ".jsonl"), Path(prefix + ".errors.csv"),
                   Path(prefix + ".summary.json"))

    def all(self) -> tuple[Path, ...]:
        return (self.results_csv, self.results_jsonl, self.errors_csv, self.summary_json)


def default_prefix(readings_path: Path) -> Path:
    """The readings file's name with its suffix replaced by ``.results``."""
    readings_path = Path(readings_path)
    return readings_path.with_name(readings_path.stem + ".results")


# --------------------------------------------------------------------- template
def read_template(path: Path) -> Job:
    """Read a template job file: a job file whose planes need no correction.

    Raises
    ------
    JobError
        Naming the template file and the key, as for any job file.
    """
    path = Path(path)
    file = str(path)
    data = read_toml(path, JobError, "template file")
    planes = data.get("planes")
    if isinstance(planes, list):
        for plane in planes:
            if isinstance(plane, dict) and "correction" not in plane and "unbalance" not in plane:
                plane["correction"] = dict(PLACEHOLDER_CORRECTION)
    root = Table(data, file, "", JobError)
    root.allow_only(("rotor", "planes"))
    rotor = _rotor(root.sub("rotor", required=True))
    catalogs: dict = {}
    # The steps of placer.io.jobfile.read_job, on the table with placeholders
    # (tests/test_batch.py checks that both give the same job).
    plane_jobs = [_plane(table, path.parent, catalogs, rotor.correction_basis)
                  for table in root.tables("planes", required=True)]
    if rotor.com_distances_mm is not None and len(rotor.com_distances_mm) != len(plane_jobs):
        raise JobError(f"gives {len(rotor.com_distances_mm)} distances for {len(plane_jobs)} "
                       "planes", file=file, key="rotor.com_distances_mm",
                       expected="one distance per plane")
    plane_jobs = [replace(p, correction_gmm=0j, given_as="batch template") for p in plane_jobs]
    return Job(rotor=rotor, planes=tuple(plane_jobs), source=file)


def template_digest(path: Path) -> str:
    """First 12 hex digits of the SHA-256 of the template file's bytes."""
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()[:12]


# --------------------------------------------------------------------- readings
def read_readings(path: Path, template: Job) -> list[RotorReading | RowError]:
    """Every row of a readings file, in order: a reading, or the reason it is bad.

    ``.csv`` and ``.jsonl`` files (see the module docstring).

    Raises
    ------
    InputError
        When the file is missing, unreadable, of another kind, or its CSV
        header is wrong (naming the file and the column).
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in (".csv", ".jsonl"):
        raise InputError(f"is a '{suffix or 'no suffix'}' file", file=str(path),
                         expected="a readings file ending in .csv or .jsonl")
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise InputError("readings file not found", file=str(path)) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a readings file", file=str(path)) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the readings file: {printable(str(exc))}",
                         file=str(path)) from None
    rows = _csv_rows(text, path, template) if suffix == ".csv" else _jsonl_rows(text, template)
    return _mark_repeats(list(rows))


@dataclass(frozen=True)
class _PlaneColumns:
    magnitude: int
    angle: int
    kind: str
    radius_mm: float | None


def _radius_of(template: Job, index: int) -> float | None:
    radii = set(template.planes[index].geometry.radii_mm)
    return radii.pop() if len(radii) == 1 else None


def _csv_header(names: list[str], file: str, template: Job) -> tuple[int, list[_PlaneColumns]]:
    n_planes = len(template.planes)
    expected = ("serial, then per plane <plane>_mass_g or <plane>_gmm and <plane>_angle_deg, "
                f"<plane> from 1 to {n_planes}")
    seen: dict[str, int] = {}
    per_plane: dict[int, dict[str, int]] = {}
    for index, name in enumerate(names):
        if name in seen:
            raise InputError("appears twice in the header", file=file,
                             key=f"column '{printable(name)}'", expected="each column once")
        seen[name] = index
        if name == "serial":
            continue
        match = COLUMN_PATTERN.fullmatch(name)
        if match is None:
            raise InputError("unknown column", file=file, key=f"column '{printable(name)}'",
                             expected=expected)
        number = int(match.group(1))
        if not 1 <= number <= n_planes:
            raise InputError(f"plane {number} is not in the template", file=file,
                             key=f"column '{name}'",
                             expected=f"plane numbers 1 to {n_planes}")
        per_plane.setdefault(number, {})[match.group(2)] = index
    if "serial" not in seen:
        raise InputError("no 'serial' column", file=file, key="header", expected=expected)
    planes = []
    for number in range(1, n_planes + 1):
        given = per_plane.get(number, {})
        kinds = [k for k in ("mass_g", "gmm") if k in given]
        if "angle_deg" not in given:
            raise InputError(f"no column {number}_angle_deg", file=file, key="header",
                             expected=expected)
        if len(kinds) != 1:
            raise InputError(f"plane {number} needs one of {number}_mass_g or {number}_gmm, "
                             f"not {'both' if kinds else 'neither'}", file=file, key="header",
                             expected=expected)
        radius = _radius_of(template, number - 1)
        if kinds[0] == "mass_g" and radius is None:
            raise InputError(f"plane {number} has its own radius per position", file=file,
                             key=f"column '{number}_mass_g'", expected=f"{number}_gmm")
        planes.append(_PlaneColumns(given[kinds[0]], given["angle_deg"], kinds[0], radius))
    return seen["serial"], planes


def _csv_rows(text: str, path: Path, template: Job) -> Iterator[RotorReading | RowError]:
    file = str(path)
    reader = csv.reader(io.StringIO(text, newline=""))
    try:
        header = next(reader)
    except StopIteration:
        raise InputError("is empty", file=file, key="header",
                         expected="a header line: serial,1_mass_g,1_angle_deg,...") from None
    except csv.Error as exc:
        raise InputError(f"header is not CSV: {printable(str(exc))}", file=file,
                         key="header", expected="comma-separated column names") from None
    names = [name.strip() for name in header]
    serial_at, planes = _csv_header(names, file, template)
    end = reader.line_num
    while True:
        start = end + 1
        try:
            row = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:
            end = reader.line_num
            yield RowError(start, None, f"not a CSV row: {exc}")
            continue
        end = reader.line_num
        if not row or all(not cell.strip() for cell in row) and len(row) <= 1:
            continue
        cells = [cell.strip() for cell in row]
        serial = cells[serial_at] if serial_at < len(cells) else None
        serial = serial if serial and SERIAL_PATTERN.fullmatch(serial) else None
        if len(cells) != len(names):
            yield RowError(start, serial, f"has {len(cells)} values, the header has "
                                          f"{len(names)} columns")
            continue
        problem = _serial_problem(cells[serial_at])
        if problem:
            yield RowError(start, None, problem)
            continue
        corrections = []
        for number, columns in enumerate(planes, start=1):
            value = _vector(cells[columns.magnitude], cells[columns.angle], columns,
                            f"{number}_{columns.kind}", f"{number}_angle_deg")
            if isinstance(value, str):
                yield RowError(start, serial, value)
                break
            corrections.append(value)
        else:
            yield RotorReading(start, serial, tuple(corrections))


def _serial_problem(serial: Any) -> str | None:
    if not isinstance(serial, str):
        return "serial is missing" if serial is None else "serial is not text"
    if not serial:
        return "serial is missing"
    if not SERIAL_PATTERN.fullmatch(serial):
        shown = serial if len(serial) <= 50 else serial[:47] + "..."
        return f"serial '{shown}' is not a serial (expected {SERIAL_EXPECTED})"
    return None


class _OutOfRange:
    """A JSON number too large to convert to a finite float: its text is kept."""

    def __init__(self, text: str) -> None:
        digits = len(text.lstrip("+-"))
        self.shown = text if len(text) <= 30 else f"a whole number of {digits} digits"


def _json_int(text: str) -> int | _OutOfRange:
    return int(text) if len(text) <= JSON_INT_DIGITS else _OutOfRange(text)


def _json_float(text: str) -> float | _OutOfRange:
    value = float(text)
    return value if math.isfinite(value) else _OutOfRange(text)


def _number(raw: Any, name: str, text: bool) -> float | str:
    """A number in range from a CSV cell (``text``) or a JSON value; else the problem as text.

    See the module docstring for the forms and the range accepted.
    """
    if raw is None or raw == "":
        return f"{name} is missing"
    if isinstance(raw, str) and not text:
        shown = raw if len(raw) <= 30 else raw[:27] + "..."
        return f"{name} is the text '{shown}' (expected a JSON number, without quotes)"
    if isinstance(raw, str):
        shown = raw if len(raw) <= 30 else raw[:27] + "..."
        if raw.lower() in NON_FINITE:
            value = float(raw)
        elif PLAIN_NUMBER.fullmatch(raw):
            value = float(raw)  # a long string of digits overflows to inf, never raises
            if not math.isfinite(value):
                return f"{name} is '{shown}' (expected {RANGE_EXPECTED})"
        else:
            try:
                float(raw)
            except (ValueError, OverflowError):
                return f"{name} is '{shown}', not a number (expected {PLAIN_EXPECTED})"
            return f"{name} is '{shown}', not a plain number (expected {PLAIN_EXPECTED})"
    elif isinstance(raw, _OutOfRange):
        return f"{name} is {raw.shown} (expected {RANGE_EXPECTED})"
    elif isinstance(raw, bool) or not isinstance(raw, (int, float)):
        return f"{name} is not a number"
    elif isinstance(raw, int) and abs(raw) > MAX_WHOLE:
        return f"{name} is {whole_number_text(raw)} (expected {RANGE_EXPECTED})"
    else:
        value = float(raw)
    problem = number_problem(value)
    return value if problem is None else f"{name} is {problem}"


def _vector(raw_magnitude: Any, raw_angle: Any, columns: _PlaneColumns, magnitude_name: str,
            angle_name: str, text: bool = True) -> complex | str:
    magnitude = _number(raw_magnitude, magnitude_name, text)
    if isinstance(magnitude, str):
        return magnitude
    if magnitude < 0:
        return f"{magnitude_name} is {magnitude:g} (expected zero or more)"
    angle = _number(raw_angle, angle_name, text)
    if isinstance(angle, str):
        return angle
    gmm = magnitude * columns.radius_mm if columns.kind == "mass_g" else magnitude
    vector = polar(gmm, angle)
    if not (math.isfinite(vector.real) and math.isfinite(vector.imag)):  # cannot happen in range
        return f"{magnitude_name} gives a correction that is not finite (expected {RANGE_EXPECTED})"
    return vector


def _jsonl_rows(text: str, template: Job) -> Iterator[RotorReading | RowError]:
    n_planes = len(template.planes)
    for line_number, line in enumerate(text.split("\n"), start=1):
        if not line.strip():
            continue
        try:
            data = json.loads(line, parse_int=_json_int, parse_float=_json_float)
        except json.JSONDecodeError as exc:
            yield RowError(line_number, None, f"not a JSON object: {exc.msg}")
            continue
        except RecursionError:
            yield RowError(line_number, None, "not a JSON object: lists or objects nested too "
                                              "deeply (expected one object per line)")
            continue
        except ValueError as exc:
            yield RowError(line_number, None, f"not a JSON object: {exc}")
            continue
        if not isinstance(data, dict):
            yield RowError(line_number, None, "not a JSON object")
            continue
        problem = _serial_problem(data.get("serial"))
        serial = None if problem else data["serial"]
        unknown = sorted(set(data) - {"serial", "planes"})
        if problem is None and unknown:
            problem = f"unknown key '{unknown[0]}' (expected serial and planes)"
        planes = data.get("planes")
        if problem is None and not isinstance(planes, list):
            problem = "planes is missing" if planes is None else "planes is not a list"
        if problem is None and len(planes) != n_planes:
            problem = f"has {len(planes)} planes, the template has {n_planes}"
        if problem:
            yield RowError(line_number, serial, problem)
            continue
        corrections = []
        for number, plane in enumerate(planes, start=1):
            value = _json_plane(plane, number, template)
            if isinstance(value, str):
                yield RowError(line_number, serial, value)
                break
            corrections.append(value)
        else:
            yield RotorReading(line_number, serial, tuple(corrections))


def _json_plane(plane: Any, number: int, template: Job) -> complex | str:
    key = f"planes[{number}]"
    if not isinstance(plane, dict):
        return f"{key} is not an object"
    unknown = sorted(set(plane) - {"mass_g", "gmm", "angle_deg"})
    if unknown:
        return f"{key}.{unknown[0]} is an unknown key (expected mass_g or gmm, and angle_deg)"
    kinds = [k for k in ("mass_g", "gmm") if k in plane]
    if len(kinds) != 1:
        return f"{key} needs one of mass_g or gmm, not {'both' if kinds else 'neither'}"
    radius = _radius_of(template, number - 1)
    if kinds[0] == "mass_g" and radius is None:
        return f"{key}.mass_g: plane {number} has its own radius per position (expected gmm)"
    columns = _PlaneColumns(0, 0, kinds[0], radius)
    return _vector(plane[kinds[0]], plane.get("angle_deg"), columns, f"{key}.{kinds[0]}",
                   f"{key}.angle_deg", text=False)


def _mark_repeats(rows: list[RotorReading | RowError]) -> list[RotorReading | RowError]:
    first: dict[str, int] = {}
    out: list[RotorReading | RowError] = []
    for row in rows:
        if isinstance(row, RotorReading):
            if row.serial in first:
                row = RowError(row.line, row.serial, f"serial {row.serial} appears again "
                                                     f"(first on line {first[row.serial]})")
            else:
                first[row.serial] = row.line
        out.append(row)
    return out


# ---------------------------------------------------------------------- results
def parts_text(fitted: list[dict]) -> str:
    """``position:item×count`` joined by ``;`` (empty for no parts); count < 0 to take off."""
    return ";".join(f"{p['position']}:{p['item']}×{_signed(p)}" for p in fitted)


def _signed(part: dict) -> int:
    return -part["count"] if part.get("action") == "remove" else part["count"]


def outcome_record(outcome: RotorOutcome, digest: str) -> dict[str, Any]:
    """The JSON object of one solved rotor (a line of ``PREFIX.jsonl``).

    ``input`` is :func:`placer.batch.reading_digest` of the corrections the
    rotor was solved for; each plane repeats its correction as read.
    """
    planes = []
    for p in outcome.planes:
        fitted = [{"position": f.position, "angle_deg": f.angle_deg, "item": f.item,
                   "mass_g": f.mass_g, "count": f.count,
                   "action": f.verb} for f in p.option.parts]
        planes.append({"plane": p.plane, "name": p.name, "catalog": p.catalog,
                       "correction_gmm": abs(p.correction_gmm),
                       "correction_angle_deg": angle_of_deg(p.correction_gmm),
                       "parts": parts_text(fitted), "fitted": fitted,
                       "part_count": p.option.used_parts, "residual_gmm": p.option.residual_gmm,
                       "residual_angle_deg": p.option.residual_angle_deg,
                       "tolerance_gmm": p.tolerance_gmm,
                       "within_tolerance": p.within_tolerance})
    return {"serial": outcome.serial, "line": outcome.line, "template": digest,
            "input": reading_digest(p.correction_gmm for p in outcome.planes),
            "within_tolerance": outcome.within_tolerance,
            "solved_together": outcome.solved_together,
            "stock_short": list(outcome.stock_short), "planes": planes}


def csv_header(n_planes: int) -> list[str]:
    """Columns of ``PREFIX.csv``."""
    names = ["serial"]
    for number in range(1, n_planes + 1):
        names += [f"{number}_parts", f"{number}_residual_gmm", f"{number}_within_tolerance"]
    return names + ["within_tolerance"]


def _flag(value: bool | None) -> str:
    return "" if value is None else ("true" if value else "false")


def csv_row(record: dict[str, Any]) -> list[str]:
    """One line of ``PREFIX.csv`` from a result record (a residual of null left empty)."""
    row = [record["serial"]]
    for plane in record["planes"]:
        residual = plane["residual_gmm"]
        row += [plane["parts"], "" if residual is None else repr(float(residual)),
                _flag(plane["within_tolerance"])]
    return row + [_flag(record["within_tolerance"])]


def read_done(path: Path, digest: str, n_planes: int | None = None
              ) -> tuple[list[dict[str, Any]], int]:
    """The rotors already in ``PREFIX.jsonl`` and how many bytes of it to keep.

    A partial last line (a batch killed while writing it) is left out of
    both; :func:`cut_to` cuts it off the file once the batch goes on.

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
                             expected="a file written by placer batch, or --force to start "
                                      "again") from None
        if record.get("template") != digest:
            raise InputError(f"was written from another template "
                             f"({printable(str(record.get('template')))[:20]}, "
                             f"now {digest})", file=str(path), key=f"line {number}",
                             expected="the same template, or --force to start again")
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
    """Cut ``path`` to its first ``keep`` bytes (a no-op when it is that long)."""
    if Path(path).stat().st_size != keep:
        with Path(path).open("r+b") as handle:
            handle.truncate(keep)


def check_unchanged(done: list[dict[str, Any]], rows: list[RotorReading | RowError],
                    results_path: Path) -> None:
    """Refuse to resume when a kept result's row is gone or its corrections changed.

    Raises
    ------
    InputError
        Naming the results file, the record's line and serial.
    """
    readings: dict[str, RotorReading | RowError] = {}
    for row in rows:
        if row.serial is not None:
            readings.setdefault(row.serial, row)
    again = "the readings the results were solved from, or --force to start again"
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


def _record_parts(record: dict[str, Any]) -> list[tuple[str, str, int]]:
    return [(plane["catalog"], part["item"], part["count"])
            for plane in record["planes"] for part in plane["fitted"]
            if part.get("action") != "remove"]


def _write_line(handle: TextIO, text: str) -> None:
    handle.write(text)
    handle.flush()


ProgressCallback = Callable[[int, int], None]
"""Called with (rotors solved in this run, rotors to solve in this run).

Called once with 0 rotors solved when the tables are built and solving
starts (so that a rate counts from then), then after each rotor."""


def run_batch(template_path: Path, readings_path: Path, prefix: Path | None = None,
              jobs: int | None = None, resume: bool = False, force: bool = False,
              time_limit_s: float = DEFAULT_TIME_LIMIT_S,
              progress: ProgressCallback | None = None,
              start_method: str | None = None,
              note: Callable[[str], None] | None = None) -> tuple[BatchSummary, BatchPaths]:
    """Solve every rotor of a readings file against a template; write the outputs.

    Parameters
    ----------
    template_path : Path
        Template job file.
    readings_path : Path
        Readings, ``.csv`` or ``.jsonl``.
    prefix : Path, optional
        Output prefix (default :func:`default_prefix`).
    jobs : int, optional
        Worker processes (default one per usable core; 1 solves in this
        process); more than :func:`placer.batch.usable_cores` are capped at
        that, with a note.
    resume, force : bool
        Keep the rotors already in ``PREFIX.jsonl`` and solve the rest /
        overwrite existing outputs.  Without either, existing outputs are an
        error.
    time_limit_s : float
        CP-SAT time limit per decision, if needed [s].
    progress : callable, optional
        See :data:`ProgressCallback`.
    start_method : str, optional
        Start method of the worker processes (see :func:`placer.batch.solve_readings`).
    note : callable, optional
        Called with a one-line note for the user (``--jobs`` capped).

    Raises
    ------
    InputError
        For a bad template or readings file, outputs that exist, or (with
        ``resume``) results that do not belong to these readings.
    """
    started = time.perf_counter()
    if resume and force:
        raise InputError("resume and force together", key="--resume",
                         expected="one of --resume or --force")
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1:
        raise InputError(f"is {jobs}", key="--jobs", expected="a whole number of at least 1")
    cores = usable_cores()
    if jobs > cores:
        if note is not None:
            note(f"placer batch: --jobs {jobs} capped at {cores}, the cores this process "
                 "may use")
        jobs = cores
    template = read_template(Path(template_path))
    digest = template_digest(Path(template_path))
    rows = read_readings(Path(readings_path), template)
    paths = BatchPaths.from_prefix(prefix if prefix is not None
                                   else default_prefix(Path(readings_path)))
    inputs = {Path(template_path).resolve(), Path(readings_path).resolve()}
    for path in paths.all():
        if path.resolve() in inputs:
            raise InputError("would be overwritten by an output", file=str(path), key="--out",
                             expected="an output prefix apart from the input files")
    existing = [p for p in paths.all() if p.exists()]
    if existing and not (resume or force):
        raise InputError("exists already", file=str(existing[0]), key="--out",
                         expected="--resume to carry on with it, --force to overwrite, "
                                  "or another --out")
    n_planes = len(template.planes)
    done: list[dict[str, Any]] = []
    if resume and paths.results_jsonl.exists():
        done, keep = read_done(paths.results_jsonl, digest, n_planes)
        check_unchanged(done, rows, paths.results_jsonl)
        cut_to(paths.results_jsonl, keep)
    paths.summary_json.unlink(missing_ok=True)
    tally = BatchTally(template)
    for record in done:
        tally.add(record["within_tolerance"], _record_parts(record))
    done_serials = {record["serial"] for record in done}
    errors = [row for row in rows if isinstance(row, RowError)]
    todo = [row for row in rows
            if isinstance(row, RotorReading) and row.serial not in done_serials]
    already = sum(1 for row in rows if isinstance(row, RotorReading)
                  and row.serial in done_serials)
    with paths.errors_csv.open("w", encoding="utf-8", newline="") as error_file:
        writer = csv.writer(error_file, lineterminator="\n")
        writer.writerow(["line", "serial", "message"])
        for row in errors:
            writer.writerow([row.line, row.serial or "", row.message])
    mode = "a" if done else "w"
    ready = None if progress is None else (lambda: progress(0, len(todo)))
    with paths.results_jsonl.open(mode, encoding="utf-8", newline="\n") as jsonl, \
            paths.results_csv.open("w", encoding="utf-8", newline="") as results_csv:
        writer = csv.writer(results_csv, lineterminator="\n")
        writer.writerow(csv_header(n_planes))
        for record in done:
            writer.writerow(csv_row(record))
        results_csv.flush()
        outcomes = solve_readings(template, todo, jobs, time_limit_s, start_method=start_method,
                                  on_ready=ready)
        for count, outcome in enumerate(outcomes, start=1):
            record = outcome_record(outcome, digest)
            _write_line(jsonl, json_text(record) + "\n")
            writer.writerow(csv_row(record))
            results_csv.flush()
            tally.add_outcome(outcome)
            if progress is not None:
                progress(count, len(todo))
    summary = tally.summary(rows_read=len(rows), already_done=already, errors=len(errors),
                            elapsed_s=time.perf_counter() - started,
                            jobs=processes_used(jobs, len(todo)))
    document = {"template": str(template_path), "template_digest": digest,
                "readings": str(readings_path), **asdict(summary),
                "solved_now": len(todo),
                "outputs": {k: str(v) for k, v in asdict(paths).items()}}
    paths.summary_json.write_text(json_text(document, indent=2) + "\n", encoding="utf-8")
    return summary, paths


# ------------------------------------------------------------- terminal output
def summary_line(summary: BatchSummary, paths: BatchPaths) -> str:
    """The summary as one line."""
    share = "-" if summary.share_within is None else f"{summary.share_within:.1%}"
    parts = ", ".join(f"{p.item}×{p.count}" for p in summary.parts_used) or "none"
    return (f"placer batch: {summary.rows_read} rows, {summary.solved} solved "
            f"({summary.already_done} already done), {summary.errors} errors, "
            f"{share} within tolerance ({summary.outside} outside); parts used: {parts}; "
            f"{summary.elapsed_s:.1f} s with {summary.jobs} process(es); "
            f"results in {paths.results_csv}")


def render_summary(summary: BatchSummary, paths: BatchPaths, stream: TextIO) -> None:
    """Print the summary: a table on a terminal, one line otherwise."""
    if not stream.isatty():
        print(summary_line(summary, paths), file=stream)
        return
    from rich.console import Console
    from rich.table import Table as RichTable

    console = Console(file=stream, highlight=False)
    share = "-" if summary.share_within is None else f"{summary.share_within:.1%}"
    lines = [("rows read", str(summary.rows_read)),
             ("solved", f"{summary.solved} ({summary.already_done} already done)"),
             ("errors", f"{summary.errors} (see {paths.errors_csv})" if summary.errors else "0"),
             ("within tolerance", f"{share} ({summary.within} in, {summary.outside} outside, "
                                  f"{summary.no_tolerance} without a tolerance)"),
             ("time", f"{summary.elapsed_s:.1f} s with {summary.jobs} process(es)"),
             ("results", f"{paths.results_csv}, {paths.results_jsonl}")]
    for label, value in lines:
        console.print(f"{label:>17}: {value}")
    table = RichTable(title="Parts used (to reorder)", title_justify="left")
    for column in ("Catalogue", "Item", "Count"):
        table.add_column(column, justify="right" if column == "Count" else "left")
    for part in summary.parts_used:
        table.add_row(part.catalog, part.item, str(part.count))
    console.print(table)


@contextmanager
def progress_display(stream: TextIO | None = None, terminal: bool | None = None,
                     every_s: float = PLAIN_PROGRESS_EVERY_S,
                     clock: Callable[[], float] = time.perf_counter
                     ) -> Iterator[ProgressCallback]:
    """A progress callback: a rich bar with rate and time left on a terminal, else plain lines.

    The rate counts from the first call (0 rotors solved: the tables are
    built, see :data:`ProgressCallback`), so building them does not lower it.

    Parameters
    ----------
    stream : text stream, optional
        Where to draw (default stderr).
    terminal : bool, optional
        Draw the bar (True) or plain lines (False); default: whether
        ``stream`` is a terminal.  True forces the bar's terminal codes.
    every_s : float
        Seconds between plain lines [s].
    clock : callable
        Seconds since some fixed time [s] (tests pass their own).
    """
    stream = sys.stderr if stream is None else stream
    terminal = stream.isatty() if terminal is None else terminal
    state: dict[str, float | None] = {"start": None, "last": None}

    def rate_of(done: int, now: float) -> float | None:
        if state["start"] is None:
            state["start"] = now
        elapsed = now - state["start"]
        return done / elapsed if elapsed > 0 and done > 0 else None

    if terminal:
        from rich.console import Console
        from rich.progress import (
            BarColumn,
            MofNCompleteColumn,
            Progress,
            TextColumn,
            TimeRemainingColumn,
        )

        bar = Progress(TextColumn("rotors"), BarColumn(), MofNCompleteColumn(),
                       TextColumn("{task.fields[rate]} rotors/s"), TimeRemainingColumn(),
                       console=Console(file=stream, force_terminal=True), transient=False,
                       get_time=clock)
        task = bar.add_task("batch", total=None, rate="-", start=False)

        def update(done: int, total: int) -> None:
            now = clock()
            if state["start"] is None:
                bar.start_task(task)
            rate = rate_of(done, now)
            if state["last"] is not None and now - state["last"] < 0.1 and done < total:
                return
            state["last"] = now
            bar.update(task, completed=done, total=total,
                       rate="-" if rate is None else f"{rate:.0f}")

        with bar:
            yield update
        return

    def plain(done: int, total: int) -> None:
        now = clock()
        rate = rate_of(done, now)
        if state["last"] is None:
            state["last"] = now
        if now - state["last"] < every_s or rate is None:
            return
        state["last"] = now
        left = (total - done) / rate
        print(f"placer batch: {done}/{total} rotors, {rate:.0f} rotors/s, about {left:.0f} s "
              "left", file=stream, flush=True)

    yield plain
