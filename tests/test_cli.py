"""End-to-end checks of the ``placer`` command line, in-process and as a subprocess.

Every plan placer prints is checked against quantities computed here, apart
from placer: the geometry and the required correction are read from the job
file with :mod:`tomllib`, item masses from the catalogue file, and each
residual is recomputed with :mod:`cmath` as the vector sum of one plane
(statics: |required - sum count * mass_g * radius_mm * e^{i angle}|, the
residual unbalance of ISO 21940-11:2016 in one plane).  "REFERENCES" is the
repository's REFERENCES.md.

Tolerances: the JSON carries full floats, so residuals are compared to
1e-6 relative with 1e-6 g*mm absolute for residuals
near zero (float round-off of sums of terms up to 1e4 g*mm is about
1e-11 g*mm); angles to 1e-9 deg.
"""

from __future__ import annotations

import cmath
import itertools
import json
import math
import os
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest
from conftest import example_files, example_kind
from oracle import brute_front

REPO_DIR = Path(__file__).resolve().parent.parent
CATALOG_DIR = REPO_DIR / "catalogs"
EXAMPLE_DIR = REPO_DIR / "examples"


def _example_jobs() -> list[Path]:
    """The examples that are `placer solve` jobs (see conftest.example_kind)."""
    return example_files("job")


GMM_ABS = 1e-6      # g*mm: float round-off allowance for residuals near zero
REL = 1e-6          # relative agreement of a recomputed residual
ANGLE_DEG = 1e-9    # deg: angles are carried as full floats

EXPECTED_EXIT = {
    # Intended exit code of each bundled `placer solve` example (stated in the
    # comments of the files that say it).
    "supply-fan.toml": 0,
    "wheel-rim.toml": 0,
    "blade-fan.toml": 0,
    "adhesive-hub.toml": 0,
    "pump-impeller-rework.toml": 0,
    "dryer-fan-two-ends.toml": 0,
    "pickup-wheel-oz.toml": 0,
}

IN_MM = 25.4                                   # [NISTHB44]: 1 in = 25.4 mm exactly
LB_KG = 0.45359237                             # [NISTHB44]: 1 lb = 0.45359237 kg exactly
OZ_G = LB_KG * 1000.0 / 16.0                   # [NISTHB44]: 1 oz = 1/16 lb

# Defaults of the job-file format (placer.job: DEFAULT_MAX_PARTS, capacity 1,
# angles counted against rotation).  Regression pins of placer's own format.
DEFAULT_MAX_PARTS = 4
DEFAULT_CAPACITY = 1
DEFAULT_ANGLE_SENSE = "against rotation"

# The JSON shape of `placer solve --json`, as specified for the command line.
PLANE_KEYS = {"name": str, "optimal": bool, "tolerance_gmm": (float, type(None)),
              "pareto": list, "chosen": dict, "required": dict}
PARETO_KEYS = {"part_count": int, "residual_gmm": float, "parts": list}
CHOSEN_KEYS = {"part_count": int, "residual_gmm": float, "residual_angle_deg": float,
               "within_tolerance": (bool, type(None)), "parts": list}
PART_KEYS = {"position": int, "angle_deg": float, "item": str, "mass_g": float, "count": int}


# --------------------------------------------------------------------------
# Independent readings of job and catalogue files
# --------------------------------------------------------------------------


def _catalog_items(reference: str, job_dir: Path) -> dict[str, dict]:
    """Items of a catalogue (bundled name or path beside the job), read with tomllib."""
    path = job_dir / reference
    if not path.is_file():
        path = CATALOG_DIR / f"{reference}.toml"
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    items = {item["id"]: item for item in data["items"]}
    for item in items.values():
        if "mass_oz" in item:
            item["mass_g"] = item["mass_oz"] * OZ_G
    return items


