"""The machine history database: field-balancing visits stored per machine.

One SQLite file (stdlib ``sqlite3``) holds every machine seen, every visit
to it (the runs with their readings as read and as converted phasors, the
masses fitted and planned, the influence coefficients and a summary of the
result).  Phasors and coefficients are in the visit's unit and measure
(coefficients per g·mm), with phases in its angle sense.  A later visit can
reuse the newest coefficients measured with the same sensors and planes
instead of repeating the trial runs; they come back with their unit,
measure, angle sense and speed (:class:`placer.influence.StoredCoefficients`)
so that the caller converts or refuses them.

Where the file lives: see :func:`placer.io.historyfile.default_db_path`.

The tables and their versions: :mod:`placer.io.historyschema`.

Foreign keys are enforced on every connection.  Masses with ``run_id`` NULL
are the visit's planned correction (a negative count: parts to take off);
the others were fitted for that run.  ``started_at`` is ISO 8601 text; placer
writes it in UTC with its offset, or as a date alone when the session gave
only a date (:func:`utc_label` shows it).

Visits are written once and never changed; only a machine's name follows
its latest saved visit.  A visit whose runs are already stored (the same
sensors, planes, runs, readings and masses: the same session saved twice) is
found by :meth:`History.same_visit` before saving; a visit can be removed
(:meth:`History.remove_visit`).

Journal mode: the default rollback journal (``journal_mode=DELETE``) with
``synchronous=FULL``, chosen over WAL because the history is a single file
that users copy, back up or keep in a synced or network folder: WAL needs
shared memory that network file systems do not provide and keeps recent
commits in a ``-wal`` side file that a plain copy can leave behind.  placer
writes one visit at a time, so WAL's concurrent readers buy nothing.  A
writer killed mid-transaction leaves a hot journal that the next opening of
the file rolls back.

Opening a file: a new or empty file gets the version 1 schema and is then
brought up to :data:`SCHEMA_VERSION` by the same :data:`MIGRATIONS` an
older file goes through, in one transaction.  A file written by a newer
placer, a file that is not a SQLite database and a SQLite database of some
other program are refused with :class:`HistoryError`.

References
----------
[SQLite] "Atomic Commit In SQLite" and "Write-Ahead Logging" (rollback journal,
hot journals, WAL on network file systems); "SQL As Understood By SQLite",
BEGIN IMMEDIATE, UPSERT.  [XDG] ``$XDG_DATA_HOME``.
"""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path
from types import TracebackType
from typing import Any

import numpy as np

from placer.errors import HistoryError
from placer.geometry import ANGLE_SENSES, ROTATIONS
from placer.influence import StoredCoefficients
from placer.io.historyfile import DAMAGED, open_to_read, open_to_write
from placer.io.historyschema import STORED_KINDS, geometry_dict, geometry_of, of_kind
from placer.readings import AMPLITUDE_UNITS, MEASURES
from placer.records import (
    MASS_ROLES,
    LastSaved,
    MachineSummary,
    MassRecord,
    RunRecord,
    VisitRecord,
    VisitSummary,
    check_record,
    utc_label,
)

WRITABLE = ("a history database placer may write: not locked by another program, on a disk "
            "with room")


@contextmanager
def _immediate(conn: sqlite3.Connection) -> Iterator[None]:
    """A write transaction (BEGIN IMMEDIATE): committed at the end, rolled back on any
    exception or interruption, so that nothing half-written stays.

    References
    ----------
    [SQLite] BEGIN IMMEDIATE; "Atomic Commit In SQLite".
    """
    conn.execute("BEGIN IMMEDIATE")
    try:
        yield
        conn.execute("COMMIT")
    except BaseException:
        if conn.in_transaction:
            conn.execute("ROLLBACK")
        raise


