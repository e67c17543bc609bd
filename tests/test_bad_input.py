"""Bad input on the command line: exit code 2 and one line on stderr.

The contract (placer.cli and placer.errors docstrings, and the brief for the
command line): a user's mistake ends with exit code 2 and exactly one
non-empty line on stderr, no traceback, naming the file, the key path inside
it (``planes[2].radius_mm``) and what was expected; nothing is printed on
stdout, and no input file is changed.
"""

from __future__ import annotations

import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

REPO_DIR = Path(__file__).resolve().parent.parent
BUNDLED_NAMES = sorted(p.stem for p in (REPO_DIR / "catalogs").glob("*.toml"))

ROTOR = {"name": '"test rotor"', "mass_kg": "12.0", "service_rpm": "1500", "grade": '"G6.3"'}
PLANE_1 = ('name = "drive side"\nradius_mm = 100.0\npositions = 12\ncatalog = "washers-steel"\n'
           "correction = { mass_g = 5.0, angle_deg = 10.0 }\n")
PLANE_2 = {"name": '"free side"', "radius_mm": "100.0", "positions": "12",
           "catalog": '"washers-steel"', "correction": "{ mass_g = 3.0, angle_deg = 200.0 }"}


def _job(tail: str = "", rotor: dict | None = None, **plane_2: str | None) -> str:
    """A good two-plane job with plane 2 (and the rotor) changed; None drops a key."""
    rotor_keys = {**ROTOR, **(rotor or {})}
    plane_keys = {**PLANE_2, **plane_2}
    rotor_lines = "".join(f"{k} = {v}\n" for k, v in rotor_keys.items() if v is not None)
    plane_lines = "".join(f"{k} = {v}\n" for k, v in plane_keys.items() if v is not None)
    return f"[rotor]\n{rotor_lines}\n[[planes]]\n{PLANE_1}\n[[planes]]\n{plane_lines}{tail}"


def _catalog(*items: tuple[str, str], extra: str = "") -> str:
    body = "".join(f'[[items]]\nid = "{i}"\nmass_g = {m}\n' for i, m in items)
    return f'name = "test drawer"\n{extra}{body}'


DRAWER = _job(catalog='"drawer.toml"')


@dataclass
class Case:
    """One bad input: the files to write, the arguments, what the error line must name."""

    files: dict[str, str | bytes]
    args: tuple[str, ...] = ("solve", "{job}")
    key: str | None = None
    file: str | None = "job.toml"
    contains: tuple[str, ...] = ()
    job: str = "job.toml"


CASES = {
    # --- the file itself
    "missing-job-file": Case({}, file="job.toml"),
    "job-path-is-a-folder": Case({"jobs/readme.txt": "not a job"}, job="jobs", file="jobs"),
    "invalid-toml": Case({"job.toml": "[rotor\nname = 'unclosed'\n"}),
    "non-utf8-bytes": Case({"job.toml": _job().replace('"test rotor"', '"caf\u00e9"')
                            .encode("latin-1")}),
    # --- catalogues
    "catalogue-name-unknown": Case({"job.toml": _job(catalog='"washer-steel"')},
                                   key="planes[2].catalog",
                                   contains=("washer-steel", "did you mean 'washers-steel'",
                                             *BUNDLED_NAMES)),
    "catalogue-path-missing": Case({"job.toml": _job(catalog='"drawers/none.toml"')},
                                   key="planes[2].catalog", contains=("none.toml",)),
    "catalogue-negative-mass": Case({"job.toml": DRAWER,
                                     "drawer.toml": _catalog(("A", "-1.5"), ("B", "2.0"))},
                                    file="drawer.toml", key="items[1].mass_g"),
    "catalogue-zero-mass": Case({"job.toml": DRAWER,
                                 "drawer.toml": _catalog(("A", "2.0"), ("B", "0.0"))},
                                file="drawer.toml", key="items[2].mass_g"),
    "catalogue-duplicate-id": Case({"job.toml": DRAWER,
                                    "drawer.toml": _catalog(("A", "2.0"), ("A", "3.0"))},
                                   file="drawer.toml", key="items[2].id", contains=("'A'",)),
    "catalogue-empty-items": Case({"job.toml": DRAWER, "drawer.toml": _catalog(extra="items = []\n")},
                                  file="drawer.toml", key="items"),
    "catalogue-no-items": Case({"job.toml": DRAWER, "drawer.toml": _catalog()},
                               file="drawer.toml", key="items"),
    # --- keys
    "misspelt-key": Case({"job.toml": _job(radius_mm=None, radius_m="100.0")},
                         key="planes[2].radius_m", contains=("radius_mm",)),
    "unknown-top-level-table": Case({"job.toml": _job(tail="\n[spare_parts]\nbin = 3\n")},
                                    key="spare_parts"),
    # --- types
    "radius-as-text": Case({"job.toml": _job(radius_mm='"210"')}, key="planes[2].radius_mm"),
    "positions-not-whole": Case({"job.toml": _job(positions="12.5")}, key="planes[2].positions"),
    "angle-as-text": Case({"job.toml": _job(correction='{ mass_g = 3.0, angle_deg = "200" }')},
                          key="planes[2].correction.angle_deg"),
    "blocked-as-text": Case({"job.toml": _job(blocked='"4"')}, key="planes[2].blocked"),
    # --- values
    "radius-zero": Case({"job.toml": _job(radius_mm="0.0")}, key="planes[2].radius_mm"),
    "radius-negative": Case({"job.toml": _job(radius_mm="-210.0")}, key="planes[2].radius_mm"),
    "blocked-position-0": Case({"job.toml": _job(blocked="[0]")}, key="planes[2].blocked[1]"),
    "blocked-position-13-of-12": Case({"job.toml": _job(blocked="[4, 13]")},
                                      key="planes[2].blocked[2]", contains=("12",)),
    "radius-nan": Case({"job.toml": _job(radius_mm="nan")}, key="planes[2].radius_mm"),
    "radius-inf": Case({"job.toml": _job(radius_mm="inf")}, key="planes[2].radius_mm"),
    "angle-nan": Case({"job.toml": _job(correction="{ mass_g = 3.0, angle_deg = nan }")},
                      key="planes[2].correction.angle_deg"),
    "angle-minus-inf": Case({"job.toml": _job(correction="{ mass_g = 3.0, angle_deg = -inf }")},
                            key="planes[2].correction.angle_deg"),
    "capacity-0": Case({"job.toml": _job(capacity="0")}, key="planes[2].capacity"),
    "max-parts-0": Case({"job.toml": _job(max_parts="0")}, key="planes[2].max_parts"),
    "unknown-grade-G3": Case({"job.toml": _job(rotor={"grade": '"G3"'})}, key="rotor.grade",
                             # nearest in value on a log scale: |ln(3/2.5)| < |ln(6.3/3)|
                             contains=("G3", "G2.5")),
    # --- the requirement
    "correction-and-unbalance": Case(
        {"job.toml": _job(unbalance="{ gmm = 300.0, angle_deg = 20.0 }")},
        key="planes[2].unbalance"),
    "mass-and-gmm": Case(
        {"job.toml": _job(correction="{ mass_g = 3.0, gmm = 300.0, angle_deg = 200.0 }")},
        key="planes[2].correction.gmm"),
    "no-correction": Case({"job.toml": _job(correction=None)}, key="planes[2].correction"),
    # --- command-line options (no file involved)
    "tolerance-grade-G7": Case({}, args=("tolerance", "--grade", "G7", "--mass-kg", "12",
                                         "--rpm", "2950"),
                               file=None, key="grade", contains=("G7", "G6.3")),
    "tolerance-negative-mass": Case({}, args=("tolerance", "--grade", "G2.5", "--mass-kg", "-1",
                                              "--rpm", "2950"),
                                    file=None, key="mass"),  # mass_kg or --mass-kg
    "solve-without-job": Case({}, args=("solve",), file=None, key="JOB"),
    "time-limit-0": Case({"job.toml": _job()}, args=("solve", "{job}", "--time-limit", "0"),
                         file=None, key="--time-limit"),
    # --- beyond the brief's list: inputs found accepted that should not be
    "time-limit-nan": Case({"job.toml": _job()}, args=("solve", "{job}", "--time-limit", "nan"),
                           file=None, key="--time-limit"),
    "width-0": Case({"job.toml": _job()}, args=("solve", "{job}", "--width", "0"),
                    file=None, key="--width"),
}