def _job_planes(job: Path) -> tuple[dict, list[dict]]:
    """The rotor table and, per plane, geometry and required correction [g*mm, complex]."""
    data = tomllib.loads(job.read_text(encoding="utf-8"))
    planes = []
    for plane in data["planes"]:
        if "angles_deg" in plane:
            angles = [float(a) % 360.0 for a in plane["angles_deg"]]
        else:
            count, start = plane["positions"], float(plane.get("start_deg", 0.0))
            angles = [(start + 360.0 * i / count) % 360.0 for i in range(count)]
        if "radius_in" in plane:
            plane["radius_mm"] = plane["radius_in"] * IN_MM
        radii = [float(r) for r in plane.get("radii_mm", [plane.get("radius_mm")] * len(angles))]
        which = "correction" if "correction" in plane else "unbalance"
        vector = plane[which]
        if "mass_oz" in vector:
            vector["mass_g"] = vector["mass_oz"] * OZ_G
        magnitude = vector["gmm"] if "gmm" in vector else vector["mass_g"] * plane["radius_mm"]
        for key, grams in (("tolerance_g", 1.0), ("tolerance_oz", OZ_G)):
            if key in plane:                       # a mass at the radius: U = m·r
                plane["tolerance_gmm"] = plane[key] * grams * plane["radius_mm"]
        required = cmath.rect(magnitude, math.radians(vector["angle_deg"]))
        if which == "unbalance":
            required = -required       # correction goes opposite the heavy spot (REFERENCES)
        planes.append({
            "angles_deg": angles, "radii_mm": radii, "required": required,
            "blocked": set(plane.get("blocked", [])),
            "capacity": plane.get("capacity", DEFAULT_CAPACITY),
            "max_parts": plane.get("max_parts", DEFAULT_MAX_PARTS),
            "tolerance_gmm": plane.get("tolerance_gmm"),
            "items": {k: v for name in ([plane["catalog"]] if isinstance(plane["catalog"], str)
                                        else plane["catalog"])
                      for k, v in _catalog_items(name, job.parent).items()},
            "existing": {e["position"]: e.get("count", 1) for e in plane.get("existing", [])},
        })
    return data["rotor"], planes


def _expected_tolerances(rotor: dict, planes: list[dict]) -> list[float | None]:
    """tolerance_gmm from the job, else U_per shared between the planes.

    U_per = 1000 * G * m / omega, omega = 2 pi n / 60 (ISO 21940-11:2016);
    one plane takes the full value (Bloch and Geitner), two planes without
    distances half each (symmetric rotor) - both from REFERENCES.
    """
    u_per = None
    mass_kg = rotor.get("mass_kg", rotor["mass_lb"] * LB_KG if "mass_lb" in rotor else None)
    shares = [1.0 / len(planes)] * len(planes)
    if "com_distances_mm" in rotor:
        # Lever rule U_A = U·L_B/L, U_B = U·L_A/L, each held to 0.3..0.7 [ISO21940-11].
        to_a, to_b = rotor["com_distances_mm"]
        shares = [min(max(to_b / (to_a + to_b), 0.3), 0.7),
                  min(max(to_a / (to_a + to_b), 0.3), 0.7)]
    if "grade" in rotor and mass_kg is not None and "service_rpm" in rotor:
        grade_mm_s = float(str(rotor["grade"]).lstrip("Gg"))
        omega_rad_s = 2.0 * math.pi * rotor["service_rpm"] / 60.0
        u_per = 1000.0 * grade_mm_s * mass_kg / omega_rad_s
    out = []
    for plane, share in zip(planes, shares):
        if plane["tolerance_gmm"] is not None:
            out.append(float(plane["tolerance_gmm"]))
        elif u_per is not None:
            out.append(u_per * share)
        else:
            out.append(None)
    return out


def _fitted_gmm(parts: list[dict], plane: dict) -> complex:
    """Sum of count * mass_g * radius_mm * e^{i angle} over the listed parts [g*mm]."""
    total = 0j
    for part in parts:
        j = part["position"] - 1
        sign = -1 if part.get("action") == "remove" else 1   # a part taken off
        total += sign * part["count"] * part["mass_g"] * plane["radii_mm"][j] * cmath.exp(
            1j * math.radians(plane["angles_deg"][j]))
    return total


def _check_keys(obj: dict, spec: dict) -> None:
    for key, kind in spec.items():
        assert key in obj, f"missing key {key!r} in {sorted(obj)}"
        assert isinstance(obj[key], kind), f"{key} = {obj[key]!r} is not {kind}"
        if kind is float or kind == (float, type(None)):
            assert not isinstance(obj[key], bool)


def _check_plan(plan: dict, plane: dict) -> complex:
    """Check one plan's parts against the job and catalogue; return the recomputed residual."""
    per_position: dict[int, int] = {}
    per_item: dict[str, int] = {}
    seen = set()
    for part in plan["parts"]:
        _check_keys(part, PART_KEYS)
        pos, item, count = part["position"], part["item"], part["count"]
        assert 1 <= pos <= len(plane["angles_deg"])
        assert pos not in plane["blocked"], f"part on blocked position {pos}"
        assert count >= 1
        assert (pos, item) not in seen
        seen.add((pos, item))
        assert item in plane["items"], f"item {item} not in the catalogue"
        assert part["mass_g"] == plane["items"][item]["mass_g"]
        assert part["angle_deg"] == pytest.approx(plane["angles_deg"][pos - 1], abs=ANGLE_DEG)
        if part.get("action") == "remove":
            assert count <= plane["existing"].get(pos, 0), "removes more than is on the rotor"
        else:
            per_position[pos] = per_position.get(pos, 0) + count
        per_item[item] = per_item.get(item, 0) + count
    for pos, c in per_position.items():
        # Parts already on a position leave that much less room (placer's rule).
        assert c + plane["existing"].get(pos, 0) <= plane["capacity"], per_position
    for item, used in per_item.items():
        stock = plane["items"][item].get("stock")
        assert stock is None or used <= stock, f"{used} of {item}, stock {stock}"
    assert sum(per_item.values()) <= plane["max_parts"]
    vector = plane["required"] - _fitted_gmm(plan["parts"], plane)
    assert plan["residual_gmm"] == pytest.approx(abs(vector), rel=REL, abs=GMM_ABS)
    return vector


