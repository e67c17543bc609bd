"""Opening input files (placer.io.inputs): regular files of bounded size, UTF-8, BOM or not.

Every file kind placer reads goes through :func:`placer.io.inputs.read_text`.
What is checked against outside the project:

* a FIFO opened with ``O_NONBLOCK`` for reading returns at once, and ``fstat``
  tells it, ``/dev/zero`` and a folder from a regular file ([POSIX] ``open``,
  ``sys/stat.h``); a blocking read would hang, so every call here runs under
  a SIGALRM bound;
* the UTF-8 byte-order mark is the bytes EF BB BF ([Unicode] 23.8), and Python's
  ``utf-8-sig`` codec drops it the same way;
* NAME_MAX of 255 bytes per path part on Linux file systems: ``os.pathconf``
  is asked where it answers.

Every refusal is one line on stderr naming the file and what was expected, exit
code 2, no traceback (the project's rule for bad input; common practice, no source).
"""

from __future__ import annotations

import os
import re
import stat
import sys
from pathlib import Path

import pytest

from placer.errors import JobError
from placer.io.inputs import name_problem, read_text, size_text
from placer.limits import MAX_FILE_BYTES, MAX_NAME_BYTES, MAX_READINGS_BYTES

REPO = Path(__file__).resolve().parents[2]
EXAMPLES = REPO / "examples"
sys.path.insert(0, str(REPO / "tests"))
from deadline import deadline  # noqa: E402
from test_fuzz import CATALOGUE_JOB, ROWS_TEMPLATE, rows_csv, rows_jsonl  # noqa: E402

BOM = "\ufeff".encode("utf-8")


def bounded(seconds: float = 10.0):
    """Fail instead of hanging: a blocking open or read is interrupted by SIGALRM."""
    return deadline(seconds)


def one_line(code: int, err: str, file: str, *parts: str) -> str:
    assert code == 2, err
    assert "Traceback" not in err
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("placer: error: "), err
    assert file in lines[0], lines[0]
    assert "(expected " in lines[0], lines[0]
    for part in parts:
        assert part in lines[0], lines[0]
    return lines[0]


# ------------------------------------------------------------ the one reader
def test_bom_bytes_are_the_unicode_byte_order_mark():
    # [Unicode] 23.8: U+FEFF in UTF-8 is EF BB BF.
    assert BOM == b"\xef\xbb\xbf"


def test_read_text_drops_the_bom_as_utf_8_sig_does(tmp_path):
    for raw in (b"a = 1\n", BOM + b"a = 1\n", BOM + BOM + b"x", b"", BOM):
        path = tmp_path / "f.toml"
        path.write_bytes(raw)
        assert read_text(path, JobError, "job file") == raw.decode("utf-8-sig")


def test_not_utf8_names_the_byte_counted_from_the_file_start(tmp_path):
    path = tmp_path / "f.toml"
    path.write_bytes(BOM + b"ab\xff")
    with pytest.raises(JobError) as info:
        read_text(path, JobError, "job file")
    assert "byte 5 is not UTF-8" in str(info.value)  # 3 of the mark, then 'a', 'b'


def test_a_fifo_is_refused_at_once(tmp_path):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)
    with bounded(), pytest.raises(JobError) as info:
        read_text(fifo, JobError, "job file")
    assert "not a regular file" in str(info.value)


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="no /dev/zero here")
def test_dev_zero_is_refused_before_any_read():
    with bounded(), pytest.raises(JobError) as info:
        read_text(Path("/dev/zero"), JobError, "job file")
    assert "not a regular file" in str(info.value)


def test_a_file_one_byte_too_large_is_refused(tmp_path):
    path = tmp_path / "big.toml"
    path.write_bytes(b"#" * MAX_FILE_BYTES)
    assert len(read_text(path, JobError, "job file")) == MAX_FILE_BYTES
    path.write_bytes(b"#" * (MAX_FILE_BYTES + 1))
    with pytest.raises(JobError) as info:
        read_text(path, JobError, "job file")
    assert f"at most {size_text(MAX_FILE_BYTES)}" in str(info.value)


def test_size_text():
    assert size_text(1_000_000) == "1 MB"
    assert size_text(64_000_000) == "64 MB"
    assert size_text(1234) == "1234 bytes"
    assert MAX_READINGS_BYTES > MAX_FILE_BYTES


