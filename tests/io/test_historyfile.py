"""Opening the history file: read-only commands change nothing, another program's file
is refused untouched, a damaged file gets one line, an unfinished save is rolled back,
and ``placer history`` says which visit was saved last.

Facts checked against SQLite's own documentation ([SQLite] in REFERENCES.md):
the 100-byte header (magic string, bytes 18-19 = 2 in write-ahead-log mode, the
only journal mode stored in the file), hot journals rolled back by the next
writer, ``mode=ro`` connections.  The visits are invented (Wrenmoor shop).
"""

from __future__ import annotations

import hashlib
import json
import os
import random
import re
import shutil
import sqlite3
from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest
from history_writer import kill_mid_save, make_visit, write_version_2_file

from placer.cli import main
from placer.errors import HistoryError
from placer.io.history import History
from placer.io.historyschema import SCHEMA_VERSION

ROOT = Path(__file__).resolve().parents[2]
VISIT = ROOT / "examples" / "exhaust-fan-visit.toml"
NEXT_YEAR = ROOT / "examples" / "exhaust-fan-next-year.toml"


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def state(folder: Path) -> dict[str, tuple[str, int]]:
    """Every file of the folder: its digest and modification time (ns)."""
    return {p.name: (hashlib.sha256(p.read_bytes()).hexdigest(), p.stat().st_mtime_ns)
            for p in sorted(folder.iterdir())}


def one_error_line(err: str) -> str:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    return lines[0]


@pytest.fixture
def saved(tmp_path: Path) -> Path:
    """A history with two visits of machine WM-EF-07 saved through placer."""
    path = tmp_path / "db" / "history.sqlite"
    with History(path) as h:
        h.save_visit(make_visit())
        h.save_visit(make_visit(started_at="2026-11-04T09:00:00+00:00"))
    return path


# -- read-only commands change nothing ----------------------------------------------

@pytest.mark.parametrize("argv", [("machines",), ("machines", "--json"),
                                  ("history", "WM-EF-07"), ("history", "WM-EF-07", "--json"),
                                  ("history", "WM-EF-07", "--visit", "1")])
def test_listing_commands_leave_the_file_as_it_was(saved, capsys, argv) -> None:
    before = state(saved.parent)
    code, out, err = run(capsys, *argv, "--db", saved)
    assert code == 0, err
    assert state(saved.parent) == before  # no byte, no time stamp, no side file


def test_an_older_file_is_read_without_being_upgraded(tmp_path, capsys) -> None:
    """A version-2 file is upgraded in a copy in memory: the listing shows its visit,
    the file keeps version 2 and every byte."""
    path = tmp_path / "old.sqlite"
    write_version_2_file(path)
    before = state(tmp_path)
    code, out, err = run(capsys, "history", "WM-EF-07", "--db", path, "--json")
    assert code == 0, err
    assert [v["id"] for v in json.loads(out)] == [1]
    assert json.loads(out)[0]["saved_at"] is None  # not kept before version 4
    assert state(tmp_path) == before
    connection = sqlite3.connect(path)
    assert connection.execute("SELECT version FROM schema_version").fetchone() == (2,)
    connection.close()
    with History(path) as h:  # a writer upgrades it
        h.visits("WM-EF-07")
    connection = sqlite3.connect(path)
    assert connection.execute("SELECT version FROM schema_version").fetchone() == \
        (SCHEMA_VERSION,)
    connection.close()


def test_an_empty_file_lists_no_machine_and_stays_empty(tmp_path, capsys) -> None:
    path = tmp_path / "empty.sqlite"
    path.write_bytes(b"")
    code, out, err = run(capsys, "machines", "--db", path, "--json")
    assert (code, json.loads(out)) == (0, [])
    assert path.stat().st_size == 0


def test_a_read_only_history_refuses_to_write(saved) -> None:
    with History(saved, read_only=True) as h, pytest.raises(HistoryError, match="read only"):
        h.save_visit(make_visit())