def _angle_close(a_deg: float, b_deg: float, tol_deg: float) -> bool:
    return abs((a_deg - b_deg + 180.0) % 360.0 - 180.0) <= tol_deg


def _check_solved_job(job: Path, data: dict, code: int) -> None:
    """Everything a solved job's JSON must satisfy, recomputed from the job file."""
    rotor, planes = _job_planes(job)
    tolerances = _expected_tolerances(rotor, planes)
    assert len(data["planes"]) == len(planes)
    for out, plane, tolerance in zip(data["planes"], planes, tolerances):
        _check_keys(out, PLANE_KEYS)
        required = plane["required"]
        assert out["required"]["gmm"] == pytest.approx(abs(required), rel=REL, abs=GMM_ABS)
        if abs(required) > 0:
            assert _angle_close(out["required"]["angle_deg"],
                                math.degrees(cmath.phase(required)) % 360.0, ANGLE_DEG)
        if tolerance is None:
            assert out["tolerance_gmm"] is None
        else:
            assert out["tolerance_gmm"] == pytest.approx(tolerance, rel=REL, abs=GMM_ABS)

        # Trade-off front: more parts, strictly less residual, each better than no parts.
        front = out["pareto"]
        previous_count, previous_residual = 0, abs(required)
        for plan in front:
            _check_keys(plan, PARETO_KEYS)
            _check_plan(plan, plane)
            assert sum(p["count"] for p in plan["parts"]) == plan["part_count"]
            assert plan["part_count"] > previous_count
            assert plan["residual_gmm"] < previous_residual
            previous_count, previous_residual = plan["part_count"], plan["residual_gmm"]

        chosen = out["chosen"]
        _check_keys(chosen, CHOSEN_KEYS)
        vector = _check_plan(chosen, plane)
        if abs(vector) > max(1e-3, 1e-6 * abs(required)):
            assert _angle_close(chosen["residual_angle_deg"],
                                math.degrees(cmath.phase(vector)) % 360.0, ANGLE_DEG)
        used = sum(p["count"] for p in chosen["parts"])
        # (count, residual) of every plan on offer, zero parts included
        offers = [(0, abs(required))] + [(p["part_count"], p["residual_gmm"]) for p in front]
        if tolerance is None:
            assert chosen["within_tolerance"] is None
            assert chosen["residual_gmm"] == pytest.approx(min(r for _, r in offers), abs=GMM_ABS)
        elif chosen["within_tolerance"]:
            assert chosen["residual_gmm"] <= tolerance + GMM_ABS
            fewest = min(c for c, r in offers if r <= tolerance)
            assert used == fewest, f"chosen {used} parts, {fewest} are within tolerance"
        else:
            assert chosen["within_tolerance"] is False
            assert all(r > tolerance - GMM_ABS for _, r in offers)
            assert chosen["residual_gmm"] == pytest.approx(min(r for _, r in offers), abs=GMM_ABS)
    all_within = all(p["chosen"]["within_tolerance"] is not False for p in data["planes"])
    assert data["within_tolerance"] is all_within
    assert code == (0 if all_within else 1)


def _run_placer(*args: object, cwd: Path = REPO_DIR) -> subprocess.CompletedProcess:
    """``python -m placer ARGS`` in a fresh interpreter."""
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "COLUMNS")}
    return subprocess.run([sys.executable, "-m", "placer", *map(str, args)], cwd=cwd, env=env,
                          capture_output=True, text=True, encoding="utf-8", timeout=120)


def _without_timing(data: dict) -> dict:
    for plane in data["planes"]:
        plane.pop("elapsed_s")
    return data


def _flat(sheet: str) -> str:
    """The sheet's words with box-drawing characters removed and line breaks joined."""
    text = re.sub("[\u2500-\u257f]", " ", sheet)
    return " ".join(text.split())


