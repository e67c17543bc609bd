"""``placer batch``: many rotors of one type against one template.

What the results are checked against:

* each rotor solved as its own job file by ``read_job`` + ``solve_job``
  (the single-job path, which builds its search afresh for every job);
* brute-force enumeration (tests/oracle.py) on a small plane;
* the plane tolerance against ISO 21940-11: U_per = 1000·G·m/ω [g·mm]
  (m in kg, ω in rad/s), half in each plane of a symmetric rotor
  (REFERENCES.md [ISO21940-11]).

Residuals are compared within 1e-9 g·mm: both sides compute the same sums
of the same floating-point numbers, so only rounding in the last bits could
differ.
"""

from __future__ import annotations

import csv
import json
import math
import random
from pathlib import Path

import numpy as np
import pytest
from oracle import brute_front, brute_lightest

from placer.batch import BatchSolver, RotorReading, solve_readings
from placer.errors import InputError
from placer.io.batchreadings import read_readings
from placer.io.batchresults import read_template, run_batch
from placer.io.jobfile import read_job
from placer.solve import solve_job

ROTOR = """[rotor]
name = "Wrenmoor supply fan impeller SF-2"
mass_kg = 8.0
service_rpm = 1480
grade = "G2.5"                 # tighter than the G6.3 of ISO 21940-11 for fans
"""
PLANES = [
    """[[planes]]
name = "drive side"
radius_mm = 150.0
positions = 12
capacity = 3
catalog = "washers-steel"
max_parts = 4
{extra}""",
    """[[planes]]
name = "free side"
radius_mm = 120.0
positions = 8
start_deg = 22.5
blocked = [3]
catalog = "rim-clips-5g"
max_parts = 3
{extra}""",
]


def template_text(corrections: list[tuple[float, float]] | None = None, extra: str = "") -> str:
    """The two-plane template; with ``corrections`` (gmm, angle_deg) a complete job file."""
    blocks = []
    for i, plane in enumerate(PLANES):
        lines = extra
        if corrections is not None:
            gmm, angle = corrections[i]
            lines += f"correction = {{ gmm = {gmm!r}, angle_deg = {angle!r} }}\n"
        blocks.append(plane.format(extra=lines))
    return ROTOR + "\n" + "\n".join(blocks)


def random_rows(count: int, seed: int = 7) -> list[tuple[str, list[tuple[float, float]]]]:
    """Seeded rotors: serial and per plane (gmm, angle_deg), rounded as a machine prints them."""
    rng = random.Random(seed)
    rows = []
    for i in range(count):
        planes = [(round(rng.uniform(0.0, 3000.0), 2), round(rng.uniform(0.0, 360.0), 1)),
                  (round(rng.uniform(0.0, 1500.0), 2), round(rng.uniform(0.0, 360.0), 1))]
        rows.append((f"WM-SF2-{i:04d}", planes))
    rows[0] = ("WM-SF2-ZERO", [(0.0, 0.0), (0.0, 90.0)])
    return rows


def readings_csv(rows, header: str = "serial,1_gmm,1_angle_deg,2_gmm,2_angle_deg") -> str:
    lines = [header]
    for serial, planes in rows:
        lines.append(",".join([serial] + [f"{v!r}" for plane in planes for v in plane]))
    return "\n".join(lines) + "\n"


def records(path: Path) -> list[dict]:
    """The rotors of a results log (its lines without the run's own key)."""
    lines = [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]
    return [line for line in lines if "placer_batch" not in line]


def plan_of(record_plane: dict) -> list[tuple[int, str, int]]:
    return [(p["position"], p["item"], p["count"]) for p in record_plane["fitted"]]


@pytest.fixture
def template(tmp_path: Path) -> Path:
    path = tmp_path / "sf2.toml"
    path.write_text(template_text(), encoding="utf-8")
    return path


@pytest.fixture
def batch_files(tmp_path: Path, template: Path):
    rows = random_rows(24)
    readings = tmp_path / "line3.csv"
    readings.write_text(readings_csv(rows), encoding="utf-8")
    return template, readings, rows


def test_each_rotor_as_its_own_job(tmp_path, batch_files):
    template, readings, rows = batch_files
    summary, paths = run_batch(template, readings, jobs=1)
    got = records(paths.results_jsonl)
    assert [r["serial"] for r in got] == [serial for serial, _ in rows]
    assert summary.solved == len(rows) and summary.errors == 0
    # ISO 21940-11: U_per = 1000 G m / omega, half per plane (symmetric rotor).
    u_per = 1000.0 * 2.5 * 8.0 / (1480 * 2 * math.pi / 60)
    outside = 0
    for record, (serial, planes) in zip(got, rows):
        job_path = tmp_path / "one.toml"
        job_path.write_text(template_text(planes), encoding="utf-8")
        expected = solve_job(read_job(job_path))
        for plane, want in zip(record["planes"], expected.planes):
            assert plane["residual_gmm"] == pytest.approx(want.chosen.residual_gmm, abs=1e-9)
            assert plan_of(plane) == [(p.position, p.item, p.count) for p in want.chosen.parts]
            assert plane["within_tolerance"] == want.within_tolerance
            assert plane["tolerance_gmm"] == pytest.approx(u_per / 2, rel=1e-12)
        assert record["within_tolerance"] == expected.all_within
        outside += not expected.all_within
    # The case is meant to hold rotors both within and outside tolerance.
    assert 0 < outside < len(rows)
    assert summary.outside == outside and summary.within == len(rows) - outside
    assert summary.share_within == pytest.approx((len(rows) - outside) / len(rows))


