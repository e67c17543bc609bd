"""Every command stops within its budget: sizes refused before work (exit 2), time and
memory limits that hold (exit 3), one line on stderr, no traceback.

The inputs are the reported runaways, made up here: field sessions of 30 and 50
planes, a 50-plane job of 120-slot rims at max_parts 8, a catalogue of 500 items,
``--width 100000000``; and the largest inputs placer takes (README, "Limits") with
small limits (``--time-limit 2``, ``--memory-limit 400``).  Each run is a
subprocess, timed only to assert a ceiling (the limit, half of it again, and two
seconds for Python's start-up; a ceiling check, not a speed test).  The time a
limit may run over is our own rule (common practice, no source); the exit codes
are placer's own (README).
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from sessions import rect, session_toml

from placer.limits import (
    MAX_BATCH_ROWS,
    MAX_ITEMS,
    MAX_PLANES,
    MAX_SENSORS,
    MAX_TRIAL_RUNS,
    MAX_WIDTH,
    MIN_MEMORY_LIMIT_MB,
)

pytestmark = pytest.mark.resources

REPO_DIR = Path(__file__).resolve().parent.parent
START_UP_S = 2.0
"""Python's start-up and placer's imports, not counted by the time limit [s]."""


def ceiling_s(limit_s: float) -> float:
    """How long a run stopped at ``limit_s`` may take in all (our rule, no source)."""
    return 1.5 * limit_s + START_UP_S


def run(*args: object, timeout: float = 120.0) -> tuple[int, str, str, float]:
    """``python -m placer ARGS`` as the user runs it: exit code, stdout, stderr, seconds."""
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "COLUMNS")}
    start = time.monotonic()
    proc = subprocess.run([sys.executable, "-m", "placer", *map(str, args)], cwd=REPO_DIR,
                          env=env, capture_output=True, text=True, encoding="utf-8",
                          timeout=timeout)
    return proc.returncode, proc.stdout, proc.stderr, time.monotonic() - start


def one_line(err: str, *words: str) -> str:
    """The one line placer writes on stderr, checked for the words that must be in it."""
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, err
    assert "Traceback" not in err
    for word in words:
        assert word in lines[0], lines[0]
    return lines[0]


# ------------------------------------------------------------------ the inputs
def field_session(tmp_path: Path, planes: int, sensors: int, positions: int,
                  max_parts: int = 8, name: str = "visit.toml") -> Path:
    """A synthetic visit (tests/sessions.py): ``planes`` planes of ``positions`` holes
    with steel washers, ``sensors`` sensors, a reference run and a trial run per plane."""
    rng = np.random.default_rng(1)
    a = (rng.normal(size=(sensors, planes)) + 1j * rng.normal(size=(sensors, planes))) * 0.01
    u = np.array([rect(900, 37 * p) for p in range(planes)])
    trials = tuple((p, 20.0, 1 + p % positions, True) for p in range(planes))
    path = tmp_path / name
    path.write_text(session_toml(a, u, positions=positions, trials=trials,
                                 max_parts=max_parts), encoding="utf-8")
    return path


def job_file(tmp_path: Path, planes: int, positions: int, max_parts: int,
             catalog: str = "rim-clips-5g", name: str = "job.toml",
             template: bool = False) -> Path:
    """A wheel-rim job (or, with ``template``, a batch template) of ``planes`` planes."""
    text = '[rotor]\nname = "rim"\nmass_kg = 18.0\nservice_rpm = 1200\ngrade = "G40"\n'
    for p in range(planes):
        text += (f'[[planes]]\nname = "p{p + 1}"\nradius_mm = 190.0\npositions = {positions}\n'
                 f'catalog = "{catalog}"\nmax_parts = {max_parts}\n')
        if not template:
            text += (f"correction = {{ mass_g = {13.7 + 3.1 * p:.2f}, "
                     f"angle_deg = {(37 * p) % 360} }}\n")
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def catalogue(tmp_path: Path, items: int) -> Path:
    path = tmp_path / f"cat{items}.toml"
    path.write_text('name = "many"\n' + "".join(
        f'[[items]]\nid = "i{i}"\nmass_g = {0.5 + 0.37 * i:.3f}\n' for i in range(items)),
        encoding="utf-8")
    return path


# ------------------------------------------------------- sizes refused before work
def test_width_has_a_ceiling():
    code, out, err, seconds = run("solve", REPO_DIR / "examples" / "supply-fan.toml",
                                  "--width", 100_000_000)
    assert code == 2 and out == ""
    one_line(err, "--width", f"40 to {MAX_WIDTH} columns")
    assert seconds < ceiling_s(0)


@pytest.mark.parametrize("command", ["field", "machines", "history", "blades"])
def test_every_width_option_has_the_ceiling(command, run_cli, tmp_path):
    args = {"field": ["field", "x.toml"], "machines": ["machines"],
            "history": ["history", "M-1"], "blades": ["blades", "x.toml"]}[command]
    db = [] if command == "blades" else ["--db", tmp_path / "h.sqlite"]
    code, out, err = run_cli(*args, "--width", MAX_WIDTH + 1, *db)
    assert code == 2
    one_line(err, "--width")


@pytest.mark.parametrize("planes", [30, 50])
def test_field_of_many_planes_is_refused(planes, tmp_path):
    path = field_session(tmp_path, planes, min(planes, MAX_SENSORS), 12)
    code, out, err, seconds = run("field", path, "--max-parts", 2, "--time-limit", 1)
    assert code == 2 and out == ""
    one_line(err, str(path), "planes", f"at most {MAX_PLANES} planes")
    assert seconds < ceiling_s(1)


def test_field_of_many_sensors_is_refused(tmp_path):
    path = field_session(tmp_path, 2, MAX_SENSORS + 1, 12)
    code, _, err, _ = run("field", path)
    assert code == 2
    one_line(err, "sensors", f"at most {MAX_SENSORS} sensors")


def test_field_of_many_trial_runs_is_refused(run_cli, tmp_path):
    rng = np.random.default_rng(2)
    a = (rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2))) * 0.01
    trials = tuple((k % 2, 20.0, 1 + k % 4, True) for k in range(MAX_TRIAL_RUNS + 1))
    path = tmp_path / "visit.toml"
    path.write_text(session_toml(a, np.array([rect(900, 70), rect(600, 250)]),
                                 trials=trials), encoding="utf-8")
    code, _, err = run_cli("field", path)
    assert code == 2
    one_line(err, str(path), "runs", f"at most {MAX_TRIAL_RUNS} trial runs")


def test_field_search_too_large_is_refused(tmp_path):
    # 8 planes x 3600 positions x 5 washers x 28 sensors = 4 032 000 cells.
    path = field_session(tmp_path, MAX_PLANES, 28, 3600)
    code, _, err, seconds = run("field", path, "--time-limit", 2)
    assert code == 2
    one_line(err, "planes", "cells")
    assert seconds < ceiling_s(2)


def test_job_of_fifty_rims_is_refused(tmp_path):
    path = job_file(tmp_path, 50, 120, 8)
    code, out, err, seconds = run("solve", path, "--time-limit", 2)
    assert code == 2 and out == ""
    one_line(err, str(path), "planes", f"at most {MAX_PLANES} planes")
    assert seconds < ceiling_s(2)


def test_catalogue_of_500_items_is_refused(tmp_path):
    cat = catalogue(tmp_path, 500)
    path = job_file(tmp_path, 2, 12, 4, catalog=str(cat))
    code, out, err, seconds = run("solve", path, "--time-limit", 2)
    assert code == 2 and out == ""
    one_line(err, str(cat), "items", f"at most {MAX_ITEMS} catalogue items")
    assert seconds < ceiling_s(2)


def test_readings_file_of_too_many_rotors_is_refused(tmp_path):
    template = job_file(tmp_path, 1, 12, 4, catalog="washers-steel", template=True,
                        name="template.toml")
    readings = tmp_path / "readings.csv"
    readings.write_text("serial,1_gmm,1_angle_deg\n" + "".join(
        f"R{i},{100 + i % 50},{i % 360}\n" for i in range(MAX_BATCH_ROWS + 1)),
        encoding="utf-8")
    code, _, err, seconds = run("batch", template, readings, "--time-limit", 5)
    assert code == 2
    one_line(err, str(readings), f"line {MAX_BATCH_ROWS + 2}", "at most 100 000 rotors")
    assert seconds < ceiling_s(5)
    assert not list(tmp_path.glob("readings.results*")), "nothing is written"


# ----------------------------------------------------- limits that hold (exit 3)
def test_field_at_the_largest_size_stops_at_its_time_limit(tmp_path):
    path = field_session(tmp_path, MAX_PLANES, 8, 3600)
    code, out, err, seconds = run("field", path, "--time-limit", 2)
    assert code == 3 and out == ""
    one_line(err, "placer: stopped: --time-limit", "nothing is printed or saved")
    assert seconds < ceiling_s(2)


def test_field_at_the_largest_size_stops_at_its_memory_limit(tmp_path):
    # 8 planes x 3600 positions x 5 washers x 27 sensors: about 500 MB at its peak.
    path = field_session(tmp_path, MAX_PLANES, 27, 3600)
    code, out, err, seconds = run("field", path, "--memory-limit", MIN_MEMORY_LIMIT_MB,
                                  "--time-limit", 30)
    assert code == 3 and out == ""
    one_line(err, "placer: stopped: --memory-limit", f"of {MIN_MEMORY_LIMIT_MB:g} MB",
             "expected a larger --memory-limit")
    assert seconds < ceiling_s(30)


def test_solve_of_eight_planes_at_max_parts_eight_stops_at_its_time_limit(tmp_path):
    cat = catalogue(tmp_path, MAX_ITEMS)
    path = job_file(tmp_path, MAX_PLANES, 57, 8, catalog=str(cat))
    code, out, err, seconds = run("solve", path, "--time-limit", 2, "--memory-limit", 600)
    assert code == 3 and out == ""
    one_line(err, "placer: stopped: --time-limit",
             "the time limit of 2 s was reached before the plans were final")
    assert seconds < ceiling_s(2)


def test_shared_stock_model_stops_at_its_time_limit(tmp_path):
    # Eight planes share drawers of one part each: the CP-SAT model plans them together,
    # at effort 1000 allowed 5000 deterministic seconds; the time limit still holds.
    cat = tmp_path / "short.toml"
    cat.write_text('name = "short"\n' + "".join(
        f'[[items]]\nid = "i{i}"\nmass_g = {1.0 + 1.7 * i:.2f}\nstock = 1\n'
        for i in range(12)), encoding="utf-8")
    path = job_file(tmp_path, MAX_PLANES, 6, 6, catalog=str(cat))
    code, out, err, seconds = run("solve", path, "--effort", 1000, "--time-limit", 2)
    assert code == 3 and out == ""
    one_line(err, "placer: stopped: --time-limit")
    assert seconds < ceiling_s(2)


def test_batch_stops_at_its_time_limit_with_workers(tmp_path):
    cat = catalogue(tmp_path, MAX_ITEMS)
    template = job_file(tmp_path, MAX_PLANES, 57, 8, catalog=str(cat), template=True,
                        name="template.toml")
    readings = tmp_path / "readings.csv"
    header = "serial," + ",".join(f"{p}_gmm,{p}_angle_deg" for p in range(1, MAX_PLANES + 1))
    readings.write_text(header + "\n" + "".join(
        f"R{i}," + ",".join(f"{900 + 7 * i + p},{(31 * i + 47 * p) % 360}"
                            for p in range(MAX_PLANES)) + "\n" for i in range(20)),
        encoding="utf-8")
    code, _, err, seconds = run("batch", template, readings, "--jobs", 2, "--time-limit", 2,
                                "--memory-limit", 600)
    assert code == 3
    one_line(err.split("\r")[-1], "--time-limit", "--resume carries on")
    assert seconds < ceiling_s(2)


def test_blades_of_a_full_disc_stop_within_their_time_limit(tmp_path):
    rng = np.random.default_rng(3)
    path = tmp_path / "disc.toml"
    path.write_text('[rotor]\nname = "disc"\nmass_kg = 38.0\nservice_rpm = 1480\n'
                    'grade = "G6.3"\n[disc]\nslots = 120\n[trim]\ncatalog = "fan-blade-clips"\n'
                    'radius_mm = 300.0\nmax_parts = 8\n'
                    + "".join(f'[[blades]]\nid = "B{i + 1}"\nmoment_gmm = '
                              f"{50000 + rng.normal() * 300:.1f}\n" for i in range(120)),
                    encoding="utf-8")
    code, _, err, seconds = run("blades", path, "--time-limit", 2, "--memory-limit", 600)
    assert code in (0, 1, 3), err
    if code == 3:
        one_line(err, "--time-limit", "before the arrangement was final")
    assert seconds < ceiling_s(2)


# ------------------------------------------------ every command has both limits
COMMANDS = {
    "catalogs": ["catalogs", "washers-steel"],
    "tolerance": ["tolerance", "--grade", "G6.3", "--mass-kg", 40, "--rpm", 1500],
    "trial": ["trial", "--mass-kg", 40, "--rpm", 1500, "--radius-mm", 200],
    "new": ["new", "job", "{tmp}/new.toml", "--positions", 12, "--radius-mm", 200],
    "machines": ["machines", "--db", "{tmp}/h.sqlite"],
    "solve": ["solve", REPO_DIR / "examples" / "supply-fan.toml"],
}


def _args(command: str, tmp_path: Path) -> list[str]:
    return [str(a).replace("{tmp}", str(tmp_path)) for a in COMMANDS[command]]


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_every_command_stops_at_its_time_limit(command, run_cli, tmp_path):
    # A limit of a microsecond is up before the command has read its input.
    code, out, err = run_cli(*_args(command, tmp_path), "--time-limit", 1e-6)
    assert code == 3, err
    one_line(err, "placer: stopped: --time-limit: the time limit of 1e-06 s was reached")
    assert not (tmp_path / "new.toml").exists()


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_every_command_refuses_a_memory_limit_too_small(command, run_cli, tmp_path):
    code, _, err = run_cli(*_args(command, tmp_path), "--memory-limit", 10)
    assert code == 2
    one_line(err, "--memory-limit: is 10", f"from {MIN_MEMORY_LIMIT_MB:g}")


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_every_command_runs_within_the_smallest_memory_limit(command, tmp_path):
    code, _, err, _ = run(*_args(command, tmp_path), "--memory-limit", MIN_MEMORY_LIMIT_MB)
    assert code in (0, 1), err
