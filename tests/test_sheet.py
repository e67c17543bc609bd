"""The printable fitting sheet: files, pages, and where the drawing puts things.

Positions are checked against the job file's own geometry and the drawing
convention written in placer/sheet.py (reference mark at the top; angles
counterclockwise on the page for "against rotation" and "counterclockwise",
clockwise for "with rotation" and "clockwise"), recomputed here with numpy.
Page counts are read from the PDF's own page objects (PDF 1.7, ISO 32000-1,
7.7.3: one /Type /Page dictionary per page, /Count in the /Pages node).
"""

from __future__ import annotations

import dataclasses
import importlib.util
import math
import re
import tomllib
from datetime import date
from pathlib import Path

import numpy as np
import pytest

from placer.cli import main
from placer.errors import InputError
from placer.jobfile import read_job
from placer.plan import FittedPart
from placer.sheet import (MATPLOTLIB_MISSING, PNG_DPI, angles_counterclockwise, page_angle_deg,
                          rotation_clockwise, spread_deg, write_sheet)
from placer.solve import solve_job

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
SUPPLY_FAN = EXAMPLES / "supply-fan.toml"
WHEN = date(2025, 3, 14)


def _job_files() -> list[Path]:
    """Example files for `placer solve` (only [rotor] and [[planes]]), not field sessions."""
    return sorted(p for p in EXAMPLES.glob("*.toml")
                  if set(tomllib.loads(p.read_text(encoding="utf-8"))) <= {"rotor", "planes"})


@pytest.fixture(scope="module")
def supply_fan():
    return solve_job(read_job(SUPPLY_FAN))


def _pdf_pages(data: bytes) -> tuple[int, list[int]]:
    """Page dictionaries and the /Count of the /Pages node(s) in an uncompressed PDF body."""
    pages = len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data))
    counts = [int(m) for m in re.findall(rb"/Type\s*/Pages\b[^>]*?/Count\s+(\d+)", data)]
    counts += [int(m) for m in re.findall(rb"/Count\s+(\d+)[^>]*?/Type\s*/Pages\b", data)]
    return pages, counts


def _unit_circle_deg(xy: tuple[float, float]) -> tuple[float, float]:
    return float(np.hypot(*xy)), float(np.degrees(np.arctan2(xy[1], xy[0])) % 360.0)


# --- files ---------------------------------------------------------------------------

def test_pdf_has_one_page_per_plane(supply_fan, tmp_path):
    target = tmp_path / "plan.pdf"
    pages = write_sheet(supply_fan, target, when=WHEN)
    data = target.read_bytes()
    assert data.startswith(b"%PDF")
    count, totals = _pdf_pages(data)
    assert count == len(supply_fan.planes) == 2
    assert totals == [2]
    assert [p.path for p in pages] == [target, target]
    assert [p.plane for p in pages] == [1, 2]


@pytest.mark.parametrize("job", _job_files(), ids=lambda p: p.name)
def test_every_example_renders_to_pdf(job, tmp_path):
    result = solve_job(read_job(job))
    target = tmp_path / f"{job.stem}.pdf"
    write_sheet(result, target, when=WHEN)
    count, _ = _pdf_pages(target.read_bytes())
    assert count == len(result.planes)


def test_png_one_file_per_plane_and_svg(supply_fan, tmp_path):
    pages = write_sheet(supply_fan, tmp_path / "plan.png", when=WHEN)
    assert [p.path.name for p in pages] == ["plan-1.png", "plan-2.png"]
    assert all(p.path.read_bytes().startswith(b"\x89PNG") for p in pages)
    assert not (tmp_path / "plan.png").exists()
    svg = write_sheet(supply_fan, tmp_path / "plan.svg", when=WHEN)
    assert [p.path.name for p in svg] == ["plan-1.svg", "plan-2.svg"]
    assert "<svg" in svg[0].path.read_text(encoding="utf-8")[:2000]