# --------------------------------------------------------------------------
# The bundled examples
# --------------------------------------------------------------------------


def test_every_example_has_an_intended_exit_code():
    assert sorted(EXPECTED_EXIT) == sorted(p.name for p in _example_jobs())
    # The other examples are field-balancing session files (with readings),
    # blade files (`placer blades`, checked in test_cli_blades.py) or batch
    # templates (no correction: each readings row brings it), outside these
    # `placer solve` checks; every template has its readings file.
    for path in sorted(set(EXAMPLE_DIR.glob("*.toml")) - set(_example_jobs())):
        if example_kind(path) == "blades":
            continue
        if example_kind(path) == "session":
            assert "readings" in tomllib.loads(path.read_text(encoding="utf-8")), path.name
        else:
            assert example_kind(path) == "template", path.name
            readings = path.with_name(path.name.replace("-template.toml", "-readings.csv"))
            assert readings.is_file(), path.name


def test_example_json_recomputed(example_job, solve_json):
    code, data = solve_json(example_job)
    assert code == EXPECTED_EXIT[example_job.name]
    _check_solved_job(example_job, data, code)
    assert all(p["optimal"] for p in data["planes"])


def test_example_sheet_at_width_80(example_job, run_cli, solve_json):
    _, data = solve_json(example_job)
    rotor, _ = _job_planes(example_job)
    sense = rotor.get("angle_sense", DEFAULT_ANGLE_SENSE)
    for args in ((), ("--width", "80")):
        code, sheet, err = run_cli("solve", example_job, *args)
        assert err == ""
        assert code == EXPECTED_EXIT[example_job.name]
        lines = sheet.splitlines()
        assert lines and max(len(line) for line in lines) <= 80
        flat = _flat(sheet)
        verdicts = re.findall(r"(WITHIN|OUTSIDE) TOLERANCE", flat)
        expected = ["WITHIN" if p["chosen"]["within_tolerance"] else "OUTSIDE"
                    for p in data["planes"] if p["chosen"]["within_tolerance"] is not None]
        assert [v for v in verdicts] == expected
        mark = f"the {rotor['reference_mark']}" if "reference_mark" in rotor \
            else "the reference mark"
        assert f"Angles: degrees from {mark}, counted {sense}" in flat
        # Cautions: lockout/tagout (OSHA 29 CFR 1910.147) and the projectile warning,
        # as in REFERENCES "Cautions".
        assert "Cautions" in flat
        assert "Lock out and tag out" in flat
        assert "projectile" in flat
        for plane in data["planes"]:
            for part in plane["chosen"]["parts"]:
                assert part["item"] in flat


def test_examples_as_subprocess_match_in_process(solve_json):
    for job in _example_jobs():
        proc = _run_placer("solve", job, "--json")
        assert proc.stderr == ""
        assert proc.returncode == EXPECTED_EXIT[job.name]
        code, data = solve_json(job)
        assert proc.returncode == code
        assert _without_timing(json.loads(proc.stdout)) == _without_timing(data)


def test_example_sheet_as_subprocess():
    job = EXAMPLE_DIR / "supply-fan.toml"
    proc = _run_placer("solve", job)
    assert proc.returncode == 0
    assert proc.stderr == ""
    assert "\x1b[" not in proc.stdout          # no colour codes when not a terminal
    assert max(len(line) for line in proc.stdout.splitlines()) <= 80
    assert "WITHIN TOLERANCE" in proc.stdout


def test_runs_leave_example_and_catalogue_files_alone(run_cli):
    files = sorted(EXAMPLE_DIR.glob("*.toml")) + sorted(CATALOG_DIR.glob("*.toml"))
    before = {p: (p.read_bytes(), p.stat().st_mtime_ns) for p in files}
    for job in _example_jobs():
        run_cli("solve", job, "--json")
    run_cli("catalogs")
    after = {p: (p.read_bytes(), p.stat().st_mtime_ns) for p in files}
    assert after == before


# --------------------------------------------------------------------------
# Exit code 1: a job that cannot meet its tolerance
# --------------------------------------------------------------------------

OUTSIDE_JOB = """\
[rotor]
name = "test rotor, tolerance out of reach"

[[planes]]
name = "only plane"
radius_mm = 100.0
positions = 12
catalog = "washers-steel"
max_parts = 2
tolerance_gmm = 0.001
correction = { mass_g = 5.0, angle_deg = 10.0 }
"""
# 500 g*mm at 10 deg; holes every 30 deg; the best two washers at r 100 mm
# cannot come within 0.001 g*mm (the masses are 0.01 g steps: 1 g*mm steps).


