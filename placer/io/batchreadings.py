"""Readings files of ``placer batch``: one rotor per row, its correction per plane.

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
  or ``<plane>_mass_oz`` (at the plane's radius; not for planes with radii
  per position), ``<plane>_gmm`` or ``<plane>_oz_in``: the required
  **correction** (where mass must be added, as ``correction = {...}`` in a
  job file), magnitude zero or more.  Ounces and oz·in are converted with
  the exact factors of :mod:`placer.units`.

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

with ``mass_oz`` and ``oz_in`` as in the CSV.

Numbers are JSON numbers (not text), with the range of the CSV's; a line
that is not JSON, or nests lists and objects too deeply to read, is a bad
row like any other.
"""

from __future__ import annotations

import csv
import io
import itertools
import json
import math
import re
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from placer.batch import RotorReading
from placer.errors import InputError, printable, shown
from placer.geometry import polar
from placer.io.inputs import read_text
from placer.io.sizes import check_count
from placer.io.values import (
    LINE_EXPECTED,
    number_problem,
    odd_character,
    whole_number_text,
)
from placer.job import Job
from placer.limits import MAX_BATCH_ROWS, MAX_READINGS_BYTES, MAX_WHOLE, RANGE_EXPECTED
from placer.units import MASS_UNITS, UNBALANCE_UNITS

MAGNITUDE_FACTORS = {**{f"mass_{unit}": factor for unit, factor in MASS_UNITS.items()},
                     **UNBALANCE_UNITS}
"""A plane's magnitude columns (keys) and the factor to g (a mass) or to g·mm."""
MAGNITUDE_KINDS = tuple(MAGNITUDE_FACTORS)
MASS_KINDS = tuple(k for k in MAGNITUDE_KINDS if k.startswith("mass_"))

SERIAL_PATTERN = re.compile(r"[A-Za-z0-9._-]{1,40}")
"""A serial: 1 to 40 ASCII letters, digits, '-', '_' or '.'."""
SERIAL_EXPECTED = "1 to 40 letters, digits, '-', '_' or '.'"
COLUMN_PATTERN = re.compile(r"([0-9]+)_(mass_g|mass_oz|gmm|oz_in|angle_deg)")
PLAIN_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
"""A number as a spreadsheet or a balancing machine writes it (ASCII digits only)."""
PLAIN_EXPECTED = "a plain decimal number such as 12.5, -3 or 1.25e3"
NON_FINITE = frozenset(sign + word for sign in ("", "+", "-")
                       for word in ("nan", "inf", "infinity"))
CELL_BLANKS = " \t"
"""What is stripped around a CSV cell: spaces and tabs only (a line separator such as
U+2028 is whitespace to :meth:`str.strip` but no blank a spreadsheet writes)."""
JSON_INT_DIGITS = 30
"""JSON whole numbers longer than this are not converted (they are out of range anyway)."""

@dataclass(frozen=True)
class RowError:
    """A readings row that cannot be solved: its line, its serial if known, why.

    Parameters
    ----------
    line : int
        Line of the readings file (from 1; a CSV row's first line).
    serial : str or None
        The row's serial, when it is a valid one.
    message : str
        Why the row cannot be solved, for the errors file.
    """

    line: int
    serial: str | None
    message: str