def test_one_plane_job_writes_the_path_given(tmp_path):
    result = solve_job(read_job(EXAMPLES / "blade-fan.toml"))
    pages = write_sheet(result, tmp_path / "fan.png", when=WHEN)
    assert [p.path.name for p in pages] == ["fan.png"]


def test_png_is_a4_at_150_dpi(supply_fan, tmp_path):
    from matplotlib.image import imread

    image = imread(write_sheet(supply_fan, tmp_path / "a.png", when=WHEN)[0].path)
    # A4 is 210 mm x 297 mm = 8.27 in x 11.69 in (ISO 216); at 150 dpi, to a pixel.
    assert abs(image.shape[0] - 11.69 * PNG_DPI) <= 1
    assert abs(image.shape[1] - 8.27 * PNG_DPI) <= 1


@pytest.mark.parametrize("name", ["plan", "plan.jpg", "plan.PDF.txt"])
def test_unknown_suffix_is_refused(supply_fan, tmp_path, name):
    with pytest.raises(InputError) as caught:
        write_sheet(supply_fan, tmp_path / name)
    assert caught.value.key == "--sheet"
    assert caught.value.expected == ".pdf, .png or .svg"
    assert list(tmp_path.iterdir()) == []


def test_existing_file_is_refused_without_force(supply_fan, tmp_path):
    target = tmp_path / "plan.pdf"
    target.write_bytes(b"keep me")
    with pytest.raises(InputError) as caught:
        write_sheet(supply_fan, target)
    assert caught.value.key == "--sheet"
    assert caught.value.expected == "a new file name, or --force"
    assert target.read_bytes() == b"keep me"
    write_sheet(supply_fan, target, force=True)
    assert target.read_bytes().startswith(b"%PDF")


def test_existing_second_page_refuses_before_writing_any(supply_fan, tmp_path):
    (tmp_path / "plan-2.png").write_bytes(b"keep me")
    with pytest.raises(InputError):
        write_sheet(supply_fan, tmp_path / "plan.png")
    assert not (tmp_path / "plan-1.png").exists()
    assert (tmp_path / "plan-2.png").read_bytes() == b"keep me"


def test_missing_folder_is_refused(supply_fan, tmp_path):
    with pytest.raises(InputError) as caught:
        write_sheet(supply_fan, tmp_path / "no-such-folder" / "plan.pdf")
    assert caught.value.key == "--sheet"


# --- the drawing convention ----------------------------------------------------------

@pytest.mark.parametrize("sense, ccw, drawn", [
    ("against rotation", True, True), ("with rotation", False, True),
    ("counterclockwise", True, None), ("clockwise", False, None)])
def test_convention(sense, ccw, drawn):
    assert angles_counterclockwise(sense) is ccw
    assert rotation_clockwise(sense) is drawn
    # Reference mark at the top; +90° of job angle is a quarter turn in the stated sense.
    assert page_angle_deg(0.0, ccw) == 90.0
    assert page_angle_deg(90.0, ccw) % 360 == (180.0 if ccw else 0.0)


def test_positions_lie_on_the_circle_at_the_job_angles(supply_fan, tmp_path):
    # supply-fan.toml: 12 holes at one radius, hole 1 at the reference mark, so hole k is at
    # 30·(k - 1) degrees, counted against rotation = counterclockwise on the drawing.
    pages = write_sheet(supply_fan, tmp_path / "p.png", when=WHEN)
    for page in pages:
        drawing = page.drawing
        assert drawing.counterclockwise
        assert sorted(drawing.position_xy) == list(range(1, 13))
        for k, xy in drawing.position_xy.items():
            radius, angle = _unit_circle_deg(xy)
            assert radius == pytest.approx(1.0, abs=1e-12)
            expected = (90.0 + 30.0 * (k - 1)) % 360.0
            assert abs((angle - expected + 180.0) % 360.0 - 180.0) < 1e-9
    assert sorted(pages[0].drawing.blocked_xy) == [4]      # blocked = [4] on the drive side
    assert pages[1].drawing.blocked_xy == {}


