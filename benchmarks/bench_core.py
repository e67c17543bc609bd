"""Benchmark of placer's exact search against a plain CP-SAT model and the hand method.

Run from the repository root::

    python benchmarks/bench_core.py [--repeat N] [--quick] [--cpsat-seconds S]
                                    [--cpsat-count N]

The default run (9 corrections per case, 3 timed repeats, CP-SAT on all 9
with a 5 s limit) takes about 2.5 minutes, most of it CP-SAT waiting for its
limit; ``--quick`` (5 corrections, 1 repeat, CP-SAT on 1 with a 2 s limit)
about 12 s.

Three invented Wrenmoor shop rotors, all with at most 4 parts and the whole
trade-off front k = 0..4:

(a) fan hub, 12-hole bolt circle at 150 mm, 5 steel washer sizes (from
    catalogs/washers-steel.toml when present), up to 3 washers per bolt,
    30 of each on hand;
(b) pump impeller, 36 holes at 210 mm, 12 sizes 2..40 g, one per hole;
(c) wheel rim, 120 slots at 190 mm, 12 clip sizes 5..60 g in 5 g steps,
    one per slot.

Each case has a fixed, seeded set of required corrections with magnitudes
between 1.5 and 3.5 times the largest part's g·mm and random angles.  For
each correction it measures

* the exact front, cold (PlacementSearch built for the correction, as one job
  is run) and warm (one search built beforehand and reused), median time,
  and whether every entry is proven (``Front.optimal``);
* a plain CP-SAT model (integer count per position and item, capacity, stock
  and part-count constraints, the residual bounded by a 16-sided polygon),
  for K = 3 and K = 4 parts, one worker, with a time limit: time, whether it
  proved its own (polygonal) optimum, and the Euclidean residual of its
  incumbent relative to the exact one;
* the hand method (placer.handbook.handbook_plan): residual relative to the
  exact front at the same part count (2) and at 4 parts, and the parts used.

Times are wall-clock, in process, after imports.  Printing is the point of
this script; it is not part of the package.
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time
import tomllib
from dataclasses import dataclass
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
if str(REPO) not in sys.path and sys.argv[1:2] != ["--worker"]:
    sys.path.insert(0, str(REPO))

import numpy as np  # noqa: E402
import scipy.spatial  # noqa: E402,F401  (imported here so no timing pays for it)

ABS_TOL, REL_TOL = 0.01, 0.005
"""The proof tolerance (placer/engine/search.py), written here so that the side-by-side
workers import placer only from the checkout they measure."""

MAX_PARTS = 4
POLYGON_SIDES = 16
CPSAT_SCALE = 100.0
"""Effects are rounded to 1/CPSAT_SCALE g·mm for the integer model."""
DIRECTION_SCALE = 10_000
"""cos and sin of the polygon's directions are rounded to 1/DIRECTION_SCALE."""
WASHERS_FALLBACK_G = (1.13, 1.83, 3.57, 6.27, 11.25)
WASHERS_FILE = REPO / "catalogs" / "washers-steel.toml"


@dataclass(frozen=True)
class Case:
    """One benchmark rotor: positions on one circle, stock items, a time target."""

    label: str
    n_positions: int
    radius_mm: float
    item_masses_g: tuple[float, ...]
    capacity: int
    stock: int
    target_s: float
    seed: int

    @property
    def angles_deg(self) -> np.ndarray:
        return np.arange(self.n_positions) * 360.0 / self.n_positions

    @property
    def radii_mm(self) -> np.ndarray:
        return np.full(self.n_positions, self.radius_mm)

    def effects(self) -> np.ndarray:
        """effect[j, k] = -mass_g[k] * radius_mm[j] * exp(i angle_j), one channel."""
        phase = np.exp(1j * np.radians(self.angles_deg))
        masses = np.asarray(self.item_masses_g)
        return -(self.radii_mm * phase)[:, None] * masses[None, :]

    def corrections(self, count: int) -> list[complex]:
        rng = np.random.default_rng(self.seed)
        largest_gmm = max(self.item_masses_g) * self.radius_mm
        magnitudes = rng.uniform(1.5, 3.5, size=count) * largest_gmm
        angles = rng.uniform(0.0, 2.0 * math.pi, size=count)
        return [complex(m * np.exp(1j * a)) for m, a in zip(magnitudes, angles)]

    def search(self):
        from placer.engine.search import PlacementSearch

        return PlacementSearch(self.effects(), np.full(self.n_positions, self.capacity),
                               np.full(len(self.item_masses_g), self.stock), MAX_PARTS)