def test_outside_tolerance_exit_1_and_least_residual_plan(write_file, solve_json, run_cli):
    job = write_file("outside.toml", OUTSIDE_JOB)
    code, data = solve_json(job)
    assert code == 1
    _check_solved_job(job, data, code)
    chosen = data["planes"][0]["chosen"]
    assert chosen["within_tolerance"] is False
    assert data["within_tolerance"] is False
    assert chosen["parts"], "the least-residual plan must still be listed"
    assert chosen["residual_gmm"] == min(p["residual_gmm"] for p in data["planes"][0]["pareto"])

    code, sheet, _ = run_cli("solve", job)
    assert code == 1
    flat = _flat(sheet)
    assert "OUTSIDE TOLERANCE" in flat
    assert "WITHIN TOLERANCE" not in flat
    assert "Best plan found, which does NOT reach the tolerance" in flat
    assert "Fit these parts" not in flat               # not a list to tick off (issue 12)
    for part in chosen["parts"]:
        assert part["item"] in flat
    assert f"Residual {chosen['residual_gmm']:.4g} g·mm" in flat


def test_outside_tolerance_exit_1_as_subprocess(write_file):
    job = write_file("outside.toml", OUTSIDE_JOB)
    proc = _run_placer("solve", job)
    assert proc.returncode == 1
    assert "OUTSIDE TOLERANCE" in proc.stdout
    assert "does NOT reach the tolerance" in proc.stdout


# --------------------------------------------------------------------------
# Hand-made cases whose answer is known by reasoning
# --------------------------------------------------------------------------

WASHERS = _catalog_items("washers-steel", CATALOG_DIR)
# ISO 7089 washer masses from REFERENCES "Stock parts": M10 about 3.57 g, M12 about 6.27 g,
# M16 in the bundled catalogue 11.30 g (derived there from the standard's dimensions).
M10_G, M12_G, M16_G = WASHERS["M10"]["mass_g"], WASHERS["M12"]["mass_g"], WASHERS["M16"]["mass_g"]


def _one_plane_job(plane_lines: str) -> str:
    return f'[rotor]\nname = "test rotor"\n\n[[planes]]\ncatalog = "washers-steel"\n{plane_lines}'


def test_correction_equal_to_one_stock_part(write_file, solve_json):
    # 12 holes from 0 deg, hole 3 at 60 deg.  The correction is one M12 washer
    # (6.27 g) at 100 mm on hole 3: that one part leaves no residual, and no
    # other single part comes within 0.5 g*mm (the next masses differ by more
    # than 1 g, i.e. 100 g*mm); zero parts leave 627 g*mm.
    job = write_file("a.toml", _one_plane_job(
        f"radius_mm = 100.0\npositions = 12\ntolerance_gmm = 0.5\n"
        f"correction = {{ mass_g = {M12_G}, angle_deg = 60.0 }}\n"))
    code, data = solve_json(job)
    assert code == 0
    _check_solved_job(job, data, code)
    chosen = data["planes"][0]["chosen"]
    assert chosen["within_tolerance"] is True
    assert chosen["part_count"] == 1
    assert [(p["position"], p["item"], p["count"]) for p in chosen["parts"]] == [(3, "M12", 1)]
    assert chosen["residual_gmm"] == pytest.approx(0.0, abs=GMM_ABS)


@pytest.mark.parametrize("geometry, holes", [
    # Three holes 120 deg apart (0, 120, 240); no hole at the correction angle 60 deg.
    ("positions = 3", [1, 2]),
    # Six holes every 60 deg with hole 2 (60 deg) blocked: holes 1 and 3 remain at +-60 deg.
    ("positions = 6\nblocked = [2]", [1, 3]),
], ids=["3-holes", "6-holes-hole-2-blocked"])
def test_two_equal_parts_sixty_degrees_either_side(write_file, solve_json, geometry, holes):
    # Correction m*r at 60 deg with m = one M10 washer (3.57 g), r = 150 mm.
    # Two parts a at 0 deg and b at 120 deg sum to m*r*e^{i60} exactly when
    # a - b/2 = m/2 and b*sqrt(3)/2 = m*sqrt(3)/2, i.e. a = b = m (2 cos 60 = 1).
    # No other pair of open holes can: pairs 180 deg apart lie on one line, any
    # pair with 240 or 300 deg has a negative sine sum, 120 + 180 deg has a
    # negative cosine sum, and capacity 1 allows no stack.  One part leaves at
    # least m*r*sin 60 = 463.8 g*mm, so with tolerance 0.5 g*mm the fewest parts
    # within are those two, and the answer is unique.
    gmm = M10_G * 150.0
    job = write_file("b.toml", _one_plane_job(
        f"radius_mm = 150.0\n{geometry}\ntolerance_gmm = 0.5\n"
        f"correction = {{ gmm = {gmm!r}, angle_deg = 60.0 }}\n"))
    code, data = solve_json(job)
    assert code == 0
    _check_solved_job(job, data, code)
    chosen = data["planes"][0]["chosen"]
    assert chosen["part_count"] == 2
    assert sorted((p["position"], p["item"], p["count"]) for p in chosen["parts"]) == \
        [(holes[0], "M10", 1), (holes[1], "M10", 1)]
    assert chosen["residual_gmm"] == pytest.approx(0.0, abs=GMM_ABS)
    assert data["planes"][0]["pareto"][0]["residual_gmm"] >= \
        gmm * math.sin(math.radians(60.0)) - GMM_ABS


