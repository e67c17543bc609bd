"""Tests of placer.io.history, the machine history database.

What the checks are measured against: the record that was saved (a round
trip must give back every value to the last bit: SQLite REAL is an IEEE 754
double, SQLite documentation "Datatypes In SQLite"), SQLite's own
``PRAGMA integrity_check`` and ``foreign_key_check``, row counts read with
the stdlib sqlite3 module directly, and the XDG Base Directory
Specification 0.8 for the default location.  A machine "killed" mid-write is
a real process ended with SIGKILL.
"""

from __future__ import annotations

import math
import pickle
import sqlite3
import subprocess
import sys
from dataclasses import FrozenInstanceError, replace
from pathlib import Path

import numpy as np
import pytest
from history_writer import (
    kill_mid_save,
    make_visit,
    watch_connections,
    write_version_2_file,
)

from placer.errors import HistoryError, PlacerError
from placer.io import history, historyfile
from placer.io.history import History
from placer.io.historyfile import default_db_path
from placer.io.historyschema import SCHEMA_V1, SCHEMA_VERSION
from placer.records import MachineSummary

WRITER = Path(__file__).resolve().parents[1] / "history_writer.py"


def table_counts(path: Path) -> dict[str, int]:
    """Rows in every table of the file, read without placer."""
    connection = sqlite3.connect(path)
    try:
        tables = [name for (name,) in connection.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")]
        return {t: connection.execute(f"SELECT COUNT(*) FROM {t}").fetchone()[0]
                for t in tables}
    finally:
        connection.close()


@pytest.fixture
def db(tmp_path: Path) -> Path:
    return tmp_path / "shop" / "history.sqlite"


# -- where the file lives ---------------------------------------------------

@pytest.mark.parametrize("env, platform, expected", [
    ({"PLACER_DB": "/data/wrenmoor.sqlite", "XDG_DATA_HOME": "/xdg"}, "linux",
     "/data/wrenmoor.sqlite"),
    ({"XDG_DATA_HOME": "/xdg"}, "linux", "/xdg/placer/history.sqlite"),
    # XDG Base Directory Specification 0.8: unset, empty or relative -> $HOME/.local/share
    ({}, "linux", "/home/ada/.local/share/placer/history.sqlite"),
    ({"XDG_DATA_HOME": ""}, "linux", "/home/ada/.local/share/placer/history.sqlite"),
    ({"XDG_DATA_HOME": "relative/data"}, "linux", "/home/ada/.local/share/placer/history.sqlite"),
    ({"APPDATA": "/appdata"}, "win32", "/appdata/placer/history.sqlite"),
])
def test_default_db_path(monkeypatch: pytest.MonkeyPatch, env: dict[str, str], platform: str,
                         expected: str) -> None:
    for name in ("PLACER_DB", "XDG_DATA_HOME", "APPDATA"):
        monkeypatch.delenv(name, raising=False)
    for name, value in env.items():
        monkeypatch.setenv(name, value)
    monkeypatch.setenv("HOME", "/home/ada")
    monkeypatch.setattr(sys, "platform", platform)
    assert default_db_path() == Path(expected)


# -- round trip -------------------------------------------------------------

def test_full_visit_round_trip_is_exact(db: Path) -> None:
    record = make_visit()
    with History(db) as h:
        visit_id = h.save_visit(record)
        back = h.visit(visit_id)
    assert db.parent.is_dir()
    assert back == record
    # field by field as well, so that a failure says where: complex values bit for bit
    assert back.coefficients.dtype == np.complex128
    assert np.array_equal(back.coefficients, record.coefficients)
    assert back.condition == record.condition
    assert (back.service_rpm, back.rotation) == (1475.0, None)
    for got, want in zip(back.runs, record.runs, strict=True):
        assert got.readings == want.readings
        assert got.phasors == want.phasors
        assert got.masses == want.masses
    assert back.planned == record.planned
    assert back.result == record.result
    one_ulp_off = record.coefficients.copy()
    one_ulp_off[1, 0] = complex(one_ulp_off[1, 0].real, np.nextafter(one_ulp_off[1, 0].imag, 1))
    assert back != replace(record, coefficients=one_ulp_off)
    assert back != replace(record, coefficients=None)


def test_visit_without_coefficients_round_trip(db: Path) -> None:
    record = make_visit(coefficients=False)
    with History(db) as h:
        assert h.visit(h.save_visit(record)) == record


def test_records_are_frozen() -> None:
    record = make_visit()
    with pytest.raises(FrozenInstanceError):
        record.machine_id = "WM-EF-08"
    with pytest.raises(ValueError):
        record.coefficients[0, 0] = 0


def test_unknown_visit_id_is_refused(db: Path) -> None:
    with History(db) as h, pytest.raises(HistoryError, match="no visit 41"):
        h.visit(41)


# -- listings -----------------------------------------------------------------

def test_machines_and_visits_counts(db: Path) -> None:
    with History(db) as h:
        # saved out of time order: visits() lists oldest first
        second = h.save_visit(make_visit(started_at="2026-11-09T14:00"))
        first = h.save_visit(make_visit(started_at="2026-11-02T10:15", n_runs=4))
        h.save_visit(make_visit("WM-CP-2", "Wrenmoor cooling pump 2",
                                started_at="2026-10-30T09:00"))
        h.save_visit(make_visit(machine_name="Wrenmoor exhaust fan 7 (new motor)",
                                started_at="2027-01-15T08:30", coefficients=False))
        assert h.machines() == [
            MachineSummary("WM-CP-2", "Wrenmoor cooling pump 2", 1, "2026-10-30T09:00"),
            MachineSummary("WM-EF-07", "Wrenmoor exhaust fan 7 (new motor)", 3,
                           "2027-01-15T08:30"),
        ]
        visits = h.visits("WM-EF-07")
    assert [v.id for v in visits[:2]] == [first, second]
    assert [v.started_at for v in visits] == ["2026-11-02T10:15", "2026-11-09T14:00",
                                             "2027-01-15T08:30"]
    assert [v.runs for v in visits] == [4, 3, 3]
    assert [v.coefficient_source for v in visits] == ["runs", "runs", "none"]
    assert visits[2].condition is None
    assert visits[0].condition == make_visit(n_runs=4).condition
    assert visits[0].planned == make_visit().planned
    assert visits[0].result == make_visit().result


def test_unknown_machine_gives_nothing(db: Path) -> None:
    with History(db) as h:
        assert h.machines() == []
        h.save_visit(make_visit())
        assert h.visits("WM-EF-70") == []
        assert h.latest_coefficients("WM-EF-70", ["outboard H", "inboard H"],
                                     ["plane 1", "plane 2"]) is None


def test_latest_coefficients_picks_newest_matching_visit(db: Path) -> None:
    channels = ("outboard H", "inboard H")
    planes = ["plane 1", "plane 2"]
    with History(db) as h:
        h.save_visit(make_visit(started_at="2026-10-01T09:00", seed=1))
        wanted = replace(make_visit(started_at="2026-11-02T10:15:00+00:00", seed=2),
                         service_rpm=1475.0, rotation="clockwise")
        wanted_id = h.save_visit(wanted)
        # newer, but none fits: no coefficients, channels swapped, other plane count,
        # other plane names
        h.save_visit(make_visit(started_at="2026-12-01T09:00", coefficients=False))
        h.save_visit(make_visit(started_at="2026-12-02T09:00", channel_names=channels[::-1]))
        h.save_visit(make_visit(started_at="2026-12-03T09:00", n_planes=1))
        h.save_visit(replace(make_visit(started_at="2026-12-04T09:00"),
                             plane_names=("hub", "rim")))
        h.save_visit(make_visit("WM-CP-2", started_at="2027-01-01T09:00"))
        found = h.latest_coefficients("WM-EF-07", list(channels), planes)
        assert h.latest_coefficients("WM-EF-07", ["outboard H"], planes) is None
        assert h.latest_coefficients("WM-EF-07", list(channels), planes + ["plane 3"]) is None
        assert h.latest_coefficients("WM-EF-07", list(channels), ["hub", "rim"]) is not None
    assert np.array_equal(found.matrix, wanted.coefficients)
    # what the coefficients were measured in travels with them
    assert (found.unit, found.measure, found.angle_sense, found.rotation, found.service_rpm) == (
        "mm/s", "rms", "with rotation", "clockwise", 1475.0)
    assert found.plane_names == tuple(planes) and found.channel_names == channels
    assert found.label == f"visit {wanted_id} of 2026-11-02 10:15 UTC"


@pytest.mark.parametrize("stored, shown", [
    ("2026-11-02T10:15:00+00:00", "2026-11-02 10:15 UTC"),
    ("2026-11-02T11:15:00+01:00", "2026-11-02 10:15 UTC"),   # ISO 8601 offset to UTC
    ("2026-11-02", "2026-11-02"),
    ("2026-11-02T10:15", "2026-11-02 10:15"),                # no offset: no zone claimed
])
def test_times_are_labelled_in_utc(stored: str, shown: str) -> None:
    assert history.utc_label(stored) == shown


# -- restart in a new process -------------------------------------------------

def test_visit_survives_restart_in_new_process(db: Path, tmp_path: Path) -> None:
    record = make_visit()
    with History(db) as h:
        visit_id = h.save_visit(record)
    out = tmp_path / "read-back.pickle"
    code = ("import pickle, sys; from pathlib import Path; from placer.io.history import History\n"
            "with History(Path(sys.argv[1])) as h:\n"
            "    data = (h.visit(int(sys.argv[2])), h.machines())\n"
            "Path(sys.argv[3]).write_bytes(pickle.dumps(data))\n")
    subprocess.run([sys.executable, "-c", code, str(db), str(visit_id), str(out)],
                   check=True, timeout=60)
    back, machines = pickle.loads(out.read_bytes())
    assert back == record
    assert machines == [MachineSummary("WM-EF-07", record.machine_name, 1, record.started_at)]


# -- schema version and migrations ------------------------------------------

def test_schema_version_is_stored(db: Path) -> None:
    History(db).close()
    connection = sqlite3.connect(db)
    assert connection.execute("SELECT version FROM schema_version").fetchall() == [(4,)]
    assert connection.execute("PRAGMA journal_mode").fetchone() == ("delete",)
    connection.close()
    assert SCHEMA_VERSION == 4


def test_newer_schema_version_is_refused(db: Path) -> None:
    with History(db) as h:
        h.save_visit(make_visit())
    connection = sqlite3.connect(db)
    connection.execute("UPDATE schema_version SET version = 5")
    connection.commit()
    connection.close()
    with pytest.raises(HistoryError, match="newer placer") as caught:
        History(db)
    assert isinstance(caught.value, PlacerError)
    assert caught.value.file == str(db)
    assert caught.value.key == "schema_version"


def add_visit_notes(connection: sqlite3.Connection) -> None:
    """A made-up migration 4 -> 5: a notes column on visits."""
    connection.execute("ALTER TABLE visits ADD COLUMN notes TEXT NOT NULL DEFAULT ''")


def test_older_file_is_migrated(db: Path, tmp_path: Path,
                                monkeypatch: pytest.MonkeyPatch) -> None:
    record = make_visit()
    with History(db) as h:
        visit_id = h.save_visit(record)
    monkeypatch.setattr(historyfile, "SCHEMA_VERSION", 5)
    monkeypatch.setattr(historyfile, "MIGRATIONS", {**historyfile.MIGRATIONS, 4: add_visit_notes})
    with History(db) as h:
        assert h.visit(visit_id) == record
    fresh = tmp_path / "fresh.sqlite"
    History(fresh).close()
    for path in (db, fresh):
        connection = sqlite3.connect(path)
        assert connection.execute("SELECT version FROM schema_version").fetchall() == [(5,)]
        columns = [row[1] for row in connection.execute("PRAGMA table_info(visits)")]
        assert columns[-1] == "notes"
        connection.close()


def test_missing_migration_leaves_file_unchanged(db: Path,
                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    History(db).close()
    monkeypatch.setattr(historyfile, "SCHEMA_VERSION", 6)
    monkeypatch.setattr(historyfile, "MIGRATIONS", {**historyfile.MIGRATIONS, 4: add_visit_notes})
    with pytest.raises(HistoryError, match="no migration from schema version 5"):
        History(db)
    connection = sqlite3.connect(db)
    assert connection.execute("SELECT version FROM schema_version").fetchall() == [(4,)]
    assert "notes" not in [row[1] for row in connection.execute("PRAGMA table_info(visits)")]
    connection.close()


def write_version_1_file(path: Path) -> None:
    """A history file as placer wrote it at schema version 1, by hand: one visit read
    in µm rms (stored then as peak values), coefficients, a result summary."""
    connection = sqlite3.connect(path)
    for statement in SCHEMA_V1.split(";"):
        if statement.strip():
            connection.execute(statement)
    connection.execute("INSERT INTO schema_version VALUES (1)")
    connection.execute("INSERT INTO machines VALUES ('WM-EF-07', 'exhaust fan 7', "
                       "'2026-11-02T10:15:00+00:00')")
    for visit_id, measure in ((1, "rms"), (2, "peak-to-peak"), (3, "peak")):
        connection.execute(
            "INSERT INTO visits VALUES (?, 'WM-EF-07', ?, 'ef7.toml', 'um', ?, 'lag', "
            "'against rotation', '2 trial run(s) of this visit', 1.5, ?)",
            (visit_id, f"2026-11-0{visit_id}T10:15:00+00:00", measure,
             '{"vibration_before": 14.142135623730951, "vibration_after": 1.0, "norm": "max"}'))
        connection.execute("INSERT INTO channels VALUES (?, 0, 'outboard H')", (visit_id,))
        connection.execute("INSERT INTO planes VALUES (?, 0, 'hub')", (visit_id,))
        connection.execute("INSERT INTO runs VALUES (?, ?, 0, 'as found', 'reference')",
                           (visit_id, visit_id))
        connection.execute("INSERT INTO readings VALUES (?, 0, 10.0, 30.0, 12.0, 8.0)",
                           (visit_id,))
        connection.execute("INSERT INTO coefficients VALUES (?, 0, 0, 0.004, -0.002)",
                           (visit_id,))
    connection.commit()
    connection.close()


def test_version_1_file_is_migrated_to_the_visit_measure(db: Path) -> None:
    """Version 1 held readings as peak values; version 2 holds them in the visit's
    measure: rms = peak/√2, peak-to-peak = 2·peak (sinusoid identities)."""
    db.parent.mkdir(parents=True)
    write_version_1_file(db)
    with History(db) as h:
        rms, pp, peak = h.visit(1), h.visit(2), h.visit(3)
        found = h.latest_coefficients("WM-EF-07", ["outboard H"], ["hub"])
    root2 = math.sqrt(2.0)
    assert rms.runs[0].phasors[0] == pytest.approx(complex(12.0, 8.0) / root2, rel=1e-15)
    assert rms.coefficients[0, 0] == pytest.approx(complex(0.004, -0.002) / root2, rel=1e-15)
    assert rms.result["vibration_before"] == pytest.approx(10.0, rel=1e-15)
    assert rms.runs[0].readings == ((10.0, 30.0),)  # as read: unchanged
    assert pp.runs[0].phasors[0] == pytest.approx(complex(24.0, 16.0), rel=1e-15)
    assert pp.coefficients[0, 0] == pytest.approx(complex(0.008, -0.004), rel=1e-15)
    assert peak.runs[0].phasors[0] == complex(12.0, 8.0)
    assert (rms.service_rpm, rms.rotation) == (None, None)
    assert (found.measure, found.service_rpm) == ("peak", None)  # the newest: visit 3
    connection = sqlite3.connect(db)
    assert connection.execute("SELECT version FROM schema_version").fetchall() == [(4,)]
    assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    connection.close()


def test_version_2_file_is_migrated_without_the_report_facts(db: Path) -> None:
    """Version 3 adds the sensors' weights, the planes' positions and catalogues and the
    session's settings; a visit stored before has none of them (NULL) and reads back
    with None, and a new visit in the same file keeps them."""
    db.parent.mkdir(parents=True)
    write_version_2_file(db)
    with History(db) as h:
        old = h.visit(1)
        new_id = h.save_visit(make_visit())
        new = h.visit(new_id)
    assert (old.channel_weights, old.plane_geometries, old.catalog_names, old.setup) == \
        (None, None, None, {})
    assert old.runs[1].masses[0].mass_g == 20.0 and old.planned[0].item == "M12"
    assert new == make_visit()
    connection = sqlite3.connect(db)
    assert connection.execute("SELECT version FROM schema_version").fetchall() == [(4,)]
    assert [row[1] for row in connection.execute("PRAGMA table_info(channels)")][-1] == "weight"
    assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    assert connection.execute("PRAGMA foreign_key_check").fetchall() == []
    connection.close()


def test_the_same_runs_saved_twice_are_found(db: Path) -> None:
    record = make_visit()
    with History(db) as h:
        assert h.same_visit(record) is None
        first = h.save_visit(record)
        # Another time and another plan: still the same runs, so the same visit.
        again = replace(record, started_at="2026-11-02T11:00", planned=())
        assert h.same_visit(again) == first
        other = replace(record, runs=record.runs[:-1] + (replace(
            record.runs[-1], readings=((9.99, 1.0),) + record.runs[-1].readings[1:]),))
        assert h.same_visit(other) is None
        assert h.same_visit(replace(record, machine_id="WM-EF-08")) is None


def test_a_visit_is_removed_with_everything_stored_with_it(db: Path) -> None:
    with History(db) as h:
        keep = h.save_visit(make_visit())
        gone = h.save_visit(make_visit(started_at="2027-01-05T09:00", seed=11))
    before = table_counts(db)
    with History(db) as h:
        h.remove_visit(gone)
        assert [v.id for v in h.visits("WM-EF-07")] == [keep]
        assert h.visit(keep) == make_visit()
        with pytest.raises(HistoryError, match=f"no visit {gone}"):
            h.remove_visit(gone)
    after = table_counts(db)
    # Every row of the removed visit went (counted without placer), the kept one stayed.
    for table in ("channels", "planes", "runs", "readings", "coefficients", "masses"):
        assert after[table] == before[table] // 2, table
    assert after["visits"] == 1 and after["machines"] == 1
    connection = sqlite3.connect(db)
    assert connection.execute("PRAGMA foreign_key_check").fetchall() == []
    connection.close()


# -- files that are not a history ---------------------------------------------

def test_file_that_is_not_a_database_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "notes.sqlite"
    path.write_text("Wrenmoor shop: exhaust fan 7 balanced on Tuesday, 0.4 mm/s.\n" * 20)
    before = path.read_bytes()
    with pytest.raises(HistoryError, match="is not a SQLite database") as caught:
        History(path)
    assert caught.value.file == str(path)
    assert caught.value.key is None
    assert caught.value.expected == "a placer history database"
    assert path.read_bytes() == before


def test_database_of_another_program_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "stock.sqlite"
    connection = sqlite3.connect(path)
    connection.execute("CREATE TABLE parts (name TEXT)")
    connection.commit()
    connection.close()
    with pytest.raises(HistoryError, match="another program") as caught:
        History(path)
    assert caught.value.expected == "a placer history database"


# -- all or nothing -----------------------------------------------------------

@pytest.mark.parametrize("machine_id, machine_name", [
    ("WM-CP-2", "Wrenmoor cooling pump 2"),      # a new machine
    ("WM-EF-07", "Wrenmoor exhaust fan 7, renamed"),  # a known machine, renamed
])
def test_failure_inside_save_leaves_no_trace(db: Path, monkeypatch: pytest.MonkeyPatch,
                                             machine_id: str, machine_name: str) -> None:
    with History(db) as h:
        h.save_visit(make_visit())
    before = table_counts(db)
    inserts = 0

    def fail_midway(sql: str) -> None:
        nonlocal inserts
        inserts += 1
        if inserts == 8:  # machine, visit, channels, planes, then into the runs
            raise RuntimeError("power cut")

    monkeypatch.setattr(sqlite3, "connect", sqlite3.connect)  # restored after the test
    watch_connections(fail_midway)
    with History(db) as h:
        with pytest.raises(RuntimeError, match="power cut"):
            h.save_visit(make_visit(machine_id, machine_name, n_runs=5))
        assert inserts == 8
        assert table_counts(db) == before
        assert h.machines() == [MachineSummary("WM-EF-07", "Wrenmoor shop exhaust fan 7", 1,
                                               "2026-11-02T10:15")]
        assert h.visits("WM-CP-2") == []
        # the connection is usable again: no transaction was left open
        inserts = -1000
        h.save_visit(make_visit(machine_id, machine_name))
        assert MachineSummary(machine_id, machine_name, len(h.visits(machine_id)),
                              "2026-11-02T10:15") in h.machines()


@pytest.mark.parametrize("change, key", [
    (lambda r: replace(r, channel_names=r.channel_names[:1]), "runs[0].readings"),
    (lambda r: replace(r, plane_names=("plane 1", "plane 2", "plane 3")), "coefficients"),
    (lambda r: replace(r, planned=(replace(r.planned[0], role="spare"),)), "planned[0].role"),
    (lambda r: replace(r, planned=(replace(r.planned[0], plane=2),)), "planned[0].plane"),
    (lambda r: replace(r, started_at="Tuesday"), "started_at"),
    (lambda r: replace(r, condition=float("nan")), "condition"),
    (lambda r: replace(r, service_rpm=float("nan")), "service_rpm"),
    (lambda r: replace(r, service_rpm=-1475.0), "service_rpm"),
    (lambda r: replace(r, result={"plan": {1, 2}}), "result"),
])
def test_inconsistent_record_is_refused_before_writing(db: Path, change, key: str) -> None:
    with History(db) as h:
        before = table_counts(db)
        with pytest.raises(HistoryError) as caught:
            h.save_visit(change(make_visit()))
    assert caught.value.key == key
    assert table_counts(db) == before


# -- a writer killed mid-transaction ----------------------------------------

def test_writer_killed_mid_transaction_leaves_no_partial_visit(db: Path, tmp_path: Path) -> None:
    committed = make_visit()
    with History(db) as h:
        committed_id = h.save_visit(committed)
    before = table_counts(db)
    size_before = db.stat().st_size
    kill_mid_save(db, tmp_path / "mid-write")

    connection = sqlite3.connect(db)  # the first read rolls the hot journal back
    assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    assert connection.execute("PRAGMA foreign_key_check").fetchall() == []
    assert connection.execute("SELECT COUNT(*) FROM machines WHERE id = 'WM-KILL'"
                              ).fetchone() == (0,)
    connection.close()
    assert not Path(f"{db}-journal").exists()
    assert db.stat().st_size == size_before
    assert table_counts(db) == before
    with History(db) as h:
        assert h.visit(committed_id) == committed
        assert [m.id for m in h.machines()] == ["WM-EF-07"]
        assert h.visits("WM-KILL") == []
        # and the file takes new visits after the crash
        assert h.visit(h.save_visit(make_visit(started_at="2026-11-04T09:00"))) != committed