def washer_masses() -> tuple[tuple[float, ...], str]:
    if WASHERS_FILE.exists():
        with WASHERS_FILE.open("rb") as handle:
            items = tomllib.load(handle)["items"]
        return tuple(float(item["mass_g"]) for item in items), WASHERS_FILE.name
    return WASHERS_FALLBACK_G, "built-in list"


def build_cases() -> tuple[list[Case], str]:
    washers, source = washer_masses()
    cases = [
        Case("(a) 12 holes x 5 washers, cap 3", 12, 150.0, washers, 3, 30, 0.020, 101),
        Case("(b) 36 holes x 12 sizes, cap 1", 36, 210.0,
             (2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0, 16.0, 20.0, 30.0, 40.0), 1, 30, 0.100, 202),
        Case("(c) 120 slots x 12 clips, cap 1", 120, 190.0,
             tuple(float(m) for m in range(5, 61, 5)), 1, 30, 1.000, 303),
    ]
    return cases, source


# ----------------------------------------------------------------- CP-SAT
def cpsat_solve(case: Case, correction_gmm: complex, max_parts: int,
                seconds: float) -> tuple[float, bool, float]:
    """Plain CP-SAT model; returns (time s, proved optimal, Euclidean residual g·mm)."""
    from ortools.sat.python import cp_model

    from placer.handbook import residual_gmm

    effects = case.effects()
    n_pos, n_items = effects.shape
    model = cp_model.CpModel()
    x = [[model.NewIntVar(0, case.capacity, f"x{j}_{k}") for k in range(n_items)]
         for j in range(n_pos)]
    for j in range(n_pos):
        model.Add(sum(x[j]) <= case.capacity)
    for k in range(n_items):
        model.Add(sum(x[j][k] for j in range(n_pos)) <= case.stock)
    model.Add(sum(v for row in x for v in row) <= max_parts)
    ex = np.rint(effects.real * CPSAT_SCALE).astype(int)
    ey = np.rint(effects.imag * CPSAT_SCALE).astype(int)
    rx = int(round(correction_gmm.real * CPSAT_SCALE)) + sum(
        int(ex[j, k]) * x[j][k] for j in range(n_pos) for k in range(n_items))
    ry = int(round(correction_gmm.imag * CPSAT_SCALE)) + sum(
        int(ey[j, k]) * x[j][k] for j in range(n_pos) for k in range(n_items))
    reach = int(abs(correction_gmm) * CPSAT_SCALE
                + max_parts * np.abs(effects).max() * CPSAT_SCALE) + 1
    z = model.NewIntVar(0, reach, "z")
    for side in range(POLYGON_SIDES):
        phi = 2.0 * math.pi * side / POLYGON_SIDES
        c = int(round(math.cos(phi) * DIRECTION_SCALE))
        s = int(round(math.sin(phi) * DIRECTION_SCALE))
        model.Add(DIRECTION_SCALE * z >= c * rx + s * ry)
    model.Minimize(z)
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = seconds
    solver.parameters.num_workers = 1
    started = time.perf_counter()
    status = solver.Solve(model)
    elapsed = time.perf_counter() - started
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return elapsed, False, math.inf
    parts = [(j, k, solver.Value(x[j][k])) for j in range(n_pos) for k in range(n_items)
             if solver.Value(x[j][k])]
    residual = residual_gmm(correction_gmm, parts, case.angles_deg, case.radii_mm,
                            case.item_masses_g)
    return elapsed, status == cp_model.OPTIMAL, residual


# ----------------------------------------------------------------- helpers
def ratio(value: float, exact: float) -> float | None:
    """value / exact, or None when the exact residual is ~0 (within the proof tolerance)."""
    if exact <= ABS_TOL:
        return None
    return value / exact


def median_or_none(values: list[float | None]) -> float | None:
    kept = [v for v in values if v is not None and math.isfinite(v)]
    return statistics.median(kept) if kept else None


def fmt(value: float | None, spec: str = ".3f") -> str:
    return "n/a" if value is None else format(value, spec)