BLOCKED_BUT_7 = "blocked = [1, 2, 3, 4, 5, 6, 8, 9, 10, 11, 12]"


def test_all_positions_blocked_but_one(write_file, solve_json):
    # Only hole 7 (180 deg) is open, 3 deep.  Every part must go there, and since
    # all parts then act along 180 deg, the residual keeps at least the component
    # of the correction (500 g*mm at 170 deg) across that line: 500 sin 10 deg.
    job = write_file("c.toml", _one_plane_job(
        f"radius_mm = 100.0\npositions = 12\n{BLOCKED_BUT_7}\ncapacity = 3\n"
        f"tolerance_gmm = 100.0\ncorrection = {{ mass_g = 5.0, angle_deg = 170.0 }}\n"))
    code, data = solve_json(job)
    _check_solved_job(job, data, code)
    plane = data["planes"][0]
    floor_gmm = 500.0 * math.sin(math.radians(10.0))
    for plan in plane["pareto"] + [plane["chosen"]]:
        assert plan["parts"]
        assert {p["position"] for p in plan["parts"]} == {7}
        assert plan["residual_gmm"] >= floor_gmm - GMM_ABS
    # Oracle: along 180 deg the best fitted mass is the stack of at most 3
    # washers nearest 500 cos 10 / 100 g (brute force over the catalogue).
    masses = [item["mass_g"] for item in WASHERS.values()]
    along = 500.0 * math.cos(math.radians(10.0)) / 100.0
    best = min(math.hypot((along - sum(c)) * 100.0, floor_gmm)
               for n in range(4) for c in itertools.combinations_with_replacement(masses, n))
    assert plane["pareto"][-1]["residual_gmm"] == pytest.approx(best, rel=REL, abs=GMM_ABS)


@pytest.mark.parametrize("plane_lines, listed", [
    # Only 3 parts fit (one open hole, 3 deep), max_parts 4, tolerance out of reach.
    (f"radius_mm = 100.0\npositions = 12\n{BLOCKED_BUT_7}\ncapacity = 3\n"
     "tolerance_gmm = 0.01\ncorrection = { mass_g = 5.0, angle_deg = 170.0 }\n", 3),
    # Nothing to correct and no tolerance: the plan is no parts.
    ("radius_mm = 100.0\npositions = 12\ncorrection = { gmm = 0.0, angle_deg = 10.0 }\n", 0),
], ids=["capacity-bound-outside", "zero-correction"])
def test_chosen_part_count_counts_the_listed_parts(write_file, solve_json, plane_lines, listed):
    # JSON spec: chosen.part_count is the number of parts in the plan.
    job = write_file("count.toml", _one_plane_job(plane_lines))
    _, data = solve_json(job)
    chosen = data["planes"][0]["chosen"]
    assert sum(p["count"] for p in chosen["parts"]) == listed
    assert chosen["part_count"] == listed


def test_correction_beyond_reach(write_file, solve_json, run_cli):
    # 200 g at 100 mm = 20000 g*mm at 0 deg; at most 2 parts, the largest
    # washer M16 (11.30 g) gives 2 * 1130 = 2260 g*mm.  Two M16 stacked on hole 1
    # (0 deg, capacity 2) point straight at the correction and leave
    # 20000 - 2260 = 17740 g*mm, the least any plan can leave (triangle inequality).
    job = write_file("d.toml", _one_plane_job(
        "radius_mm = 100.0\npositions = 12\ncapacity = 2\nmax_parts = 2\n"
        "tolerance_gmm = 50.0\ncorrection = { mass_g = 200.0, angle_deg = 0.0 }\n"))
    code, data = solve_json(job)
    assert code == 1
    _check_solved_job(job, data, code)
    plane = data["planes"][0]
    assert any("cannot be reached" in note for note in plane["notes"])
    chosen = plane["chosen"]
    assert chosen["within_tolerance"] is False
    assert [(p["position"], p["item"], p["count"]) for p in chosen["parts"]] == [(1, "M16", 2)]
    assert chosen["residual_gmm"] == pytest.approx(20000.0 - 2 * M16_G * 100.0, rel=REL)
    code, sheet, _ = run_cli("solve", job)
    assert code == 1
    assert "cannot be reached" in _flat(sheet)


