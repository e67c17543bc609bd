"""``placer batch``: many rotors of one type against one template.

What the results are checked against:

* each rotor solved as its own job file by ``read_job`` + ``solve_job``
  (the single-job path, which builds its search afresh for every job);
* brute-force enumeration (tests/oracle.py) on a small plane;
* the plane tolerance against ISO 21940-11: U_per = 1000·G·m/ω [g·mm]
  (m in kg, ω in rad/s), half in each plane of a symmetric rotor
  (/work/shared/REFERENCES.md, "Balance quality").

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

from oracle import brute_front
from placer.batch import BatchSolver, RotorReading, solve_readings
from placer.batchfile import read_readings, read_template, run_batch
from placer.errors import InputError
from placer.jobfile import read_job
from placer.solve import plane_arrays, solve_job

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
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]


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
    arrays = plane_arrays(job.planes[0])
    rng = np.random.default_rng(11)
    for line in range(40):
        target = complex(*rng.normal(0.0, 500.0, 2))
        outcome = solver.solve(RotorReading(line, f"S{line}", (target,)))
        front = brute_front(arrays.effects, np.array([target]), arrays.capacity, arrays.stock, 3)
        within = [k for k, value in enumerate(front) if value <= 60.0]
        k = within[0] if within else 3
        plane = outcome.planes[0]
        assert plane.residual_gmm == pytest.approx(front[k], abs=1e-9)
        assert plane.option.used_parts <= k
        assert plane.within_tolerance == bool(within)


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
    jsonl.write_bytes(b"\n".join(lines[:8]) + b"\n" + lines[8][: len(lines[8]) // 2])
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
    assert stdout.startswith("placer batch: 24 rows, 24 solved") and stdout.count("\n") == 1
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


@pytest.mark.parametrize("capacity, stock", [(3, 30), (1, 2), (2, 1)])
def test_tabulated_front_equals_the_search(capacity, stock):
    # The batch's table lookup against placer.search's own head-and-pair search,
    # every entry of the front, on the 12-hole washer plane (masses of
    # catalogs/washers-steel.toml) and with capacity or stock binding.
    from placer.batch import BatchSearch

    masses = np.array([1.02, 1.83, 3.57, 6.27, 11.30])
    unit = 150.0 * np.exp(1j * np.radians(np.arange(12) * 30.0))
    effects = -(unit[:, None] * masses[None, :])[:, :, None]
    cap = np.full(12, capacity)
    cap[4] = 0  # one blocked hole
    stock_of = np.full(5, stock)
    tabulated = BatchSearch(effects, cap, stock_of, 4)
    searched = BatchSearch(effects, cap, stock_of, 4, tabulate_max=0)
    assert tabulated.tabulated and not searched.tabulated
    rng = np.random.default_rng(5)
    for _ in range(30):
        target = np.array([complex(*rng.normal(0.0, 2500.0, 2))])
        fast, slow = tabulated.front(target), searched.front(target)
        for a, b in zip(fast.entries, slow.entries):
            assert a.residual_norm == pytest.approx(b.residual_norm, abs=1e-9)
            assert a.proven and b.proven
        for entry in fast.entries:
            used_at = {}
            for position, item, count in entry.parts:
                used_at[position] = used_at.get(position, 0) + count
            assert all(n <= cap[p] for p, n in used_at.items())
            per_item = {}
            for _, item, count in entry.parts:
                per_item[item] = per_item.get(item, 0) + count
            assert all(n <= stock for n in per_item.values())


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