def beats_exact(found: float, exact: float) -> bool:
    """True if a residual is below the exact one by more than the proof tolerance."""
    return found < min(exact / (1.0 + REL_TOL), exact - ABS_TOL) - 1e-9


def run_case(case: Case, n_corrections: int, repeat: int, n_cpsat: int,
             cpsat_seconds: float) -> dict:
    corrections = case.corrections(n_corrections)
    cold, warm, optimal, fronts = [], [], 0, []
    for correction in corrections:
        target = np.array([correction])
        for _ in range(repeat):
            started = time.perf_counter()
            front = case.search().front(target)
            cold.append(time.perf_counter() - started)
        fronts.append(front)
        optimal += front.optimal
    search = case.search()
    search.front(np.array([corrections[0]]))          # builds the pair table once
    for correction in corrections:
        for _ in range(repeat):
            started = time.perf_counter()
            search.front(np.array([correction]))
            warm.append(time.perf_counter() - started)

    exact = {k: [f.entries[k].residual_norm for f in fronts] for k in range(MAX_PARTS + 1)}
    cpsat = {}
    for k in (3, 4):
        times, proved, ratios, beaten, found = [], 0, [], 0, []
        for index in range(min(n_cpsat, n_corrections)):
            elapsed, is_optimal, residual = cpsat_solve(case, corrections[index], k,
                                                        cpsat_seconds)
            times.append(elapsed)
            found.append(residual)
            proved += is_optimal
            ratios.append(ratio(residual, exact[k][index]))
            beaten += beats_exact(residual, exact[k][index])
        cpsat[k] = dict(time=statistics.median(times), proved=proved, runs=len(times),
                        exact=statistics.median(exact[k][:len(times)]),
                        residual=statistics.median(found),
                        ratio=median_or_none(ratios),
                        worst=max((r for r in ratios if r is not None), default=None),
                        beaten=beaten)

    from placer.handbook import handbook_plan, residual_gmm

    hand_vs2, hand_vs4, hand_parts, hand_residual, hand_time = [], [], [], [], []
    for index, correction in enumerate(corrections):
        started = time.perf_counter()
        parts = handbook_plan(correction, case.angles_deg, case.radii_mm,
                              [True] * case.n_positions, case.item_masses_g)
        hand_time.append(time.perf_counter() - started)
        residual = residual_gmm(correction, parts, case.angles_deg, case.radii_mm,
                                case.item_masses_g)
        hand_vs2.append(ratio(residual, exact[2][index]))
        hand_vs4.append(ratio(residual, exact[4][index]))
        hand_parts.append(sum(count for _, _, count in parts))
        hand_residual.append(residual)

    return dict(case=case, n=n_corrections, placements=search.n,
                cold=statistics.median(cold), cold_max=max(cold),
                warm=statistics.median(warm), optimal=optimal,
                exact_median={k: statistics.median(v) for k, v in exact.items()},
                cpsat=cpsat,
                hand_vs2=median_or_none(hand_vs2), hand_vs4=median_or_none(hand_vs4),
                hand_parts=statistics.median(hand_parts),
                hand_time=statistics.median(hand_time),
                hand_residual=statistics.median(hand_residual))