def _snapshot(folder: Path) -> dict[Path, tuple[bytes, int]]:
    paths = [p for p in folder.rglob("*") if p.is_file()]
    paths += sorted((REPO_DIR / "catalogs").glob("*.toml"))
    return {p: (p.read_bytes(), p.stat().st_mtime_ns) for p in paths}


def _check_error_line(case: Case, code: int, out: str, err: str, folder: Path) -> None:
    assert code == 2, f"exit {code}, stderr {err!r}"
    assert "Traceback" not in err
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].strip(), f"stderr is {err!r}"
    line = lines[0]
    if case.file is not None:
        assert str(folder / case.file) in line, f"file not named: {line}"
    if case.key is not None:
        assert case.key in line, f"key {case.key} not named: {line}"
    assert "expected" in line, f"no 'expected' in: {line}"
    for text in case.contains:
        assert text in line, f"{text!r} not in: {line}"
    if case.args[0] == "solve":
        assert out == "", "nothing may be printed on stdout for bad input"


def _prepare(case: Case, folder: Path) -> list[str]:
    for name, content in case.files.items():
        path = folder / name
        path.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
    return [a.replace("{job}", str(folder / case.job)) for a in case.args]


@pytest.mark.parametrize("case", CASES.values(), ids=CASES.keys())
def test_bad_input(case, tmp_path, run_cli):
    args = _prepare(case, tmp_path)
    before = _snapshot(tmp_path)
    code, out, err = run_cli(*args)
    assert _snapshot(tmp_path) == before, "an input file was changed"
    _check_error_line(case, code, out, err, tmp_path)


@pytest.mark.parametrize("name", ["missing-job-file", "catalogue-name-unknown", "misspelt-key",
                                  "tolerance-grade-G7", "solve-without-job"])
def test_bad_input_as_subprocess(name, tmp_path):
    case = CASES[name]
    args = _prepare(case, tmp_path)
    before = _snapshot(tmp_path)
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "COLUMNS")}
    proc = subprocess.run([sys.executable, "-m", "placer", *args], cwd=REPO_DIR, env=env,
                          capture_output=True, text=True, encoding="utf-8", timeout=60)
    assert _snapshot(tmp_path) == before, "an input file was changed"
    _check_error_line(case, proc.returncode, proc.stdout, proc.stderr, tmp_path)


def test_good_run_leaves_its_files_alone(tmp_path, run_cli):
    # A job with its own catalogue beside it, solved as JSON and as a sheet.
    (tmp_path / "job.toml").write_text(DRAWER, encoding="utf-8")
    (tmp_path / "drawer.toml").write_text(_catalog(("A", "2.0"), ("B", "3.5")), encoding="utf-8")
    before = _snapshot(tmp_path)
    for extra in ((), ("--json",)):
        code, _, err = run_cli("solve", tmp_path / "job.toml", *extra)
        assert code in (0, 1) and err == ""
    assert _snapshot(tmp_path) == before