def test_parts_used_add_up_and_csv_matches_jsonl(batch_files):
    template, readings, rows = batch_files
    summary, paths = run_batch(template, readings, jobs=1)
    got = records(paths.results_jsonl)
    counted: dict[str, int] = {}
    for record in got:
        for plane in record["planes"]:
            for part in plane["fitted"]:
                counted[part["item"]] = counted.get(part["item"], 0) + part["count"]
    assert {p.item: p.count for p in summary.parts_used} == counted
    with paths.results_csv.open(encoding="utf-8", newline="") as handle:
        table = list(csv.DictReader(handle))
    assert [row["serial"] for row in table] == [r["serial"] for r in got]
    for row, record in zip(table, got):
        for plane in record["planes"]:
            n = plane["plane"]
            text = ";".join(f"{p['position']}:{p['item']}×{p['count']}" for p in plane["fitted"])
            assert row[f"{n}_parts"] == text
            assert float(row[f"{n}_residual_gmm"]) == plane["residual_gmm"]
            assert row[f"{n}_within_tolerance"] == str(plane["within_tolerance"]).lower()
    stored = json.loads(paths.summary_json.read_text(encoding="utf-8"))
    assert stored["rows_read"] == len(rows) and stored["solved"] == len(rows)


def test_small_plane_against_brute_force(tmp_path):
    # Oracle: every multiset of at most 3 parts on 6 holes from 3 sizes (tests/oracle.py).
    (tmp_path / "drawer.toml").write_text(
        'name = "test drawer"\n[[items]]\nid = "S"\nmass_g = 2.0\nstock = 2\n'
        '[[items]]\nid = "M"\nmass_g = 3.5\n[[items]]\nid = "L"\nmass_g = 7.0\nstock = 1\n')
    (tmp_path / "small.toml").write_text(
        '[rotor]\nname = "small"\n[[planes]]\nname = "rim"\nradius_mm = 80.0\npositions = 6\n'
        'capacity = 2\ncatalog = "drawer.toml"\nmax_parts = 3\ntolerance_gmm = 60.0\n')
    job = read_template(tmp_path / "small.toml")
    solver = BatchSolver(job)
    # The oracle's arrays, built here from the drawer and the geometry (not by placer):
    # a part of mass m at position j corrects m·r·e^{iθ_j}, its effect on the residual
    # is minus that; capacity 2 per position; stock S 2, M unlimited (3 parts), L 1.
    angles = np.radians(60.0 * np.arange(6))
    effects = -(80.0 * np.array([2.0, 3.5, 7.0])[None, :]
                * np.exp(1j * angles)[:, None])[:, :, None]
    capacity, stock = np.full(6, 2), np.array([2, 3, 1])
    masses = [[2.0, 3.5, 7.0]] * 6
    rng = np.random.default_rng(11)
    for line in range(40):
        target = complex(*rng.normal(0.0, 500.0, 2))
        outcome, _ = solver.solve(RotorReading(line, f"S{line}", (target,)))
        front = brute_front(effects, np.array([target]), capacity, stock, 3)
        plane = outcome.planes[0]
        # The rule of placer.choice: aim at 70 % of the tolerance (placer's default), the
        # fewest parts that reach it, then the least added mass; else the same within the
        # tolerance; else the least residual.
        for radius in (0.7 * 60.0, 60.0):
            reach = next((k for k, value in enumerate(front) if value <= radius), None)
            if reach is not None:
                break
        if reach is None:
            assert plane.residual_gmm == pytest.approx(front[3], abs=1e-9)
            assert plane.within_tolerance is False
            continue
        mass, value = (brute_lightest(effects, np.array([target]), capacity, stock, masses,
                                      reach, radius) if reach else (0.0, front[0]))
        assert plane.option.used_parts == reach
        assert plane.option.mass_g == pytest.approx(mass, abs=1e-9)
        assert plane.residual_gmm == pytest.approx(value, abs=1e-9)
        assert plane.within_tolerance is True


def test_shared_stock_within_a_rotor_solved_together(tmp_path):
    # Two planes draw on one drawer with 2 large parts; each alone wants both.
    (tmp_path / "drawer.toml").write_text(
        'name = "shared drawer"\n[[items]]\nid = "L"\nmass_g = 10.0\nstock = 2\n'
        '[[items]]\nid = "S"\nmass_g = 2.0\nstock = 20\n')
    block = ('[[planes]]\nname = "{name}"\nradius_mm = 100.0\npositions = 6\ncatalog = '
             '"drawer.toml"\nmax_parts = 3\ntolerance_gmm = 150.0\n{correction}')
    rotor = '[rotor]\nname = "shared"\n'

    def text(corrections=None):
        blocks = []
        for i, name in enumerate(("A", "B")):
            gmm, angle = (None, None) if corrections is None else corrections[i]
            line = "" if corrections is None else \
                f"correction = {{ gmm = {gmm!r}, angle_deg = {angle!r} }}\n"
            blocks.append(block.format(name=name, correction=line))
        return rotor + "\n".join(blocks)

    (tmp_path / "t.toml").write_text(text())
    rows = [("R1", [(2000.0, 0.0), (2000.0, 180.0)]), ("R2", [(300.0, 10.0), (400.0, 70.0)])]
    (tmp_path / "r.csv").write_text(readings_csv(rows))
    _, paths = run_batch(tmp_path / "t.toml", tmp_path / "r.csv", jobs=1)
    got = records(paths.results_jsonl)
    assert [r["solved_together"] for r in got] == [True, False]
    for record, (_, corrections) in zip(got, rows):
        (tmp_path / "one.toml").write_text(text(corrections))
        expected = solve_job(read_job(tmp_path / "one.toml"))
        for plane, want in zip(record["planes"], expected.planes):
            assert plane["residual_gmm"] == pytest.approx(want.chosen.residual_gmm, abs=1e-9)
        large = sum(p["count"] for pl in record["planes"] for p in pl["fitted"]
                    if p["item"] == "L")
        assert large <= 2


BAD_ROWS = [
    # (row text, message fragment); line numbers follow from the order.
    ("WM-B-01,1500.0,10.0,,20.0", "2_gmm is missing"),
    ("WM-B-02,abc,10.0,300.0,20.0", "1_gmm is 'abc', not a number"),
    ("WM-B-03,nan,10.0,300.0,20.0", "1_gmm is nan"),
    ("WM-B-04,1500.0,inf,300.0,20.0", "1_angle_deg is inf"),
    ("WM B 05,1500.0,10.0,300.0,20.0", "is not a serial"),
    ("W" * 41 + ",1500.0,10.0,300.0,20.0", "is not a serial"),
    (",1500.0,10.0,300.0,20.0", "serial is missing"),
    ("WM-B-08,1500.0,10.0,300.0", "has 4 values, the header has 5 columns"),
    ("WM-B-09,-5.0,10.0,300.0,20.0", "1_gmm is -5 (expected zero or more)"),
    ("WM-SF2-0003,1.0,1.0,1.0,1.0", "appears again (first on line 5)"),
]