def test_stored_coefficients_are_read_without_changing_the_file(tmp_path, capsys) -> None:
    db = tmp_path / "history.sqlite"
    assert run(capsys, "field", VISIT, "--save", "--db", db, "--max-parts", "4")[0] == 0
    before = state(tmp_path)
    code, out, err = run(capsys, "field", NEXT_YEAR, "--db", db, "--max-parts", "4")
    assert code == 0, err
    assert state(tmp_path) == before


# -- another program's file -------------------------------------------------------

def wal_file(path: Path) -> None:
    """A SQLite database of some other program in write-ahead-log mode."""
    connection = sqlite3.connect(path)
    connection.execute("PRAGMA journal_mode = WAL")
    connection.execute("CREATE TABLE parts (id INTEGER PRIMARY KEY, name TEXT)")
    connection.execute("INSERT INTO parts (name) VALUES ('hub')")
    connection.commit()
    connection.close()
    for side in ("-wal", "-shm"):
        Path(f"{path}{side}").unlink(missing_ok=True)


@pytest.mark.parametrize("argv", [("machines",), ("history", "WM-EF-07"),
                                  ("field", str(VISIT), "--save", "--max-parts", "2")])
def test_another_programs_file_is_refused_untouched(tmp_path, capsys, argv) -> None:
    path = tmp_path / "parts.db"
    wal_file(path)
    header = path.read_bytes()[:100]
    assert header[18:20] == b"\x02\x02"  # [SQLite] file format: WAL
    before = state(tmp_path)
    code, out, err = run(capsys, *argv, "--db", path)
    line = one_error_line(err)
    assert code == 2
    assert str(path) in line and "another program" in line
    assert state(tmp_path) == before  # its journal mode included
    connection = sqlite3.connect(path)
    assert connection.execute("PRAGMA journal_mode").fetchone() == ("wal",)
    connection.close()


def test_a_file_that_is_not_sqlite_is_refused_untouched(tmp_path, capsys) -> None:
    path = tmp_path / "notes.db"
    path.write_text("visit notes, not a database\n" * 10)
    before = state(tmp_path)
    code, _, err = run(capsys, "field", VISIT, "--save", "--max-parts", "2", "--db", path)
    assert code == 2 and "is not a SQLite database" in one_error_line(err)
    assert state(tmp_path) == before


def test_a_folder_as_the_database_is_one_line(tmp_path, capsys) -> None:
    code, _, err = run(capsys, "machines", "--db", tmp_path)
    assert code == 2 and "is not a regular file" in one_error_line(err)


# -- a damaged file -------------------------------------------------------------------

def drop_tables(path: Path) -> None:
    connection = sqlite3.connect(path)
    for table in ("masses", "coefficients", "readings", "runs", "planes", "channels",
                  "visits", "machines"):
        connection.execute(f"DROP TABLE {table}")
    connection.commit()
    connection.close()


def damage(path: Path, sql: str) -> None:
    connection = sqlite3.connect(path)
    connection.execute(sql)
    connection.commit()
    connection.close()


@pytest.mark.parametrize("argv", [("machines",), ("history", "WM-EF-07"),
                                  ("field", str(VISIT), "--save", "--max-parts", "2")])
def test_a_schema_version_without_tables_is_one_line(saved, capsys, argv) -> None:
    drop_tables(saved)
    code, _, err = run(capsys, *argv, "--db", saved)
    line = one_error_line(err)
    assert code == 2
    assert "is damaged" in line and "machines" in line and "schema_version" in line


@pytest.mark.parametrize("column", ["result_json", "setup_json"])
def test_a_stored_text_that_is_not_json_is_one_line(saved, capsys, column) -> None:
    damage(saved, f"UPDATE visits SET {column} = '{{not json' WHERE id = 2")
    argv = ("history", "WM-EF-07", "--visit", "2") if column == "setup_json" else \
        ("history", "WM-EF-07")
    code, _, err = run(capsys, *argv, "--db", saved)
    line = one_error_line(err)
    assert code == 2
    assert f"visits.{column}" in line and "visit 2" in line and "expected" in line


