"""Fuzz the blade-file reader: every input works or gets exit 2 with one line, no traceback.

The bundled blade file and a CSV blade list are mutated by hypothesis (tokens
replaced by edge values, lines dropped or repeated), and random bytes are read
as both kinds; the contract is the one of tests/test_fuzz.py (the project's
rule for bad input, common practice, no source): exit 0, 1 or 2; on 2 exactly
one line on stderr starting "placer: error:"; never a traceback; never a hang;
the JSON strict (RFC 8259, section 6).  The same helpers run the check.
"""

from __future__ import annotations

from pathlib import Path

from hypothesis import given
from hypothesis import strategies as st
from test_fuzz import (
    FUZZ,
    TRIED,
    check_outcome,
    mutate,
    mutate_csv,
    report_counts,
    run_cli,
)

ROOT = Path(__file__).resolve().parent.parent
BLADE_FILE = (ROOT / "examples" / "fan-reblade.toml").read_text(encoding="utf-8")
BLADE_LIST = """id,moment_gmm,axial_moment_gmm2,frequency_hz,slot,stays
A1,12480.5,-310.0,181.2,3,
A2,12510.0,120.5,183.0,1,yes
A3,12466.25,40.0,185.5,2,false
A4,12530,-75.0,182.0,4,0
A5,12491.0,10.0,184.4,5,
A6,12502.5,-22.0,180.9,6,
"""


__all__ = ["report_counts"]  # the module fixture that prints how many inputs were tried


def _run(capsys, path: Path) -> None:
    TRIED[f"blades{path.suffix}"] += 1
    code, err, out = run_cli(capsys, ["blades", path, "--json", "--effort", "0.001"])
    check_outcome(code, err, path, out)


@FUZZ
@given(st.data())
def test_fuzzed_blade_files(tmp_path, capsys, data):
    path = tmp_path / "blades.toml"
    path.write_text(mutate(BLADE_FILE, data), encoding="utf-8")
    _run(capsys, path)


@FUZZ
@given(st.data())
def test_fuzzed_blade_lists(tmp_path, capsys, data):
    path = tmp_path / "blades.csv"
    path.write_text(mutate_csv(BLADE_LIST, data), encoding="utf-8")
    _run(capsys, path)


@FUZZ
@given(st.data(), st.sampled_from([".toml", ".csv"]))
def test_fuzzed_blade_files_with_a_byte_order_mark(tmp_path, capsys, data, suffix):
    # [Unicode] 23.8: EF BB BF may start a UTF-8 text; both blade kinds read it.
    text = mutate(BLADE_FILE, data) if suffix == ".toml" else mutate_csv(BLADE_LIST, data)
    path = tmp_path / f"blades{suffix}"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    _run(capsys, path)


@FUZZ
@given(raw=st.one_of(st.binary(max_size=400), st.text(max_size=200).map(str.encode)),
       suffix=st.sampled_from([".toml", ".csv"]))
def test_random_bytes_as_blade_files(tmp_path, capsys, raw, suffix):
    path = tmp_path / f"blades{suffix}"
    path.write_bytes(raw)
    _run(capsys, path)
