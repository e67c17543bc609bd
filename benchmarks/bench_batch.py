"""Throughput of ``placer batch``: rotors per second per core.

Run from the repository root::

    python benchmarks/bench_batch.py [--rows N] [--scale-rows N] [--seed S] [--quick]

An invented Wrenmoor production line: one fan-hub type, a 12-hole bolt circle
at 150 mm, the 5 steel washers of the bundled catalogue "washers-steel", up to
3 washers per bolt, plans of up to 4 parts, one correction plane, grade G6.3
(8 kg, 1480 r/min).  N seeded rows are written as a readings CSV (magnitudes
uniform between 0 and 3 times the largest washer's g·mm, angles uniform) and
the batch is run in this process by ``placer.io.batchresults.run_batch``, as
``placer batch`` runs it, with ``jobs`` = 1, 2, ... up to the cores this
process may use (``placer.batch.usable_cores``: its CPU affinity).  The
time is the whole run: reading the files, building the tables (once, in
the parent, which the forked workers share), starting the workers, solving,
writing the results row by row.  Rotors per second per core is rows / time
/ jobs; the aim is at least 500.  Speed-up is the rate with ``jobs`` over
the rate with 1; efficiency is speed-up / jobs (1.00: every core fully
used); "CPU use" is the CPU time of this process and its workers over
wall time × jobs, which shows whether the cores were busy or waiting.

Scaling: the same line with 12, 36 and 72 positions and 5 sizes
("washers-steel") or 12 sizes ("rim-clips-5g", 5 to 60 g), capacity 3, up to
4 parts, ``jobs=1``: the batch rate, and the time of one front
(``BatchSolver.solve`` alone, the median) beside the time of the
first rotor, which pays for building the grid of pairs (both
over the first 40 rows; "steady /s" is 1000 / median).  "rotors/s" is the
whole batch of that case, first rotor included (``--cases`` picks some of
them).  "per CPU-s" is rows over the CPU time of this process and its
workers: it is less disturbed than the wall-clock rate by other work on the
machine, though a busy machine slows that too.

Printing is the point of this script; it is not part of the package.
Timings depend on the machine and on whatever else runs on it.
"""

from __future__ import annotations

import argparse
import os
import random
import resource
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
SOURCE = Path(sys.argv[sys.argv.index("--source") + 1]).resolve() if "--source" in sys.argv \
    else REPO
"""The checkout placer is imported from (``--source DIR``; default this one)."""
if str(SOURCE) not in sys.path:
    sys.path.insert(0, str(SOURCE))

import scipy.spatial  # noqa: E402,F401  (imported here so no timing pays for it)

from placer.batch import BatchSolver, RotorReading, usable_cores  # noqa: E402
from placer.io.batchreadings import read_readings
from placer.io.batchresults import read_template, run_batch  # noqa: E402
from placer.io.catalogfile import read_catalog, resolve_catalog  # noqa: E402

TARGET_PER_CORE = 500.0
"""Rotors per second per core the batch is meant to reach on the 12-hole line."""
SCALING_TARGETS = {("12", "5"): 5000.0, ("36", "12"): 300.0, ("72", "12"): 60.0}
"""Rotors per CPU-second on one core the scaling cases are meant to reach (issue 10)."""


def template_text(positions: int, catalog: str) -> str:
    return f"""[rotor]
name = "Wrenmoor fan hub FH-{positions}"
mass_kg = 8.0
service_rpm = 1480
grade = "G6.3"

[[planes]]
name = "bolt circle"
radius_mm = 150.0
positions = {positions}
capacity = 3
catalog = "{catalog}"
max_parts = 4
"""


DRAWER = ["bundled"]
"""Which drawer the line draws on (``--drawer``): "bundled", the bundled catalogue with
its stock counts, which runs dry after some dozens of rotors (from then on every rotor is
planned twice: with the drawer left, and with a full one, both recorded); "refilled",
the same sizes without stock counts, as a line whose drawer is kept filled."""


def drawer_of(folder: Path, catalog: str) -> str:
    """The catalogue the template names: the bundled name, or a copy without stock counts."""
    if DRAWER[0] == "bundled":
        return catalog
    source = resolve_catalog(catalog, REPO, "bench", "catalog")
    copy = folder / f"{catalog}-refilled.toml"
    copy.write_text("".join(line for line in source.read_text(encoding="utf-8")
                            .splitlines(keepends=True) if not line.startswith("stock")),
                    encoding="utf-8")
    return str(copy)


def largest_gmm(catalog: str) -> float:
    items = read_catalog(resolve_catalog(catalog, REPO, "bench", "catalog")).items
    return max(item.mass_g for item in items) * 150.0


def readings_text(rows: int, seed: int, reach_gmm: float) -> str:
    rng = random.Random(seed)
    lines = ["serial,1_gmm,1_angle_deg"]
    for i in range(rows):
        lines.append(f"WM-FH-{i:06d},{rng.uniform(0.0, 3.0 * reach_gmm):.2f},"
                     f"{rng.uniform(0.0, 360.0):.2f}")
    return "\n".join(lines) + "\n"


