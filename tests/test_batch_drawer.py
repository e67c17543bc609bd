"""A production line draws its drawers down rotor by rotor, in input order.

Each rotor is planned with what the rotors before it left.  Checked against the job
pipeline (``placer solve`` on a job file holding the rotor's correction, with the
catalogue's stock set by hand to what is left), against one process versus two, and
against an interrupted batch carried on with ``--resume``.  Invented data: a 12-hole hub
and a drawer of 2 heavy washers that the line uses up.
"""

from __future__ import annotations

import json
from pathlib import Path

from placer.batch import RotorReading, solve_readings
from placer.geometry import polar
from placer.io.batchresults import read_template, run_batch
from placer.io.batchresume import cut_to
from placer.io.jobfile import read_job
from placer.solve import solve_job

DRAWER = """name = "line drawer"
[[items]]
id = "H"
mass_g = 9.0
stock = {heavy}
[[items]]
id = "M"
mass_g = 4.0
[[items]]
id = "S"
mass_g = 1.5
"""

TEMPLATE = """[rotor]
name = "line hub"
[[planes]]
name = "hub"
radius_mm = 150.0
positions = 12
capacity = 2
catalog = "drawer.toml"
max_parts = 3
tolerance_gmm = 120.0
"""

ROWS = [("R1", 14.0, 30.0), ("R2", 13.0, 200.0), ("R3", 12.5, 95.0), ("R4", 15.0, 310.0),
        ("R5", 11.0, 150.0), ("R6", 13.5, 20.0)]
"""Serial, correction [g at 150 mm], angle [deg]: each rotor wants a 9 g washer."""


def write(folder: Path, heavy: int = 2) -> tuple[Path, Path]:
    (folder / "drawer.toml").write_text(DRAWER.format(heavy=heavy), encoding="utf-8")
    (folder / "hub.toml").write_text(TEMPLATE, encoding="utf-8")
    (folder / "rows.csv").write_text(
        "serial,1_mass_g,1_angle_deg\n" + "".join(f"{s},{m},{a}\n" for s, m, a in ROWS),
        encoding="utf-8")
    return folder / "hub.toml", folder / "rows.csv"


def plans(outcomes) -> list[list[tuple]]:
    return [[(p.position, p.item, p.count) for p in o.planes[0].option.parts]
            for o in outcomes]


def test_each_rotor_gets_what_the_rotors_before_it_left(tmp_path):
    template_path, _ = write(tmp_path)
    template = read_template(template_path)
    readings = [RotorReading(i + 2, s, (polar(m * 150.0, a),)) for i, (s, m, a) in
                enumerate(ROWS)]
    outcomes = list(solve_readings(template, readings, jobs=1))
    left = 2
    changed_from = None
    for outcome, (serial, mass, angle) in zip(outcomes, ROWS):
        # The job pipeline with the catalogue's stock set by hand to what is left.
        (tmp_path / "drawer.toml").write_text(DRAWER.format(heavy=left), encoding="utf-8")
        (tmp_path / "job.toml").write_text(TEMPLATE + f"correction = {{ mass_g = {mass}, "
                                           f"angle_deg = {angle} }}\n", encoding="utf-8")
        expected = solve_job(read_job(tmp_path / "job.toml")).planes[0].chosen
        got = outcome.planes[0].option
        assert [(p.position, p.item, p.count) for p in got.parts] == \
            [(p.position, p.item, p.count) for p in expected.parts], serial
        heavy = sum(p.count for p in got.parts if p.item == "H")
        left -= heavy
        assert left >= 0
        assert dict(((c, i), n) for c, i, n in outcome.drawer_left)[("line drawer", "H")] == left
        if outcome.full_drawer is not None and changed_from is None:
            changed_from = serial
    # The drawer of 2 heavy washers runs out: later rotors are planned without it, and
    # say what a full drawer would have given.
    assert left == 0 and changed_from is not None
    first = [s for s, *_ in ROWS].index(changed_from)
    assert all(o.full_drawer is None for o in outcomes[:first])
    full = outcomes[first].full_drawer[0].option
    assert any(p.item == "H" for p in full.parts)
    assert not any(p.item == "H" for p in outcomes[first].planes[0].option.parts)


def test_two_processes_give_what_one_gives(tmp_path):
    template_path, _ = write(tmp_path)
    template = read_template(template_path)
    readings = [RotorReading(i + 2, s, (polar(m * 150.0, a),)) for i, (s, m, a) in
                enumerate(ROWS)]
    one = list(solve_readings(template, readings, jobs=1))
    two = list(solve_readings(template, readings, jobs=2, chunk_rows=1))
    assert plans(one) == plans(two)
    assert [o.drawer_left for o in one] == [o.drawer_left for o in two]
    assert [o.full_drawer is None for o in one] == [o.full_drawer is None for o in two]