def read_readings(path: Path, template: Job) -> list[RotorReading | RowError]:
    """Every row of a readings file, in order: a reading, or the reason it is bad.

    ``.csv`` and ``.jsonl`` files (see the module docstring).

    Parameters
    ----------
    path : Path
        The readings file.
    template : Job
        The batch's template: its planes' count, and the radius a
        ``mass_g`` reading is taken at.

    Returns
    -------
    list of RotorReading or RowError
        One entry per non-blank row; a serial seen before makes a RowError.

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
    text = read_text(path, InputError, "readings file", MAX_READINGS_BYTES)
    rows = _csv_rows(text, path, template) if suffix == ".csv" else _jsonl_rows(text, template)
    kept = list(itertools.islice(rows, MAX_BATCH_ROWS + 1))
    if kept:
        check_count(len(kept), MAX_BATCH_ROWS, "rotors", file=str(path),
                    key=f"line {kept[-1].line}")
    return _mark_repeats(kept)


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
    expected = ("serial, then per plane one of <plane>_mass_g, <plane>_mass_oz, <plane>_gmm, "
                f"<plane>_oz_in, and <plane>_angle_deg, <plane> from 1 to {n_planes}")
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
        kinds = [k for k in MAGNITUDE_KINDS if k in given]
        if "angle_deg" not in given:
            raise InputError(f"no column {number}_angle_deg", file=file, key="header",
                             expected=expected)
        if len(kinds) != 1:
            names = ", ".join(f"{number}_{k}" for k in MAGNITUDE_KINDS)
            raise InputError(f"plane {number} needs one of {names}, "
                             f"not {_count_word(kinds)}", file=file, key="header",
                             expected=expected)
        radius = _radius_of(template, number - 1)
        if kinds[0] in MASS_KINDS and radius is None:
            raise InputError(f"plane {number} has its own radius per position", file=file,
                             key=f"column '{number}_{kinds[0]}'",
                             expected=f"{number}_gmm or {number}_oz_in")
        planes.append(_PlaneColumns(given[kinds[0]], given["angle_deg"], kinds[0], radius))
    return seen["serial"], planes


def _count_word(kinds: list[str]) -> str:
    return "both" if len(kinds) == 2 else "several" if kinds else "neither"


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
    names = [name.strip(CELL_BLANKS) for name in header]
    for name in names:
        odd = odd_character(name)
        if odd is not None:
            raise InputError(f"holds the character {printable(odd)}", file=file,
                             key=f"column '{shown(name)}'", expected=LINE_EXPECTED)
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
        if not row or all(not cell.strip(CELL_BLANKS) for cell in row) and len(row) <= 1:
            continue
        cells = [cell.strip(CELL_BLANKS) for cell in row]
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
        return f"serial '{shown(serial)}' is not a serial (expected {SERIAL_EXPECTED})"
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
        return f"{name} is the text '{shown(raw)}' (expected a JSON number, without quotes)"
    if isinstance(raw, str):
        if raw.lower() in NON_FINITE:
            value = float(raw)
        elif PLAIN_NUMBER.fullmatch(raw):
            value = float(raw)  # a long string of digits overflows to inf, never raises
            if not math.isfinite(value):
                return f"{name} is '{shown(raw)}' (expected {RANGE_EXPECTED})"
        else:
            try:
                float(raw)
            except (ValueError, OverflowError):
                return f"{name} is '{shown(raw)}', not a number (expected {PLAIN_EXPECTED})"
            return f"{name} is '{shown(raw)}', not a plain number (expected {PLAIN_EXPECTED})"
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
    gmm = magnitude * MAGNITUDE_FACTORS[columns.kind]
    if columns.kind in MASS_KINDS:
        gmm *= columns.radius_mm
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
            data = json.loads(line, parse_int=_json_int, parse_float=_json_float,
                              object_pairs_hook=_json_object)
        except _BadObject as exc:
            yield RowError(line_number, None, str(exc))
            continue
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


class _BadObject(ValueError):
    """A JSON object with a key given twice, or text that is not valid Unicode."""


def _json_object(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    """A JSON object of a readings line; refuses a key given twice and lone surrogates.

    JSON escapes may write half of a UTF-16 surrogate pair alone (``"\\ud800"``),
    which is no Unicode character and cannot be written to a UTF-8 file: refused
    here, so that nothing after the reader sees one.

    References
    ----------
    [RFC8259] section 4 ("The names within an object SHOULD be unique") and
    section 8.2 (unpaired surrogates).
    """
    data: dict[str, Any] = {}
    for key, value in pairs:
        for text in (key, value) if isinstance(value, str) else (key,):
            if _has_surrogate(text):
                raise _BadObject(f"'{_escaped(key)}' holds a character that is not valid "
                                 "Unicode (expected text without lone surrogates such as "
                                 "\\ud800)")
        if key in data:
            raise _BadObject(f"key '{shown(key)}' appears twice in one object "
                             "(expected each key once)")
        data[key] = value
    return data


def _has_surrogate(text: str) -> bool:
    return not text.isascii() and any("\ud800" <= ch <= "\udfff" for ch in text)


def _escaped(text: str) -> str:
    """``text`` shown in an error, lone surrogates as escapes."""
    return shown(text.encode("utf-8", "backslashreplace").decode("utf-8"))


def _json_plane(plane: Any, number: int, template: Job) -> complex | str:
    key = f"planes[{number}]"
    if not isinstance(plane, dict):
        return f"{key} is not an object"
    unknown = sorted(set(plane) - {*MAGNITUDE_KINDS, "angle_deg"})
    names = ", ".join(MAGNITUDE_KINDS)
    if unknown:
        return f"{key}.{unknown[0]} is an unknown key (expected one of {names}, and angle_deg)"
    kinds = [k for k in MAGNITUDE_KINDS if k in plane]
    if len(kinds) != 1:
        return f"{key} needs one of {names}, not {_count_word(kinds)}"
    radius = _radius_of(template, number - 1)
    if kinds[0] in MASS_KINDS and radius is None:
        return (f"{key}.{kinds[0]}: plane {number} has its own radius per position "
                "(expected gmm or oz_in)")
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