def test_name_limit_is_the_file_systems(tmp_path):
    # The limit is NAME_MAX where the system says it (Linux: 255, from memory).
    try:
        name_max = os.pathconf(tmp_path, "PC_NAME_MAX")
    except (OSError, ValueError, AttributeError):
        pytest.skip("the system does not say its NAME_MAX")
    assert MAX_NAME_BYTES <= name_max
    assert name_problem(tmp_path / ("a" * MAX_NAME_BYTES)) is None
    assert "256 bytes" in name_problem(tmp_path / ("a" * 256))
    assert "256 bytes" in name_problem(tmp_path / ("é" * 128))  # 2 bytes each in UTF-8
    assert "NUL" in name_problem("a\x00b")


# ------------------------------------------------------- through the command line
def _blade_list(folder: Path) -> Path:
    path = folder / "blades.csv"
    path.write_text("id,moment_gmm\n" + "".join(f"B{k},{1000 + 7 * k}\n" for k in range(8)),
                    encoding="utf-8")
    return path


def _kind_argv(kind: str, folder: Path, raw: bytes) -> tuple[list[str], Path]:
    """The command that reads ``raw`` as a file of ``kind`` (written in ``folder``)."""
    out = ["--out", str(folder / "out"), "--force", "--jobs", "1", "--effort", "0.01"]
    if kind in ("csv", "jsonl"):
        (folder / "t.toml").write_text(ROWS_TEMPLATE, encoding="utf-8")
        path = folder / f"rows.{kind}"
        path.write_bytes(raw)
        return ["batch", str(folder / "t.toml"), str(path), *out], path
    if kind == "template":
        path = folder / "template.toml"
        path.write_bytes(raw)
        (folder / "rows.csv").write_text(rows_csv(3), encoding="utf-8")
        return ["batch", str(path), str(folder / "rows.csv"), *out], path
    if kind == "catalog":
        path = folder / "drawer.toml"
        path.write_bytes(raw)
        (folder / "job.toml").write_text(CATALOGUE_JOB, encoding="utf-8")
        return ["solve", str(folder / "job.toml"), "--json", "--effort", "0.01"], path
    if kind == "blade-list":
        path = folder / "list.csv"
        path.write_bytes(raw)
        return ["blades", str(path), "--json", "--effort", "0.01"], path
    path = folder / f"{kind}.toml"
    path.write_bytes(raw)
    if kind == "session":
        return ["field", str(path), "--json", "--max-parts", "2", "--effort", "0.01",
                "--db", str(folder / "none.sqlite")], path
    if kind == "blades":
        return ["blades", str(path), "--json", "--effort", "0.01"], path
    return ["solve", str(path), "--json", "--effort", "0.01"], path


def _good(kind: str, folder: Path) -> bytes:
    return {"job": (EXAMPLES / "supply-fan.toml").read_bytes(),
            "catalog": (REPO / "catalogs" / "washers-steel.toml").read_bytes(),
            "session": (EXAMPLES / "exhaust-fan-visit.toml").read_bytes(),
            "template": ROWS_TEMPLATE.encode(), "csv": rows_csv(3).encode(),
            "jsonl": rows_jsonl(3).encode(), "blades": (EXAMPLES / "fan-reblade.toml").read_bytes(),
            "blade-list": _blade_list(folder).read_bytes()}[kind]


def untimed(text: str) -> str:
    return re.sub(r'"[a-z_]*_s": [-+0-9.e]+|[0-9.]+ s\b', "", text)


KINDS = ["job", "catalog", "session", "template", "csv", "jsonl", "blades", "blade-list"]


@pytest.mark.parametrize("kind", KINDS)
def test_a_byte_order_mark_is_accepted_by_every_kind(kind, tmp_path, run_cli):
    good = _good(kind, tmp_path)
    argv, _ = _kind_argv(kind, tmp_path, good)
    plain = run_cli(*argv)
    argv, _ = _kind_argv(kind, tmp_path, BOM + good)
    with_bom = run_cli(*argv)
    assert plain[0] in (0, 1) and "error" not in plain[2], plain
    assert with_bom[0] == plain[0], with_bom
    # The same output (times taken aside): the mark is not part of the text.
    assert untimed(with_bom[1]) == untimed(plain[1])


@pytest.mark.parametrize("kind", KINDS)
def test_a_fifo_of_every_kind_is_one_line_at_once(kind, tmp_path, run_cli):
    argv, path = _kind_argv(kind, tmp_path, b"")
    path.unlink()
    os.mkfifo(path)
    with bounded():
        code, _, err = run_cli(*argv)
    one_line(code, err, str(path), "not a regular file", "expected a regular file of at most")


@pytest.mark.parametrize("kind", KINDS)
def test_a_folder_of_every_kind_is_one_line(kind, tmp_path, run_cli):
    argv, path = _kind_argv(kind, tmp_path, b"")
    path.unlink()
    path.mkdir()
    code, _, err = run_cli(*argv)
    one_line(code, err, str(path), "is a folder")