def test_front_against_brute_force(write_file, solve_json):
    # Oracle: tests/oracle.py enumerates every multiset of at most 3
    # (position, item) placements that respects capacity and stock, here on
    # irregular angles with an own catalogue and limited stock.
    write_file("drawer.toml", 'name = "test drawer"\n'
               '[[items]]\nid = "A"\nmass_g = 2.0\nstock = 2\n'
               '[[items]]\nid = "B"\nmass_g = 3.5\nstock = 1\n'
               '[[items]]\nid = "C"\nmass_g = 7.0\nstock = 3\n')
    angles_deg = [0.0, 70.0, 150.0, 200.0, 290.0]
    job = write_file("bf.toml", (
        '[rotor]\nname = "test rotor"\n\n[[planes]]\ncatalog = "drawer.toml"\n'
        f"radius_mm = 120.0\nangles_deg = {angles_deg}\ncapacity = 2\nmax_parts = 3\n"
        "correction = { gmm = 1234.5, angle_deg = 47.0 }\n"))
    code, data = solve_json(job)
    assert code == 0
    _check_solved_job(job, data, code)
    masses_g, stock = [2.0, 3.5, 7.0], [2, 1, 3]
    # effect of one part = -mass_g * radius_mm * e^{i angle} (residual = target + sum of effects)
    effects = np.array([[-m * 120.0 * cmath.exp(1j * math.radians(a)) for m in masses_g]
                        for a in angles_deg])
    target = np.array([cmath.rect(1234.5, math.radians(47.0))])
    best = brute_front(effects, target, [2] * len(angles_deg), stock, 3)
    front = {p["part_count"]: p["residual_gmm"] for p in data["planes"][0]["pareto"]}
    # README: every entry is proven least within 0.5 % or 0.01 g*mm.
    for n in range(1, 4):
        if best[n] < best[n - 1] * (1 - 0.005) - 0.01:
            assert n in front, f"{n} parts improve on {n - 1}; not on the front"
    for n, residual in front.items():
        assert residual >= best[n] - GMM_ABS          # never better than the optimum
        assert residual <= best[n] * 1.005 + 0.01
    assert data["planes"][0]["chosen"]["residual_gmm"] == pytest.approx(best[3], rel=0.005,
                                                                          abs=0.01)


# --------------------------------------------------------------------------
# placer tolerance
# --------------------------------------------------------------------------


