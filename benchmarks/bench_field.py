"""The coupled field search, side by side with another checkout of placer.

Run from the repository root::

    python benchmarks/bench_field.py [--baseline DIR] [--count N] [--rounds N]
                                     [--timeout S]

An invented Wrenmoor shop fan with two correction planes of 36 equally spaced
positions at 150 mm, 6 washer sizes (1.02 to 20 g, 60 of each, one per
position), 4 sensors with seeded influence coefficients, plans of up to 4
parts over both planes.  The search is built as ``placer.fieldplan`` builds
it: one row per position of every plane, the effect of a part at the sensors
``A[:, plane] · m · r · e^{iθ}``, both norms ("euclidean" is the session's
"rms", "max" its largest reading).  Readings that fit are ``A · u`` for a
seeded unbalance u; readings that do not fit add a seeded vector of half
their size that the trial effects do not explain (outside the span of A).

For each case and each engine (this checkout, and ``--baseline DIR`` when
given) a fresh process builds the search for each of N readings and times
the whole front k = 0..4 (CPU time), and reports whether every entry was
proven and the peak memory.  Engines alternate, round after round; the
table prints medians and the ratio new / base.  Cases the baseline does not
finish within ``--timeout`` seconds are marked.

Printing is the point of this script; it is not part of the package.
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
SENSORS, PLANES, POSITIONS, RADIUS_MM = 4, 2, 36, 150.0
MASSES_G = (1.02, 1.83, 3.57, 6.27, 11.30, 20.0)
MAX_PARTS = 4
TARGET_S = 2.0
"""Time the issue asks of a proven front of this case."""


def problem(fit: bool, count: int, seed: int = 5):
    """Effects (rows, items, sensors), capacity, stock and ``count`` readings."""
    rng = np.random.default_rng(seed)
    a = (rng.normal(size=(SENSORS, PLANES)) + 1j * rng.normal(size=(SENSORS, PLANES))) * 0.002
    phase = RADIUS_MM * np.exp(1j * np.radians(np.arange(POSITIONS) * 360.0 / POSITIONS))
    effects = np.zeros((PLANES * POSITIONS, len(MASSES_G), SENSORS), dtype=complex)
    for p in range(PLANES):
        unit = (phase[:, None] * np.asarray(MASSES_G)[None, :])[:, :, None]
        effects[p * POSITIONS:(p + 1) * POSITIONS] = -unit * a[:, p][None, None, :]
    readings = []
    for _ in range(count):
        u = rng.uniform(1000, 4000, size=PLANES) * np.exp(1j * rng.uniform(0, 2 * np.pi, PLANES))
        v = a @ u
        if not fit:
            extra = rng.normal(size=SENSORS) + 1j * rng.normal(size=SENSORS)
            q, _ = np.linalg.qr(a)
            extra -= q @ (q.conj().T @ extra)            # the part A cannot explain
            v = v + 0.5 * np.linalg.norm(v) * extra / np.linalg.norm(extra)
        readings.append(v)
    return effects, np.ones(PLANES * POSITIONS, int), np.full(len(MASSES_G), 60), readings


def worker(source: str, fit: bool, norm: str, count: int) -> None:
    """In a fresh process with placer from ``source``: one JSON line of results."""
    import resource

    sys.path.insert(0, source)
    import scipy.spatial  # noqa: F401  (today's engine uses it; no timing pays for it)

    from placer.engine.search import PlacementSearch

    effects, capacity, stock, readings = problem(fit, count)
    out = []
    for v in readings:
        started = time.process_time()
        search = PlacementSearch(effects, capacity, stock, MAX_PARTS, norm=norm)
        front = search.front(v)
        out.append(dict(s=time.process_time() - started, proven=front.optimal,
                        residuals=[e.residual_norm for e in front.entries]))
    print(json.dumps(dict(fronts=out,
                          peak_mb=resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024)))


def run(source: str, fit: bool, norm: str, count: int, timeout_s: float) -> dict | None:
    from bench_core import run_json

    command = [sys.executable, str(Path(__file__).resolve()), "--worker", source,
               "fit" if fit else "misfit", norm, str(count)]
    return run_json(command, source, timeout_s)


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if argv[:1] == ["--worker"]:
        worker(argv[1], argv[2] == "fit", argv[3], int(argv[4]))
        return 0
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--baseline", metavar="DIR", help="another checkout of placer")
    parser.add_argument("--count", type=int, default=5, help="readings per case (default 5)")
    parser.add_argument("--rounds", type=int, default=3, help="processes per engine and case")
    parser.add_argument("--timeout", type=float, default=900.0,
                        help="seconds one engine may take for one case (default 900)")
    args = parser.parse_args(argv)
    engines = {"new": str(REPO)}
    if args.baseline:
        engines = {"base": str(Path(args.baseline).resolve()), **engines}
    print("Rerun: python benchmarks/bench_field.py " + " ".join(argv))
    print(f"{PLANES} planes x {POSITIONS} positions x {len(MASSES_G)} items, {SENSORS} "
          f"sensors, k <= {MAX_PARTS}; CPU time per front (search built per reading), median "
          f"over {args.count} readings x {args.rounds} round(s)")
    head = (f"{'readings':9} {'norm':9} {'base ms':>9} {'new ms':>9} {'new/base':>8} "
            f"{'< 2 s':>6} {'base proven':>11} {'new proven':>10} {'base MB':>8} {'new MB':>7}")
    print(head)
    print("-" * len(head))
    for fit in (True, False):
        for norm in ("euclidean", "max"):
            times = {e: [] for e in engines}
            proven = {e: "timeout" for e in engines}
            peak = {e: 0.0 for e in engines}
            for _ in range(args.rounds):
                for engine, source in engines.items():
                    got = run(source, fit, norm, args.count, args.timeout)
                    if got is None:
                        continue
                    times[engine] += [f["s"] for f in got["fronts"]]
                    proven[engine] = f"{sum(f['proven'] for f in got['fronts'])}/{args.count}"
                    peak[engine] = max(peak[engine], got["peak_mb"])
            med = {e: statistics.median(t) if t else None for e, t in times.items()}
            base = med.get("base")
            ratio = med["new"] / base if base and med["new"] else None
            verdict = "pass" if med["new"] is not None and med["new"] < TARGET_S else "FAIL"

            def ms(value):
                return "n/a" if value is None else f"{1e3 * value:.1f}"

            print(f"{'fit' if fit else 'misfit':9} {norm:9} {ms(base):>9} {ms(med['new']):>9} "
                  f"{'n/a' if ratio is None else f'{ratio:.3f}':>8} {verdict:>6} "
                  f"{proven.get('base', 'n/a'):>11} {proven['new']:>10} "
                  f"{peak.get('base', 0.0):>8.0f} {peak['new']:>7.0f}", flush=True)
    print("\nMB: peak resident memory of the measuring process (ru_maxrss), imports included.")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
