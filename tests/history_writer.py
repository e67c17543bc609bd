"""Helpers for test_history.py, and the writer process its kill test starts.

As a script: ``python history_writer.py DB MARKER PAUSE_AT N_RUNS`` opens the
history database DB, starts saving a large visit (machine ``WM-KILL``,
N_RUNS runs) and, when the PAUSE_AT-th batch of readings has been inserted,
writes MARKER and sleeps inside the open transaction until it is killed.
The pause comes from wrapping the sqlite3 connection here, in test code;
placer.io.history has no hook for it.

The scenario is invented: fans and pumps of the Wrenmoor shop.
"""

from __future__ import annotations

import os
import sqlite3
import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

from placer.geometry import PlaneGeometry, equally_spaced_deg, polar
from placer.io.history import History
from placer.io.historyschema import SCHEMA_V1
from placer.records import MassRecord, RunRecord, VisitRecord


class WatchedConnection:
    """A sqlite3 connection that calls ``after_insert(sql)`` after each INSERT.

    Everything else is passed through to the wrapped connection.
    """

    def __init__(self, connection: sqlite3.Connection,
                 after_insert: Callable[[str], None]) -> None:
        self._connection = connection
        self._after_insert = after_insert

    def execute(self, sql: str, parameters: object = ()) -> sqlite3.Cursor:
        cursor = self._connection.execute(sql, parameters)
        self._watch(sql)
        return cursor

    def executemany(self, sql: str, parameters: object) -> sqlite3.Cursor:
        cursor = self._connection.executemany(sql, parameters)
        self._watch(sql)
        return cursor

    def _watch(self, sql: str) -> None:
        if sql.lstrip().upper().startswith("INSERT"):
            self._after_insert(sql)

    def __getattr__(self, name: str) -> object:
        return getattr(self._connection, name)


def watch_connections(after_insert: Callable[[str], None]) -> list[sqlite3.Connection]:
    """Make ``sqlite3.connect`` return watched connections; returns the real ones opened."""
    real_connect = sqlite3.connect
    opened: list[sqlite3.Connection] = []

    def connect(*args: object, **kwargs: object) -> WatchedConnection:
        connection = real_connect(*args, **kwargs)
        opened.append(connection)
        return WatchedConnection(connection, after_insert)

    sqlite3.connect = connect
    return opened


def make_visit(machine_id: str = "WM-EF-07",
               machine_name: str = "Wrenmoor shop exhaust fan 7", *,
               started_at: str = "2026-11-02T10:15", n_runs: int = 3,
               channel_names: tuple[str, ...] = ("outboard H", "inboard H"),
               n_planes: int = 2, seed: int = 7, coefficients: bool = True) -> VisitRecord:
    """A visit with readings, trial and fitted masses, coefficients and a plan.

    Values come from a seeded generator: readings rounded as an instrument
    shows them, phasors and coefficients with all 53 bits of their mantissa
    so that a round trip is checked to the last bit.
    """
    rng = np.random.default_rng(seed)
    n_channels = len(channel_names)
    runs = []
    for r in range(n_runs):
        readings = tuple((round(float(rng.uniform(0.5, 12.0)), 2),
                          float(rng.integers(0, 360))) for _ in range(n_channels))
        if r == 0:
            kind, masses = "reference", ()
        elif r < n_runs - 1 or n_runs == 2:
            kind = "trial"
            masses = (MassRecord((r - 1) % n_planes, None, float(rng.integers(0, 360)), 212.5,
                                 18.0, None, 1, "trial", True),)
        else:
            kind = "check"
            masses = (MassRecord(0, 4, 90.0, 212.5, 5.0, "WB-5", 2, "fitted", False),
                      MassRecord(n_planes - 1, None, 17.5, 198.0, 3.25, None, 1, "fitted",
                                 False))
        runs.append(RunRecord(f"run {r + 1}", kind, readings,
                              tuple(polar(a, p) for a, p in readings), masses))
    matrix = None
    condition = None
    if coefficients:
        matrix = (rng.normal(size=(n_channels, n_planes))
                  + 1j * rng.normal(size=(n_channels, n_planes))) * 1e-3
        condition = float(np.linalg.cond(matrix))
    planned = (MassRecord(0, 7, 315.0, 212.5, 10.0, "WB-10", 1, "planned", False),
               MassRecord(n_planes - 1, 2, 45.0, 212.5, 2.5, "WB-2.5", 3, "planned", False))
    result = {"vibration_before": 7.31, "vibration_after": 0.42, "within_limit": True,
              "warnings": ["trial run 2 changed outboard H by 24 %"], "limit": None}
    names = tuple(f"plane {k + 1}" for k in range(n_planes))
    geometries = tuple(PlaneGeometry(name, equally_spaced_deg(8), (212.5,) * 8,
                                     frozenset({3}) if k else frozenset(), 2)
                       for k, name in enumerate(names))
    setup = {"rotor_name": "exhaust fan 7 impeller", "norm": "max", "vibration_limit": 1.5,
             "plane_separation_mm": 380.0, "residual_checks": []}
    return VisitRecord(machine_id, machine_name, started_at, "wrenmoor-ef07.toml", "mm/s",
                       "rms", "lag", "with rotation", tuple(channel_names), names, tuple(runs),
                       matrix, condition, "runs" if coefficients else "none", planned, result,
                       service_rpm=1475.0 if coefficients else None,
                       channel_weights=tuple(1.0 + k for k in range(n_channels)),
                       plane_geometries=geometries,
                       catalog_names=("washers-steel",) * n_planes, setup=setup)


