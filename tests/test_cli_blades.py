"""``placer blades`` end to end: exit codes, JSON, the 80-column output, the sheet files.

Every number placer prints is recomputed here from the blade file read with
:mod:`tomllib` and the catalogue file: the static residual as
|d + Σ w·e^{iθ}| ([FathiGinjupalli1993]; d the bare disc's unbalance), the
tolerance as U_per = 1000·G·m/ω ([ISO21940-11]), the swaps by applying them to
the slots in the file, and the rotor after the trim as the residual plus
Σ count·mass·radius·e^{iθ} of the trim parts (unbalances in one plane add as
vectors, [StaticCouple]).
"""

from __future__ import annotations

import cmath
import json
import math
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from placer.arrange import MOVES

REPO = Path(__file__).resolve().parent.parent
EXAMPLE = REPO / "examples" / "fan-reblade.toml"
RAW = tomllib.loads(EXAMPLE.read_text(encoding="utf-8"))
CLIPS = {i["id"]: i["mass_g"] for i in tomllib.loads(
    (REPO / "catalogs" / "fan-blade-clips.toml").read_text(encoding="utf-8"))["items"]}

TOP_KEYS = {"file": str, "rotor": dict, "angle_convention": str, "move": str,
            "slot_count": int, "total_moment_gmm": float, "disc_unbalance": dict,
            "slots": list, "residual_gmm": float, "residual_angle_deg": float,
            "couple_gmm2": (float, type(None)), "lower_bound_gmm": float, "proven": bool,
            "zero_shown": bool, "method": str, "work": int, "swaps": (list, type(None)),
            "tolerance_gmm": (float, type(None)), "tolerance_source": str,
            "arrangement_within_tolerance": (bool, type(None)), "trim": (dict, type(None)),
            "within_tolerance": (bool, type(None)), "notes": list}
SLOT_KEYS = {"slot": int, "angle_deg": float, "blade": str, "moment_gmm": float,
             "stays": bool, "from_slot": (int, type(None))}
"""The JSON shape of ``placer blades --json`` (placer's own format: regression pins)."""


def _json(run_cli, *args) -> tuple[int, dict]:
    code, out, err = run_cli("blades", *args, "--json")
    assert "Traceback" not in err
    return code, json.loads(out)


def _u_per(grade: float, mass_kg: float, rpm: float) -> float:
    """[ISO21940-11] U_per = 1000·G·m/ω [g·mm], ω = 2π·n/60."""
    return 1000.0 * grade * mass_kg / (2 * math.pi * rpm / 60.0)


def _static(data: dict) -> complex:
    """d + Σ w·e^{iθ} from the JSON's slot table and the file's disc unbalance."""
    disc = RAW["disc"]["unbalance"]
    total = cmath.rect(disc["gmm"], math.radians(disc["angle_deg"]))
    weight = {b["id"]: b["moment_gmm"] for b in RAW["blades"]}
    for row in data["slots"]:
        assert row["moment_gmm"] == weight[row["blade"]]
        total += cmath.rect(weight[row["blade"]], math.radians(30.0 * (row["slot"] - 1)))
    return total


@pytest.mark.parametrize("move", MOVES)
def test_example_json_recomputed(move, run_cli):
    code, data = _json(run_cli, EXAMPLE, "--move", move)
    assert code == 0                              # the file's comment: exit 0 in every way
    for key, kind in TOP_KEYS.items():
        assert isinstance(data[key], kind), key
    for row in data["slots"]:
        for key, kind in SLOT_KEYS.items():
            assert isinstance(row[key], kind), key
    assert data["move"] == move
    assert sorted(r["blade"] for r in data["slots"]) == sorted(b["id"] for b in RAW["blades"])
    static = _static(data)
    assert data["residual_gmm"] == pytest.approx(abs(static), rel=1e-9, abs=1e-6)
    assert data["residual_angle_deg"] == pytest.approx(
        math.degrees(cmath.phase(static)) % 360.0, abs=1e-6)
    rotor = RAW["rotor"]
    u_per = _u_per(6.3, rotor["mass_kg"], rotor["service_rpm"])
    assert data["tolerance_gmm"] == pytest.approx(u_per) == data["permissible_gmm"]
    assert data["arrangement_within_tolerance"] == (data["residual_gmm"] <= u_per)
    # The opposite limit of the file: blades 180° apart within 5000 g·mm.
    moment = {r["slot"]: r["moment_gmm"] for r in data["slots"]}
    assert all(abs(moment[k] - moment[k + 6]) <= 5000.0 for k in range(1, 7))
    now = {b["id"]: b.get("slot") for b in RAW["blades"]}
    if move == "new":
        # Every blade with a slot stays in it; the new one goes into the empty slot 7.
        assert all(r["slot"] == now[r["blade"]] for r in data["slots"] if now[r["blade"]])
        assert next(r["slot"] for r in data["slots"] if r["blade"] == "WB-137") == 7
    if move == "fewest":
        slots = {now[b] or 7: b for b in now}
        for step in data["swaps"]:
            a, b = step["slots"]
            assert step["blades"] == [slots[a], slots[b]]
            slots[a], slots[b] = slots[b], slots[a]
        assert slots == {r["slot"]: r["blade"] for r in data["slots"]}
        assert len(data["swaps"]) == data["swap_lower_bound"] == 1
        assert data["residual_gmm"] <= u_per
    # The trim: the rotor as it will run, recomputed from the parts (clip seats at 300 mm).
    trim = data["trim"]
    final = static + sum(p["count"] * CLIPS[p["item"]] * 300.0
                         * cmath.rect(1.0, math.radians(30.0 * (p["position"] - 1)))
                         for p in trim["chosen"]["parts"])
    assert trim["chosen"]["residual_gmm"] == pytest.approx(abs(final), rel=1e-9, abs=1e-6)
    assert data["within_tolerance"] == trim["chosen"]["within_tolerance"] is True
    assert trim["tolerance_gmm"] == pytest.approx(u_per)