class History:
    """The history database, opened to write (created if new) or to read.

    Parameters
    ----------
    path : Path
        The database file; to write, missing parent folders are created.
    read_only : bool
        Open it to read only (``placer machines``, ``placer history``,
        coefficients reused by a visit): the file is not changed in any way
        (see :mod:`placer.io.historyfile`), and :meth:`save_visit` and
        :meth:`remove_visit` are refused.

    Raises
    ------
    HistoryError
        The file is not a placer history database, was written by a newer
        placer, is damaged, or cannot be opened.
    """

    def __init__(self, path: Path, *, read_only: bool = False) -> None:
        self.path = Path(path)
        opened = open_to_read(self.path) if read_only else open_to_write(self.path)
        self._conn = opened.conn
        self.read_only = opened.read_only
        self.rolled_back = opened.rolled_back
        """Whether a save left unfinished (a hot journal) was rolled back on opening."""

    def __enter__(self) -> History:
        return self

    def __exit__(self, kind: type[BaseException] | None, value: BaseException | None,
                 traceback: TracebackType | None) -> None:
        self.close()

    def close(self) -> None:
        """Close the connection."""
        self._conn.close()

    def _error(self, detail: str, key: str | None = None,
               expected: str | None = None) -> HistoryError:
        return HistoryError(detail, file=str(self.path), key=key, expected=expected)

    def _refuse_read_only(self, what: str) -> None:
        if self.read_only:
            raise self._error(f"was opened to read only: cannot {what}",
                              expected="History(path) to write")

    def save_visit(self, record: VisitRecord) -> int:
        """Store a visit, and its machine (new, or renamed), in one transaction.

        Parameters
        ----------
        record : VisitRecord
            The visit; every run has one reading and one phasor per channel.

        Returns
        -------
        int
            The new visit's id.

        Raises
        ------
        HistoryError
            The record is inconsistent, or the database cannot be written;
            nothing of the visit is stored.
        """
        check_record(record)
        self._refuse_read_only("save a visit")
        conn = self._conn
        try:
            with _immediate(conn):
                visit_id = self._write_visit(record)
        except sqlite3.Error as exc:
            raise self._error(f"cannot save the visit: {exc}", expected=WRITABLE) from exc
        return visit_id

    def _write_visit(self, record: VisitRecord) -> int:
        conn = self._conn
        now = datetime.now(timezone.utc).isoformat(timespec="seconds")
        conn.execute("INSERT INTO machines (id, name, created_at) VALUES (?, ?, ?) "
                     "ON CONFLICT (id) DO UPDATE SET name = excluded.name",
                     (record.machine_id, record.machine_name, now))
        visit_id = conn.execute(
            "INSERT INTO visits (machine_id, started_at, session_file, unit, measure, "
            "phase_sense, angle_sense, coefficient_source, condition, result_json, "
            "service_rpm, rotation, setup_json, saved_at) "
            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (record.machine_id, record.started_at, record.session_file, record.unit,
             record.measure, record.phase_sense, record.angle_sense,
             record.coefficient_source,
             None if record.condition is None else float(record.condition),
             json.dumps(record.result, ensure_ascii=False),
             None if record.service_rpm is None else float(record.service_rpm),
             record.rotation, json.dumps(record.setup, ensure_ascii=False), now)).lastrowid
        weights = record.channel_weights or (None,) * len(record.channel_names)
        conn.executemany(
            "INSERT INTO channels (visit_id, channel_index, name, weight) VALUES (?, ?, ?, ?)",
            [(visit_id, i, name, None if w is None else float(w))
             for i, (name, w) in enumerate(zip(record.channel_names, weights))])
        geometries = record.plane_geometries or (None,) * len(record.plane_names)
        catalogs = record.catalog_names or (None,) * len(record.plane_names)
        conn.executemany(
            "INSERT INTO planes (visit_id, plane_index, name, geometry_json, catalog) "
            "VALUES (?, ?, ?, ?, ?)",
            [(visit_id, i, name, None if g is None else json.dumps(geometry_dict(g)), c)
             for i, (name, g, c) in enumerate(zip(record.plane_names, geometries, catalogs))])
        for seq, run in enumerate(record.runs):
            run_id = conn.execute(
                "INSERT INTO runs (visit_id, seq, name, kind) VALUES (?, ?, ?, ?)",
                (visit_id, seq, run.name, run.kind)).lastrowid
            conn.executemany(
                "INSERT INTO readings (run_id, channel_index, amplitude, phase_deg, re, im) "
                "VALUES (?, ?, ?, ?, ?, ?)",
                [(run_id, i, float(amplitude), float(phase_deg), value.real, value.imag)
                 for i, ((amplitude, phase_deg), value)
                 in enumerate(zip(run.readings, map(complex, run.phasors)))])
            self._write_masses(visit_id, run_id, run.masses)
        if record.coefficients is not None:
            conn.executemany(
                "INSERT INTO coefficients (visit_id, channel_index, plane_index, re, im) "
                "VALUES (?, ?, ?, ?, ?)",
                [(visit_id, i, j, float(value.real), float(value.imag))
                 for (i, j), value in np.ndenumerate(record.coefficients)])
        self._write_masses(visit_id, None, record.planned)
        return visit_id

    def _write_masses(self, visit_id: int, run_id: int | None,
                      masses: Sequence[MassRecord]) -> None:
        self._conn.executemany(
            "INSERT INTO masses (visit_id, run_id, role, plane_index, position, angle_deg, "
            "radius_mm, mass_g, item, count, removed_after) "
            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            [(visit_id, run_id, m.role, m.plane, m.position, float(m.angle_deg),
              float(m.radius_mm), float(m.mass_g), m.item, m.count, int(bool(m.removed_after)))
             for m in masses])

    def machines(self) -> list[MachineSummary]:
        """Every machine stored, by id, with its number of visits and the last one."""
        rows = self._query(
            "SELECT m.id, m.name, COUNT(v.id), MAX(v.started_at) FROM machines AS m "
            "LEFT JOIN visits AS v ON v.machine_id = m.id GROUP BY m.id ORDER BY m.id", (),
            "machines.id:t machines.name:t visits.id:i visits.started_at:t?")
        return [MachineSummary(*row) for row in rows]

    def visits(self, machine_id: str) -> list[VisitSummary]:
        """A machine's visits, oldest first (empty for an unknown machine).

        Parameters
        ----------
        machine_id : str
            The machine's tag.

        Returns
        -------
        list of VisitSummary
            One per visit, ordered by start and then by id.
        """
        rows = self._query(
            "SELECT v.id, v.started_at, v.coefficient_source, v.condition, "
            "(SELECT COUNT(*) FROM runs AS r WHERE r.visit_id = v.id), v.result_json, "
            "v.saved_at FROM visits AS v WHERE v.machine_id = ? ORDER BY v.started_at, v.id",
            (machine_id,), "visits.id:i visits.started_at:t visits.coefficient_source:t "
            "visits.condition:r? runs.id:i visits.result_json:t visits.saved_at:t?")
        out = []
        for visit_id, started_at, source, condition, runs, result, saved_at in rows:
            masses = self._read_masses(visit_id)
            kept = tuple(m for run_id, group in masses.items() if run_id is not None
                         for m in group if not (m.role == "trial" and m.removed_after))
            out.append(VisitSummary(visit_id, started_at, source, condition, runs,
                                    masses.get(None, ()),
                                    self._json(result, visit_id, "result_json"), kept,
                                    saved_at))
        return out

    def last_saved(self) -> LastSaved | None:
        """The visit saved last (the highest id: SQLite gives each new row the next one).

        Returns
        -------
        LastSaved or None
            The visit, its machine, when it took place and when it was saved
            (None for a visit saved before placer kept the time); None when
            no visit is stored.
        """
        rows = self._query("SELECT id, machine_id, started_at, saved_at FROM visits "
                           "ORDER BY id DESC LIMIT 1", (),
                           "visits.id:i visits.machine_id:t visits.started_at:t visits.saved_at:t?")
        return LastSaved(*rows[0]) if rows else None

    def _query(self, sql: str, parameters: Sequence[Any], columns: str) -> list[tuple]:
        """All rows of a read, each value checked against ``columns``.

        ``columns`` names each selected value as ``table.column:kind``, kind
        ``t`` text, ``i`` a whole number, ``r`` a number (finite, at most
        :data:`placer.limits.MAX_MAGNITUDE` in size), ``?`` after it when
        NULL is allowed.  A database that fails the read, or a value of
        another kind (a damaged file), is reported naming the column.
        """
        try:
            rows = self._conn.execute(sql, parameters).fetchall()
        except sqlite3.DatabaseError as exc:
            raise self._error(f"cannot be read: {exc}", expected=DAMAGED) from None
        except UnicodeDecodeError:
            raise self._error("is damaged: it holds text that is not UTF-8",
                              expected=DAMAGED) from None
        spec = [column.rsplit(":", 1) for column in columns.split()]
        for row in rows:
            for value, (name, kind) in zip(row, spec, strict=True):
                if value is None and kind.endswith("?"):
                    continue
                if not of_kind(value, kind[0]):
                    raise self._error(f"holds {value!r} in {name}", key=name,
                                      expected=f"{STORED_KINDS[kind[0]]} ({DAMAGED})")
        return rows

    def _json(self, text: Any, visit_id: int, column: str, table: str = "visits") -> dict:
        """A JSON object stored for a visit, read back; anything else is reported."""
        try:
            value = json.loads(text)
        except (TypeError, ValueError):
            value = None
        if not isinstance(value, dict):
            raise self._error(f"visit {visit_id}: {column} is not a JSON object",
                              key=f"{table}.{column}", expected=DAMAGED)
        return value

    def visit(self, visit_id: int) -> VisitRecord:
        """The full record of one visit, as it was saved.

        Parameters
        ----------
        visit_id : int
            The visit's id (as :meth:`save_visit` returned it).

        Returns
        -------
        VisitRecord
            The record, read back.

        Raises
        ------
        HistoryError
            No visit has this id.
        """
        rows = self._query(
            "SELECT v.machine_id, m.name, v.started_at, v.session_file, v.unit, v.measure, "
            "v.phase_sense, v.angle_sense, v.coefficient_source, v.condition, v.result_json, "
            "v.service_rpm, v.rotation, v.setup_json "
            "FROM visits AS v JOIN machines AS m ON m.id = v.machine_id WHERE v.id = ?",
            (visit_id,), "visits.machine_id:t machines.name:t visits.started_at:t "
            "visits.session_file:t visits.unit:t visits.measure:t visits.phase_sense:t "
            "visits.angle_sense:t visits.coefficient_source:t visits.condition:r? "
            "visits.result_json:t visits.service_rpm:r? visits.rotation:t? visits.setup_json:t?")
        if not rows:
            raise self._error(f"no visit {visit_id}", key="visit_id",
                              expected="the id of a saved visit")
        (machine_id, machine_name, started_at, session_file, unit, measure, phase_sense,
         angle_sense, source, condition, result_json, service_rpm, rotation, setup_json) = rows[0]
        channel_names = self._names("channels", "channel_index", visit_id)
        plane_names = self._names("planes", "plane_index", visit_id)
        weights = tuple(w for (w,) in self._query(
            "SELECT weight FROM channels WHERE visit_id = ? ORDER BY channel_index",
            (visit_id,), "channels.weight:r?"))
        planes = self._query("SELECT name, geometry_json, catalog FROM planes WHERE "
                             "visit_id = ? ORDER BY plane_index", (visit_id,),
                             "planes.name:t planes.geometry_json:t? planes.catalog:t?")
        geometries = tuple(
            None if g is None else geometry_of(name, self._json(g, visit_id, "geometry_json",
                                                                 "planes"))
            for name, g, _ in planes)
        masses = self._read_masses(visit_id)
        try:
            runs = []
            for run_id, name, kind in self._query(
                    "SELECT id, name, kind FROM runs WHERE visit_id = ? ORDER BY seq",
                    (visit_id,), "runs.id:i runs.name:t runs.kind:t"):
                readings = self._query(
                    "SELECT amplitude, phase_deg, re, im FROM readings WHERE run_id = ? "
                    "ORDER BY channel_index", (run_id,),
                    "readings.amplitude:r readings.phase_deg:r readings.re:r readings.im:r")
                runs.append(RunRecord(name, kind, tuple((a, p) for a, p, _, _ in readings),
                                      tuple(complex(re, im) for _, _, re, im in readings),
                                      masses.get(run_id, ())))
            record = VisitRecord(
                machine_id, machine_name, started_at, session_file, unit, measure, phase_sense,
                angle_sense, channel_names, plane_names, tuple(runs),
                self._read_coefficients(visit_id, len(channel_names), len(plane_names)),
                condition, source, masses.get(None, ()),
                self._json(result_json, visit_id, "result_json"), service_rpm, rotation,
                None if None in weights else weights, geometries,
                tuple(c for _, _, c in planes),
                self._json(setup_json, visit_id, "setup_json") if setup_json else {})
            check_record(record)
        except HistoryError as exc:
            if exc.file:
                raise
            raise self._error(f"visit {visit_id}: {exc.key} {exc.detail}",
                              key=f"visits.{exc.key}", expected=exc.expected) from None
        except (TypeError, ValueError) as exc:
            raise self._error(f"visit {visit_id} cannot be read: {exc}", expected=DAMAGED
                              ) from None
        return record

    def same_visit(self, record: VisitRecord) -> int | None:
        """The id of a stored visit with the same runs as ``record`` (a session saved twice).

        The same machine, sensors and planes, and runs with the same names,
        kinds, readings as read and masses; the time and the plan are not
        compared (the same runs planned again are still the same visit).

        Parameters
        ----------
        record : VisitRecord
            The visit about to be saved.

        Returns
        -------
        int or None
            The stored visit's id, or None.
        """
        def runs_of(runs: Sequence[RunRecord]) -> list:
            return [(r.name, r.kind, tuple(r.readings), tuple(r.masses)) for r in runs]

        wanted = runs_of(record.runs)
        for (visit_id,) in self._query(
                "SELECT v.id FROM visits AS v WHERE v.machine_id = ? AND (SELECT COUNT(*) "
                "FROM runs AS r WHERE r.visit_id = v.id) = ? ORDER BY v.id",
                (record.machine_id, len(record.runs)), "visits.id:i"):
            if self._names("channels", "channel_index", visit_id) != record.channel_names:
                continue
            if self._names("planes", "plane_index", visit_id) != record.plane_names:
                continue
            if runs_of(self.visit(visit_id).runs) == wanted:
                return visit_id
        return None

    def remove_visit(self, visit_id: int) -> None:
        """Remove one visit and everything stored with it (its machine stays).

        Parameters
        ----------
        visit_id : int
            The visit's id.

        Raises
        ------
        HistoryError
            No visit has this id, or the database cannot be written.
        """
        self._refuse_read_only("remove a visit")
        try:
            with _immediate(self._conn):
                gone = self._conn.execute("DELETE FROM visits WHERE id = ?",
                                          (visit_id,)).rowcount
        except sqlite3.Error as exc:
            raise self._error(f"cannot remove visit {visit_id}: {exc}",
                              expected=WRITABLE) from exc
        if gone != 1:
            raise self._error(f"no visit {visit_id}", key="visit_id",
                              expected="the id of a saved visit")

    def latest_coefficients(self, machine_id: str, channel_names: Sequence[str],
                            plane_names: Sequence[str]) -> StoredCoefficients | None:
        """The newest stored coefficients of a machine that fit this set-up.

        Parameters
        ----------
        machine_id : str
            The machine.
        channel_names : sequence of str
            The channels, in order; a stored visit must have the same names
            in the same order.
        plane_names : sequence of str
            The correction planes, in order; likewise.

        Returns
        -------
        StoredCoefficients or None
            The matrix (channels × planes, complex, in the visit's unit and
            measure per g·mm) with its unit, measure, angle sense, sense of
            rotation and speed, and which visit it came from
            (``"visit 3 of 2026-11-02 10:15 UTC"``); None when no visit of the
            machine fits, or the machine is unknown.  Whether it can serve
            another session is for the caller to decide
            (:func:`placer.influence.adapt_stored`).
        """
        wanted, planes = tuple(channel_names), tuple(plane_names)
        candidates = self._query(
            "SELECT v.id, v.started_at, v.unit, v.measure, v.angle_sense, v.rotation, "
            "v.service_rpm FROM visits AS v WHERE v.machine_id = ? AND EXISTS "
            "(SELECT 1 FROM coefficients AS c WHERE c.visit_id = v.id) "
            "ORDER BY v.started_at DESC, v.id DESC", (machine_id,),
            "visits.id:i visits.started_at:t visits.unit:t visits.measure:t "
            "visits.angle_sense:t visits.rotation:t? visits.service_rpm:r?")
        for visit_id, started_at, unit, measure, angle_sense, rotation, rpm in candidates:
            if self._names("channels", "channel_index", visit_id) != wanted:
                continue
            if self._names("planes", "plane_index", visit_id) != planes:
                continue
            matrix = self._read_coefficients(visit_id, len(wanted), len(planes))
            for column, value, allowed in (("unit", unit, AMPLITUDE_UNITS),
                                           ("measure", measure, MEASURES),
                                           ("angle_sense", angle_sense, ANGLE_SENSES),
                                           ("rotation", rotation, (None, *ROTATIONS))):
                if value not in allowed:
                    raise self._error(f"visit {visit_id}: {column} is {value!r}",
                                      key=f"visits.{column}",
                                      expected=" or ".join(map(str, allowed)))
            return StoredCoefficients(matrix, unit, measure, angle_sense, rotation, rpm,
                                      wanted, planes,
                                      f"visit {visit_id} of {utc_label(started_at)}")
        return None

    def _names(self, table: str, index: str, visit_id: int) -> tuple[str, ...]:
        rows = self._query(
            f"SELECT name FROM {table} WHERE visit_id = ? ORDER BY {index}", (visit_id,),
            f"{table}.name:t")
        return tuple(name for (name,) in rows)

    def _read_coefficients(self, visit_id: int, n_channels: int,
                           n_planes: int) -> np.ndarray | None:
        rows = self._query(
            "SELECT channel_index, plane_index, re, im FROM coefficients WHERE visit_id = ?",
            (visit_id,), "coefficients.channel_index:i coefficients.plane_index:i "
            "coefficients.re:r coefficients.im:r")
        if not rows:
            return None
        if len(rows) != n_channels * n_planes:
            raise self._error(f"visit {visit_id} has {len(rows)} coefficients",
                              key="coefficients",
                              expected=f"{n_channels} × {n_planes} (channels × planes)")
        matrix = np.empty((n_channels, n_planes), dtype=complex)
        for i, j, re, im in rows:
            for column, value, size in (("channel_index", i, n_channels),
                                        ("plane_index", j, n_planes)):
                if not 0 <= value < size:
                    raise self._error(f"visit {visit_id}: a coefficient's {column} is {value!r}",
                                      key=f"coefficients.{column}",
                                      expected=f"0 to {size - 1}")
            matrix[i, j] = complex(re, im)
        return matrix

    def _read_masses(self, visit_id: int) -> dict[int | None, tuple[MassRecord, ...]]:
        """A visit's masses by run id (None: the planned correction), in saved order."""
        grouped: dict[int | None, list[MassRecord]] = {}
        for row in self._query(
                "SELECT run_id, plane_index, position, angle_deg, radius_mm, mass_g, item, "
                "count, role, removed_after FROM masses WHERE visit_id = ? ORDER BY id",
                (visit_id,), "masses.run_id:i? masses.plane_index:i masses.position:i? "
                "masses.angle_deg:r masses.radius_mm:r masses.mass_g:r masses.item:t? "
                "masses.count:i masses.role:t masses.removed_after:i"):
            run_id, *values, role, removed_after = row
            if role not in MASS_ROLES or removed_after not in (0, 1) or values[-1] == 0:
                raise self._error(f"visit {visit_id}: a mass with role {role!r}, count "
                                  f"{values[-1]} and removed_after {removed_after!r}",
                                  key="masses.role", expected=f"a role of {', '.join(MASS_ROLES)}"
                                  f", a count other than 0, removed_after 0 or 1 ({DAMAGED})")
            grouped.setdefault(run_id, []).append(MassRecord(*values, role,
                                                             bool(removed_after)))
        return {run_id: tuple(masses) for run_id, masses in grouped.items()}


