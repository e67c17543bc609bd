"""Text the sheet's font cannot draw (placer.views.sheet.glyphs).

Checked against matplotlib itself: the characters the default font has are
read from its FT2Font (``font_manager.findfont``, ``get_font``,
``get_charmap``), independently of placer; that DejaVu Sans, matplotlib's
default, has Latin-1 and Greek but no CJK or Devanagari glyphs is from memory
and checked against that charmap here.  matplotlib reads ``$...$`` in a text
as a formula unless told not to (``Text(parse_math=False)``); an unclosed
formula stops the drawing with ValueError (checked below).  The project's rule
for output (common practice, no source): one note on stderr, no warnings.
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

matplotlib = pytest.importorskip("matplotlib")

from matplotlib.font_manager import FontProperties, findfont, get_font  # noqa: E402

from placer.views.sheet.glyphs import REPLACEMENT, drawable, take_undrawn  # noqa: E402

REPO = Path(__file__).resolve().parents[2]
EXAMPLES = REPO / "examples"
NAME = "Supply fan impeller SF-2, Ashcombe Lane boiler house"
ODD_NAME = "送风机 पंखा $x^$ fan"


def _charmap(weight: str) -> set[int]:
    return set(get_font(findfont(FontProperties(weight=weight))).get_charmap())


def test_the_default_font_lacks_cjk_and_devanagari():
    for weight in ("normal", "bold"):
        have = _charmap(weight)
        assert ord("é") in have and ord("Ω") in have and ord("°") in have
        assert ord("送") not in have and ord("प") not in have


def test_drawable_keeps_what_the_font_has_and_marks_the_rest():
    take_undrawn()
    have = _charmap("normal") & _charmap("bold")
    text = "Lüfter Ω 12° 送风机 पंखा\nnext"
    expected = "".join(ch if ch == "\n" or ord(ch) in have else REPLACEMENT for ch in text)
    assert drawable(text) == expected == "Lüfter Ω 12° ??? ????\nnext"
    assert drawable("plain ASCII $x^$") == "plain ASCII $x^$"
    assert drawable("送", record=False) == REPLACEMENT
    assert take_undrawn() == [text]          # the measured one is not recorded
    assert take_undrawn() == []


def test_matplotlib_reads_dollars_as_a_formula_unless_told_not_to():
    from matplotlib.figure import Figure

    fig = Figure()
    fig.text(0.1, 0.1, "$x^$")
    with pytest.raises(ValueError):
        fig.savefig(os.devnull, format="svg")
    fig = Figure()
    fig.text(0.1, 0.1, "$x^$", parse_math=False)
    fig.savefig(os.devnull, format="svg")


def _job_with_name(folder: Path, name: str, source: str = "supply-fan.toml",
                   old: str = NAME) -> Path:
    text = (EXAMPLES / source).read_text(encoding="utf-8")
    assert f'name = "{old}"' in text
    path = folder / "job.toml"
    path.write_text(text.replace(f'name = "{old}"', f'name = "{name}"', 1), encoding="utf-8")
    return path


def test_a_sheet_for_a_name_in_other_scripts_says_so_once(tmp_path):
    # A separate process: matplotlib's warnings reach stderr as a user would see them.
    job = _job_with_name(tmp_path, ODD_NAME)
    env = {k: v for k, v in os.environ.items() if k not in ("FORCE_COLOR", "COLUMNS")}
    proc = subprocess.run([sys.executable, "-m", "placer", "solve", str(job), "--sheet",
                           str(tmp_path / "sheet.svg"), "--json", "--effort", "0.01"],
                          cwd=REPO, env=env, capture_output=True, text=True, encoding="utf-8",
                          timeout=120)
    assert proc.returncode in (0, 1), proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 2, proc.stderr
    assert lines[0].startswith("placer: sheet written to")
    assert lines[1] == (f"placer: note: the sheet's font cannot draw some characters of "
                        f"'{ODD_NAME}'; they are shown as '?'")
    assert list(tmp_path.glob("sheet*.svg"))


def test_a_plain_name_gives_no_note(tmp_path, run_cli):
    code, _, err = run_cli("solve", EXAMPLES / "supply-fan.toml", "--sheet",
                           tmp_path / "sheet.svg", "--json", "--effort", "0.01")
    assert code in (0, 1) and "note" not in err, err


def test_blade_sheet_and_visit_report_say_so_once(tmp_path, run_cli):
    blades = (EXAMPLES / "fan-reblade.toml").read_text(encoding="utf-8")
    old = re.search(r'^name = "([^"]*)"', blades, re.M).group(1)
    path = _job_with_name(tmp_path, "軸流ファン $5", "fan-reblade.toml", old)
    code, _, err = run_cli("blades", path, "--sheet", tmp_path / "disc.pdf", "--json",
                           "--effort", "0.01")
    assert code in (0, 1), err
    assert err.count("placer: note: the sheet's font cannot draw") == 1, err
    visit = (EXAMPLES / "exhaust-fan-visit.toml").read_text(encoding="utf-8")
    old = re.search(r'^name = "([^"]*)"', visit, re.M).group(1)
    path = tmp_path / "visit.toml"
    path.write_text(visit.replace(f'name = "{old}"', 'name = "排风机 3"', 1), encoding="utf-8")
    code, _, err = run_cli("field", path, "--sheet", tmp_path / "report.pdf", "--json",
                           "--max-parts", "2", "--db", tmp_path / "none.sqlite")
    assert code in (0, 1, 4), err
    assert err.count("placer: note: the sheet's font cannot draw") == 1, err
    assert "Traceback" not in err
