"""Fixtures shared by the command-line tests: run placer in-process, write small files."""

from __future__ import annotations

import json
import tomllib
from collections.abc import Callable
from pathlib import Path

import pytest

from placer.cli import main

REPO_DIR = Path(__file__).resolve().parent.parent
JOB_TABLES = {"job", "rotor", "planes"}


REQUIREMENT_KEYS = ("correction", "unbalance")


def example_kind(path: Path) -> str:
    """What a bundled example is: "blades", "session" (field readings), "template" or "job".

    A blade file (`placer blades`) lists [[blades]]; a batch template is a job
    file whose planes carry no correction (each row of the readings file brings
    them); a `placer solve` job has only [rotor] and [[planes]] and a correction
    on every plane.
    """
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    if "blades" in data:
        return "blades"
    if not set(data) <= JOB_TABLES:
        return "session"
    if not any(k in plane for plane in data.get("planes", []) for k in REQUIREMENT_KEYS):
        return "template"
    return "job"


def example_files(kind: str) -> list[Path]:
    """The bundled examples of one kind (see `example_kind`), sorted by name."""
    return sorted(p for p in (REPO_DIR / "examples").glob("*.toml") if example_kind(p) == kind)


EXAMPLE_FILES = example_files("job")


@pytest.fixture
def run_cli(capsys: pytest.CaptureFixture[str],
            monkeypatch: pytest.MonkeyPatch) -> Callable[..., tuple[int, str, str]]:
    """Run ``placer.cli.main`` in-process; returns (exit code, stdout, stderr).

    argparse ends a usage mistake with ``SystemExit`` instead of a returned
    code; its code is returned the same way.
    """
    monkeypatch.delenv("FORCE_COLOR", raising=False)

    def run(*args: object) -> tuple[int, str, str]:
        capsys.readouterr()
        try:
            code = main([str(a) for a in args])
        except SystemExit as exc:
            code = exc.code
        out, err = capsys.readouterr()
        return code, out, err

    return run


@pytest.fixture
def solve_json(run_cli: Callable[..., tuple[int, str, str]]) -> Callable[[Path], tuple[int, dict]]:
    """``placer solve JOB --json`` in-process; returns (exit code, parsed JSON)."""

    def solve(job: Path) -> tuple[int, dict]:
        code, out, err = run_cli("solve", job, "--json")
        assert err == "", err
        return code, json.loads(out)

    return solve


@pytest.fixture
def write_file(tmp_path: Path) -> Callable[[str, str | bytes], Path]:
    """Write text (UTF-8) or bytes to a file in ``tmp_path``; returns its path."""

    def write(name: str, content: str | bytes) -> Path:
        path = tmp_path / name
        path.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
        return path

    return write


@pytest.fixture(params=EXAMPLE_FILES, ids=[p.name for p in EXAMPLE_FILES])
def example_job(request: pytest.FixtureRequest) -> Path:
    """Each bundled example job file (for `placer solve`) in turn."""
    return request.param