def test_bad_rows_reported_and_good_rows_finish(tmp_path, template):
    rows = random_rows(6)
    lines = readings_csv(rows).splitlines()
    # Bad rows after the good ones, and one blank line (skipped, still counted as a line).
    text = "\n".join(lines + [""] + [row for row, _ in BAD_ROWS]) + "\n"
    readings = tmp_path / "mixed.csv"
    readings.write_text(text, encoding="utf-8")
    summary, paths = run_batch(template, readings, jobs=1)
    assert summary.rows_read == len(rows) + len(BAD_ROWS)
    assert summary.errors == len(BAD_ROWS) and summary.solved == len(rows)
    assert [r["serial"] for r in records(paths.results_jsonl)] == [s for s, _ in rows]
    with paths.errors_csv.open(encoding="utf-8", newline="") as handle:
        errors = list(csv.DictReader(handle))
    first_bad = len(lines) + 2  # header + good rows, the blank line, then the bad rows
    assert [int(e["line"]) for e in errors] == list(range(first_bad, first_bad + len(BAD_ROWS)))
    for error, (_, fragment) in zip(errors, BAD_ROWS):
        assert fragment in error["message"]
    assert errors[0]["serial"] == "WM-B-01" and errors[4]["serial"] == ""
    assert errors[-1]["serial"] == "WM-SF2-0003"
    assert not summary.all_within