@pytest.mark.parametrize("kind", KINDS)
def test_a_missing_file_of_every_kind_is_one_line(kind, tmp_path, run_cli):
    argv, path = _kind_argv(kind, tmp_path, b"")
    path.unlink()
    code, _, err = run_cli(*argv)
    # A missing catalogue is named by the job's key that names it.
    one_line(code, err, str(path), "not found", "expected a path relative to the job file"
             if kind == "catalog" else "expected an existing file")


@pytest.mark.skipif(os.geteuid() == 0, reason="root may read any file")
@pytest.mark.parametrize("kind", KINDS)
def test_an_unreadable_file_of_every_kind_is_one_line(kind, tmp_path, run_cli):
    argv, path = _kind_argv(kind, tmp_path, _good(kind, tmp_path))
    path.chmod(0)
    try:
        code, _, err = run_cli(*argv)
    finally:
        path.chmod(0o600)
    one_line(code, err, str(path), "permission denied")


def test_a_too_large_readings_file_is_one_line(tmp_path, run_cli, monkeypatch):
    import placer.io.batchreadings as readings

    monkeypatch.setattr(readings, "MAX_READINGS_BYTES", 100)
    argv, path = _kind_argv("csv", tmp_path, rows_csv(12).encode())
    code, _, err = run_cli(*argv)
    one_line(code, err, str(path), "too large", "expected a regular file of at most 100 bytes")


def test_dev_zero_as_a_job_is_one_line(run_cli):
    with bounded():
        code, _, err = run_cli("solve", "/dev/zero")
    one_line(code, err, "/dev/zero", "not a regular file")


LONG = "n" * (MAX_NAME_BYTES + 1)


def test_over_long_path_arguments_are_one_line(tmp_path, run_cli):
    long_file = str(tmp_path / f"{LONG}.toml")
    for argv, flag in ((["solve", long_file], "JOB"),
                       (["solve", str(EXAMPLES / "supply-fan.toml"), "--sheet",
                         str(tmp_path / f"{LONG}.pdf")], "--sheet"),
                       (["field", long_file], "SESSION"),
                       (["machines", "--db", str(tmp_path / LONG)], "--db"),
                       (["history", "M1", "--db", str(tmp_path / LONG)], "--db"),
                       (["batch", long_file, str(tmp_path / "r.csv")], "TEMPLATE"),
                       (["new", "job", long_file], "FILE"),
                       (["new", "example", "--folder", str(tmp_path / LONG)], "--folder"),
                       (["blades", long_file], "FILE")):
        code, _, err = run_cli(*argv)
        one_line(code, err, str(tmp_path)[:30], flag,
                 f"expected a name or a path of at most {MAX_NAME_BYTES} bytes per part")


def test_over_long_catalogue_names_are_one_line(tmp_path, run_cli):
    # `placer catalogs NAME`, and a catalogue named in a job, a template and a session.
    code, _, err = run_cli("catalogs", LONG)
    one_line(code, err, "NAME", f"at most {MAX_NAME_BYTES} bytes per part")
    job = (EXAMPLES / "supply-fan.toml").read_text(encoding="utf-8")
    assert 'catalog = "washers-steel"' in job
    (tmp_path / "job.toml").write_text(job.replace('catalog = "washers-steel"',
                                                   f'catalog = "{LONG}"', 1), encoding="utf-8")
    code, _, err = run_cli("solve", tmp_path / "job.toml")
    one_line(code, err, str(tmp_path / "job.toml"), "planes[1].catalog",
             f"at most {MAX_NAME_BYTES} bytes per part")
    (tmp_path / "t.toml").write_text(ROWS_TEMPLATE.replace('"washers-steel"', f'"{LONG}"'),
                                     encoding="utf-8")
    (tmp_path / "rows.csv").write_text(rows_csv(3), encoding="utf-8")
    code, _, err = run_cli("batch", tmp_path / "t.toml", tmp_path / "rows.csv",
                           "--out", tmp_path / "out")
    one_line(code, err, str(tmp_path / "t.toml"), "planes[1].catalog")
    session = (EXAMPLES / "exhaust-fan-visit.toml").read_text(encoding="utf-8")
    assert "catalog = " in session
    session = re.sub(r'catalog = "[^"]*"', f'catalog = "{LONG}/x.toml"', session, count=1)
    (tmp_path / "s.toml").write_text(session, encoding="utf-8")
    code, _, err = run_cli("field", tmp_path / "s.toml", "--db", tmp_path / "none.sqlite")
    one_line(code, err, str(tmp_path / "s.toml"), ".catalog",
             f"at most {MAX_NAME_BYTES} bytes per part")