def test_tolerance_text(run_cli):
    # ISO 21940-11:2016: U_per = 1000 G m / omega, omega = 2 pi n / 60.
    # G2.5, 12 kg, 2950 r/min: omega = 308.923 rad/s, U_per = 97.111 g*mm;
    # symmetric rotor, half in each plane (REFERENCES): 48.556 g*mm.
    u_per = 1000.0 * 2.5 * 12.0 / (2.0 * math.pi * 2950.0 / 60.0)
    assert f"{u_per:.1f}" == "97.1"
    code, out, err = run_cli("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "2950")
    assert code == 0 and err == ""
    assert "97.11 g·mm" in out
    assert f"50% = {u_per / 2:.4g} g·mm" in out              # four significant digits
    assert out.count(f"{u_per / 2:.4g} g·mm") == 2


def test_tolerance_json(run_cli):
    code, out, _ = run_cli("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "2950",
                           "--json")
    assert code == 0
    data = json.loads(out)
    u_per = 1000.0 * 2.5 * 12.0 / (2.0 * math.pi * 2950.0 / 60.0)
    assert data["permissible_gmm"] == pytest.approx(u_per, rel=1e-12)
    assert [s["share"] for s in data["shares"]] == [0.5, 0.5]
    assert [s["permissible_gmm"] for s in data["shares"]] == pytest.approx([u_per / 2] * 2)


def test_tolerance_published_example(run_cli):
    # Energy-Tech article (REFERENCES): 1000 lb rotor, 15 000 r/min, G2.5 gives
    # U_per = 1.0 oz*in, 0.5 oz*in per plane (printed to 1 decimal, so +-0.05);
    # 1 lb = 0.45359237 kg exactly, 1 oz*in = 720.078 g*mm (same article).
    code, out, _ = run_cli("tolerance", "--grade", "G2.5", "--mass-kg", 1000 * 0.45359237,
                           "--rpm", "15000", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["permissible_gmm"] / 720.078 == pytest.approx(1.0, abs=0.05)
    for share in data["shares"]:
        assert share["permissible_gmm"] / 720.078 == pytest.approx(0.5, abs=0.05)


def test_tolerance_as_subprocess():
    proc = _run_placer("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "2950")
    assert proc.returncode == 0
    assert "97.11 g·mm" in proc.stdout


# --------------------------------------------------------------------------
# placer catalogs
# --------------------------------------------------------------------------


def test_catalogs_lists_every_bundled_name(run_cli):
    names = sorted(p.stem for p in CATALOG_DIR.glob("*.toml"))
    assert names
    code, out, err = run_cli("catalogs")
    assert code == 0 and err == ""
    listed = [line.split()[0] for line in out.splitlines() if line.split()
              and line.split()[0] in names]
    assert listed == names
    code, out, _ = run_cli("catalogs", "--json")
    assert code == 0
    assert [c["name"] for c in json.loads(out)] == names


def test_catalogs_shows_washers(run_cli):
    # REFERENCES "Stock parts": ISO 7089 M8 washer about 1.83 g.
    code, out, err = run_cli("catalogs", "washers-steel")
    assert code == 0 and err == ""
    row = next(line for line in out.splitlines() if line.split()[:1] == ["M8"])
    assert row.split()[1] == "1.83"
    code, out, _ = run_cli("catalogs", "washers-steel", "--json")
    items = {i["id"]: i for i in json.loads(out)["items"]}
    assert items["M8"]["mass_g"] == pytest.approx(1.83, abs=0.005)


# --------------------------------------------------------------------------
# --help
# --------------------------------------------------------------------------


@pytest.mark.parametrize("command, mentions", [
    ((), ["solve", "catalogs", "tolerance", "--help"]),
    (("solve",), ["JOB", "--json", "--time-limit", "--width", "--help"]),
    (("catalogs",), ["NAME", "--json", "--help"]),
    (("tolerance",), ["--grade", "--mass-kg", "--rpm", "--planes", "--distances-mm", "--json",
                      "--help"]),
    (("field",), ["SESSION", "--json", "--norm", "--max-parts", "--save", "--db", "--width"]),
    (("machines",), ["--db", "--json"]),
    (("history",), ["MACHINE", "--db", "--json"]),
    (("trial",), ["--mass-kg", "--rpm", "--radius-mm"]),
], ids=["placer", "solve", "catalogs", "tolerance", "field", "machines", "history", "trial"])
def test_help(capsys, command, mentions):
    from placer.cli import main

    assert main([*command, "--help"]) == 0
    out = capsys.readouterr().out
    for word in mentions:
        assert word in out, f"{word} not in the help of {' '.join(command) or 'placer'}"


def test_help_as_subprocess():
    proc = _run_placer("--help")
    assert proc.returncode == 0
    assert "solve" in proc.stdout and proc.stderr == ""


def test_version(run_cli):
    import placer

    code, out, err = run_cli("--version")
    assert code == 0 and out.strip() == f"placer {placer.__version__}"


@pytest.mark.parametrize("args", [
    ("trial", "--mass-kg", "65", "--rpm", "1e-300", "--radius-mm", "180"),
    ("trial", "--mass-kg", "nan", "--rpm", "1475", "--radius-mm", "180"),
    ("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "1e308"),
    ("tolerance", "--grade", "G2.5", "--mass-kg", "1e308", "--rpm", "2950"),
    ("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "2950", "--planes", "2",
     "--distances-mm", "100", "-5"),
])
def test_command_line_quantities_out_of_range(run_cli, args):
    code, out, err = run_cli(*args)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and err.startswith("placer: error: --")


def test_error_lines_fold_every_line_break():
    from placer.errors import InputError

    text = InputError("bad\u2028value\r\nhere", file="f.toml", key="k").one_line()
    assert text == "f.toml: k: bad value here"


@pytest.mark.parametrize("argv", [
    ["solve", str(EXAMPLE_DIR / "supply-fan.toml"), "--json"],
    ["tolerance", "--grade", "G6.3", "--mass-kg", "42", "--rpm", "1480"],
    ["catalogs"],
])
def test_commands_that_need_no_sheet_and_no_blades_load_neither(argv):
    # Start-up is the time of a small job (common practice, no source: a shop tool answers
    # at once): the blade pipeline (and CP-SAT and pandas with it) and matplotlib load only
    # for the commands that use them.
    import subprocess
    import sys

    code = ("import sys, io, contextlib; from placer.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()): main(sys.argv[1:])\n"
            "print(sorted(m for m in ('placer.arrange', 'ortools', 'matplotlib', 'pandas')"
            " if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code, *argv], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "[]"