# ----------------------------------------------------------------- output
def print_report(rows: list[dict], args: argparse.Namespace, washer_source: str,
                 total_s: float) -> None:
    rerun = "python benchmarks/bench_core.py" + (" --quick" if args.quick else "")
    rerun += (f" --repeat {args.repeat} --cpsat-seconds {args.cpsat_seconds:g}"
              f" --cpsat-count {args.cpsat_count}")
    print(f"Rerun: {rerun}")
    print(f"       (from the repository root; washers from {washer_source}; "
          f"max {MAX_PARTS} parts; fronts k = 0..{MAX_PARTS})")
    print()
    n = rows[0]["n"]
    print(f"Exact front: median time over {n} corrections x {args.repeat} repeat(s) "
          "(cold = PlacementSearch built per correction; warm = one search reused)")
    head = f"{'case':34} {'placements':>10} {'cold ms':>9} {'max ms':>9} {'warm ms':>9} " \
           f"{'target ms':>9} {'cold<=target':>12} {'optimal':>8}"
    print(head)
    print("-" * len(head))
    for r in rows:
        case = r["case"]
        verdict = "pass" if r["cold"] <= case.target_s else "FAIL"
        print(f"{case.label:34} {r['placements']:>10} {1e3 * r['cold']:>9.1f} "
              f"{1e3 * r['cold_max']:>9.1f} {1e3 * r['warm']:>9.1f} {1e3 * case.target_s:>9.0f} "
              f"{verdict:>12} {r['optimal']:>4}/{r['n']:<3}")
    print()
    n_cp = rows[0]["cpsat"][3]["runs"]
    print(f"Plain CP-SAT ({POLYGON_SIDES}-gon bound, 1 worker, {args.cpsat_seconds:g} s limit) on "
          f"the first {n_cp} correction(s); ratio = CP-SAT residual / exact residual, same K; "
          "time x = CP-SAT time at K / exact cold time of the whole front k = 0..4")
    head = f"{'case':34} {'K':>2} {'median s':>9} {'time x':>8} {'proved':>7} " \
           f"{'CP-SAT gmm':>11} {'exact gmm':>10} {'ratio med':>10} {'ratio max':>10} " \
           f"{'beat exact':>10}"
    print(head)
    print("-" * len(head))
    for r in rows:
        for k in (3, 4):
            c = r["cpsat"][k]
            print(f"{r['case'].label if k == 3 else '':34} {k:>2} {c['time']:>9.2f} "
                  f"{c['time'] / r['cold']:>8.0f} "
                  f"{c['proved']:>3}/{c['runs']:<3} {c['residual']:>11.2f} {c['exact']:>10.2f} "
                  f"{fmt(c['ratio']):>10} {fmt(c['worst']):>10} {c['beaten']:>10}")
    print()
    print(f"Hand method (split onto the bracketing holes, nearest part each), median over {n} "
          "corrections")
    head = f"{'case':34} {'parts used':>10} {'hand ms':>8} {'time x':>7} {'hand gmm':>10} " \
           f"{'exact k=2 gmm':>14} {'exact k=4 gmm':>14} {'vs k=2':>8} {'vs k=4':>10}"
    print(head)
    print("-" * len(head))
    for r in rows:
        print(f"{r['case'].label:34} {r['hand_parts']:>10g} {1e3 * r['hand_time']:>8.3f} "
              f"{r['hand_time'] / r['cold']:>7.3f} {r['hand_residual']:>10.2f} "
              f"{r['exact_median'][2]:>14.2f} {r['exact_median'][4]:>14.2f} "
              f"{fmt(r['hand_vs2']):>8} {fmt(r['hand_vs4'], '.1f'):>10}")
    print()
    print("Ratios are skipped (n/a) where the exact residual is within "
          f"{ABS_TOL} g·mm of zero; 'beat exact' counts CP-SAT residuals below the exact one "
          f"by more than the proof tolerance (0.5 % or {ABS_TOL} g·mm) and should be 0. "
          "'time x' of the hand method = its time / the exact front's cold time.")
    print(f"Total run time {total_s:.1f} s.")


# ----------------------------------------------------------------- side by side
ENGINE_CASES = {
    # key: (label, positions, radius_mm, masses, capacity, max_parts, seed, target_s)
    "a4": ("12 x 5 cap 3, k<=4", 12, 150.0, None, 3, 4, 101, None),
    "b4": ("36 x 12, k<=4", 36, 210.0, "b", 1, 4, 202, 0.010),
    "c4": ("120 x 12, k<=4", 120, 190.0, "c", 1, 4, 303, 0.100),
    "d4": ("360 x 12, k<=4", 360, 190.0, "c", 1, 4, 404, 1.0),
    "b6": ("36 x 12, k<=6", 36, 210.0, "b", 1, 6, 202, 0.5),
    "c6": ("120 x 12, k<=6", 120, 190.0, "c", 1, 6, 303, 2.0),
    "b8": ("36 x 12, k<=8", 36, 210.0, "b", 1, 8, 202, None),
}
"""The engine cases of the issue (the first three are the reference cases (a)-(c))."""
SIZES_B = (2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0, 16.0, 20.0, 30.0, 40.0)
SIZES_C = tuple(float(m) for m in range(5, 61, 5))


