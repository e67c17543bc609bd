"""Batch readings (placer.io.batchreadings): text the reader refuses, row by row.

Checked against outside the project:

* [RFC8259] section 4: the names in a JSON object SHOULD be unique (Python's
  ``json`` keeps the last of two silently, so a row with two ``serial`` keys
  would be read as the second); section 8.2: ``"\\ud800"`` is a valid JSON
  escape of an unpaired surrogate, which no UTF-8 file can hold (Python's
  encoder raises UnicodeEncodeError, checked below);
* [Unicode] 5.8: U+2028 is a line separator, whitespace to :meth:`str.strip`
  (checked below), so a column name ``serial\\u2028`` was read as ``serial``.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

from placer.batch import RotorReading
from placer.errors import InputError
from placer.io.batchreadings import RowError, read_readings
from placer.io.jobfile import read_job

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "tests"))
from test_fuzz import ROWS_TEMPLATE, rows_csv, rows_jsonl  # noqa: E402


@pytest.fixture
def template(tmp_path):
    path = tmp_path / "t.toml"
    path.write_text(ROWS_TEMPLATE, encoding="utf-8")
    return read_job(path, template=True)


def _rows(tmp_path: Path, name: str, text: str, template) -> list:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return read_readings(path, template)


def test_python_facts_the_reader_guards_against():
    assert "serial\u2028".strip() == "serial"
    assert json.loads('{"serial": "A", "serial": "B"}') == {"serial": "B"}
    with pytest.raises(UnicodeEncodeError):
        json.loads('"B\\ud800"').encode("utf-8")


@pytest.mark.parametrize("separator", ["\u2028", "\u2029", "\x85", "\x0b", "\x0c"])
def test_a_line_separator_in_a_column_name_is_refused(separator, tmp_path, template):
    text = rows_csv(3).replace("serial", "serial" + separator, 1)
    with pytest.raises(InputError) as info:
        _rows(tmp_path, "r.csv", text, template)
    line = info.value.one_line()
    assert "column 'serial\\" in line and "(expected text on one line" in line
    assert len(line.splitlines()) == 1


def test_a_line_separator_in_a_cell_makes_a_bad_row(tmp_path, template):
    lines = rows_csv(3).splitlines()
    lines[1] = lines[1].replace(",", "\u2028,", 1)   # after the serial
    lines[2] = lines[2] + "\u2028"                    # after the last angle
    rows = _rows(tmp_path, "r.csv", "\n".join(lines) + "\n", template)
    assert [type(r) for r in rows] == [RowError, RowError, RotorReading]
    assert "not a serial" in rows[0].message and "\\u2028" in rows[0].message
    assert "2_angle_deg" in rows[1].message


def test_spaces_and_tabs_around_cells_are_still_blanks(tmp_path, template):
    lines = rows_csv(3).splitlines()
    lines[1] = " \t" + lines[1].replace(",", " ,\t")
    rows = _rows(tmp_path, "r.csv", "\n".join(lines) + "\n", template)
    assert all(isinstance(r, RotorReading) for r in rows)


def test_a_key_given_twice_in_a_json_row_is_a_bad_row(tmp_path, template):
    good = rows_jsonl(2).splitlines()
    twice = good[0].replace('"serial": ', '"serial": "X-1", "serial": ', 1)
    inner = good[1].replace('"angle_deg": ', '"angle_deg": 1.0, "angle_deg": ', 1)
    rows = _rows(tmp_path, "r.jsonl", "\n".join([twice, inner, good[0]]) + "\n", template)
    assert isinstance(rows[0], RowError) and "'serial' appears twice" in rows[0].message
    assert isinstance(rows[1], RowError) and "'angle_deg' appears twice" in rows[1].message
    assert "(expected each key once)" in rows[0].message
    assert isinstance(rows[2], RotorReading)


@pytest.mark.parametrize("where", ["serial", "key", "value", "nested"])
def test_a_lone_surrogate_is_a_bad_row_and_never_reaches_the_outputs(where, tmp_path,
                                                                     run_cli):
    good = rows_jsonl(2).splitlines()
    bad = {"serial": good[0].replace('"serial": "', '"serial": "B\\ud800', 1),
           "key": good[0].replace('"planes"', '"pl\\udc00anes"', 1),
           "value": good[0].replace('"angle_deg": ', '"angle_deg": "\\ud800", "x": ', 1),
           "nested": good[0].replace('"mass_g"', '"\\udfff"', 1).replace('"gmm"', '"\\udfff"',
                                                                         1)}[where]
    assert bad != good[0]
    (tmp_path / "t.toml").write_text(ROWS_TEMPLATE, encoding="utf-8")
    (tmp_path / "r.jsonl").write_text("\n".join([bad, good[1]]) + "\n", encoding="utf-8")
    code, out, err = run_cli("batch", tmp_path / "t.toml", tmp_path / "r.jsonl", "--out",
                             tmp_path / "out", "--jobs", "1")
    assert code == 1 and "Traceback" not in err, err
    errors = (tmp_path / "out.errors.csv").read_text(encoding="utf-8")
    assert "not valid Unicode" in errors, errors
    for written in tmp_path.glob("out*"):
        written.read_bytes().decode("utf-8")  # every output is UTF-8