def write_version_2_file(path: Path) -> None:
    """A history file as placer wrote it at schema version 2, by hand: version 1's tables,
    the version 2 columns (speed, rotation), one visit with a trial run and a plan."""
    connection = sqlite3.connect(path)
    for statement in SCHEMA_V1.split(";"):
        if statement.strip():
            connection.execute(statement)
    connection.execute("ALTER TABLE visits ADD COLUMN service_rpm REAL")
    connection.execute("ALTER TABLE visits ADD COLUMN rotation TEXT")
    connection.execute("INSERT INTO schema_version VALUES (2)")
    connection.execute("INSERT INTO machines VALUES ('WM-EF-07', 'exhaust fan 7', "
                       "'2026-11-02T10:15:00+00:00')")
    connection.execute(
        "INSERT INTO visits VALUES (1, 'WM-EF-07', '2026-11-02T10:15:00+00:00', 'ef7.toml', "
        "'mm/s', 'peak', 'lag', 'against rotation', '1 trial run(s) of this visit', 1.0, "
        "'{\"vibration_before\": 4.0, \"vibration_after\": 0.5, \"norm\": \"max\"}', "
        "1475.0, NULL)")
    connection.execute("INSERT INTO channels VALUES (1, 0, 'outboard H')")
    connection.execute("INSERT INTO planes VALUES (1, 0, 'hub')")
    connection.execute("INSERT INTO runs VALUES (1, 1, 0, 'as found', 'reference')")
    connection.execute("INSERT INTO runs VALUES (2, 1, 1, 'trial', 'trial')")
    connection.execute("INSERT INTO readings VALUES (1, 0, 4.0, 30.0, 3.4641016, 2.0)")
    connection.execute("INSERT INTO readings VALUES (2, 0, 6.0, 50.0, 3.8567257, 4.5962667)")
    connection.execute("INSERT INTO coefficients VALUES (1, 0, 0, 0.004, -0.002)")
    connection.execute("INSERT INTO masses VALUES (1, 1, 2, 'trial', 0, 3, 90.0, 150.0, 20.0, "
                       "NULL, 1, 1)")
    connection.execute("INSERT INTO masses VALUES (2, 1, NULL, 'planned', 0, 5, 180.0, 150.0, "
                       "6.27, 'M12', 1, 0)")
    connection.commit()
    connection.close()


def kill_mid_save(db: Path, marker: Path, n_runs: int = 400, pause_at: int = 300) -> None:
    """Start this file as a writer on ``db`` and kill it (SIGKILL) in the middle of its save.

    On return the writer is dead with its transaction open: the file holds
    spilled uncommitted pages and a hot journal beside it.
    """
    import signal
    import subprocess

    import pytest

    size_before = db.stat().st_size
    writer = subprocess.Popen([sys.executable, __file__, str(db), str(marker),
                               str(pause_at), str(n_runs)],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 30
        while not marker.exists():
            if writer.poll() is not None:
                pytest.fail(f"writer ended early: {writer.communicate()[1].decode()}")
            if time.monotonic() > deadline:
                pytest.fail("writer did not reach the middle of its transaction")
            time.sleep(0.02)
        pid, batches = marker.read_text().split()
        assert (int(pid), int(batches)) == (writer.pid, pause_at)
        # mid-write: the writer holds the write lock and a journal exists
        probe = sqlite3.connect(db, timeout=0, isolation_level=None)
        with pytest.raises(sqlite3.OperationalError, match="locked"):
            probe.execute("BEGIN IMMEDIATE")
        probe.close()
        assert Path(f"{db}-journal").exists()
        # the writer's small page cache has spilled uncommitted pages into the file
        assert db.stat().st_size > size_before
        os.kill(writer.pid, signal.SIGKILL)
        writer.wait(timeout=10)
    finally:
        if writer.poll() is None:
            writer.kill()
            writer.wait()
        writer.stdout.close()
        writer.stderr.close()
    assert writer.returncode == -signal.SIGKILL


def main(db: str, marker: str, pause_at: str, n_runs: str) -> None:
    batches = 0

    def after_insert(sql: str) -> None:
        nonlocal batches
        if "INTO readings" in sql:
            batches += 1
            if batches == int(pause_at):
                partial = Path(marker + ".part")
                partial.write_text(f"{os.getpid()} {batches}\n")
                partial.replace(marker)
                time.sleep(120)

    opened = watch_connections(after_insert)
    history = History(Path(db))
    # A small page cache makes SQLite spill changed pages into the database
    # file before the commit, so the kill leaves uncommitted pages there.
    opened[0].execute("PRAGMA cache_size = 4")
    history.save_visit(make_visit("WM-KILL", "Wrenmoor pump P-3", n_runs=int(n_runs),
                                  channel_names=tuple(f"sensor {k}" for k in range(8)),
                                  started_at="2026-11-03T08:00", seed=3))
    sys.exit("the writer was not stopped mid-transaction")


if __name__ == "__main__":
    main(*sys.argv[1:])
