"""Shop-floor units and paperwork: inch-pound files against their metric twins, the
tolerance as a mass at the radius, 80 columns, ASCII terminals, ``placer new``, the
sheet's header and "as left" lines, and the commands a wrong file kind is pointed to.

Conversions are the exact definitions of [NISTHB44] (1 in = 25.4 mm,
1 oz = 28.349523125 g, 1 lb = 0.45359237 kg), written out here, not taken from
placer.  U_per = 1000·G·m/ω [ISO21940-11], recomputed here.  The mass at the
radius is U / r (unbalance = mass × radius, [ISO21940-11]).
"""

from __future__ import annotations

import json
import math
import os
import re
import subprocess
import sys
import tomllib
import unicodedata
from datetime import date
from pathlib import Path

import pytest
from conftest import REPO_DIR, example_files

from placer.io.jobfile import read_job
from placer.io.sessionfile import read_session
from placer.solve import solve_job

EXAMPLES = REPO_DIR / "examples"
WHEEL_OZ = EXAMPLES / "pickup-wheel-oz.toml"
TWO_ENDS = EXAMPLES / "dryer-fan-two-ends.toml"
IN_MM = 25.4                      # [NISTHB44]
OZ_G = 0.45359237 * 1000 / 16     # [NISTHB44]: 28.349523125 g
LB_KG = 0.45359237                # [NISTHB44]


def _plans(result) -> list[list[tuple[int, str, int, str]]]:
    return [sorted((p.position, p.item, p.count, p.action) for p in plane.chosen.parts)
            for plane in result.planes]