def test_new_blade_alone_is_outside_and_the_trim_brings_it_within(run_cli):
    code, data = _json(run_cli, EXAMPLE)
    assert code == 0
    assert data["arrangement_within_tolerance"] is False
    assert data["trim"]["chosen"]["parts"]           # clips are fitted
    assert data["proven"]


def test_terminal_at_80_columns(run_cli):
    for move in MOVES:
        for width in ((), ("--width", "80")):
            code, out, err = run_cli("blades", EXAMPLE, "--move", move, *width)
            assert code == 0 and err == ""
            assert max(len(line) for line in out.splitlines()) <= 80
            flat = " ".join(out.split())
            for blade in RAW["blades"]:
                assert blade["id"] in flat
            assert "WITHIN TOLERANCE" in flat
            assert "Angles: degrees from the reference mark, counted against rotation" in flat
            # Cautions: lockout/tagout (OSHA 29 CFR 1910.147) and the projectile warning,
            # as in REFERENCES "Cautions".
            assert "Lock out and tag out" in flat and "projectile" in flat
    code, out, _ = run_cli("blades", EXAMPLE)
    flat = " ".join(out.split())
    assert re.search(r"OUTSIDE TOLERANCE \(the blades alone\)", flat)
    assert "Proven least" in flat
    assert "the blade in slot 2 (WB-101)" in flat      # the clip's blade, by its mark


def test_outside_without_trim_exits_1(write_file, run_cli):
    text = EXAMPLE.read_text(encoding="utf-8").replace('grade = "G6.3"', 'grade = "G0.4"')
    text = re.sub(r"\[trim\].*?(?=\n# Moment weight)", "", text, flags=re.S)
    path = write_file("tight.toml", text)
    code, data = _json(run_cli, path)
    assert code == 1
    assert data["within_tolerance"] is False and data["trim"] is None
    assert data["tolerance_gmm"] == pytest.approx(_u_per(0.4, 38.0, 1480.0))
    code, out, _ = run_cli("blades", path)
    assert code == 1 and "OUTSIDE TOLERANCE" in out


def test_no_tolerance_exits_0(write_file, run_cli):
    path = write_file("free.csv", "id,moment_gmm\nA,100\nB,102\nC,105\nD,99\nE,101\n")
    code, data = _json(run_cli, path)
    assert code == 0
    assert data["tolerance_gmm"] is None and data["within_tolerance"] is None
    assert data["slot_count"] == 5 and data["proven"]


def test_same_answer_every_run_and_as_a_subprocess(run_cli):
    _, first = _json(run_cli, EXAMPLE, "--move", "all")
    _, second = _json(run_cli, EXAMPLE, "--move", "all")
    first["trim"].pop("elapsed_s"), second["trim"].pop("elapsed_s")
    assert first == second
    proc = subprocess.run([sys.executable, "-m", "placer", "blades", str(EXAMPLE), "--move",
                           "all", "--json"], capture_output=True, text=True, cwd=REPO,
                          timeout=300)
    assert proc.returncode == 0 and proc.stderr == ""
    data = json.loads(proc.stdout)
    data["trim"].pop("elapsed_s")
    assert data == {**first, "file": str(EXAMPLE)}


def test_time_limit_stops_with_exit_3_and_prints_nothing(write_file, run_cli):
    lines = ["[rotor]", "tolerance_gmm = 1.0", "[disc]", "slots = 40", "[limits]",
             "opposite_gmm = 400.0"]
    for k in range(40):
        lines += ["[[blades]]", f'id = "W{k}"', f"moment_gmm = {12500.0 + 7.3 * k * k % 500}"]
    path = write_file("forty.toml", "\n".join(lines) + "\n")
    code, out, err = run_cli("blades", path, "--time-limit", "0.05", "--effort", "50")
    assert code == 3 and out == ""
    assert err.startswith("placer: stopped: ") and "--time-limit" in err


def test_sheet_files_and_force(tmp_path, run_cli):
    pytest.importorskip("matplotlib")
    target = tmp_path / "fan.pdf"
    code, _, err = run_cli("blades", EXAMPLE, "--sheet", target)
    assert code == 0 and target.read_bytes().startswith(b"%PDF")
    assert f"sheet written to {target}" in err
    # One /Type /Page dictionary per page (PDF 1.7, ISO 32000-1, 7.7.3): disc and trim.
    assert len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", target.read_bytes())) == 2
    target.write_bytes(b"keep me")
    code, out, err = run_cli("blades", EXAMPLE, "--sheet", target)
    assert code == 2 and out == "" and "--force" in err
    assert target.read_bytes() == b"keep me"
    code, _, _ = run_cli("blades", EXAMPLE, "--sheet", target, "--force")
    assert code == 0 and target.read_bytes().startswith(b"%PDF")
    code, _, _ = run_cli("blades", EXAMPLE, "--sheet", tmp_path / "fan.png")
    assert code == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fan-1.png", "fan-2.png", "fan.pdf"]


def test_cli_choices_are_the_pipelines_moves(run_cli):
    code, out, _ = run_cli("blades", "--help")
    assert code == 0
    assert "{" + ",".join(MOVES) + "}" in out
