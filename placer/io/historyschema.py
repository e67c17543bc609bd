"""The history database's schema, version by version, and the migrations between them.

Schema (version :data:`SCHEMA_VERSION`)::

    schema_version(version)                      one row
    machines(id PK, name, created_at)
    visits(id PK, machine_id -> machines, started_at, session_file, unit,
           measure, phase_sense, angle_sense, coefficient_source, condition,
           result_json, service_rpm, rotation,        (these two from version 2)
           setup_json,                                (from version 3)
           saved_at)                                  (from version 4)
    channels(visit_id -> visits, channel_index, name, weight)   PK (visit_id, channel_index)
    planes(visit_id -> visits, plane_index, name, geometry_json, catalog)
                                                        PK (visit_id, plane_index)
    runs(id PK, visit_id -> visits, seq, name, kind)    UNIQUE (visit_id, seq)
    readings(run_id -> runs, channel_index, amplitude, phase_deg, re, im)
    coefficients(visit_id -> visits, channel_index, plane_index, re, im)
    masses(id PK, visit_id -> visits, run_id -> runs or NULL, role, plane_index,
           position, angle_deg, radius_mm, mass_g, item, count, removed_after)

Version 2 (:func:`migrate_1_to_2`) added the speed and the sense of rotation to
visits, and holds phasors and coefficients in the visit's measure; version 1
held them as peak values.  Version 3 (:func:`migrate_2_to_3`) added what a
visit report needs to be printed again: each sensor's weight, each plane's
positions (JSON: angles, radii, blocked, capacity, what each takes) and
catalogue name, and the session's settings (``setup_json``: the rotor's name,
mass and grade, the plane separation, norm, limit, part limit, the residual
checks); NULL for the visits stored before, which then print without the
rotor face.  Version 4 (:func:`migrate_3_to_4`) added when each visit was
saved (UTC, ISO 8601; NULL for the visits stored before), so that a
technician can see the last save landed.  A new file gets :data:`SCHEMA_V1` and is then brought
up by the same :data:`MIGRATIONS` an older file goes through.

References
----------
[SQLite] "SQL As Understood By SQLite".
"""

from __future__ import annotations

import json
import math
import sqlite3
from collections.abc import Callable
from typing import Any

from placer.errors import HistoryError
from placer.geometry import PlaneGeometry
from placer.limits import MAX_MAGNITUDE, MAX_WHOLE

SCHEMA_VERSION = 4
"""Schema version this placer writes; files of a newer version are refused."""

_V1_PEAK_PER_MEASURE = {"peak": 1.0, "peak-to-peak": 0.5, "rms": math.sqrt(2.0)}
"""How version 1 turned a reading into a peak value (peak = value·factor; sinusoid
identities: peak-to-peak = 2·peak, rms = peak/√2)."""


def migrate_1_to_2(conn: sqlite3.Connection) -> None:
    """Version 1 -> 2: visits get service_rpm and rotation (NULL: not known);
    phasors, coefficients and the result's vibration figures go from peak to
    the visit's own measure.

    Parameters
    ----------
    conn : sqlite3.Connection
        The open database, inside the opening transaction.
    """
    conn.execute("ALTER TABLE visits ADD COLUMN service_rpm REAL")
    conn.execute("ALTER TABLE visits ADD COLUMN rotation TEXT")
    for measure, factor in _V1_PEAK_PER_MEASURE.items():
        if factor == 1.0:
            continue
        conn.execute(
            "UPDATE readings SET re = re / ?1, im = im / ?1 WHERE run_id IN "
            "(SELECT r.id FROM runs AS r JOIN visits AS v ON v.id = r.visit_id "
            "WHERE v.measure = ?2)", (factor, measure))
        conn.execute(
            "UPDATE coefficients SET re = re / ?1, im = im / ?1 WHERE visit_id IN "
            "(SELECT id FROM visits WHERE measure = ?2)", (factor, measure))
        for visit_id, text in conn.execute(
                "SELECT id, result_json FROM visits WHERE measure = ?", (measure,)).fetchall():
            result = json.loads(text)
            for key in ("vibration_before", "vibration_after"):
                if isinstance(result.get(key), (int, float)):
                    result[key] = result[key] / factor
            conn.execute("UPDATE visits SET result_json = ? WHERE id = ?",
                         (json.dumps(result, ensure_ascii=False), visit_id))


def migrate_2_to_3(conn: sqlite3.Connection) -> None:
    """Version 2 -> 3: sensors' weights, planes' positions and catalogues, the session's
    settings (NULL for the visits already stored: not known).

    Parameters
    ----------
    conn : sqlite3.Connection
        The open database, inside the opening transaction.
    """
    conn.execute("ALTER TABLE channels ADD COLUMN weight REAL")
    conn.execute("ALTER TABLE planes ADD COLUMN geometry_json TEXT")
    conn.execute("ALTER TABLE planes ADD COLUMN catalog TEXT")
    conn.execute("ALTER TABLE visits ADD COLUMN setup_json TEXT")


def migrate_3_to_4(conn: sqlite3.Connection) -> None:
    """Version 3 -> 4: when each visit was saved (NULL for the visits already stored).

    Parameters
    ----------
    conn : sqlite3.Connection
        The open database, inside the opening transaction.
    """
    conn.execute("ALTER TABLE visits ADD COLUMN saved_at TEXT")


MIGRATIONS: dict[int, Callable[[sqlite3.Connection], None]] = {1: migrate_1_to_2,
                                                                2: migrate_2_to_3,
                                                                3: migrate_3_to_4}
"""Schema upgrades: ``MIGRATIONS[v](connection)`` turns version v into v + 1.

Each runs inside the opening transaction (foreign keys on) and must leave
the data consistent; the version row is updated after the last one."""