def test_resume_after_interruption(tmp_path, batch_files):
    template, readings, rows = batch_files
    full, full_paths = run_batch(template, readings, prefix=tmp_path / "full", jobs=1)
    reference = {r["serial"]: r for r in records(full_paths.results_jsonl)}

    def stop_after_ten(done: int, total: int) -> None:
        if done == 10:
            raise KeyboardInterrupt

    prefix = tmp_path / "run"
    with pytest.raises(KeyboardInterrupt):
        run_batch(template, readings, prefix=prefix, jobs=1, progress=stop_after_ten)
    jsonl = Path(str(prefix) + ".jsonl")
    assert len(records(jsonl)) == 10  # each row was written as it was found
    # The process was killed in the middle of writing row 9: cut that line in half.
    data = jsonl.read_bytes()
    lines = data.split(b"\n")
    # Line 1 is the run's header, then the rotors.
    jsonl.write_bytes(b"\n".join(lines[:9]) + b"\n" + lines[9][: len(lines[9]) // 2])
    # Its table was last written whole before then (at most the rotors kept).
    table = Path(str(prefix) + ".csv")
    table.write_bytes(b"".join(table.read_bytes().splitlines(keepends=True)[:1 + 8]))
    resumed, paths = run_batch(template, readings, prefix=prefix, jobs=1, resume=True)
    got = records(jsonl)
    assert [r["serial"] for r in got] == [serial for serial, _ in rows]  # each exactly once
    assert {r["serial"]: r for r in got} == reference
    assert resumed.already_done == 8 and resumed.solved == len(rows)
    stored = json.loads(paths.summary_json.read_text(encoding="utf-8"))
    assert stored["solved_now"] == len(rows) - 8
    assert resumed.parts_used == full.parts_used and resumed.outside == full.outside
    with paths.results_csv.open(encoding="utf-8", newline="") as handle:
        assert [row["serial"] for row in csv.DictReader(handle)] == [s for s, _ in rows]
    # Resuming a finished batch solves nothing and changes no result.
    again, _ = run_batch(template, readings, prefix=prefix, jobs=1, resume=True)
    assert again.already_done == len(rows) and records(jsonl) == got


def test_resume_with_another_template_is_refused(tmp_path, batch_files):
    template, readings, _ = batch_files
    run_batch(template, readings, jobs=1)
    template.write_text(template_text(extra="tolerance_gmm = 50.0\n"), encoding="utf-8")
    with pytest.raises(InputError, match="another template"):
        run_batch(template, readings, jobs=1, resume=True)


def test_refuses_to_overwrite(run_cli, batch_files):
    template, readings, _ = batch_files
    code, _, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code in (0, 1) and err == ""
    out = readings.with_name("line3.results.jsonl")
    before = out.read_bytes()
    code, stdout, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code == 2 and stdout == ""
    assert err.count("\n") == 1 and "line3.results" in err and "exists already" in err
    assert "--resume" in err and "--force" in err
    assert out.read_bytes() == before
    code, _, err = run_cli("batch", template, readings, "--jobs", "1", "--force")
    assert code in (0, 1) and err == "" and out.read_bytes() == before


def test_json_lines_input_matches_csv(tmp_path, batch_files):
    template, readings, rows = batch_files
    _, csv_paths = run_batch(template, readings, prefix=tmp_path / "from-csv", jobs=1)
    lines = []
    for i, (serial, planes) in enumerate(rows):
        first = {"gmm": planes[0][0], "angle_deg": planes[0][1]}
        if i % 2:  # the same correction as a mass at the plane's radius (150 mm)
            first = {"mass_g": planes[0][0] / 150.0, "angle_deg": planes[0][1]}
        lines.append(json.dumps({"serial": serial, "planes": [
            first, {"gmm": planes[1][0], "angle_deg": planes[1][1]}]}))
    bad = ['{"serial": "WM-J-1", "planes": [{"gmm": 1.0, "angle_deg": 2.0}]}',
           '{"serial": "WM-J-2", "planes": [{"gmm": true, "angle_deg": 2.0}, '
           '{"gmm": 1.0, "angle_deg": 2.0}]}',
           '{"serial": "WM-J-3", "planes": [{"gmm": NaN, "angle_deg": 2.0}, '
           '{"gmm": 1.0, "angle_deg": 2.0}]}',
           '{"serial": "WM-J-4", planes: []}']
    jsonl = tmp_path / "line3.jsonl"
    jsonl.write_text("\n".join(lines + bad) + "\n", encoding="utf-8")
    summary, paths = run_batch(template, jsonl, jobs=1)
    got, want = records(paths.results_jsonl), records(csv_paths.results_jsonl)
    assert [r["serial"] for r in got] == [r["serial"] for r in want]
    for a, b in zip(got, want):
        for pa, pb in zip(a["planes"], b["planes"]):
            assert pa["residual_gmm"] == pytest.approx(pb["residual_gmm"], abs=1e-9)
            assert plan_of(pa) == plan_of(pb)
    with paths.errors_csv.open(encoding="utf-8", newline="") as handle:
        errors = list(csv.DictReader(handle))
    assert [int(e["line"]) for e in errors] == [len(rows) + 1 + i for i in range(4)]
    assert "has 1 planes, the template has 2" in errors[0]["message"]
    assert "planes[1].gmm is not a number" in errors[1]["message"]
    assert "planes[1].gmm is nan" in errors[2]["message"]
    assert "not a JSON object" in errors[3]["message"] and errors[3]["serial"] == ""
    assert summary.errors == 4


def test_two_jobs_same_as_one(tmp_path, batch_files):
    template, readings, _ = batch_files
    _, one = run_batch(template, readings, prefix=tmp_path / "one", jobs=1)
    _, two = run_batch(template, readings, prefix=tmp_path / "two", jobs=2)
    assert two.results_jsonl.read_bytes() == one.results_jsonl.read_bytes()
    assert two.results_csv.read_bytes() == one.results_csv.read_bytes()


def test_spawned_workers_same_as_in_process(template):
    job = read_template(template)
    readings = [RotorReading(i + 2, serial, tuple(complex(g * math.cos(math.radians(a)),
                                                          g * math.sin(math.radians(a)))
                                                  for g, a in planes))
                for i, (serial, planes) in enumerate(random_rows(6))]
    here = list(solve_readings(job, readings, jobs=1))
    spawned = list(solve_readings(job, readings, jobs=2, start_method="spawn", chunk_rows=2))
    assert [o.serial for o in spawned] == [o.serial for o in here]
    for a, b in zip(spawned, here):
        assert [p.option for p in a.planes] == [p.option for p in b.planes]


def test_exit_codes(run_cli, tmp_path, batch_files):
    template, readings, _ = batch_files
    code, stdout, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code == 1 and err == ""  # some rotors are outside the G2.5 shares
    assert stdout.startswith("placer batch: 24 rows, 24 solved")
    # Wrapped to 80 columns when piped; only a long path may stand alone past them.
    assert all(len(line) <= 80 or " " not in line.strip() for line in stdout.splitlines())
    loose = tmp_path / "loose.toml"
    loose.write_text(template_text(extra="tolerance_gmm = 5000.0\n"), encoding="utf-8")
    code, _, err = run_cli("batch", loose, readings, "--out", tmp_path / "loose", "--jobs", "1")
    assert code == 0 and err == ""
    with_bad_row = tmp_path / "bad-row.csv"
    with_bad_row.write_text(readings.read_text() + "WM-X,1,2,3\n", encoding="utf-8")
    code, _, err = run_cli("batch", loose, with_bad_row, "--jobs", "1")
    assert code == 1 and err == ""


@pytest.mark.parametrize("file, text, names", [
    ("template", template_text().replace("radius_mm = 150.0\n", ""),
     ("sf2.toml", "planes[1].radius_mm")),
    ("template", template_text().replace('"washers-steel"', '"washers-stell"'),
     ("sf2.toml", "planes[1].catalog")),
    ("readings", "serial,1_gmm,1_angle_deg,2_gmm,2_angel_deg\n", ("line3.csv", "2_angel_deg")),
    ("readings", "serial,1_gmm,1_mass_g,1_angle_deg,2_gmm,2_angle_deg\n",
     ("line3.csv", "header", "not both")),
    ("readings", "serial,1_gmm,1_angle_deg\n", ("line3.csv", "2_angle_deg")),
    ("readings", "serial,1_gmm,1_angle_deg,2_gmm,2_angle_deg,3_gmm,3_angle_deg\n",
     ("line3.csv", "3_gmm", "plane 3 is not in the template")),
    ("readings", "", ("line3.csv", "header", "is empty")),
])
def test_bad_template_or_readings_exit_2(run_cli, batch_files, file, text, names):
    template, readings, _ = batch_files
    (template if file == "template" else readings).write_text(text, encoding="utf-8")
    code, stdout, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code == 2 and stdout == ""
    assert err.count("\n") == 1 and err.startswith("placer: error: ")
    for name in names:
        assert name in err
    assert not readings.with_name("line3.results.jsonl").exists()


def test_missing_readings_file_exit_2(run_cli, template, tmp_path):
    code, _, err = run_cli("batch", template, tmp_path / "none.csv")
    assert code == 2 and "none.csv" in err and "not found" in err


def test_template_may_keep_a_correction_which_is_not_used(tmp_path, batch_files):
    template, readings, _ = batch_files
    _, plain = run_batch(template, readings, prefix=tmp_path / "plain", jobs=1)
    with_one = tmp_path / "with.toml"
    with_one.write_text(template_text([(999.0, 45.0), (5.0, 5.0)]), encoding="utf-8")
    job = read_template(with_one)
    assert all(p.correction_gmm == 0 for p in job.planes)
    _, kept = run_batch(with_one, readings, prefix=tmp_path / "kept", jobs=1)
    strip = [{**r, "template": None} for r in records(plain.results_jsonl)]
    assert [{**r, "template": None} for r in records(kept.results_jsonl)] == strip


def test_mass_columns_at_the_plane_radius(tmp_path, template):
    # 1_mass_g at the plane's 150 mm gives the same correction as 1_gmm = mass · 150.
    job = read_template(template)
    (tmp_path / "m.csv").write_text("serial,1_mass_g,1_angle_deg,2_gmm,2_angle_deg\n"
                                    "WM-M-1,12.5,33.0,250.0,100.0\n")
    (reading,) = read_readings(tmp_path / "m.csv", job)
    expected = 12.5 * 150.0 * complex(math.cos(math.radians(33.0)), math.sin(math.radians(33.0)))
    assert reading.corrections_gmm[0] == pytest.approx(expected, abs=1e-9)
    assert reading.line == 2 and reading.serial == "WM-M-1"


def test_template_reads_as_the_job_reader_reads_it(tmp_path):
    # read_template repeats read_job's steps; with corrections given, the two
    # must give the same job but for the corrections, which the batch zeroes.
    from dataclasses import replace

    path = tmp_path / "job.toml"
    path.write_text(template_text([(700.0, 30.0), (250.0, 200.0)]), encoding="utf-8")
    job = read_job(path)
    zeroed = replace(job, planes=tuple(replace(p, correction_gmm=0j, given_as="batch template")
                                       for p in job.planes))
    assert read_template(path) == zeroed


@pytest.fixture
def quick_files(tmp_path: Path):
    """As batch_files, with at most 3 parts on the drive side: tables of 40 000
    selections instead of 634 535, for tests where the plane's size does not matter."""
    path = tmp_path / "sf2.toml"
    path.write_text(template_text().replace("max_parts = 4", "max_parts = 3"), encoding="utf-8")
    rows = random_rows(24)
    readings = tmp_path / "line3.csv"
    readings.write_text(readings_csv(rows), encoding="utf-8")
    return path, readings, rows


# ------------------------------------------------------- numbers at the edges
HUGE = "1" + "0" * 400
CSV_NUMBER_ROWS = [
    # (1_gmm cell, message fragment); Python's float() reads the first three.
    ("1_000", "1_gmm is '1_000', not a plain number"),
    ("\u0661\u0662", "not a plain number"),          # Arabic-Indic digits
    (" 1e3 x", "not a number"),
    ("0x10", "not a number"),
    ("1e308", "1_gmm is 1e+308 (expected zero or a number between 1e-12 and 1e12"),
    ("1e400", "1_gmm is '1e400' (expected zero or a number between 1e-12 and 1e12"),
    ("-Infinity", "1_gmm is -inf"),
    ("1e-13", "1_gmm is 1e-13"),
    (HUGE, "1_gmm is '" + "1" + "0" * 39 + "...' (expected zero"),  # 40 characters echoed
    ("9" * 5000, "1_gmm is '" + "9" * 40 + "...' (expected zero"),
]


def strict_json(text: str):
    """json.loads refusing NaN and ±Infinity (RFC 8259, section 6)."""
    def refuse(constant):
        raise ValueError(f"{constant} is not JSON")

    return json.loads(text, parse_constant=refuse)


def test_csv_numbers_outside_plain_decimals_are_bad_rows(tmp_path, quick_files):
    template = quick_files[0]
    # Source for what float() accepts: Python docs, float() and PEP 515
    # (underscores); the range is placer.io.tables' (1e-12 .. 1e12).
    lines = ["serial,1_gmm,1_angle_deg,2_mass_g,2_angle_deg"]
    lines += [f"WM-N-{i:02d},{cell},10.0,2.0,20.0" for i, (cell, _) in enumerate(CSV_NUMBER_ROWS)]
    lines += ["WM-N-GOOD,+1500.,-0,.5,1.25e2", "WM-N-MASS,10.0,1.0,1e308,20.0"]
    readings = tmp_path / "edge.csv"
    readings.write_text("\n".join(lines) + "\n", encoding="utf-8")
    summary, paths = run_batch(template, readings, jobs=1)
    with paths.errors_csv.open(encoding="utf-8", newline="") as handle:
        errors = list(csv.DictReader(handle))
    assert len(errors) == len(CSV_NUMBER_ROWS) + 1 and summary.solved == 1
    for error, (_, fragment) in zip(errors, CSV_NUMBER_ROWS):
        assert fragment in error["message"], error["message"]
    # 1e308 g at 120 mm would be an infinite correction: refused at the reader.
    assert errors[-1]["serial"] == "WM-N-MASS" and "2_mass_g is 1e+308" in errors[-1]["message"]
    (good,) = records(paths.results_jsonl)
    # +1500. at -0 degrees; 0.5 g at the free side's 120 mm at 125 degrees (by hand).
    assert good["planes"][0]["correction_gmm"] == 1500.0
    assert good["planes"][1]["correction_gmm"] == pytest.approx(60.0, rel=1e-12)
    assert good["planes"][1]["correction_angle_deg"] == pytest.approx(125.0, abs=1e-9)
    for line in paths.results_jsonl.read_text(encoding="utf-8").splitlines():
        strict_json(line)
    strict_json(paths.summary_json.read_text(encoding="utf-8"))


def test_json_lines_numbers_at_the_edges_are_bad_rows(tmp_path, quick_files):
    template = quick_files[0]
    def row(serial, first):
        return f'{{"serial": "{serial}", "planes": [{{"gmm": {first}, "angle_deg": 1.0}}, ' \
               '{"gmm": 10.0, "angle_deg": 2.0}]}'

    lines = [row("WM-J-01", HUGE), row("WM-J-02", "9" * 5000), "[" * 100_000,
             row("WM-J-04", "1e400"), row("WM-J-05", '"12.5"'), row("WM-J-06", "NaN"),
             row("WM-J-07", "-0"), row("WM-J-08", "1e-300"), '{"serial": "WM-J-09", "planes": '
             + "[" * 5000]
    readings = tmp_path / "edge.jsonl"
    readings.write_text("\n".join(lines) + "\n", encoding="utf-8")
    summary, paths = run_batch(template, readings, jobs=1)
    with paths.errors_csv.open(encoding="utf-8", newline="") as handle:
        errors = {int(e["line"]): e["message"] for e in csv.DictReader(handle)}
    assert "planes[1].gmm is a whole number of 401 digits" in errors[1]
    assert "planes[1].gmm is a whole number of 5000 digits" in errors[2]
    assert "nested too deeply" in errors[3]
    assert "planes[1].gmm is 1e400 (expected zero or a number" in errors[4]
    assert "is the text '12.5' (expected a JSON number" in errors[5]
    assert "planes[1].gmm is nan" in errors[6]
    assert "planes[1].gmm is 1e-300" in errors[8]
    assert 9 in errors and sorted(errors) == [1, 2, 3, 4, 5, 6, 8, 9]
    (zero,) = records(paths.results_jsonl)  # -0 is zero: no parts, no residual
    assert zero["serial"] == "WM-J-07" and zero["planes"][0]["part_count"] == 0
    assert zero["planes"][0]["residual_gmm"] == 0.0 and summary.errors == 8


def test_outputs_are_strict_json_even_for_a_non_finite_value():
    # json.dumps writes float("inf") as Infinity, which RFC 8259 forbids;
    # json_text writes null instead.
    from placer.io.values import json_text

    text = json_text({"residual_gmm": float("inf"), "x": [float("nan"), -0.0, 1.5]})
    assert strict_json(text) == {"residual_gmm": None, "x": [None, -0.0, 1.5]}
    from placer.io.batchrecords import csv_row

    assert csv_row({"serial": "S", "within_tolerance": None, "planes": [
        {"parts": "", "residual_gmm": None, "within_tolerance": None}]}) == ["S"] + [""] * 4


# ------------------------------------------------ per-rotor work and records
def test_no_plane_arrays_per_rotor(monkeypatch, quick_files):
    template = quick_files[0]
    # Everything but the target is built once: solving rotors must not
    # rebuild a plane's arrays (placer.engine.arrays.plane_arrays).
    import placer.batch

    job = read_template(template)
    solver = BatchSolver(job)
    solver.build_tables()

    def rebuilt(plane):
        raise AssertionError("plane_arrays called for a rotor")

    monkeypatch.setattr(placer.batch.solver, "plane_arrays", rebuilt)
    monkeypatch.setattr("placer.engine.arrays.plane_arrays", rebuilt)
    for i, (serial, planes) in enumerate(random_rows(12)):
        reading = RotorReading(i + 2, serial, tuple(
            complex(g * math.cos(math.radians(a)), g * math.sin(math.radians(a)))
            for g, a in planes))
        outcome, _ = solver.solve(reading)
        assert [p.correction_gmm for p in outcome.planes] == list(reading.corrections_gmm)


def test_existing_parts_and_total_basis_as_single_jobs(tmp_path):
    # correction_basis "total": the existing parts' correction is taken off the
    # reading; the batch adds that offset to every rotor's target.  Checked
    # against each rotor solved as its own job file (read_job + solve_job).
    rotor = ('[rotor]\nname = "reworked hub"\ncorrection_basis = "total"\n')
    plane = ('[[planes]]\nname = "hub"\nradius_mm = 150.0\npositions = 12\ncapacity = 3\n'
             'catalog = "washers-steel"\nmax_parts = 3\ntolerance_gmm = 60.0\n'
             'existing = [{ position = 2, item = "M10", count = 1 }, '
             '{ position = 7, item = "M6", count = 2 }]\n')
    (tmp_path / "t.toml").write_text(rotor + plane, encoding="utf-8")
    rows = [(f"RW-{i}", [(g, a)]) for i, (g, a) in
            enumerate([(0.0, 0.0), (1200.0, 30.0), (3100.0, 200.0), (450.0, 300.0)])]
    (tmp_path / "r.csv").write_text(readings_csv(rows, "serial,1_gmm,1_angle_deg"),
                                    encoding="utf-8")
    _, paths = run_batch(tmp_path / "t.toml", tmp_path / "r.csv", jobs=1)
    for record, (_, corrections) in zip(records(paths.results_jsonl), rows):
        gmm, angle = corrections[0]
        (tmp_path / "one.toml").write_text(
            rotor + plane + f"correction = {{ gmm = {gmm!r}, angle_deg = {angle!r} }}\n",
            encoding="utf-8")
        want = solve_job(read_job(tmp_path / "one.toml")).planes[0].chosen
        got = record["planes"][0]
        assert got["residual_gmm"] == pytest.approx(want.residual_gmm, abs=1e-9)
        assert [(p["position"], p["item"], p["count"], p["action"]) for p in got["fitted"]] \
            == [(p.position, p.item, p.count, p.action) for p in want.parts]


def test_records_carry_the_input(tmp_path, quick_files):
    from placer.batch import reading_digest

    template, readings, rows = quick_files
    _, paths = run_batch(template, readings, jobs=1)
    for record, (serial, planes) in zip(records(paths.results_jsonl), rows):
        vectors = [complex(g * math.cos(math.radians(a)), g * math.sin(math.radians(a)))
                   for g, a in planes]
        assert record["input"] == reading_digest(vectors)
        for plane, (gmm, angle) in zip(record["planes"], planes):
            assert plane["correction_gmm"] == pytest.approx(gmm, rel=1e-12, abs=1e-12)
            if gmm:
                assert plane["correction_angle_deg"] == pytest.approx(angle % 360, abs=1e-9)
    # The digest tells apart values that differ in the last bit only.
    assert reading_digest([1.0 + 0j]) != reading_digest([math.nextafter(1.0, 2.0) + 0j])


# ----------------------------------------------------------- resume, refused
@pytest.mark.parametrize("change, fragment", [
    (lambda rows: [(s, [(g + 0.01, a), p2]) if i == 3 else (s, [(g, a), p2])
                   for i, (s, [(g, a), p2]) in enumerate(rows)],
     "rotor WM-SF2-0003 has other corrections"),
    (lambda rows: [r for i, r in enumerate(rows) if i != 5],
     "rotor WM-SF2-0005 is no longer in the readings file"),
    (lambda rows: [(s, [(-1.0, a), p2]) if i == 2 else (s, [(g, a), p2])
                   for i, (s, [(g, a), p2]) in enumerate(rows)],
     "rotor WM-SF2-0002 is now a bad row"),
])
def test_resume_refuses_rows_changed_since(run_cli, tmp_path, quick_files, change, fragment):
    template, readings, rows = quick_files
    code, _, err = run_cli("batch", template, readings, "--jobs", "1")
    assert code in (0, 1) and err == ""
    outputs = sorted(tmp_path.glob("line3.results*"))
    before = {p: p.read_bytes() for p in outputs}
    readings.write_text(readings_csv(change(rows)), encoding="utf-8")
    code, out, err = run_cli("batch", template, readings, "--jobs", "1", "--resume")
    assert code == 2 and out == "" and err.count("\n") == 1
    assert fragment in err and "line3.results.jsonl" in err and "--force" in err
    assert {p: p.read_bytes() for p in outputs} == before  # nothing touched


def test_resume_accepts_the_same_numbers_written_otherwise(tmp_path, quick_files):
    template, readings, rows = quick_files
    _, paths = run_batch(template, readings, jobs=1)
    before = paths.results_jsonl.read_bytes()
    # 1500.5 written as " 1500.500": the same floats, so nothing to redo.
    lines = readings_csv(rows).splitlines()
    lines[1:] = [",".join([cells[0]] + [f" {cell}00 " for cell in cells[1:]])
                 for cells in (line.split(",") for line in lines[1:])]
    readings.write_text("\n".join(lines) + "\n", encoding="utf-8")
    again, _ = run_batch(template, readings, jobs=1, resume=True)
    assert again.already_done == len(rows) and paths.results_jsonl.read_bytes() == before


# ----------------------------------------------------------- jobs and cores
def test_jobs_capped_at_the_usable_cores(monkeypatch, tmp_path, quick_files):
    # Python docs: os.sched_getaffinity(0) is the set of CPUs this process may run on.
    import os

    import placer.io.batchresults
    from placer.batch import usable_cores

    if hasattr(os, "sched_getaffinity"):
        assert usable_cores() == len(os.sched_getaffinity(0))
    template, readings, rows = quick_files
    monkeypatch.setattr(placer.io.batchresults, "usable_cores", lambda: 2)
    notes: list[str] = []
    summary, _ = run_batch(template, readings, jobs=64, note=notes.append)
    from placer.cli import FLAGS
    from placer.errors import fill_options

    assert [fill_options(n, FLAGS) for n in notes] == [
        "placer batch: --jobs 64 capped at 2, the cores this process may use"]
    assert summary.jobs == 2
    one, _ = run_batch(template, readings, prefix=tmp_path / "one", jobs=1, note=notes.append)
    assert one.jobs == 1 and len(notes) == 1


def test_jobs_note_and_count_on_the_command_line(run_cli, monkeypatch, quick_files):
    import placer.io.batchresults

    template, readings, rows = quick_files
    monkeypatch.setattr(placer.io.batchresults, "usable_cores", lambda: 1)
    code, out, err = run_cli("batch", template, readings, "--jobs", "8")
    assert code in (0, 1)
    assert err == "placer batch: --jobs 8 capped at 1, the cores this process may use\n"
    assert "with 1\n  process(es)" in out or "with 1 process(es)" in out


# ---------------------------------------------------------------- progress
class _Clock:
    """A clock the test moves by hand [s]."""

    def __init__(self) -> None:
        self.now = 0.0

    def __call__(self) -> float:
        return self.now


def test_progress_plain_lines_when_piped():
    # The rate counts from the first call (tables built), not from the start.
    import io

    from placer.views.terminal.batch import progress_display

    clock, stream = _Clock(), io.StringIO()
    with progress_display(stream, every_s=10.0, clock=clock) as progress:
        clock.now = 100.0          # 100 s building the tables
        progress(0, 50)
        clock.now = 105.0
        progress(10, 50)           # under 10 s since the last line: quiet
        clock.now = 110.0
        progress(20, 50)           # 20 rotors in 10 s: 2/s, 30 left: 15 s
        clock.now = 115.0
        progress(30, 50)
    assert stream.getvalue() == "placer batch: 20/50 rotors, 2 rotors/s, about 15 s left\n"


def test_progress_bar_on_a_forced_terminal():
    import io

    from placer.views.terminal.batch import progress_display

    clock, stream = _Clock(), io.StringIO()
    with progress_display(stream, terminal=True, clock=clock) as progress:
        clock.now = 50.0
        progress(0, 40)
        clock.now = 51.0
        progress(10, 40)
        clock.now = 52.0
        progress(40, 40)           # 40 rotors in 2 s after the tables: 20/s
    text = stream.getvalue()
    assert "\x1b[" in text                        # terminal control codes: drawn as a bar
    assert "40/40" in text and "20 rotors/s" in text
    assert "━" in text                            # rich's bar


@pytest.mark.parametrize("jobs", [1, 2])
def test_progress_called_first_when_the_tables_are_built(monkeypatch, tmp_path, quick_files,
                                                         jobs):
    # (0, n) once the searches and tables exist, before any rotor; then one call per rotor.
    template, readings, rows = quick_files
    calls: list[tuple[int, int, bool]] = []
    built = BatchSolver.build_tables
    state = {"built": False}

    def build(self):
        built(self)
        state["built"] = True

    monkeypatch.setattr(BatchSolver, "build_tables", build)
    run_batch(template, readings, prefix=tmp_path / f"p{jobs}", jobs=jobs,
              progress=lambda done, total: calls.append((done, total, state["built"])))
    assert calls[0] == (0, len(rows), True)
    assert [c[:2] for c in calls[1:]] == [(k, len(rows)) for k in range(1, len(rows) + 1)]


def test_batch_piped_prints_no_progress_for_a_short_run(run_cli, quick_files):
    template, readings, _ = quick_files
    code, out, err = run_cli("batch", template, readings, "--jobs", "1")
    assert err == "" and out.startswith("placer batch: ") and code in (0, 1)
    assert all(line.startswith("  ") for line in out.splitlines()[1:])   # one wrapped summary


# -------------------------------------------------------- a real interrupt
def test_interrupted_with_two_jobs_then_resumed(tmp_path):
    # A real Ctrl-C (SIGINT) to `placer batch --jobs 2` once some rows are
    # written, then --resume: the results must equal an uninterrupted run's,
    # each rotor exactly once.
    import os
    import signal
    import subprocess
    import sys
    import time

    (tmp_path / "drawer.toml").write_text(
        'name = "test drawer"\n[[items]]\nid = "S"\nmass_g = 2.0\n[[items]]\nid = "M"\n'
        'mass_g = 3.5\n[[items]]\nid = "L"\nmass_g = 7.0\n', encoding="utf-8")
    template = tmp_path / "t.toml"
    template.write_text('[rotor]\nname = "interrupted"\n[[planes]]\nname = "rim"\n'
                        'radius_mm = 80.0\npositions = 8\ncapacity = 2\ncatalog = "drawer.toml"\n'
                        'max_parts = 4\ntolerance_gmm = 30.0\n', encoding="utf-8")
    rng = random.Random(23)
    rows = [(f"IR-{i:05d}", [(round(rng.uniform(0, 2000), 2), round(rng.uniform(0, 360), 1))])
            for i in range(4000)]
    readings = tmp_path / "rows.csv"
    readings.write_text(readings_csv(rows, "serial,1_gmm,1_angle_deg"), encoding="utf-8")
    prefix = tmp_path / "cut"
    jsonl = Path(str(prefix) + ".jsonl")
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "COLUMNS")}
    command = [sys.executable, "-m", "placer", "batch", str(template), str(readings),
               "--out", str(prefix), "--jobs", "2"]
    proc = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=env)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None:
        if jsonl.exists() and jsonl.read_bytes().count(b"\n") >= 100:
            break
        time.sleep(0.005)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, (proc.returncode, err)
    assert err.endswith("placer: interrupted\n") and "Traceback" not in err
    written = jsonl.read_bytes().count(b"\n")
    assert 100 <= written < len(rows)  # stopped part-way
    assert not Path(str(prefix) + ".summary.json").exists()
    resumed, _ = run_batch(template, readings, prefix=prefix, jobs=2, resume=True)
    assert resumed.already_done >= 100 and resumed.solved == len(rows)
    _, full = run_batch(template, readings, prefix=tmp_path / "full", jobs=2)
    got = records(jsonl)
    assert [r["serial"] for r in got] == [serial for serial, _ in rows]  # none lost, none twice
    assert got == records(full.results_jsonl)