def test_with_rotation_is_drawn_clockwise(tmp_path):
    # wheel-rim.toml: 72 slots, slot 1 at the valve, every 5 degrees, "with rotation":
    # slot 19 (90°) is at 3 o'clock and slot 55 (270°) at 9 o'clock.
    result = solve_job(read_job(EXAMPLES / "wheel-rim.toml"))
    drawing = write_sheet(result, tmp_path / "w.pdf", when=WHEN)[0].drawing
    assert not drawing.counterclockwise
    assert drawing.position_xy[19] == pytest.approx((1.0, 0.0), abs=1e-12)
    assert drawing.position_xy[55] == pytest.approx((-1.0, 0.0), abs=1e-12)
    assert drawing.position_xy[1] == pytest.approx((0.0, 1.0), abs=1e-12)
    assert sorted(drawing.blocked_xy) == [36, 37, 38]


def test_chosen_parts_are_drawn_at_their_positions(supply_fan, tmp_path):
    for page, plane in zip(write_sheet(supply_fan, tmp_path / "p.pdf", when=WHEN),
                           supply_fan.planes):
        fitted = {p.position for p in plane.chosen.parts if p.action == "fit"}
        assert set(page.drawing.fit_xy) == fitted
        assert fitted
        for k in fitted:
            assert page.drawing.fit_xy[k] == page.drawing.position_xy[k]


def test_required_correction_arrow(supply_fan, tmp_path):
    # Drive side: correction 18.5 g at 132° (supply-fan.toml); the larger of required and
    # residual is drawn 0.78 long, so the required arrow points to page angle 90 + 132.
    drawing = write_sheet(supply_fan, tmp_path / "p.pdf", when=WHEN)[0].drawing
    plane = supply_fan.planes[0]
    assert plane.required_gmm == pytest.approx(18.5 * 210.0)
    radius, angle = _unit_circle_deg(drawing.correction_tip_xy)
    assert radius == pytest.approx(0.78)
    assert angle == pytest.approx(222.0)


def test_markers_are_dark_in_the_png(supply_fan, tmp_path):
    from matplotlib.image import imread

    for page in write_sheet(supply_fan, tmp_path / "p.png", when=WHEN):
        image = imread(page.path)[:, :, :3]
        height = image.shape[0]
        to_pixels = page.drawing.ax.transData

        def ink(xy, reach=0):
            x, y = to_pixels.transform(xy)
            col, row = int(round(x)), int(round(height - y))
            patch = image[row - reach:row + reach + 1, col - reach:col + reach + 1]
            return float(patch.mean(axis=2).min())

        for xy in page.drawing.fit_xy.values():           # solid discs: dark at the centre
            assert ink(xy) < 0.25
        free = [k for k in page.drawing.position_xy
                if k not in page.drawing.fit_xy and k not in page.drawing.blocked_xy]
        for k in free:                                     # ring with a centre dot
            assert ink(page.drawing.position_xy[k], reach=1) < 0.5
        assert float(image[3, 3].mean()) > 0.99            # the page margin stays blank


def test_parts_to_take_off_and_holes_to_drill(supply_fan, tmp_path):
    plane = supply_fan.planes[1]
    g = plane.plane.geometry
    parts = (FittedPart(3, g.angles_deg[2], g.radii_mm[2], "M10", 3.57, 1, "remove"),
             FittedPart(7, g.angles_deg[6], g.radii_mm[6], "D8x5", -2.29, 1, "fit"),
             FittedPart(9, g.angles_deg[8], g.radii_mm[8], "M16", 11.3, 2, "fit"))
    edited = dataclasses.replace(plane, chosen=dataclasses.replace(plane.chosen, parts=parts))
    result = dataclasses.replace(supply_fan, planes=(supply_fan.planes[0], edited))
    drawing = write_sheet(result, tmp_path / "r.pdf", when=WHEN)[1].drawing
    assert set(drawing.remove_xy) == {3}
    assert drawing.remove_xy[3] == drawing.position_xy[3]
    assert set(drawing.fit_xy) == {7, 9}