SCHEMA_V1 = """
CREATE TABLE schema_version (version INTEGER NOT NULL);
CREATE TABLE machines (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE TABLE visits (
    id INTEGER PRIMARY KEY,
    machine_id TEXT NOT NULL REFERENCES machines (id),
    started_at TEXT NOT NULL,
    session_file TEXT NOT NULL,
    unit TEXT NOT NULL,
    measure TEXT NOT NULL,
    phase_sense TEXT NOT NULL,
    angle_sense TEXT NOT NULL,
    coefficient_source TEXT NOT NULL,
    condition REAL,
    result_json TEXT NOT NULL
);
CREATE INDEX visits_by_machine ON visits (machine_id, started_at);
CREATE TABLE channels (
    visit_id INTEGER NOT NULL REFERENCES visits (id) ON DELETE CASCADE,
    channel_index INTEGER NOT NULL,
    name TEXT NOT NULL,
    PRIMARY KEY (visit_id, channel_index)
);
CREATE TABLE planes (
    visit_id INTEGER NOT NULL REFERENCES visits (id) ON DELETE CASCADE,
    plane_index INTEGER NOT NULL,
    name TEXT NOT NULL,
    PRIMARY KEY (visit_id, plane_index)
);
CREATE TABLE runs (
    id INTEGER PRIMARY KEY,
    visit_id INTEGER NOT NULL REFERENCES visits (id) ON DELETE CASCADE,
    seq INTEGER NOT NULL,
    name TEXT NOT NULL,
    kind TEXT NOT NULL,
    UNIQUE (visit_id, seq)
);
CREATE TABLE readings (
    run_id INTEGER NOT NULL REFERENCES runs (id) ON DELETE CASCADE,
    channel_index INTEGER NOT NULL,
    amplitude REAL NOT NULL,
    phase_deg REAL NOT NULL,
    re REAL NOT NULL,
    im REAL NOT NULL,
    PRIMARY KEY (run_id, channel_index)
);
CREATE TABLE coefficients (
    visit_id INTEGER NOT NULL REFERENCES visits (id) ON DELETE CASCADE,
    channel_index INTEGER NOT NULL,
    plane_index INTEGER NOT NULL,
    re REAL NOT NULL,
    im REAL NOT NULL,
    PRIMARY KEY (visit_id, channel_index, plane_index)
);
CREATE TABLE masses (
    id INTEGER PRIMARY KEY,
    visit_id INTEGER NOT NULL REFERENCES visits (id) ON DELETE CASCADE,
    run_id INTEGER REFERENCES runs (id) ON DELETE CASCADE,
    role TEXT NOT NULL CHECK (role IN ('trial', 'fitted', 'planned')),
    plane_index INTEGER NOT NULL,
    position INTEGER,
    angle_deg REAL NOT NULL,
    radius_mm REAL NOT NULL,
    mass_g REAL NOT NULL,
    item TEXT,
    count INTEGER NOT NULL,
    removed_after INTEGER NOT NULL CHECK (removed_after IN (0, 1))
);
CREATE INDEX masses_by_visit ON masses (visit_id);
CREATE INDEX masses_by_run ON masses (run_id);
"""

TABLES = ("schema_version", "machines", "visits", "channels", "planes", "runs", "readings",
          "coefficients", "masses")
"""The tables of every version (later versions add columns, not tables)."""


STORED_KINDS = {"t": "text", "i": f"a whole number of at most {MAX_WHOLE} in size",
          "r": f"a number of at most {MAX_MAGNITUDE:g} in size"}
"""What each kind of stored value must be (see :meth:`History._query`)."""


def of_kind(value: Any, kind: str) -> bool:
    """Whether a value read from the file is of the kind ``t``, ``i`` or ``r``.

    Parameters
    ----------
    value : object
        The value as SQLite gave it.
    kind : str
        "t" text, "i" a whole number, "r" a number (see :data:`STORED_KINDS`).
    """
    if kind == "t":
        return isinstance(value, str)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    if kind == "i":
        return isinstance(value, int) and abs(value) <= MAX_WHOLE
    return math.isfinite(value) and abs(value) <= MAX_MAGNITUDE


def geometry_dict(geometry: PlaneGeometry) -> dict[str, Any]:
    """A plane's positions as the history stores them (JSON).

    Parameters
    ----------
    geometry : PlaneGeometry
        The positions.

    Returns
    -------
    dict
        angles_deg, radii_mm, blocked (sorted), capacity, accepts.
    """
    return {"angles_deg": list(geometry.angles_deg), "radii_mm": list(geometry.radii_mm),
            "blocked": sorted(geometry.blocked), "capacity": geometry.capacity,
            "accepts": list(geometry.accepts)}


def geometry_of(name: str, data: dict[str, Any]) -> PlaneGeometry:
    """A plane's positions back from :func:`geometry_dict`.

    Parameters
    ----------
    name : str
        The plane's name.
    data : dict
        What :func:`geometry_dict` gave.

    Returns
    -------
    PlaneGeometry
        The positions.

    Raises
    ------
    HistoryError
        Data that does not make a plane's positions.
    """
    try:
        return PlaneGeometry(name, tuple(float(a) for a in data["angles_deg"]),
                             tuple(float(r) for r in data["radii_mm"]),
                             frozenset(int(b) for b in data["blocked"]), int(data["capacity"]),
                             tuple(str(a) for a in data["accepts"]))
    except (KeyError, TypeError, ValueError) as exc:
        raise HistoryError(f"positions of plane '{name}' cannot be read: {exc}",
                           key="planes.geometry_json",
                           expected="the positions as placer stored them") from None
