"""Fuzz the readers: every input either works or gets exit 2 with one line, no traceback.

Inputs are the bundled examples and catalogues with their tokens (numbers,
strings, keys) replaced, lines dropped or repeated, by hypothesis.  The run
is bounded in examples and time so CI stays short; ``PLACER_FUZZ_EXAMPLES``
raises the count for a long local run.  Inputs that once broke placer are
kept in tests/fuzz_corpus/ and replayed on every run.
"""

from __future__ import annotations

import os
import re
import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from placer.cli import main

ROOT = Path(__file__).resolve().parent.parent
CORPUS = Path(__file__).resolve().parent / "fuzz_corpus"
EXAMPLES = int(os.environ.get("PLACER_FUZZ_EXAMPLES", "60"))
TOKEN = re.compile(r'"[^"\n]*"|-?\d+(?:\.\d+)?(?:e-?\d+)?|\b[a-z_]+\b')
SNIPPETS = ["0", "-1", "1e308", "-1e-308", "nan", "inf", "-inf", '""', '"x"', "[]", "{}",
            "true", "12.5", "3600", "1000000000", "[1, 2]", "{ a = 1 }", '"G3"', '"../x.toml"',
            "[nan]", "0.0", "-0.0", '"washers-steel"', "[[]]", "9e9", '"\\u0000"', "720",
            "[0, 0, 0]", "8", "mass_g", "gmm", "angle_deg", "capacity"]
SOLVE_FILES = ["supply-fan.toml", "wheel-rim.toml", "blade-fan.toml", "adhesive-hub.toml",
               "pump-impeller-rework.toml"]
FIELD_FILES = ["exhaust-fan-visit.toml"]


def mutate(text: str, data: st.DataObject) -> str:
    lines = text.splitlines()
    for _ in range(data.draw(st.integers(1, 4))):
        choice = data.draw(st.sampled_from(["token", "token", "token", "drop", "repeat"]))
        i = data.draw(st.integers(0, len(lines) - 1))
        if choice == "drop":
            lines.pop(i)
        elif choice == "repeat":
            lines.insert(i, lines[i])
        else:
            tokens = list(TOKEN.finditer(lines[i]))
            if tokens:
                m = data.draw(st.sampled_from(tokens))
                lines[i] = lines[i][:m.start()] + data.draw(st.sampled_from(SNIPPETS)) + \
                    lines[i][m.end():]
        if not lines:
            lines = [""]
    return "\n".join(lines) + "\n"


def check_outcome(code: int, err: str, path: Path) -> None:
    assert code in (0, 1, 2), f"exit {code} for {path}"
    assert "Traceback" not in err
    if code == 2:
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("placer: error:"), err


def run_cli(capsys, argv) -> tuple[int, str]:
    code = main(argv)
    _, err = capsys.readouterr()
    return code, err


def save_if_failing(text: str, name: str, check) -> None:
    """Keep an input that breaks placer in the corpus, then fail."""
    try:
        check()
    except BaseException:
        CORPUS.mkdir(exist_ok=True)
        (CORPUS / f"found-{abs(hash(text)) % 10**10}-{name}").write_text(text)
        raise


FUZZ = settings(max_examples=EXAMPLES, deadline=None, derandomize=False,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])


@FUZZ
@given(st.sampled_from(SOLVE_FILES), st.data())
def test_fuzzed_job_files(tmp_path, capsys, name, data):
    text = mutate((ROOT / "examples" / name).read_text(), data)
    path = tmp_path / name
    path.write_text(text)
    code, err = run_cli(capsys, ["solve", str(path), "--json", "--time-limit", "0.5",
                                 "--samples", "100"])
    save_if_failing(text, name, lambda: check_outcome(code, err, path))


@FUZZ
@given(st.sampled_from(FIELD_FILES), st.data())
def test_fuzzed_session_files(tmp_path, capsys, name, data):
    text = mutate((ROOT / "examples" / name).read_text(), data)
    path = tmp_path / name
    path.write_text(text)
    code, err = run_cli(capsys, ["field", str(path), "--json"])
    save_if_failing(text, name, lambda: check_outcome(code, err, path))


@FUZZ
@given(st.sampled_from(sorted(p.name for p in (ROOT / "catalogs").glob("*.toml"))), st.data())
def test_fuzzed_catalogue_files(tmp_path, capsys, name, data):
    text = mutate((ROOT / "catalogs" / name).read_text(), data)
    catalog = tmp_path / "drawer.toml"
    catalog.write_text(text)
    job = tmp_path / "job.toml"
    job.write_text('[rotor]\nname = "f"\n[[planes]]\nradius_mm = 100.0\npositions = 12\n'
                   'capacity = 2\ncatalog = "drawer.toml"\n'
                   'correction = { gmm = 900.0, angle_deg = 40.0 }\n')
    code, err = run_cli(capsys, ["solve", str(job), "--json", "--time-limit", "0.5"])
    save_if_failing(text, "catalog-" + name, lambda: check_outcome(code, err, catalog))


@FUZZ
@given(st.binary(max_size=300))
def test_random_bytes_as_a_job_file(tmp_path, capsys, raw):
    path = tmp_path / "job.toml"
    path.write_bytes(raw)
    code, err = run_cli(capsys, ["solve", str(path)])
    check_outcome(code, err, path)
    assert code == 2


@pytest.mark.parametrize("path", sorted(CORPUS.glob("*.toml")), ids=lambda p: p.name)
def test_corpus_of_inputs_that_once_broke_placer(tmp_path, capsys, path):
    target = tmp_path / "input.toml"
    raw = path.read_bytes()
    target.write_bytes(raw)
    text = raw.decode("utf-8", errors="replace")
    command = "field" if "[readings]" in text else "solve"
    if "catalog-" in path.name:
        (tmp_path / "drawer.toml").write_bytes(raw)
        target.write_text('[rotor]\nname = "f"\n[[planes]]\nradius_mm = 100.0\npositions = 12\n'
                          'capacity = 2\ncatalog = "drawer.toml"\n'
                          'correction = { gmm = 900.0, angle_deg = 40.0 }\n')
    extra = ["--time-limit", "1"] if command == "solve" else []
    started = time.perf_counter()
    code, err = run_cli(capsys, [command, str(target), "--json", *extra])
    check_outcome(code, err, target)
    assert time.perf_counter() - started < 30, "no hang"


@FUZZ
@given(st.data())
def test_fuzzed_batch_readings(tmp_path, capsys, data):
    text = mutate((ROOT / "examples" / "fan-line-readings.csv").read_text(), data)
    readings = tmp_path / "rows.csv"
    readings.write_text(text)
    code, err = run_cli(capsys, ["batch", str(ROOT / "examples" / "fan-line-template.toml"),
                                 str(readings), "--out", str(tmp_path / "out"), "--force",
                                 "--jobs", "1"])
    save_if_failing(text, "batch-rows.csv", lambda: check_outcome(code, err, readings))