def test_parts_used_per_drawer_across_merged_catalogues(tmp_path):
    # Plane B names the drawer inside a merged list: the stores still see one line
    # per drawer item (by reasoning: one drawer file, one shelf).
    (tmp_path / "drawer.toml").write_text(
        'name = "shared drawer"\n[[items]]\nid = "L"\nmass_g = 10.0\n'
        '[[items]]\nid = "S"\nmass_g = 2.0\n')
    (tmp_path / "holes.toml").write_text(
        'name = "holes"\n[[items]]\nid = "H"\nmass_g = -1.0\nremoves = true\n')
    planes = []
    for name, catalog in (("A", '"drawer.toml"'), ("B", '["drawer.toml", "holes.toml"]')):
        planes.append(f'[[planes]]\nname = "{name}"\nradius_mm = 100.0\npositions = 6\n'
                      f"catalog = {catalog}\nmax_parts = 2\n")
    (tmp_path / "t.toml").write_text('[rotor]\nname = "merged"\n' + "\n".join(planes))
    rows = [("R1", [(1000.0, 0.0), (1000.0, 180.0)]), ("R2", [(1000.0, 60.0), (1000.0, 240.0)])]
    (tmp_path / "r.csv").write_text(readings_csv(rows))
    summary, _ = run_batch(tmp_path / "t.toml", tmp_path / "r.csv", jobs=1)
    keys = [(p.catalog, p.item) for p in summary.parts_used]
    assert len(keys) == len(set(keys))
    assert ("shared drawer", "L") in keys
    assert all(catalog in ("shared drawer", "holes") for catalog, _ in keys)


