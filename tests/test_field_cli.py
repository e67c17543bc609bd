"""``placer field``, ``machines``, ``history`` and ``trial`` end to end."""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest

from placer.cli import main

ROOT = Path(__file__).resolve().parent.parent
VISIT = ROOT / "examples" / "exhaust-fan-visit.toml"
NEXT_YEAR = ROOT / "examples" / "exhaust-fan-next-year.toml"


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_visit_saved_then_one_shot_from_stored_coefficients(tmp_path, capsys):
    db = tmp_path / "history.sqlite"
    code, out, err = run(capsys, "field", VISIT, "--save", "--db", db, "--json")
    assert code == 0
    first = json.loads(out)
    assert "saved" in err
    code, out, _ = run(capsys, "machines", "--db", db, "--json")
    assert [m["id"] for m in json.loads(out)] == ["BDW-EF3"]
    code, out, _ = run(capsys, "field", NEXT_YEAR, "--db", db, "--json")
    assert code == 0
    second = json.loads(out)
    assert second["coefficient_source"].startswith("visit 1")
    assert second["coefficients_per_gmm"] == first["coefficients_per_gmm"]
    # The next year's readings were made from the same synthetic machine with a new
    # unbalance of 1400 g·mm at 300° and 900 g·mm at 100°: the correction is opposite.
    corr = second["correction"]
    assert corr[0]["gmm"] == pytest.approx(1400, rel=0.03)
    assert corr[0]["angle_deg"] == pytest.approx(120, abs=2)
    assert corr[1]["gmm"] == pytest.approx(900, rel=0.03)
    assert corr[1]["angle_deg"] == pytest.approx(280, abs=2)
    code, out, _ = run(capsys, "history", "BDW-EF3", "--db", db, "--json")
    visits = json.loads(out)
    assert len(visits) == 1 and visits[0]["runs"] == 3


def test_field_sheet_reads_well_at_80_columns(capsys):
    code, out, _ = run(capsys, "field", VISIT, "--width", "80")
    assert code == 0
    assert max(len(line) for line in out.splitlines()) <= 80
    for text in ("Influence coefficients", "Condition number", "Static part",
                 "BELOW THE LIMIT", "rounded on its own", "Cautions", "against rotation"):
        assert text in out


def test_stored_coefficients_without_a_database_is_bad_input(tmp_path, capsys):
    code, _, err = run(capsys, "field", NEXT_YEAR, "--db", tmp_path / "none.sqlite")
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and "solve.coefficients" in err


BAD_SESSIONS = [
    ("unit", 'unit = "mm/s"', 'unit = "furlongs"', "readings.unit"),
    ("phase", 'phase = "lag"', 'phase = "late"', "readings.phase"),
    ("reading count", "readings = [[4.25, 62], [3.89, 148], [2.96, 189]]",
     "readings = [[4.25, 62], [3.89, 148]]", "runs[1].readings"),
    ("phase text", "[2.96, 189]]", '[2.96, "x"]]', "runs[1].readings[3][2]"),
    ("trial position", "position = 2 }", "position = 9 }", "runs[2].trial[1].position"),
    ("trial plane", "plane = 2, mass_g", "plane = 3, mass_g", "runs[3].trial[1].plane"),
    ("norm", 'norm = "max"', 'norm = "least"', "solve.norm"),
    ("misspelt key", "removed = true", "remove = true", "runs[2].remove"),
]


@pytest.mark.parametrize("name,old,new,key", BAD_SESSIONS, ids=[b[0] for b in BAD_SESSIONS])
def test_bad_session_input_is_one_line_and_leaves_the_database_alone(tmp_path, capsys, name,
                                                                     old, new, key):
    db = tmp_path / "history.sqlite"
    assert run(capsys, "field", VISIT, "--save", "--db", db)[0] == 0
    before = digest(db)
    text = VISIT.read_text()
    assert old in text
    bad = tmp_path / "bad.toml"
    bad.write_text(text.replace(old, new, 1))
    code, _, err = run(capsys, "field", bad, "--save", "--db", db)
    assert code == 2
    assert len(err.strip().splitlines()) == 1
    assert key in err and str(bad) in err and "Traceback" not in err
    assert digest(db) == before


def test_too_few_trial_runs_is_bad_input(tmp_path, capsys):
    text = VISIT.read_text()
    cut = text.index('[[runs]]\nname = "trial outboard"')
    end = text.index("[solve]")
    bad = tmp_path / "bad.toml"
    bad.write_text(text[:cut] + text[end:])
    code, _, err = run(capsys, "field", bad)
    assert code == 2 and "trial run" in err


def test_trial_suggestion(capsys):
    # REFERENCES.md (from memory): m_t·r·ω² = 0.1·M·g; 65 kg, 1475 r/min, r 180 mm
    # -> 0.1·65·9.80665/(0.18·154.46²) kg = 14.84 g (computed by hand).
    code, out, _ = run(capsys, "trial", "--mass-kg", "65", "--rpm", "1475", "--radius-mm", "180")
    assert code == 0 and "14.8 g" in out
    assert run(capsys, "trial", "--mass-kg", "-1", "--rpm", "1475", "--radius-mm", "180")[0] == 2


def test_history_of_unknown_machine_suggests_the_closest(tmp_path, capsys):
    db = tmp_path / "h.sqlite"
    shutil.copy(VISIT, tmp_path / "v.toml")
    run(capsys, "field", VISIT, "--save", "--db", db)
    code, _, err = run(capsys, "history", "BDW-EF4", "--db", db)
    assert code == 2 and "BDW-EF3" in err
