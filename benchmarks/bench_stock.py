"""Shared stock planned exactly: two shop jobs, against another checkout, in one run.

Run from the repository root::

    python benchmarks/bench_stock.py [--repeat N] [--baseline DIR]

Two invented Wrenmoor jobs whose planes draw on one drawer that binds:

(a) a 16-hole disc, two planes, washers 3 g ×10, 7 g ×4, 15 g ×2 on hand,
    up to 4 washers a hole, up to 6 parts a plane;
(b) four planes of 36 holes, 12 sizes from 2 to 40 g, the three heaviest
    sizes 2 of each on hand, up to 4 parts a plane.

Each job is solved ``--repeat`` times, each in a fresh process that imports
placer from this checkout or, with ``--baseline DIR``, from another one
(``git worktree add DIR <commit>``), alternating; the time is the solve
alone (``solve_job`` after the imports and the read).  Printed per job and
checkout: median and maximum time, whether every plane was proven, and how
many different plans the runs gave (1 = the same every run).
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent

sys.path.insert(0, str(REPO / "tests"))
from test_stock import SHOP_DRAWER as DISC_DRAWER  # noqa: E402 - the job of the test
from test_stock import SHOP_JOB as DISC_JOB  # noqa: E402


SIZES_G = (2, 3, 4, 5, 6, 8, 10, 12, 16, 20, 30, 40)
CORRECTIONS = ((95.0, 20.0), (88.0, 130.0), (102.0, 250.0), (91.0, 310.0))
"""Each plane's correction [g at 210 mm] and angle [deg]: each wants the heavy sizes."""


def four_plane_files() -> tuple[str, str]:
    drawer = 'name = "impeller drawer"\n' + "".join(
        f'[[items]]\nid = "S{m}"\nmass_g = {m}.0\n' + ("stock = 2\n" if m >= 20 else "")
        for m in SIZES_G)
    job = '[rotor]\nname = "four-plane impeller"\n' + "".join(
        f'[[planes]]\nname = "plane {i + 1}"\nradius_mm = 210.0\npositions = 36\n'
        f'catalog = "drawer.toml"\nmax_parts = 4\ntolerance_gmm = 400.0\n'
        f"correction = {{ mass_g = {g}, angle_deg = {a} }}\n"
        for i, (g, a) in enumerate(CORRECTIONS))
    return drawer, job


CHILD = """
import json, sys, time
from placer.io.jobfile import read_job
from placer.solve import solve_job
job = read_job(sys.argv[1])
started = time.perf_counter()
result = solve_job(job)
elapsed = time.perf_counter() - started
print(json.dumps({"elapsed_s": elapsed,
                  "proven": all(p.optimal for p in result.planes),
                  "plans": [[(p.position, p.item, p.count) for p in plane.chosen.parts]
                            for plane in result.planes]}))
"""
"""Solves one job in a fresh process with placer from a given checkout, timing the solve
alone (read and solve in process, after imports)."""


def run(tree: Path, job: Path) -> dict:
    env = {**os.environ, "PYTHONPATH": str(tree)}
    out = subprocess.run([sys.executable, "-c", CHILD, str(job)], capture_output=True,
                         text=True, env=env, cwd=job.parent, timeout=900)
    return json.loads(out.stdout)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--baseline", type=Path, default=None)
    args = parser.parse_args()
    print("python benchmarks/bench_stock.py " + " ".join(sys.argv[1:]))
    trees = [("this checkout", REPO)] + ([("baseline", args.baseline)] if args.baseline else [])
    with tempfile.TemporaryDirectory() as folder:
        cases = []
        for label, drawer, job in (("(a) 16-hole disc, 2 planes", DISC_DRAWER, DISC_JOB),
                                   ("(b) 4 planes of 36 holes x 12", *four_plane_files())):
            case = Path(folder) / label[:3].strip("() ")
            case.mkdir()
            (case / "drawer.toml").write_text(drawer, encoding="utf-8")
            (case / "job.toml").write_text(job, encoding="utf-8")
            cases.append((label, case / "job.toml"))
        for label, job in cases:
            times = {name: [] for name, _ in trees}
            proven = {name: True for name, _ in trees}
            seen = {name: set() for name, _ in trees}
            for _ in range(args.repeat):
                for name, tree in trees:
                    data = run(tree, job)
                    times[name].append(data["elapsed_s"])
                    proven[name] &= data["proven"]
                    seen[name].add(json.dumps(data["plans"]))
            print(f"\n{label}")
            print(f"  {'checkout':<15}{'median s':>10}{'max s':>9}  proven  plans over runs")
            for name, _ in trees:
                print(f"  {name:<15}{statistics.median(times[name]):>10.2f}"
                      f"{max(times[name]):>9.2f}  {'yes' if proven[name] else 'no ':<6}  "
                      f"{len(seen[name])}")
            if len(trees) == 2:
                ratio = statistics.median(times["baseline"]) / statistics.median(
                    times["this checkout"])
                print(f"  baseline / this checkout: {ratio:.1f}x")


if __name__ == "__main__":
    main()