def coefficient_db(tmp_path: Path, capsys) -> Path:
    db = tmp_path / "history.sqlite"
    assert run(capsys, "field", VISIT, "--save", "--db", db, "--max-parts", "4")[0] == 0
    return db


@pytest.mark.parametrize("sql, key", [
    ("UPDATE coefficients SET channel_index = 7 WHERE channel_index = 1 AND plane_index = 0",
     "coefficients.channel_index"),
    ("UPDATE coefficients SET plane_index = -1 WHERE channel_index = 0 AND plane_index = 0",
     "coefficients.plane_index"),
    ("UPDATE visits SET unit = 'furlongs'", "visits.unit"),
    ("UPDATE visits SET measure = 'loud'", "visits.measure"),
])
def test_stored_coefficients_out_of_range_are_one_line(tmp_path, capsys, sql, key) -> None:
    """A one-shot visit (coefficients = "stored") from a damaged database."""
    db = coefficient_db(tmp_path, capsys)
    damage(db, sql)
    code, _, err = run(capsys, "field", NEXT_YEAR, "--db", db, "--max-parts", "4")
    line = one_error_line(err)
    assert code == 2
    assert key in line and str(db) in line and "expected" in line


def test_a_visit_with_an_unknown_unit_is_one_line(saved, capsys) -> None:
    damage(saved, "UPDATE visits SET unit = 'furlongs' WHERE id = 1")
    code, _, err = run(capsys, "history", "WM-EF-07", "--visit", "1", "--db", saved)
    assert code == 2 and "visits.unit" in one_error_line(err)


def test_random_damage_never_ends_in_a_traceback(saved, tmp_path, capsys) -> None:
    """Bytes of a saved file overwritten at random places (seeded): every listing
    exits 0 or 2, with one line on stderr when 2."""
    pristine = saved.read_bytes()
    rng = random.Random(20261202)
    damaged = tmp_path / "damaged.sqlite"
    codes = set()
    for trial in range(60):
        data = bytearray(pristine)
        for _ in range(rng.choice((1, 4, 32))):
            at = rng.randrange(len(data))
            data[at] = rng.randrange(256)
        damaged.write_bytes(bytes(data))
        for argv in (("machines",), ("history", "WM-EF-07"),
                     ("history", "WM-EF-07", "--visit", "2", "--json")):
            code, _, err = run(capsys, *argv, "--db", damaged)
            assert code in (0, 2), (trial, argv, err)
            if code == 2:
                one_error_line(err)
            codes.add(code)
    assert codes == {0, 2}  # some damage is harmless, some is caught


# -- an unfinished save --------------------------------------------------------------

def test_a_save_killed_midway_is_rolled_back_and_the_saved_visits_shown(saved, tmp_path,
                                                                         capsys) -> None:
    kill_mid_save(saved, tmp_path / "mid-write")
    assert Path(f"{saved}-journal").exists()  # a hot journal [SQLite]
    code, out, err = run(capsys, "history", "WM-EF-07", "--db", saved, "--json")
    assert code == 0, err
    assert "rolled back" in err and str(saved) in err
    assert [v["id"] for v in json.loads(out)] == [1, 2]
    assert not Path(f"{saved}-journal").exists()
    connection = sqlite3.connect(saved)
    assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
    assert connection.execute("SELECT COUNT(*) FROM machines WHERE id = 'WM-KILL'"
                              ).fetchone() == (0,)
    connection.close()


# -- the last saved visit ------------------------------------------------------------