def _cpu_s() -> float:
    """CPU time of this process and of its finished children (the workers) [s]."""
    own = resource.getrusage(resource.RUSAGE_SELF)
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def batch_rate(folder: Path, positions: int, catalog: str, rows: int, seed: int,
               jobs: int) -> tuple[float, float, float]:
    """(wall seconds for the whole batch, rotors/s per core, rotors per CPU-second)."""
    template = folder / f"fh{positions}-{catalog}.toml"
    template.write_text(template_text(positions, drawer_of(folder, catalog)), encoding="utf-8")
    readings = folder / f"fh{positions}-{catalog}-{rows}.csv"
    readings.write_text(readings_text(rows, seed, largest_gmm(catalog)), encoding="utf-8")
    started, cpu = time.perf_counter(), _cpu_s()
    summary, _ = run_batch(template, readings, prefix=folder / f"out-{positions}-{catalog}-{jobs}",
                           jobs=jobs, force=True)
    elapsed, cpu = time.perf_counter() - started, _cpu_s() - cpu
    assert summary.solved == rows and summary.errors == 0
    return elapsed, rows / elapsed / jobs, rows / cpu


def front_times(folder: Path, positions: int, catalog: str, rows: int,
                count: int) -> tuple[float, float]:
    """(first rotor incl. building the tables, median of the next ones) [ms], wall clock."""
    template = read_template(folder / f"fh{positions}-{catalog}.toml")
    readings = [r for r in read_readings(folder / f"fh{positions}-{catalog}-{rows}.csv", template)
                if isinstance(r, RotorReading)][:count]
    solver = BatchSolver(template)
    times = []
    for reading in readings:
        started = time.perf_counter()
        solver.solve(reading)
        times.append(time.perf_counter() - started)
    return times[0] * 1e3, statistics.median(times[1:]) * 1e3


def _burn(count: int) -> int:
    total = 0
    for i in range(count):
        total += i * i
    return total


def machine_scaling(processes: int, count: int = 5_000_000) -> float:
    """How much more work ``processes`` processes do than one, on equal pure-Python loops.

    ``processes`` on free cores; less where the cores are shared.  Tells how
    far the batch's speed-up can go on this machine at this moment.
    """
    import multiprocessing

    started = time.perf_counter()
    _burn(count)
    one = time.perf_counter() - started
    with multiprocessing.Pool(processes) as pool:
        started = time.perf_counter()
        pool.map(_burn, [count] * processes)
        many = time.perf_counter() - started
    return processes * one / many


def scaling_table(folder: Path, rows: int, seed: int, cores: int) -> None:
    """The 12-hole line with jobs 1 .. cores: rate, per core, speed-up, efficiency."""
    print(f"{'jobs':>4} {'wall s':>8} {'rotors/s':>9} {'per core':>9} {'per CPU-s':>10} "
          f"{'speed-up':>8} {'effic.':>7} {'CPU use':>8}  aim >= {TARGET_PER_CORE:.0f}/s per core")
    base = None
    for jobs in range(1, cores + 1):
        elapsed, per_core, per_cpu = batch_rate(folder, 12, "washers-steel", rows, seed, jobs)
        rate = rows / elapsed
        base = rate if base is None else base
        speedup = rate / base
        cpu_use = (rows / per_cpu) / (elapsed * jobs)
        verdict = "pass" if per_core >= TARGET_PER_CORE else "FAIL"
        print(f"{jobs:>4} {elapsed:>8.2f} {rate:>9.0f} {per_core:>9.0f} {per_cpu:>10.0f} "
              f"{speedup:>8.2f} {speedup / jobs:>7.2f} {cpu_use:>8.0%}  {verdict}")


def side_by_side(args: argparse.Namespace, argv: list[str]) -> int:
    """The scaling table of this checkout and of ``--baseline``, alternating, in fresh
    processes, and the ratio of their rates."""
    import subprocess

    sources = {"base": str(Path(args.baseline).resolve()), "new": str(REPO)}
    print("$ python benchmarks/bench_batch.py " + " ".join(argv))
    rates: dict[str, dict[tuple[str, str], list[float]]] = {"base": {}, "new": {}}
    per_cpu: dict[str, dict[tuple[str, str], list[float]]] = {"base": {}, "new": {}}
    for round_ in range(args.rounds):
        for engine, source in sources.items():
            command = [sys.executable, str(Path(__file__).resolve()), "--source", source,
                       "--scaling-only", "--scale-rows", str(args.scale_rows or 200),
                       "--seed", str(args.seed), "--drawer", args.drawer,
                       "--cases", ",".join(args.cases)]
            done = subprocess.run(command, capture_output=True, text=True, check=True)
            print(f"\n[{engine}, round {round_ + 1}] placer from {source}")
            print(done.stdout.rstrip())
            for line in done.stdout.splitlines():
                cells = line.split()
                if len(cells) == 8 and cells[0].isdigit():
                    rates[engine].setdefault((cells[0], cells[1]), []).append(float(cells[6]))
                    per_cpu[engine].setdefault((cells[0], cells[1]), []).append(float(cells[7]))
    print(f"\nrotors/s on one core (whole batch of {args.scale_rows or 200} rows, drawer "
          f"{args.drawer}, median over {args.rounds} round(s)): wall clock, and per CPU-second "
          "of the process")
    print(f"{'positions':>9} {'sizes':>5} {'base':>9} {'new':>9} {'new/base':>8} "
          f"{'base CPU':>9} {'new CPU':>9} {'new/base':>8} {'target':>7}")
    for key, base in rates["base"].items():
        new = rates["new"].get(key, [])
        b, n = statistics.median(base), statistics.median(new) if new else float("nan")
        bc = statistics.median(per_cpu["base"][key])
        nc = statistics.median(per_cpu["new"][key]) if new else float("nan")
        target = SCALING_TARGETS.get(key)
        verdict = "" if target is None else f"{target:.0f} {'pass' if nc >= target else 'FAIL'}"
        print(f"{key[0]:>9} {key[1]:>5} {b:>9.0f} {n:>9.0f} {n / b:>8.2f} {bc:>9.0f} {nc:>9.0f} "
              f"{nc / bc:>8.2f} {verdict:>7}")
    return 0