@pytest.mark.parametrize("positions, catalog, grade, max_parts, seed", [
    (12, "washers-steel", '"G6.3"', 4, 11),
    (36, "rim-clips-5g", '"G6.3"', 4, 12),
    (24, "rim-clips-5g", '"G2.5"', 5, 13),
    (12, "washers-steel", None, 4, 14),
])
def test_batch_plan_is_the_single_solve_plan(tmp_path, positions, catalog, grade, max_parts,
                                             seed):
    # The batch searches only up to the count it prints (no trade-off table): every
    # rotor's plan, its kind (least residual or lightest) and residual must still be the
    # plan `placer solve` chooses for that rotor alone (read_job + solve_job, the whole
    # trade-off).  Seeded random rotors, with and without a tolerance.
    rotor = ('[rotor]\nname = "Wrenmoor test hub"\nmass_kg = 8.0\nservice_rpm = 1480\n'
             + (f"grade = {grade}\n" if grade else ""))
    plane = (f'[[planes]]\nname = "hub"\nradius_mm = 150.0\npositions = {positions}\n'
             f'capacity = 3\ncatalog = "{catalog}"\nmax_parts = {max_parts}\n')
    (tmp_path / "t.toml").write_text(rotor + "\n" + plane, encoding="utf-8")
    solver = BatchSolver(read_template(tmp_path / "t.toml"))
    reach = (11.30 if catalog == "washers-steel" else 60.0) * 150.0
    rng = random.Random(seed)
    for i in range(20):
        gmm, angle = round(rng.uniform(0.0, 3.0 * reach), 2), round(rng.uniform(0.0, 360.0), 1)
        (tmp_path / "one.toml").write_text(
            rotor + "\n" + plane + f"correction = {{ gmm = {gmm!r}, angle_deg = {angle!r} }}\n",
            encoding="utf-8")
        want = solve_job(read_job(tmp_path / "one.toml")).planes[0].chosen
        reading = RotorReading(i + 2, f"R{i}", (gmm * complex(math.cos(math.radians(angle)),
                                                                math.sin(math.radians(angle))),))
        got = solver.solve(reading)[0].planes[0].option
        assert [(p.position, p.item, p.count) for p in got.parts] == \
            [(p.position, p.item, p.count) for p in want.parts]
        assert got.kind == want.kind
        assert got.residual_gmm == pytest.approx(want.residual_gmm, abs=1e-9)