def engine_case(key: str) -> tuple[str, Case, int]:
    label, n, radius, sizes, capacity, k, seed, target = ENGINE_CASES[key]
    masses = {"b": SIZES_B, "c": SIZES_C, None: washer_masses()[0]}[sizes]
    return label, Case(label, n, radius, masses, capacity, 30, target or 0.0, seed), k


def worker(source: str, key: str, count: int, warm: bool) -> None:
    """In a fresh process with placer from ``source``: the fronts of one case (CPU time of
    each, cold or warm), their residuals and proofs, and the peak memory; one JSON line."""
    import json
    import resource

    sys.path.insert(0, source)
    from placer.engine.search import PlacementSearch as Search

    _, case, k = engine_case(key)
    corrections = case.corrections(count)

    def build():
        return Search(case.effects(), np.full(case.n_positions, case.capacity),
                      np.full(len(case.item_masses_g), case.stock), k)

    shared = build() if warm else None
    if warm:
        shared.front(np.array([corrections[0]]))
    out = []
    for correction in corrections:
        started = time.process_time()
        front = (shared if warm else build()).front(np.array([correction]))
        out.append(dict(s=time.process_time() - started, proven=front.optimal, work=front.work,
                        residuals=[e.residual_norm for e in front.entries],
                        flags=[e.proven for e in front.entries]))
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(json.dumps(dict(fronts=out, peak_mb=peak_mb)))


def run_json(command: list[str], cwd: str, timeout_s: float) -> dict | None:
    """Run a worker process; its last line of output as JSON, or None past the timeout."""
    import json
    import subprocess

    try:
        done = subprocess.run(command, capture_output=True, text=True, timeout=timeout_s,
                              cwd=cwd)
    except subprocess.TimeoutExpired:
        return None
    if done.returncode != 0:
        raise RuntimeError(done.stderr)
    return json.loads(done.stdout.strip().splitlines()[-1])


def run_worker(source: str, key: str, count: int, warm: bool, timeout_s: float) -> dict | None:
    command = [sys.executable, str(Path(__file__).resolve()), "--worker", source, key,
               str(count), "warm" if warm else "cold"]
    return run_json(command, source, timeout_s)


def same_fronts(new: dict, old: dict) -> tuple[int, int]:
    """(entries compared, entries whose residuals differ) where both engines proved them:
    residuals agree within the proof tolerance (0.5 % or 0.01 g·mm), which is also how
    far a plan proven within the tolerance of zero may be from the least one."""
    compared = differ = 0
    for a, b in zip(new["fronts"], old["fronts"]):
        for ra, rb, pa, pb in zip(a["residuals"], b["residuals"], a["flags"], b["flags"]):
            if pa and pb:
                compared += 1
                low, high = min(ra, rb), max(ra, rb)
                differ += high > max(low * (1 + REL_TOL), low + ABS_TOL) + 1e-9
    return compared, differ