def _metric_twin(tmp_path: Path) -> Path:
    """pickup-wheel-oz.toml and its ounce catalogue rewritten in grams and millimetres."""
    catalog = tomllib.loads((REPO_DIR / "catalogs" / "wheel-clips-oz.toml").read_text("utf-8"))
    lines = [f'name = "{catalog["name"]} (metric twin)"']
    for item in catalog["items"]:
        lines += ["[[items]]", f'id = "{item["id"]}"', f"mass_g = {item['mass_oz'] * OZ_G!r}",
                  f"mass_tol_g = {item['mass_tol_oz'] * OZ_G!r}", f"stock = {item['stock']}"]
    (tmp_path / "clips-g.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    job = WHEEL_OZ.read_text(encoding="utf-8")
    job = job.replace('units = "imperial"', 'units = "metric"')
    job = job.replace("mass_lb = 68.0", f"mass_kg = {68.0 * LB_KG!r}")
    job = job.replace("radius_in = 8.75", f"radius_mm = {8.75 * IN_MM!r}")
    job = re.sub(r"mass_oz = ([0-9.]+)", lambda m: f"mass_g = {float(m.group(1)) * OZ_G!r}", job)
    job = job.replace("tolerance_oz = 0.25", f"tolerance_g = {0.25 * OZ_G!r}")
    job = job.replace('catalog = "wheel-clips-oz"', 'catalog = "clips-g.toml"')
    assert "_oz" not in job and "_in " not in job and "_lb" not in job
    path = tmp_path / "wheel-metric.toml"
    path.write_text(job, encoding="utf-8")
    return path


def test_imperial_job_plans_as_its_metric_twin(tmp_path):
    imperial = solve_job(read_job(WHEEL_OZ))
    metric = solve_job(read_job(_metric_twin(tmp_path)))
    assert _plans(imperial) == _plans(metric)
    for a, b in zip(imperial.planes, metric.planes):
        assert a.chosen.residual_gmm == pytest.approx(b.chosen.residual_gmm, rel=1e-9, abs=1e-9)
        assert a.tolerance_gmm == pytest.approx(b.tolerance_gmm, rel=1e-12)
        # 0.25 oz at 8.75 in, in g·mm: [NISTHB44] by hand, 0.25·28.349523125·8.75·25.4.
        assert a.tolerance_gmm == pytest.approx(0.25 * OZ_G * 8.75 * IN_MM, rel=1e-12)
        assert a.within_tolerance and b.within_tolerance


def test_imperial_quantities_are_read_exactly(write_file):
    job = write_file("inch.toml", """
[rotor]
name = "inch rotor"
mass_lb = 100.0
com_distances_in = [4.0, 6.0]

[[planes]]
name = "A"
radii_in = [5.0, 6.0, 7.0]
angles_deg = [0, 120, 240]
catalog = "washers-steel"
correction = { oz_in = 2.0, angle_deg = 10.0 }
tolerance_oz_in = 0.5

[[planes]]
name = "B"
radius_in = 5.0
positions = 6
catalog = "washers-steel"
correction = { mass_oz = 0.5, angle_deg = 10.0 }
tolerance_oz = 0.1
""")
    job = read_job(job)
    assert job.rotor.mass_kg == pytest.approx(100 * LB_KG, rel=1e-15)
    assert job.rotor.com_distances_mm == pytest.approx((4 * IN_MM, 6 * IN_MM), rel=1e-15)
    a, b = job.planes
    assert a.geometry.radii_mm == pytest.approx((5 * IN_MM, 6 * IN_MM, 7 * IN_MM), rel=1e-15)
    assert abs(a.correction_gmm) == pytest.approx(2 * OZ_G * IN_MM, rel=1e-15)
    assert a.tolerance_gmm == pytest.approx(0.5 * OZ_G * IN_MM, rel=1e-15)
    assert abs(b.correction_gmm) == pytest.approx(0.5 * OZ_G * 5 * IN_MM, rel=1e-15)
    assert b.tolerance_gmm == pytest.approx(0.1 * OZ_G * 5 * IN_MM, rel=1e-15)
    assert b.tolerance_given_as == "0.1 oz at r 5 in"


@pytest.mark.parametrize("plane, key", [
    ('radius_mm = 100.0\nradius_in = 4.0', "planes[1].radius_in"),
    ('radius_mm = 100.0\ncorrection = { mass_g = 1.0, mass_oz = 1.0, angle_deg = 0 }',
     "planes[1].correction.mass_oz"),
    ('radius_mm = 100.0\ntolerance_g = 1.0\ntolerance_gmm = 5.0', "planes[1].tolerance_g"),
    ('radii_mm = [100.0, 110.0]\ntolerance_g = 1.0', "planes[1].tolerance_g"),
])
def test_two_units_for_one_quantity_are_refused(run_cli, write_file, plane, key):
    text = "[rotor]\nname = 'r'\n[[planes]]\npositions = 2\ncatalog = 'washers-steel'\n" + plane
    if "correction" not in plane:
        text += "\ncorrection = { gmm = 10.0, angle_deg = 0 }"
    code, out, err = run_cli("solve", write_file("two.toml", text))
    assert code == 2 and out == "" and err.count("\n") == 1
    assert key in err and "expected" in err


def test_ounce_catalogue_is_in_quarter_ounces():
    # [WheelWeights]: inch-market clip-ons come in 1/4 oz steps (common practice, no source).
    data = tomllib.loads((REPO_DIR / "catalogs" / "wheel-clips-oz.toml").read_text("utf-8"))
    steps = [item["mass_oz"] for item in data["items"]]
    assert steps == [0.25 * k for k in range(1, len(steps) + 1)]


def test_batch_readings_in_ounces_match_grams(run_cli, tmp_path):
    template = tmp_path / "t.toml"
    template.write_text("[rotor]\nname = 'hub'\n[[planes]]\nradius_in = 6.0\npositions = 12\n"
                        "capacity = 2\ncatalog = 'washers-steel'\ntolerance_gmm = 100.0\n",
                        encoding="utf-8")
    ounces = tmp_path / "oz.csv"
    ounces.write_text("serial,1_mass_oz,1_angle_deg\nA1,0.5,30\nA2,0.25,200\n", "utf-8")
    grams = tmp_path / "g.csv"
    grams.write_text(f"serial,1_gmm,1_angle_deg\nA1,{0.5 * OZ_G * 6 * IN_MM!r},30\n"
                     f"A2,{0.25 * OZ_G * 6 * IN_MM!r},200\n", "utf-8")
    for readings in (ounces, grams):
        code, _, err = run_cli("batch", template, readings, "--jobs", "1")
        assert code == 0, err
    rows = [[json.loads(line) for line in path.with_suffix(".results.jsonl").read_text()
             .splitlines() if '"placer_batch"' not in line] for path in (ounces, grams)]
    for a, b in zip(*rows):
        assert a["planes"][0]["parts"] == b["planes"][0]["parts"]


def test_session_trial_weight_in_ounces(tmp_path):
    text = (EXAMPLES / "exhaust-fan-visit.toml").read_text("utf-8")
    text = text.replace("mass_g = 20.0, position = 2",
                        f"mass_oz = {20.0 / OZ_G!r}, position = 2, radius_in = "
                        f"{180.0 / IN_MM!r}")
    path = tmp_path / "visit.toml"
    path.write_text(text, encoding="utf-8")
    ounce = read_session(path).runs[1].added[0]
    assert ounce.mass_g == pytest.approx(20.0, rel=1e-14)
    assert ounce.radius_mm == pytest.approx(180.0, rel=1e-14)


# --- the tolerance as a mass at the radius ------------------------------------------

def test_tolerance_command_gives_the_mass_at_the_radius(run_cli):
    # U_per = 1000·G·m/ω, ω = 2π·n/60 [ISO21940-11]; half per plane; mass = U / r.
    code, out, _ = run_cli("tolerance", "--grade", "G6.3", "--mass-kg", "42", "--rpm", "1480",
                           "--radius-mm", "210", "--json")
    assert code == 0
    data = json.loads(out)
    u_per = 1000 * 6.3 * 42 / (2 * math.pi * 1480 / 60)
    for share in data["shares"]:
        assert share["mass_at_radius_g"] == pytest.approx(u_per / 2 / 210, rel=1e-12)
    code, out, _ = run_cli("tolerance", "--grade", "G6.3", "--mass-lb", "100", "--rpm", "1480",
                           "--radius-in", "8")
    assert code == 0
    u_per = 1000 * 6.3 * 100 * LB_KG / (2 * math.pi * 1480 / 60)
    ounces = u_per / 2 / (8 * IN_MM) / OZ_G
    assert f"{ounces:.3g} oz at r 8 in" in out
    assert "oz·in" in out


def test_trial_in_pounds_and_inches(run_cli):
    code, metric, _ = run_cli("trial", "--mass-kg", f"{100 * LB_KG!r}", "--rpm", "1500",
                              "--radius-mm", f"{7 * IN_MM!r}", "--units", "imperial")
    code2, imperial, _ = run_cli("trial", "--mass-lb", "100", "--rpm", "1500",
                                 "--radius-in", "7")
    assert code == code2 == 0 and metric == imperial and " oz at r 7 in" in imperial


def test_job_shows_residual_and_tolerance_as_mass_at_radius(run_cli):
    code, out, _ = run_cli("solve", EXAMPLES / "supply-fan.toml")
    assert code == 0
    # drive side: tolerance 150 g·mm at r 210 mm = 0.714 g (U / r).
    assert f"= {150 / 210:.3f} g at r 210 mm" in out
    code, out, _ = run_cli("solve", WHEEL_OZ)
    assert "= 0.25 oz at r 8.75 in" in out and "g·mm" not in out


# --- what users see ------------------------------------------------------------------

def _columns(line: str) -> int:
    return sum(2 if unicodedata.east_asian_width(ch) in "WF" else 1 for ch in line)


COMMANDS = ([("solve", str(p)) for p in example_files("job")]
            + [("catalogs",), ("catalogs", "--units", "imperial")]
            + [("catalogs", p.stem) for p in sorted((REPO_DIR / "catalogs").glob("*.toml"))]
            + [("tolerance", "--grade", "G2.5", "--mass-kg", "12", "--rpm", "2950",
                "--distances-mm", "200", "300", "--radius-mm", "150"),
               ("tolerance", "--grade", "G40", "--mass-lb", "68", "--rpm", "1000",
                "--radius-in", "8.75"),
               ("trial", "--mass-kg", "65", "--rpm", "1475", "--radius-mm", "180"),
               ("new", "example")])


@pytest.mark.parametrize("args", COMMANDS, ids=[" ".join(Path(a).name for a in c)
                                                for c in COMMANDS])
def test_every_command_fits_80_columns_without_trailing_blanks(run_cli, args):
    code, out, err = run_cli(*args)
    assert code in (0, 1), err
    for line in (out + err).splitlines():
        assert _columns(line) <= 80, line
        assert line == line.rstrip(), repr(line)


def test_batch_summary_fits_80_columns(run_cli, tmp_path):
    out_prefix = tmp_path / "line"
    code, out, err = run_cli("batch", EXAMPLES / "fan-line-template.toml",
                             EXAMPLES / "fan-line-readings.csv", "--out", out_prefix,
                             "--jobs", "1")
    assert code in (0, 1), err
    assert all(_columns(line) <= 80 or " " not in line.strip() for line in out.splitlines())


ASCII_RUNS = [("solve", str(p)) for p in example_files("job")] + [
    ("catalogs", "drill-steel"), ("tolerance", "--grade", "G6.3", "--mass-kg", "42", "--rpm",
                                  "1480", "--radius-mm", "210"),
    ("trial", "--mass-lb", "140", "--rpm", "1475", "--radius-in", "7"), ("tolerance", "--help")]


@pytest.mark.parametrize("args", ASCII_RUNS, ids=[" ".join(Path(a).name for a in c)
                                                  for c in ASCII_RUNS])
def test_an_ascii_terminal_gets_no_traceback(args):
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONIOENCODING", "LC_ALL")}
    env.update(PYTHONIOENCODING="ascii", PYTHONPATH=str(REPO_DIR))
    run = subprocess.run([sys.executable, "-m", "placer", *args], capture_output=True,
                         env=env, cwd=REPO_DIR, timeout=300)
    assert run.returncode in (0, 1), run.stderr
    assert b"Traceback" not in run.stderr
    run.stdout.decode("ascii")                       # nothing but ASCII reached the terminal
    assert all(len(line) <= 80 for line in run.stdout.decode("ascii").splitlines())


@pytest.mark.parametrize("args", COMMANDS[:3] + [("tolerance", "--grade", "G2.5", "--mass-kg",
                                                  "12", "--rpm", "2950", "--distances-mm",
                                                  "200", "300"),
                                                 ("trial", "--help"), ("solve", "--help")])
def test_no_internals_or_recollections_in_what_users_read(run_cli, args):
    code, out, err = run_cli(*args)
    text = (out + err).lower()
    for word in ("from memory", "rule of thumb", "cp-sat", "placer.", ".py"):
        assert word not in text, word


# --- the wrong kind of file ----------------------------------------------------------

def test_a_session_given_to_solve_points_to_field(run_cli):
    session = EXAMPLES / "exhaust-fan-visit.toml"
    code, out, err = run_cli("solve", session)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert f"'placer field {session}'" in err


def test_a_template_given_to_solve_points_to_batch(run_cli):
    template = EXAMPLES / "fan-line-template.toml"
    code, out, err = run_cli("solve", template)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert f"'placer batch {template} READINGS'" in err


# --- placer new ----------------------------------------------------------------------

def _fill(text: str, pattern: str, value: str) -> str:
    return re.sub(pattern, value, text, count=0, flags=re.MULTILINE)


def test_new_job_solves_once_the_correction_is_filled_in(run_cli, tmp_path):
    path = tmp_path / "fan.toml"
    code, _, err = run_cli("new", "job", path, "--positions", "12", "--radius-mm", "210",
                           "--catalog", "washers-steel", "--planes", "2", "--name", "Fan 7")
    assert code == 0 and "FILL IN" in err
    text = path.read_text("utf-8")
    assert text.count("FILL IN") >= 3 and text.startswith("#")
    code, _, err = run_cli("solve", path)            # nothing filled in: a clear refusal
    assert code == 2 and "correction" in err
    filled = _fill(text, r"^# correction = \{ mass_g = 0.0, angle_deg = 0.0 \}",
                   "correction = { mass_g = 18.5, angle_deg = 132.0 }")
    path.write_text(filled, encoding="utf-8")
    code, out, err = run_cli("solve", path, "--json")
    assert code in (0, 1), err
    data = json.loads(out)
    assert [p["name"] for p in data["planes"]] == ["front plane", "back plane"]
    assert data["units"] == "metric"


def test_new_imperial_job_and_template(run_cli, tmp_path):
    job = tmp_path / "wheel.toml"
    code, _, err = run_cli("new", "job", job, "--positions", "72", "--radius-in", "8.75",
                           "--planes", "2")
    assert code == 0, err
    text = job.read_text("utf-8")
    assert "radius_in = 8.75" in text and 'units = "imperial"' in text
    assert 'catalog = "wheel-clips-oz"' in text
    template = tmp_path / "line.toml"
    code, _, err = run_cli("new", "template", template, "--positions", "12", "--radius-mm",
                           "150")
    assert code == 0, err
    readings = tmp_path / "r.csv"
    readings.write_text("serial,1_mass_g,1_angle_deg\nX1,6.1,230\n", encoding="utf-8")
    code, _, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code in (0, 1) and "error" not in err


def test_new_session_reads_once_the_runs_are_filled_in(run_cli, tmp_path):
    path = tmp_path / "visit.toml"
    code, _, err = run_cli("new", "session", path, "--positions", "8", "--radius-mm", "180")
    assert code == 0, err
    text = path.read_text("utf-8")
    text = _fill(text, r"^# (\[\[runs\]\]|name = |kind = |trial = |removed = |readings = )",
                 r"\1")
    text = text.replace("[[0.0, 0], [0.0, 0]]", "[[4.2, 60], [3.1, 140]]")
    text = text.replace("mass_g = 0.0", "mass_g = 20.0")
    path.write_text(text, encoding="utf-8")
    session = read_session(path)
    assert len(session.runs) == 2 and session.runs[1].added[0].mass_g == 20.0


def test_new_never_overwrites_without_force(run_cli, tmp_path):
    path = tmp_path / "mine.toml"
    path.write_text("keep me", encoding="utf-8")
    code, _, err = run_cli("new", "job", path, "--positions", "6", "--radius-mm", "100")
    assert code == 2 and "--force" in err and path.read_text("utf-8") == "keep me"
    code, _, err = run_cli("new", "job", path, "--positions", "6", "--radius-mm", "100",
                           "--force")
    assert code == 0 and path.read_text("utf-8") != "keep me"
    assert [p.name for p in tmp_path.iterdir()] == ["mine.toml"]       # no temporary left


def test_new_without_a_terminal_names_the_missing_option(run_cli, tmp_path, monkeypatch):
    monkeypatch.setattr(sys.stdin, "isatty", lambda: False, raising=False)
    code, _, err = run_cli("new", "job", tmp_path / "x.toml", "--radius-mm", "100")
    assert code == 2 and "--positions" in err and not (tmp_path / "x.toml").exists()


def test_new_asks_on_a_terminal(run_cli, tmp_path, monkeypatch):
    # Asked in order: name, positions, radius, catalogue (empty: the default), planes;
    # a bad answer is asked again.
    answers = iter(["Hub 4", "twelve", "12", "150", "", "2"])
    monkeypatch.setattr(sys.stdin, "isatty", lambda: True, raising=False)
    monkeypatch.setattr("builtins.input", lambda prompt: next(answers))
    code, _, err = run_cli("new", "job", tmp_path / "hub.toml")
    assert code == 0, err
    text = (tmp_path / "hub.toml").read_text("utf-8")
    assert 'name = "Hub 4"' in text and "positions = 12" in text and "radius_mm = 150" in text
    assert 'catalog = "washers-steel"' in text and "[[planes]]" in text.split("max_parts")[1]


def test_new_example_copies_every_example(run_cli, tmp_path):
    code, out, _ = run_cli("new", "example")
    names = out.split()[out.split().index("all):") + 1:]
    assert set(names) == {p.name for p in EXAMPLES.iterdir() if p.suffix in (".toml", ".csv")}
    code, _, err = run_cli("new", "example", "supply-fan", "--folder", tmp_path)
    assert code == 0, err
    copy = tmp_path / "supply-fan.toml"
    assert copy.read_bytes() == (EXAMPLES / "supply-fan.toml").read_bytes()
    code, _, err = run_cli("new", "example", "supply-fan", "--folder", tmp_path)
    assert code == 2 and "--force" in err
    code, _, err = run_cli("new", "example", "supply-fam", "--folder", tmp_path)
    assert code == 2 and "supply-fan.toml" in err
    code, _, err = run_cli("new", "example", "all", "--folder", tmp_path, "--force")
    assert code == 0 and sorted(p.name for p in tmp_path.iterdir()) == sorted(names)
    code, out, err = run_cli("solve", copy)           # works from anywhere: bundled catalogues
    assert code == 0, err


# --- the sheet -----------------------------------------------------------------------

def test_sheet_records_the_job_and_draws_the_far_side_mirrored():
    from placer.views.sheet import plane_page

    result = solve_job(read_job(TWO_ENDS))
    texts = []
    drawings = []
    for index in (1, 2):
        fig, drawing = plane_page(result, index, when=date(2026, 3, 14), dpi=50)
        texts.append(" ".join(t.get_text() for ax in fig.axes for t in ax.texts))
        drawings.append(drawing)
    for text in texts:
        for field in ("CUSTOMER", "Saltmere dairy, spray dryer hall", "WORK ORDER",
                      "WM-26-0412", "TECHNICIAN", "A. Penhallow", "2026-03-14",
                      "KEYWAY 0°", "AS LEFT", "Residual measured after fitting:",
                      "Fitted by", "Test run checked by", "under the bolt head"):
            assert field in text, field
    # Seen from the free end everything turns the other way: angles against a clockwise
    # rotation grow counterclockwise from the drive end, clockwise from the free end, and
    # the rotation arrow turns counterclockwise there.
    front, back = drawings
    assert front.counterclockwise and front.rotation_clockwise is True
    assert not back.counterclockwise and back.rotation_clockwise is False
    for k in range(1, 11):
        fx, fy = front.position_xy[k]
        bx, by = back.position_xy[k]
        assert (bx, by) == pytest.approx((-fx, fy), abs=1e-12)     # mirrored left-right
    assert "mirror image" in texts[1] and "WORKED FROM THE FREE END" in texts[1]


def test_outside_tolerance_is_not_a_list_to_tick_off(write_file):
    from placer.views.sheet import plane_page
    from placer.views.wording import OUTSIDE_ADVICE

    path = write_file("tight.toml", "[rotor]\nname = 'disc'\n[[planes]]\nname = 'face'\n"
                      "radius_mm = 50.0\npositions = 6\ncatalog = 'washers-steel'\n"
                      "correction = { gmm = 250.0, angle_deg = 33.0 }\ntolerance_gmm = 0.001\n")
    result = solve_job(read_job(path))
    assert result.planes[0].within_tolerance is False
    fig, _ = plane_page(result, 1, when=date(2026, 1, 1), dpi=50)
    text = " ".join(t.get_text().replace("\n", " ") for ax in fig.axes for t in ax.texts)
    assert "THIS PLAN DOES NOT REACH THE TOLERANCE" in text
    assert "more positions" in text and "second run" in text
    assert OUTSIDE_ADVICE.split(":")[0] in text
    # No tick boxes: the page's square markers are the key's and the blocked positions'.
    ticks = [line for ax in fig.axes for line in ax.lines if line.get_marker() == "s"
             and line.get_markersize() == 7.5]
    assert ticks == []


def test_an_ascii_terminal_keeps_the_frame_of_a_name_in_wide_and_combining_script(tmp_path):
    # A name in CJK (two columns a character) and Devanagari (combining marks take none):
    # on an ASCII terminal each character becomes one "?" per column it took, so every
    # line of the frame keeps its 80 columns (East Asian width and combining marks: Unicode
    # UAX #11 and chapter 3, as rich counts them).
    job = (REPO_DIR / "examples" / "supply-fan.toml").read_text(encoding="utf-8")
    name = next(line for line in job.splitlines() if line.startswith("name = "))
    path = tmp_path / "named.toml"
    path.write_text(job.replace(name, 'name = "送風機 SF-2 पंखा"', 1), encoding="utf-8")
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONIOENCODING", "LC_ALL")}
    env.update(PYTHONIOENCODING="ascii", PYTHONPATH=str(REPO_DIR))
    run = subprocess.run([sys.executable, "-m", "placer", "solve", str(path)],
                         capture_output=True, env=env, cwd=REPO_DIR, timeout=300)
    lines = run.stdout.decode("ascii").splitlines()
    framed = [line for line in lines if line.startswith(("|", "+"))]
    assert "?????? SF-2 ??" in run.stdout.decode("ascii")
    assert framed and {len(line) for line in framed} == {80}