def test_history_shows_the_visit_saved_last_and_when(tmp_path, capsys) -> None:
    db = tmp_path / "history.sqlite"
    before = datetime.now(timezone.utc).replace(microsecond=0)
    code, _, err = run(capsys, "field", VISIT, "--save", "--db", db, "--max-parts", "4")
    assert code == 0
    visit_id = int(re.search(r"visit (\d+) of BDW-EF3 saved", err).group(1))
    for argv in (("history", "BDW-EF3"), ("machines",)):
        code, out, _ = run(capsys, *argv, "--db", db, "--width", "80")
        assert code == 0
        text = " ".join(out.split())
        found = re.search(r"Saved last in this database: visit (\d+) of BDW-EF3 \(the visit "
                          r"of [^)]*\), saved (\d{4}-\d\d-\d\d \d\d:\d\d) UTC\.", text)
        assert found, out
        assert int(found.group(1)) == visit_id
        saved_at = datetime.strptime(found.group(2), "%Y-%m-%d %H:%M").replace(
            tzinfo=timezone.utc)
        assert before - timedelta(minutes=1) <= saved_at <= datetime.now(timezone.utc)
    code, out, _ = run(capsys, "history", "BDW-EF3", "--db", db, "--json")
    stored = json.loads(out)[0]["saved_at"]
    assert datetime.fromisoformat(stored) >= before
    code, out, _ = run(capsys, "history", "BDW-EF3", "--visit", str(visit_id), "--db", db)
    assert "saved " + stored[:10] in out


def test_a_file_saved_by_an_older_placer_says_the_time_was_not_kept(tmp_path, capsys) -> None:
    path = tmp_path / "old.sqlite"
    write_version_2_file(path)
    code, out, _ = run(capsys, "history", "WM-EF-07", "--db", path)
    assert code == 0
    assert "time of saving not kept" in " ".join(out.split())


def test_no_visit_saved_is_said(tmp_path, capsys) -> None:
    path = tmp_path / "empty.sqlite"
    History(path).close()
    code, out, _ = run(capsys, "machines", "--db", path)
    assert code == 0 and "No visit is saved in this database." in out


def test_the_database_keeps_its_files_private_to_its_folder(saved) -> None:
    """Reading leaves no journal or side file behind (common practice, no source:
    a history copied with its folder must be one file)."""
    with History(saved, read_only=True) as h:
        h.machines()
    assert sorted(os.listdir(saved.parent)) == ["history.sqlite"]
    shutil.copy(saved, saved.parent / "copy.sqlite")
    with History(saved.parent / "copy.sqlite", read_only=True) as h:
        assert len(h.visits("WM-EF-07")) == 2


def columns_of(path: Path) -> list[tuple[str, str]]:
    connection = sqlite3.connect(path)
    try:
        tables = [t for (t,) in connection.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")]
        return [(t, row[1]) for t in tables
                for row in connection.execute(f"PRAGMA table_info({t})")]
    finally:
        connection.close()


def test_a_value_of_the_wrong_kind_in_any_column_is_one_line(saved, tmp_path, capsys) -> None:
    """Every column of every table set to a value of another kind, as a damaged file
    or another tool could leave it: listings and a visit in full exit 0 or 2 with
    one line, never a traceback; a report is printed only from sound data."""
    damaged = tmp_path / "damaged.sqlite"
    refused = 0
    for table, column in columns_of(saved):
        for value in ("NULL", "'x'", "X'00ff'", "-1", "1e308"):
            shutil.copy(saved, damaged)
            connection = sqlite3.connect(damaged)
            try:
                connection.execute(f"UPDATE {table} SET {column} = {value}")
                connection.commit()
            except sqlite3.IntegrityError:
                continue  # NOT NULL, CHECK or a key: SQLite itself keeps it out
            finally:
                connection.close()
            for argv in (("machines",), ("history", "WM-EF-07"),
                         ("history", "WM-EF-07", "--visit", "2", "--json")):
                code, _, err = run(capsys, *argv, "--db", damaged)
                assert code in (0, 2), (table, column, value, argv, err)
                if code == 2:
                    refused += 1
                    assert str(damaged) in one_error_line(err)
    assert refused > 100