CASES = ("12x5", "36x5", "72x5", "12x12", "36x12", "72x12")
"""The scaling cases: positions x sizes (5: "washers-steel", 12: "rim-clips-5g")."""


def _cases(text: str) -> list[str]:
    cases = [c.strip() for c in text.split(",") if c.strip()]
    unknown = [c for c in cases if c not in CASES]
    if unknown or not cases:
        raise argparse.ArgumentTypeError(f"expected some of {','.join(CASES)}, not {text!r}")
    return cases


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--source", metavar="DIR", help="import placer from this checkout")
    parser.add_argument("--baseline", metavar="DIR",
                        help="another checkout of placer: its scaling table and this one's, "
                             "side by side")
    parser.add_argument("--rounds", type=int, default=3,
                        help="processes per checkout with --baseline (default 3)")
    parser.add_argument("--scaling-only", action="store_true",
                        help="only the scaling table (jobs 1)")
    parser.add_argument("--rows", type=int, default=None,
                        help="rows of the 12-hole line (default 20000; 3000 with --quick)")
    parser.add_argument("--scale-rows", type=int, default=None,
                        help="rows per scaling case (default 200; 60 with --quick)")
    parser.add_argument("--seed", type=int, default=2026, help="seed of the rows")
    parser.add_argument("--quick", action="store_true", help="fewer rows")
    parser.add_argument("--drawer", choices=("bundled", "refilled"), default="bundled",
                        help="the bundled catalogue's stock, which runs dry (default), or the "
                             "same sizes kept filled")
    parser.add_argument("--cases", type=_cases, default=list(CASES),
                        help="scaling cases to run, as POSITIONSxSIZES joined by commas "
                             f"(default all: {','.join(CASES)})")
    argv = sys.argv[1:] if argv is None else argv
    args = parser.parse_args(argv)
    DRAWER[0] = args.drawer
    if args.baseline:
        return side_by_side(args, argv)
    rows = args.rows or (3000 if args.quick else 20000)
    scale_rows = args.scale_rows or (60 if args.quick else 200)
    print("$ python benchmarks/bench_batch.py " + " ".join(argv))
    cores = usable_cores()
    print(f"cores: os.cpu_count() = {os.cpu_count()}, usable by this process = {cores}; "
          f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    if cores > 1 and not args.scaling_only:
        print(f"machine: {cores} processes do {machine_scaling(cores):.2f} times the work of "
              f"one (pure-Python loop; {cores:.2f} on {cores} free cores)")
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        if not args.scaling_only:
            print(f"\n12-hole bolt circle, 5 washer sizes, capacity 3, up to 4 parts, {rows} "
                  f"rows, seed {args.seed}")
            scaling_table(folder, rows, args.seed, cores)
        print(f"\nScaling, jobs 1, capacity 3, up to 4 parts, {scale_rows} rows per case")
        print(f"{'positions':>9} {'sizes':>5} {'placements':>10} {'first ms':>9} "
              f"{'median ms':>9} {'steady /s':>9} {'rotors/s':>9} {'per CPU-s':>10}")
        for catalog, sizes in (("washers-steel", 5), ("rim-clips-5g", 12)):
            for positions in (12, 36, 72):
                if f"{positions}x{sizes}" not in args.cases:
                    continue
                _, per_core, per_cpu = batch_rate(folder, positions, catalog, scale_rows,
                                                  args.seed, 1)
                first_ms, median_ms = front_times(folder, positions, catalog, scale_rows,
                                                  min(scale_rows, 40))
                print(f"{positions:>9} {sizes:>5} {positions * sizes:>10} {first_ms:>9.1f} "
                      f"{median_ms:>9.2f} {1000.0 / median_ms:>9.0f} {per_core:>9.0f} "
                      f"{per_cpu:>10.0f}")
    print(f"\nload average after: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