def rotors(path) -> list[dict]:
    """The rotors of a results log (its lines without the run's own key)."""
    lines = [json.loads(line) for line in path.read_text().splitlines()]
    return [line for line in lines if "placer_batch" not in line]


def test_resume_keeps_the_drawer_where_it_was(tmp_path):
    template, readings = write(tmp_path)
    whole, paths = run_batch(template, readings, tmp_path / "whole", jobs=1)
    expected = rotors(paths.results_jsonl)
    assert whole.short_from is not None
    assert [(p.item, p.count) for p in whole.drawers_left] == [("H", 0)]
    # Interrupted after three rotors (their lines kept), then carried on.
    _, part = run_batch(template, readings, tmp_path / "part", jobs=1)
    lines = part.results_jsonl.read_bytes().split(b"\n")
    cut_to(part.results_jsonl, len(b"\n".join(lines[:4])) + 1)   # the run's header, 3 rotors
    table = part.results_csv.read_bytes().splitlines(keepends=True)
    part.results_csv.write_bytes(b"".join(table[:1 + 3]))     # its table as last written
    summary, part = run_batch(template, readings, tmp_path / "part", jobs=1, resume=True)
    assert summary.already_done == 3
    again = rotors(part.results_jsonl)
    assert again == expected
    assert summary.short_from == whole.short_from
    assert summary.drawers_left == whole.drawers_left


def test_random_line_drawn_down_against_single_jobs(tmp_path):
    # A longer seeded line whose six drawers empty one after another: the batch plans
    # with a search built without the items that ran out; each rotor's plan must be the
    # plan of its own job file (placer solve) with the catalogue's stock set by hand to
    # what the rotors before it left.
    import random

    masses = [2.0, 3.5, 5.0, 8.0, 12.0, 20.0]
    stock = [6, 5, 4, 4, 3, 2]

    def catalogue(left: list[int]) -> str:
        return 'name = "line clips"\n' + "".join(
            f'[[items]]\nid = "C{i}"\nmass_g = {m}\nstock = {n}\n'
            for i, (m, n) in enumerate(zip(masses, left)))

    template = TEMPLATE.replace("positions = 12", "positions = 24").replace(
        "max_parts = 3", "max_parts = 4").replace('"drawer.toml"', '"clips.toml"')
    (tmp_path / "clips.toml").write_text(catalogue(stock), encoding="utf-8")
    (tmp_path / "hub.toml").write_text(template, encoding="utf-8")
    rng = random.Random(31)
    rows = [(f"L{i}", round(rng.uniform(2.0, 45.0), 2), round(rng.uniform(0.0, 360.0), 1))
            for i in range(30)]
    readings = [RotorReading(i + 2, s, (polar(m * 150.0, a),)) for i, (s, m, a) in
                enumerate(rows)]
    outcomes = list(solve_readings(read_template(tmp_path / "hub.toml"), readings, jobs=1))
    left = list(stock)
    for outcome, (serial, mass, angle) in zip(outcomes, rows):
        (tmp_path / "clips.toml").write_text(catalogue(left), encoding="utf-8")
        (tmp_path / "job.toml").write_text(template + f"correction = {{ mass_g = {mass}, "
                                           f"angle_deg = {angle} }}\n", encoding="utf-8")
        expected = solve_job(read_job(tmp_path / "job.toml")).planes[0].chosen
        got = outcome.planes[0].option
        assert [(p.position, p.item, p.count) for p in got.parts] == \
            [(p.position, p.item, p.count) for p in expected.parts], serial
        for p in got.parts:
            left[int(p.item[1:])] -= p.count
        assert min(left) >= 0
    # The drawers ran out along the line (the narrowed searches were used).
    assert sum(left) < sum(stock) // 2 and left.count(0) >= 2


def test_a_rotor_planned_twice_is_two_fresh_plans(tmp_path):
    # A rotor the drawer cannot supply is planned twice, the second plan reusing what the
    # first built (its planes, targets and aims).  Each must equal the plan of a fresh
    # solver that never saw the rotor before: full drawers, then the drawer left.
    from placer.batch.solver import BatchSolver, Drawer, draw_down

    template_path, _ = write(tmp_path, heavy=1)
    template = read_template(template_path)
    readings = [RotorReading(i + 2, s, (polar(m * 150.0, a),)) for i, (s, m, a) in
                enumerate(ROWS)]
    solver, drawer = BatchSolver(template), Drawer(template)
    twice = 0
    for reading in readings:
        before = dict(drawer.left)
        outcome = draw_down(solver, reading, drawer)
        full, _ = BatchSolver(template).solve(reading)
        if outcome.full_drawer is None:
            assert outcome.planes == full.planes
            continue
        twice += 1
        left = Drawer(template)
        left.left = before
        again, _ = BatchSolver(template).solve(reading, left)
        assert outcome.full_drawer == full.planes
        assert outcome.planes == again.planes
        assert outcome.drawer_left == drawer.state()
    assert twice >= 3
