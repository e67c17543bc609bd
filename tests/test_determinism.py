"""The same input gives the same answer on any load and thread count.

Two ways: the modules that decide a plan never read a clock (work is counted, not
timed; the model runs one worker with a deterministic limit), checked on the source;
and two runs of jobs whose searches are not trivial, one of them on a loaded machine
with other thread settings, print the same JSON.
"""

from __future__ import annotations

import ast
import json
import os
import subprocess
import sys
from pathlib import Path

import placer

PACKAGE = Path(placer.__file__).resolve().parent
REPO = PACKAGE.parent

DECIDING = ["engine", "choice.py", "stock.py", "solve.py", "fieldplan.py", "batch",
            "influence.py", "robust.py", "residual.py", "tolerance.py", "arrange.py"]
"""Where plans are decided."""
CLOCK_ALLOWED = {("solve.py", "perf_counter")}
"""solve.py times each plane for the sheet's elapsed_s; nothing depends on it."""


def _clock_calls(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name) \
                and node.value.id == "time":
            names.add(node.attr)
        if isinstance(node, ast.ImportFrom) and node.module == "time":
            names.update(alias.name for alias in node.names)
    return names


def test_deciding_modules_read_no_clock():
    files = []
    for entry in DECIDING:
        target = PACKAGE / entry
        files += sorted(target.rglob("*.py")) if target.is_dir() else [target]
    found = {(f.name, name) for f in files for name in _clock_calls(f)}
    assert found <= CLOCK_ALLOWED, sorted(found - CLOCK_ALLOWED)
    # And the integer model is told to be repeatable ([CPSAT]).
    model = (PACKAGE / "engine" / "model.py").read_text(encoding="utf-8")
    assert "max_deterministic_time" in model and "num_workers = 1" in model
    # Its one wall-clock cap lies a second past the command's own timer
    # (placer.budget.wall_clock_cap_s): the timer stops the command first, so the cap
    # decides nothing (tests/test_budget.py).
    assert model.count("max_time_in_seconds") == 1
    assert "max_time_in_seconds = cap" in model and "cap = wall_clock_cap_s()" in model


def _solve_json(job: Path, env: dict[str, str]) -> dict:
    out = subprocess.run([sys.executable, "-m", "placer", "solve", str(job), "--json"],
                         capture_output=True, text=True, env=env, timeout=300, cwd=REPO)
    data = json.loads(out.stdout)
    for plane in data["planes"]:
        plane.pop("elapsed_s")
    return data


def test_same_json_with_other_threads_and_a_loaded_machine(tmp_path):
    jobs = [REPO / "examples" / "supply-fan.toml", REPO / "examples" / "wheel-rim.toml"]
    quiet = {**os.environ, "OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1"}
    first = [_solve_json(job, quiet) for job in jobs]
    # Load both cores while the second runs, with the default thread settings.
    hog = [subprocess.Popen([sys.executable, "-c", "while True: pass"]) for _ in range(2)]
    try:
        busy = {k: v for k, v in os.environ.items()
                if k not in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS")}
        second = [_solve_json(job, busy) for job in jobs]
    finally:
        for process in hog:
            process.kill()
            process.wait()
    assert first == second