def side_by_side(args: argparse.Namespace) -> int:
    """Today's engine (``--baseline``) and this one, alternating, in fresh processes."""
    keys = args.cases.split(",")
    sources = {"new": str(REPO), "base": str(Path(args.baseline).resolve())}
    print(f"Rerun: python benchmarks/bench_core.py --baseline {args.baseline} "
          f"--cases {args.cases} --count {args.count} --rounds {args.rounds} "
          f"--timeout {args.timeout:g}")
    print(f"       new = {sources['new']}, base = {sources['base']}; CPU time per front "
          f"k = 0..K, median over {args.count} corrections x {args.rounds} round(s), each "
          "round a fresh process per engine, engines alternating")
    head = (f"{'case':20} {'mode':4} {'base ms':>9} {'new ms':>9} {'new/base':>8} "
            f"{'new max':>9} {'target':>7} {'base proven':>11} {'new proven':>10} "
            f"{'same':>7} {'work':>5} {'base MB':>8} {'new MB':>7}")
    print(head)
    print("-" * len(head))
    for key in keys:
        label, case, _ = engine_case(key)
        for warm in (False, True):
            times = {"new": [], "base": []}
            last: dict[str, dict | None] = {"new": None, "base": None}
            peak = {"new": 0.0, "base": 0.0}
            for _ in range(args.rounds):
                for engine in ("base", "new"):
                    got = run_worker(sources[engine], key, args.count, warm, args.timeout)
                    if got is None:
                        continue
                    times[engine] += [f["s"] for f in got["fronts"]]
                    peak[engine] = max(peak[engine], got["peak_mb"])
                    last[engine] = got
            med = {e: statistics.median(t) if t else None for e, t in times.items()}
            proven = {e: (f"{sum(f['proven'] for f in last[e]['fronts'])}/{args.count}"
                          if last[e] else "timeout") for e in last}
            same = work = "n/a"
            if last["new"] and last["base"]:
                compared, differ = same_fronts(last["new"], last["base"])
                same = f"{compared - differ}/{compared}"
                pairs = list(zip(last["new"]["fronts"], last["base"]["fronts"]))
                work = f"{sum(a.get('work') == b.get('work') for a, b in pairs)}/{len(pairs)}"
            ratio = (med["new"] / med["base"] if med["new"] and med["base"] else None)
            target = ("" if warm or not case.target_s
                      else ("pass" if med["new"] is not None and med["new"] < case.target_s
                            else "FAIL"))
            print(f"{label if not warm else '':20} {'warm' if warm else 'cold':4} "
                  f"{fmt(None if med['base'] is None else 1e3 * med['base'], '.2f'):>9} "
                  f"{fmt(None if med['new'] is None else 1e3 * med['new'], '.2f'):>9} "
                  f"{fmt(ratio, '.3f'):>8} "
                  f"{fmt(1e3 * max(times['new']) if times['new'] else None, '.2f'):>9} "
                  f"{target:>7} {proven['base']:>11} "
                  f"{proven['new']:>10} {same:>7} {work:>5} {peak['base']:>8.0f} "
                  f"{peak['new']:>7.0f}",
                  flush=True)
    print("\n'same': front entries proven by both engines whose residuals agree within the "
          "proof tolerance / entries proven by both.  'work': fronts whose counted work "
          "(head nodes, cells and rows looked at) is the same in both engines, i.e. the "
          "same search in the same order.  'new max': the slowest front.  MB: peak resident memory of the "
          "process (ru_maxrss).  'timeout': the engine did not finish the case within "
          f"{args.timeout:g} s.")
    return 0


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=None,
                        help="timed runs per correction (default 3; 1 with --quick)")
    parser.add_argument("--quick", action="store_true",
                        help="5 corrections per case, CP-SAT on 1, 2 s CP-SAT limit")
    parser.add_argument("--cpsat-seconds", type=float, default=None,
                        help="CP-SAT time limit per solve (default 5; 2 with --quick)")
    parser.add_argument("--cpsat-count", type=int, default=None,
                        help="corrections per case also given to CP-SAT, the first ones "
                             "(default all 9; 1 with --quick)")
    parser.add_argument("--baseline", metavar="DIR",
                        help="another checkout of placer (today's engine): measure both "
                             "side by side on the engine cases instead")
    parser.add_argument("--cases", default=",".join(ENGINE_CASES),
                        help="engine cases with --baseline (default all: "
                             + ",".join(ENGINE_CASES) + ")")
    parser.add_argument("--count", type=int, default=5,
                        help="corrections per engine case with --baseline (default 5)")
    parser.add_argument("--rounds", type=int, default=3,
                        help="fresh processes per engine and case with --baseline (default 3)")
    parser.add_argument("--timeout", type=float, default=600.0,
                        help="seconds one engine may take for one case with --baseline")
    argv = sys.argv[1:] if argv is None else argv
    if argv[:1] == ["--worker"]:
        worker(argv[1], argv[2], int(argv[3]), argv[4] == "warm")
        return 0
    args = parser.parse_args(argv)
    if args.baseline:
        return side_by_side(args)
    if args.repeat is None:
        args.repeat = 1 if args.quick else 3
    if args.cpsat_seconds is None:
        args.cpsat_seconds = 2.0 if args.quick else 5.0
    if args.cpsat_count is None:
        args.cpsat_count = 1 if args.quick else 9
    n_corrections = 5 if args.quick else 9
    n_cpsat = min(args.cpsat_count, n_corrections)
    started = time.perf_counter()
    cases, washer_source = build_cases()
    rows = [run_case(case, n_corrections, args.repeat, n_cpsat, args.cpsat_seconds)
            for case in cases]
    print_report(rows, args, washer_source, time.perf_counter() - started)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