def test_spread_keeps_labels_apart_and_centred():
    # Three labels 2° apart needing 10°: least squares puts them at 2°, 12°, 22°.
    assert spread_deg([10.0, 12.0, 14.0], [10.0] * 3) == pytest.approx([2.0, 12.0, 22.0])
    # Far apart already: left alone.  Across 0°/360°: spread about 0°.
    assert [a % 360.0 for a in spread_deg([0.0, 180.0], [10.0, 10.0])] == [0.0, 180.0]
    placed = spread_deg([358.0, 2.0], [10.0, 10.0])
    assert placed[1] - placed[0] == pytest.approx(10.0)
    assert (placed[0] + placed[1]) / 2 % 360.0 == pytest.approx(0.0, abs=1e-9)


def test_spread_against_brute_force():
    # Random clusters: no neighbours closer than required, and no better placement of the
    # same order on a 0.25° grid within ±10° of each label (brute force, 3 labels).
    rng = np.random.default_rng(7)
    for _ in range(20):
        wanted = sorted(rng.uniform(0, 30, 3).tolist())
        gaps = rng.uniform(4, 9, 3).tolist()
        placed = spread_deg(wanted, gaps)
        for k in range(2):
            assert placed[k + 1] - placed[k] >= (gaps[k] + gaps[k + 1]) / 2 - 1e-9
        cost = sum((p - w) ** 2 for p, w in zip(placed, wanted))
        grid = np.arange(-10, 10.01, 0.25)
        best = math.inf
        for d0 in grid:
            for d1 in grid:
                for d2 in grid:
                    p = (wanted[0] + d0, wanted[1] + d1, wanted[2] + d2)
                    if (p[1] - p[0] >= (gaps[0] + gaps[1]) / 2
                            and p[2] - p[1] >= (gaps[1] + gaps[2]) / 2):
                        best = min(best, sum(d * d for d in (d0, d1, d2)))
        assert cost <= best + 1e-9


# --- the command line ----------------------------------------------------------------

def test_cli_writes_the_sheet(tmp_path, capsys):
    target = tmp_path / "s.pdf"
    assert main(["solve", str(SUPPLY_FAN), "--sheet", str(target)]) == 0
    assert target.read_bytes().startswith(b"%PDF")
    assert f"placer: sheet written to {target}" in capsys.readouterr().err


def test_cli_refuses_an_existing_file_and_forces(tmp_path, capsys):
    target = tmp_path / "s.pdf"
    target.write_bytes(b"keep me")
    assert main(["solve", str(SUPPLY_FAN), "--sheet", str(target)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("placer: error: --sheet: ") and "--force" in err
    assert target.read_bytes() == b"keep me"
    assert main(["solve", str(SUPPLY_FAN), "--sheet", str(target), "--force"]) == 0
    assert target.read_bytes().startswith(b"%PDF")


def test_cli_without_matplotlib(tmp_path, capsys, monkeypatch):
    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec",
                        lambda name, *a: None if name == "matplotlib" else real(name, *a))
    assert main(["solve", str(SUPPLY_FAN), "--sheet", str(tmp_path / "s.pdf")]) == 2
    assert capsys.readouterr().err == f"placer: error: {MATPLOTLIB_MISSING}\n"
    assert MATPLOTLIB_MISSING == "--sheet needs matplotlib: pip install 'placer[sheet]'"
    assert not (tmp_path / "s.pdf").exists()


def test_sheet_module_does_not_import_matplotlib_at_start_up():
    import subprocess
    import sys

    code = ("import sys, placer.cli, placer.sheet; "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "False"


def test_stated_angle_math():
    # page_angle_deg is 90 ± angle: check one value against trigonometry by hand.
    x, y = math.cos(math.radians(page_angle_deg(30.0, True))), \
        math.sin(math.radians(page_angle_deg(30.0, True)))
    assert (x, y) == pytest.approx((-0.5, math.sqrt(3) / 2))
