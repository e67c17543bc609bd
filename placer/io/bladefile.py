"""Blade files -> :class:`placer.arrange.BladeJob`.  The only reader of blade files.

A blade file is TOML (the whole job) or CSV (a list of blades alone).

TOML
----
Tables, each optional but ``blades``::

    blades = "fan-blades.csv"      # the blades from a CSV file beside this one, or [[blades]]

    [rotor]          # as in a job file: name, mass_kg, service_rpm, grade, angle_sense,
                     # rotation, placement_error_deg, aim_share; and tolerance_gmm
    [disc]           # slots (default: one per blade), start_deg or angles_deg,
                     # unbalance = { gmm, angle_deg }, couple = { gmm2, angle_deg }
    [arrange]        # move = "new" | "fewest" | "all" (default "all")
    [limits]         # opposite_gmm, neighbour_hz, alternate_frequency, couple_gmm2
    [trim]           # catalog, radius_mm; positions/start_deg or angles_deg for a bolt
                     # circle (without them: one clip seat per slot, at the slot's angle);
                     # capacity, blocked, max_parts, aim_share, name

    [[blades]]       # id, moment_gmm; optional axial_moment_gmm2, frequency_hz,
                     # slot (where it is now), stays (true: it must stay there)

CSV
---
UTF-8 (a byte-order mark is allowed), comma separated, the first line the
header, one blade per line.  Columns in any order: ``id`` and ``moment_gmm``,
optionally ``axial_moment_gmm2``, ``frequency_hz``, ``slot`` and ``stays``
(true, false, yes, no, 1, 0 or empty); an empty cell is a value not given.
Numbers are plain decimals, as in the readings of ``placer batch``.  Read
alone, a CSV file puts the blades on as many equally spaced slots, slot 1 at
0°, with no tolerance and no trim.

Every error is one line naming the file, the key (TOML) or the line and
column (CSV), and what was expected.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import replace
from pathlib import Path

from placer.arrange import MOVES, BladeJob, TrimPlane
from placer.blades import Blade, Disc, Limits
from placer.errors import InputError, JobError
from placer.geometry import equally_spaced_deg
from placer.io.batchreadings import (
    CELL_BLANKS,
    NON_FINITE,
    PLAIN_EXPECTED,
    PLAIN_NUMBER,
)
from placer.io.inputs import read_text, read_toml
from placer.io.jobfile import GEOMETRY_KEYS, plane_geometry, rotor_of
from placer.io.tables import Table, printable
from placer.io.values import range_problem
from placer.job import Rotor
from placer.limits import DEFAULT_MAX_PARTS, MAX_PARTS_LIMIT, MAX_SLOTS

TOP_KEYS = ("blades", "rotor", "disc", "arrange", "limits", "trim")
ROTOR_EXTRA_KEYS = ("tolerance_gmm", "aim_share")
DISC_KEYS = ("slots", "start_deg", "angles_deg", "unbalance", "couple")
ARRANGE_KEYS = ("move",)
LIMIT_KEYS = ("opposite_gmm", "neighbour_hz", "alternate_frequency", "couple_gmm2")
TRIM_KEYS = GEOMETRY_KEYS + ("max_parts", "aim_share")
"""Keys of [trim]: a plane's positions and catalogue, as in a job file, and its plan's."""
BLADE_KEYS = ("id", "moment_gmm", "axial_moment_gmm2", "frequency_hz", "slot", "stays")
"""Keys of a [[blades]] entry, and the columns of a blade list (CSV)."""
REQUIRED_COLUMNS = ("id", "moment_gmm")
MAX_ID_CHARS = 16
"""Longest blade id: it is printed round the disc on the sheet."""
ID_EXPECTED = f"the blade's mark, 1 to {MAX_ID_CHARS} characters"
FLAGS_TRUE = ("true", "yes", "1")
FLAGS_FALSE = ("false", "no", "0", "")
MOVE_EXPECTED = ("new (only new blades go into the empty slots), fewest (the fewest swaps "
                 "into the tolerance) or all (every blade may move)")


def read_blade_file(path: Path, *, move: str | None = None) -> BladeJob:
    """Read and check a blade file: TOML (the whole job) or CSV (the blades alone).

    Parameters
    ----------
    path : Path
        The file; ``.csv`` is read as a blade list, anything else as TOML.
    move : str or None
        How blades may move (one of :data:`placer.arrange.MOVES`), for this run;
        None for the file's ``[arrange] move`` (default "all").

    Returns
    -------
    BladeJob

    Raises
    ------
    JobError
        Naming the file, the key (or line and column) and what was expected.
    CatalogError
        For a trim catalogue that is missing or bad.
    """
    path = Path(path)
    if move is not None and move not in MOVES:
        raise InputError(f"is '{move}'", option="move", expected=MOVE_EXPECTED)
    if path.suffix.lower() == ".csv":
        blades, slots, stays = read_blade_list(path)
        disc = _disc_of(len(blades), None, (0.0, 0.0), (0.0, 0.0), stays, Limits(), str(path),
                        "blades")
        return _job(str(path), Rotor(name=path.stem), blades, disc, slots, move or "all", None,
                    None)
    file = str(path)
    root = Table(read_toml(path, JobError, "blade file"), file, "", JobError)
    root.allow_only(TOP_KEYS)
    rotor_table = root.sub("rotor") or Table({}, file, "rotor", JobError)
    for key in ("com_distances_mm", "com_distances_in"):
        if rotor_table.has(key):
            raise rotor_table.fail(key, "is for rotors of several planes",
                                   f"no {key}: a bladed disc is one plane")
    rotor = rotor_of(rotor_table, ROTOR_EXTRA_KEYS)
    if not rotor_table.has("name"):
        rotor = replace(rotor, name=path.stem)
    tolerance = rotor_table.number("tolerance_gmm", non_negative=True)
    blades, slots, stays = _blades(root, path)
    disc_table = root.sub("disc") or Table({}, file, "disc", JobError)
    disc_table.allow_only(DISC_KEYS)
    count = disc_table.integer("slots", minimum=2, maximum=MAX_SLOTS)
    angles = _slot_angles(disc_table, count if count is not None else len(blades))
    limits = _limits(root.sub("limits") or Table({}, file, "limits", JobError))
    disc = _disc_of(len(angles), angles, _vector(disc_table, "unbalance", "gmm"),
                    _vector(disc_table, "couple", "gmm2"), stays, limits, file, "disc")
    arrange_table = root.sub("arrange") or Table({}, file, "arrange", JobError)
    arrange_table.allow_only(ARRANGE_KEYS)
    in_file = arrange_table.text("move", default="all")
    if in_file not in MOVES:
        raise arrange_table.fail("move", f"is '{in_file}'", MOVE_EXPECTED)
    move = move or in_file
    trim_table = root.sub("trim")
    trim = None if trim_table is None else _trim(trim_table, path.parent, angles)
    return _job(file, rotor, blades, disc, slots, move, tolerance, trim)


def _job(file: str, rotor: Rotor, blades: list[Blade], disc: Disc, slots: list[int | None],
         move: str, tolerance: float | None, trim: TrimPlane | None) -> BladeJob:
    """The BladeJob, its cross-checks reported against the file."""
    try:
        return BladeJob(rotor=rotor, blades=tuple(blades), disc=disc,
                        slots_now=tuple(slots) if any(s is not None for s in slots) else (),
                        move=move, tolerance_gmm=tolerance, trim=trim, source=file)
    except InputError as exc:
        raise JobError(exc.detail, file=file, key=exc.key, expected=exc.expected) from None


def _disc_of(count: int, angles: tuple[float, ...] | None, unbalance: tuple[float, float],
             couple: tuple[float, float], stays: list[tuple[int, str]], limits: Limits,
             file: str, key: str) -> Disc:
    if count > MAX_SLOTS:
        raise JobError(f"has {count} slots", file=file, key=key,
                       expected=f"at most {MAX_SLOTS} slots")
    try:
        return Disc(slot_count=count, angles_deg=angles, unbalance_gmm=unbalance[0],
                    unbalance_angle_deg=unbalance[1], couple_gmm2=couple[0],
                    couple_angle_deg=couple[1], pinned=tuple(stays), limits=limits)
    except InputError as exc:
        where = exc.key or ""
        if where.startswith("pinned"):
            where = "blades"
        elif not where.startswith("limits"):
            where = f"{key}.{where.replace('slot_count', 'slots')}" if key == "disc" else key
        raise JobError(exc.detail, file=file, key=where, expected=exc.expected) from None


def _blades(root: Table, path: Path) -> tuple[list[Blade], list[int | None],
                                               list[tuple[int, str]]]:
    """The blades: a CSV list named by ``blades``, or the [[blades]] tables."""
    if not root.has("blades"):
        raise root.fail("blades", "missing", "[[blades]] tables, or blades = \"FILE.csv\"")
    if isinstance(root.data["blades"], str):
        name = root.text("blades")
        if not name.strip():
            raise root.fail("blades", "is empty", "the name of a CSV file of blades")
        return read_blade_list(path.parent / name)
    entries = root.tables("blades", required=True)
    if len(entries) > MAX_SLOTS:
        raise root.fail("blades", f"has {len(entries)} blades", f"at most {MAX_SLOTS}")
    blades, slots, stays = [], [], []
    for t in entries:
        t.allow_only(BLADE_KEYS)
        blade_id = _blade_id(t.text("id", required=True), t, "id")
        blade = _blade(t, blade_id, t.number("moment_gmm", required=True, positive=True),
                       t.number("axial_moment_gmm2"), t.number("frequency_hz", positive=True))
        slot = t.integer("slot", minimum=1, maximum=MAX_SLOTS)
        stay = _flag(t, "stays")
        if stay and slot is None:
            raise t.fail("stays", "the blade has no slot", "slot = N, the slot it stays in")
        blades.append(blade)
        slots.append(slot)
        if stay:
            stays.append((slot, blade_id))
    return blades, slots, stays


def _blade_id(raw: str, t: Table, name: str) -> str:
    text = raw.strip()
    if not text or len(text) > MAX_ID_CHARS or "\n" in text or "\t" in text:
        raise t.fail(name, f"is '{printable(raw[:40])}'", ID_EXPECTED)
    return text


def _blade(t: Table, blade_id: str, moment: float, axial: float | None,
           frequency: float | None) -> Blade:
    try:
        return Blade(blade_id, moment, axial_moment_gmm2=axial, frequency_hz=frequency)
    except InputError as exc:       # the getters above check every value first
        raise t.fail(None, exc.detail, exc.expected) from None


def _flag(t: Table, name: str) -> bool:
    value = t.data.get(name, False)
    if not isinstance(value, bool):
        raise t.fail(name, "is not true or false", "true or false")
    return value


def _slot_angles(t: Table, count: int) -> tuple[float, ...]:
    if t.has("angles_deg"):
        if t.has("start_deg"):
            raise t.fail("start_deg", "given together with 'angles_deg'", "one of the two")
        values = t.array("angles_deg")
        if len(values) != count or not 2 <= count <= MAX_SLOTS:
            raise t.fail("angles_deg", f"has {len(values)} angles for {count} slots",
                         "one angle per slot (and per blade), 2 to "
                         f"{MAX_SLOTS}")
        return tuple(t.check_number(f"angles_deg[{i + 1}]", v) % 360.0
                     for i, v in enumerate(values))
    if not 2 <= count <= MAX_SLOTS:
        raise t.fail("slots", f"is {count}", f"2 to {MAX_SLOTS} slots, one per blade")
    return equally_spaced_deg(count, t.number("start_deg", default=0.0))


def _vector(t: Table, name: str, unit: str) -> tuple[float, float]:
    """``name = { <unit> = ..., angle_deg = ... }`` as (magnitude, angle); (0, 0) if absent."""
    v = t.sub(name)
    if v is None:
        return 0.0, 0.0
    v.allow_only((unit, "angle_deg"))
    return (v.number(unit, required=True, non_negative=True),
            v.number("angle_deg", required=True))


def _limits(t: Table) -> Limits:
    t.allow_only(LIMIT_KEYS)
    return Limits(opposite_gmm=t.number("opposite_gmm", non_negative=True),
                  neighbour_hz=t.number("neighbour_hz", non_negative=True),
                  alternate_frequency=_flag(t, "alternate_frequency"),
                  couple_gmm2=t.number("couple_gmm2", non_negative=True))


def _trim(t: Table, base_dir: Path, slot_angles: tuple[float, ...]) -> TrimPlane:
    """The trim plane: on the blades (one clip seat per slot) or on a bolt circle."""
    t.allow_only(TRIM_KEYS)
    on_blades = not (t.has("positions") or t.has("angles_deg"))
    data = dict(t.data)
    if on_blades:
        data["angles_deg"] = list(slot_angles)
    data.setdefault("name", "trim on the blades (position = slot)" if on_blades
                    else "trim bolt circle")
    geometry, catalog = plane_geometry(Table(data, t.file, t.path, t.error), base_dir,
                                       {})
    return TrimPlane(geometry=geometry, catalog=catalog,
                     max_parts=t.integer("max_parts", default=DEFAULT_MAX_PARTS, minimum=1,
                                         maximum=MAX_PARTS_LIMIT),
                     aim_share=_share(t), on_blades=on_blades)


def _share(t: Table) -> float | None:
    value = t.number("aim_share")
    if value is not None and not 0 < value <= 1:
        raise t.fail("aim_share", f"is {value:g}", "a share of the tolerance above 0 and at "
                     "most 1, such as 0.7")
    return value


# --- CSV ---------------------------------------------------------------------------------


def read_blade_list(path: Path) -> tuple[list[Blade], list[int | None], list[tuple[int, str]]]:
    """The blades of a CSV blade list, the slot each is in now, and those that stay.

    Parameters
    ----------
    path : Path
        The CSV file (see the module docstring for its columns).

    Returns
    -------
    blades : list of Blade
        In the order of the file.
    slots : list of (int or None)
        Per blade, the slot it is in now (None when not given).
    stays : list of (int, str)
        (slot, blade id) of every blade that stays.

    Raises
    ------
    JobError
        Naming the file, the line and the column, and what was expected.
    """
    file = str(path)
    text = read_text(path, JobError, "blade list")
    reader = csv.reader(io.StringIO(text, newline=""))
    header = _csv_header(reader, file)
    blades, slots, stays = [], [], []
    end = reader.line_num
    while True:
        line = end + 1
        try:
            row = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            raise JobError(f"not a CSV row: {printable(str(exc))}", file=file,
                           key=f"line {line}", expected="comma-separated values") from None
        end = reader.line_num
        if all(not cell.strip(CELL_BLANKS) for cell in row):
            continue
        if len(row) != len(header):
            raise JobError(f"has {len(row)} values, the header has {len(header)} columns",
                           file=file, key=f"line {line}", expected="one value per column")
        if len(blades) == MAX_SLOTS:
            raise JobError(f"has more than {MAX_SLOTS} blades", file=file, key=f"line {line}",
                           expected=f"at most {MAX_SLOTS} blades")
        cells = dict(zip(header, (cell.strip(CELL_BLANKS) for cell in row)))
        blade, slot, stay = _csv_blade(cells, file, line)
        blades.append(blade)
        slots.append(slot)
        if stay:
            stays.append((slot, blade.blade_id))
    if not blades:
        raise JobError("lists no blades", file=file, key="header",
                       expected="a line per blade below the header")
    return blades, slots, stays


def _csv_header(reader, file: str) -> list[str]:
    expected = ("columns id, moment_gmm and optionally " + ", ".join(BLADE_KEYS[2:]))
    try:
        names = [name.strip(CELL_BLANKS) for name in next(reader)]
    except StopIteration:
        raise JobError("is empty", file=file, key="header", expected=expected) from None
    except csv.Error as exc:
        raise JobError(f"header is not CSV: {printable(str(exc))}", file=file, key="header",
                       expected=expected) from None
    for name in names:
        if name not in BLADE_KEYS:
            raise JobError("unknown column", file=file, key=f"column '{printable(name[:40])}'",
                           expected=expected)
        if names.count(name) > 1:
            raise JobError("appears twice in the header", file=file, key=f"column '{name}'",
                           expected="each column once")
    missing = [name for name in REQUIRED_COLUMNS if name not in names]
    if missing:
        raise JobError(f"no column '{missing[0]}'", file=file, key="header", expected=expected)
    return names


def _csv_blade(cells: dict[str, str], file: str, line: int) -> tuple[Blade, int | None, bool]:
    def fail(column: str, detail: str, expected: str) -> JobError:
        return JobError(detail, file=file, key=f"line {line}, {column}", expected=expected)

    blade_id = cells["id"]
    if not blade_id or len(blade_id) > MAX_ID_CHARS or not blade_id.isprintable():
        raise fail("id", f"is '{printable(blade_id[:40])}'", ID_EXPECTED)
    numbers = {}
    for column, rule in (("moment_gmm", "positive"), ("axial_moment_gmm2", ""),
                         ("frequency_hz", "positive")):
        raw = cells.get(column, "")
        if not raw:
            if column == "moment_gmm":
                raise fail(column, "is missing", "a moment weight in g·mm above zero")
            numbers[column] = None
            continue
        numbers[column] = _csv_number(raw, fail, column, positive=bool(rule))
    slot = None
    if cells.get("slot", ""):
        raw = cells["slot"]
        if not raw.isdigit() or not raw.isascii() or not 1 <= int(raw[:7]) <= MAX_SLOTS:
            raise fail("slot", f"is '{printable(raw[:40])}'",
                       f"a slot number from 1 to {MAX_SLOTS}")
        slot = int(raw)
    flag = cells.get("stays", "").lower()
    if flag not in FLAGS_TRUE + FLAGS_FALSE:
        raise fail("stays", f"is '{printable(cells['stays'][:40])}'",
                   "true, false, yes, no, 1, 0 or empty")
    stay = flag in FLAGS_TRUE
    if stay and slot is None:
        raise fail("stays", "the blade has no slot", "the slot it stays in, in column slot")
    blade = Blade(blade_id, numbers["moment_gmm"], axial_moment_gmm2=numbers["axial_moment_gmm2"],
                  frequency_hz=numbers["frequency_hz"])
    return blade, slot, stay


def _csv_number(raw: str, fail, column: str, positive: bool) -> float:
    shown = printable(raw if len(raw) <= 30 else raw[:27] + "...")
    if raw.lower() in NON_FINITE:
        raise fail(column, f"is '{shown}'", "a finite number")
    if not PLAIN_NUMBER.fullmatch(raw):
        raise fail(column, f"is '{shown}', not a number", PLAIN_EXPECTED)
    value = float(raw)
    problem = range_problem(value) if math.isfinite(value) else (shown, "a finite number")
    if problem is not None:
        raise fail(column, f"is {problem[0]}", problem[1])
    if positive and value <= 0:
        raise fail(column, f"is {value:g}", "a number above zero")
    return value
