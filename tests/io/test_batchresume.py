"""``placer batch --resume`` replaces only outputs of the same run: placer/io/batchresume.py.

What is checked against: the files' bytes (SHA-256 [FIPS180-4] of each, before and
after), and the rule that a file placer cannot show it wrote for this run is never
replaced without ``--force`` (the project's rule for every output; common practice,
no source).
"""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest

from placer.errors import OutputError
from placer.io.batchresults import BatchPaths, run_batch

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


@pytest.fixture
def files(tmp_path):
    """The bundled fan-line template and readings, copied; the output prefix."""
    template = tmp_path / "t.toml"
    readings = tmp_path / "r.csv"
    shutil.copy(EXAMPLES / "fan-line-template.toml", template)
    shutil.copy(EXAMPLES / "fan-line-readings.csv", readings)
    return template, readings, tmp_path / "out"


def digests(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.iterdir()) if p.is_file()}


def stop_after(count: int):
    def progress(done: int, total: int) -> None:
        if done == count:
            raise KeyboardInterrupt
    return progress


def refused(run_cli, files, name: str) -> str:
    template, readings, prefix = files
    before = digests(prefix.parent)
    code, out, err = run_cli("batch", template, readings, "--out", prefix, "--jobs", "1",
                             "--resume")
    assert code == 2 and out == "" and err.count("\n") == 1, err
    assert err.startswith("placer: error: --out: ") and f"{name}' was not written by this " \
        "batch run" in err and "--force" in err
    assert digests(prefix.parent) == before          # nothing written, nothing replaced
    return err


@pytest.mark.parametrize("log", [None, b"", b'{"serial": "A"}\n'],
                         ids=["no log", "empty log", "log without the run's header"])
def test_a_foreign_table_is_never_replaced(run_cli, files, log):
    _, _, prefix = files
    Path(f"{prefix}.csv").write_bytes(b"serial,price\nA,3\n")
    if log is not None:
        Path(f"{prefix}.jsonl").write_bytes(log)
    refused(run_cli, files, "out.csv" if log is None else "out.jsonl")


@pytest.mark.parametrize("name, text", [
    ("out.summary.json", b'{"run": "someone else"}\n'),
    ("out.errors.csv", b"line,serial,message\n9,X,not ours\n"),
    ("out.csv", b"serial,price\nA,3\n"),
])
def test_a_foreign_file_beside_an_interrupted_run_is_refused(run_cli, files, name, text):
    template, readings, prefix = files
    with pytest.raises(KeyboardInterrupt):
        run_batch(template, readings, prefix, jobs=1, progress=stop_after(3))
    (prefix.parent / name).write_bytes(text)
    refused(run_cli, files, name)


def test_the_summary_of_another_run_is_refused(run_cli, files, tmp_path):
    template, readings, prefix = files
    run_batch(template, readings, prefix, jobs=1)
    other = tmp_path / "other.csv"
    lines = readings.read_text(encoding="utf-8").splitlines()
    other.write_text("\n".join(lines[:-1]) + "\n", encoding="utf-8")
    run_batch(template, other, tmp_path / "b", jobs=1)
    shutil.copy(tmp_path / "b.summary.json", Path(f"{prefix}.summary.json"))
    refused(run_cli, files, "out.summary.json")


def test_an_interrupted_run_resumes_with_its_own_outputs(files):
    template, readings, prefix = files
    whole, whole_paths = run_batch(template, readings, prefix.with_name("whole"), jobs=1)
    with pytest.raises(KeyboardInterrupt):
        run_batch(template, readings, prefix, jobs=1, progress=stop_after(5))
    paths = BatchPaths.from_prefix(prefix)
    # The table was written whole when the batch stopped: the rotors solved so far.
    assert paths.results_csv.read_text().count("\n") == 1 + 5
    assert not paths.summary_json.exists()
    summary, _ = run_batch(template, readings, prefix, jobs=1, resume=True)
    assert summary.already_done == 5 and summary.solved == whole.solved
    assert paths.results_csv.read_bytes() == whole_paths.results_csv.read_bytes()
    assert paths.errors_csv.read_bytes() == whole_paths.errors_csv.read_bytes()
    # A finished run resumed again solves nothing and keeps its table and log.
    log = paths.results_jsonl.read_bytes()
    again, _ = run_batch(template, readings, prefix, jobs=1, resume=True)
    assert again.already_done == whole.solved and paths.results_jsonl.read_bytes() == log
    stored = json.loads(paths.summary_json.read_text(encoding="utf-8"))
    header = json.loads(log.split(b"\n")[0])
    assert stored["run"] == header["run"] and header["placer_batch"] == 1


def test_readings_mended_after_a_stop_resume_over_the_old_errors_file(files):
    # The errors file written before the stop is the run's (its digest is in the log),
    # though the mended readings give another one.
    template, readings, prefix = files
    text = readings.read_text(encoding="utf-8")
    header = text.splitlines()[0]
    columns = header.count(",")
    bad = text + "BAD-1" + ",x" * columns + "\n"
    readings.write_text(bad, encoding="utf-8")
    with pytest.raises(KeyboardInterrupt):
        run_batch(template, readings, prefix, jobs=1, progress=stop_after(3))
    paths = BatchPaths.from_prefix(prefix)
    assert "BAD-1" in paths.errors_csv.read_text(encoding="utf-8")
    readings.write_text(text, encoding="utf-8")
    _, fresh = run_batch(template, readings, prefix.with_name("fresh"), jobs=1)
    summary, _ = run_batch(template, readings, prefix, jobs=1, resume=True)
    assert summary.already_done == 3
    assert paths.errors_csv.read_bytes() == fresh.errors_csv.read_bytes()
    assert "BAD-1" not in paths.errors_csv.read_text(encoding="utf-8")
    own = [json.loads(line) for line in paths.results_jsonl.read_text().splitlines()
           if '"placer_batch"' in line]
    assert len(own) == 2 and own[1]["run"] == own[0]["run"]   # the header, then the new errors


def test_force_starts_again_over_anything(run_cli, files):
    template, readings, prefix = files
    Path(f"{prefix}.csv").write_bytes(b"serial,price\nA,3\n")
    code, _, err = run_cli("batch", template, readings, "--out", prefix, "--jobs", "1",
                           "--force")
    assert code in (0, 1) and err == ""
    assert Path(f"{prefix}.csv").read_text().startswith("serial,1_parts")


def test_a_log_cut_inside_its_header_is_not_the_run(files):
    template, readings, prefix = files
    run_batch(template, readings, prefix, jobs=1)
    paths = BatchPaths.from_prefix(prefix)
    paths.results_jsonl.write_bytes(paths.results_jsonl.read_bytes()[:20])
    with pytest.raises(OutputError, match="line 1 is not the header"):
        run_batch(template, readings, prefix, jobs=1, resume=True)
