"""The printable fitting sheet: files, pages, and where the drawing puts things.

Positions are checked against the job file's own geometry and the drawing
convention written in placer/sheet.py (reference mark at the top; angles
counterclockwise on the page for "against rotation" and "counterclockwise",
clockwise for "with rotation" and "clockwise"), recomputed here with numpy.
Page counts are read from the PDF's own page objects (PDF 1.7, ISO 32000-1,
7.7.3: one /Type /Page dictionary per page, /Count in the /Pages node).
Text layout is checked on matplotlib's own measure of every text it drew
(``Text.get_window_extent`` with the figure's renderer): no two texts share
ink space and every text lies on the page.  Corrections with existing parts
are recomputed here from the job file and the bundled catalogue's masses
(catalogs/washers-steel.toml), as a vector sum of mass × radius at each
position's angle.
"""

from __future__ import annotations

import dataclasses
import importlib.util
import math
import re
from datetime import date
from pathlib import Path

import numpy as np
import pytest
from conftest import example_files
from layoutcheck import overlapping

from placer.cli import main
from placer.errors import InputError
from placer.io.jobfile import read_job
from placer.plan import FittedPart
from placer.solve import solve_job
from placer.views.sheet import (
    PNG_DPI,
    angles_counterclockwise,
    fmt_gmm,
    page_angle_deg,
    plane_page,
    rotation_clockwise,
    spread_deg,
    write_sheet,
)
from placer.views.wording import DRILL_CAUTION

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
SUPPLY_FAN = EXAMPLES / "supply-fan.toml"
WHEN = date(2025, 3, 14)


def _job_files() -> list[Path]:
    """Example files for `placer solve`, not field sessions or batch templates."""
    return example_files("job")


@pytest.fixture(scope="module")
def supply_fan():
    return solve_job(read_job(SUPPLY_FAN))


def _pdf_pages(data: bytes) -> tuple[int, list[int]]:
    """Page dictionaries and the /Count of the /Pages node(s) in an uncompressed PDF body."""
    pages = len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data))
    counts = [int(m) for m in re.findall(rb"/Type\s*/Pages\b[^>]*?/Count\s+(\d+)", data)]
    counts += [int(m) for m in re.findall(rb"/Count\s+(\d+)[^>]*?/Type\s*/Pages\b", data)]
    return pages, counts


def _drawings(result, dpi: float = 50) -> list:
    """Each plane's drawing, laid out without writing a file (coordinates need no ink)."""
    return [plane_page(result, i, when=WHEN, dpi=dpi)[1]
            for i in range(1, len(result.planes) + 1)]


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
    result = _solved(job)
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
    result = _solved(EXAMPLES / "blade-fan.toml")
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
    assert caught.value.option == "sheet"
    assert caught.value.expected == ".pdf, .png or .svg"
    assert list(tmp_path.iterdir()) == []


def test_existing_file_is_refused_without_force(supply_fan, tmp_path):
    target = tmp_path / "plan.pdf"
    target.write_bytes(b"keep me")
    with pytest.raises(InputError) as caught:
        write_sheet(supply_fan, target)
    assert caught.value.option == "sheet"
    assert caught.value.one_line({"sheet": "--sheet", "force": "--force"}).endswith(
        "(expected a new file name, or --force to replace it)")
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
    assert caught.value.option == "sheet"


# --- the drawing convention ----------------------------------------------------------

@pytest.mark.parametrize("sense, ccw, drawn", [
    # Without a stated rotation no rotation arrow is drawn (issue 12); angles counted with
    # or against rotation are drawn as if it turned clockwise seen from the front.
    ("against rotation", True, None), ("with rotation", False, None),
    ("counterclockwise", True, None), ("clockwise", False, None)])
def test_convention(sense, ccw, drawn):
    assert angles_counterclockwise(sense) is ccw
    assert rotation_clockwise(sense) is drawn
    # Reference mark at the top; +90° of job angle is a quarter turn in the stated sense.
    assert page_angle_deg(0.0, ccw) == 90.0
    assert page_angle_deg(90.0, ccw) % 360 == (180.0 if ccw else 0.0)


@pytest.mark.parametrize("sense, rotation, ccw, drawn", [
    # A rotor turning counterclockwise as you face it: "against rotation" is clockwise.
    ("against rotation", "counterclockwise", False, False),
    ("with rotation", "counterclockwise", True, False),
    ("against rotation", "clockwise", True, True), ("with rotation", "clockwise", False, True),
    ("clockwise", "counterclockwise", False, False), ("counterclockwise", "clockwise", True, True)])
def test_convention_with_a_stated_rotation(sense, rotation, ccw, drawn):
    assert angles_counterclockwise(sense, rotation) is ccw
    assert rotation_clockwise(sense, rotation) is drawn


def test_stated_rotation_is_drawn_as_stated(tmp_path):
    # 8 positions from 0°, counted against a counterclockwise rotation: position 3 (90°)
    # lies a quarter turn clockwise from the mark, at 3 o'clock.
    job = tmp_path / "ccw.toml"
    job.write_text("""
[rotor]
name = "Counterclockwise fan"
angle_sense = "against rotation"
rotation = "counterclockwise"

[[planes]]
name = "hub"
radius_mm = 100.0
positions = 8
catalog = "washers-steel"
correction = { gmm = 300.0, angle_deg = 60.0 }
""", encoding="utf-8")
    drawing = _drawings(solve_job(read_job(job)))[0]
    assert drawing.rotation_clockwise is False and not drawing.counterclockwise
    assert drawing.position_xy[3] == pytest.approx((1.0, 0.0), abs=1e-12)
    assert "rotation" in drawing.kinds


def test_positions_lie_on_the_circle_at_the_job_angles(supply_fan):
    # supply-fan.toml: 12 holes at one radius, hole 1 at the reference mark, so hole k is at
    # 30·(k - 1) degrees, counted against rotation = counterclockwise on the drawing.
    drawings = _drawings(supply_fan)
    for drawing in drawings:
        assert drawing.counterclockwise
        assert sorted(drawing.position_xy) == list(range(1, 13))
        for k, xy in drawing.position_xy.items():
            radius, angle = _unit_circle_deg(xy)
            assert radius == pytest.approx(1.0, abs=1e-12)
            expected = (90.0 + 30.0 * (k - 1)) % 360.0
            assert abs((angle - expected + 180.0) % 360.0 - 180.0) < 1e-9
    assert sorted(drawings[0].blocked_xy) == [4]          # blocked = [4] on the drive side
    assert drawings[1].blocked_xy == {}


def test_with_rotation_is_drawn_clockwise():
    # wheel-rim.toml: 72 slots, slot 1 at the valve, every 5 degrees, "with rotation":
    # slot 19 (90°) is at 3 o'clock and slot 55 (270°) at 9 o'clock.
    drawing = _drawings(_solved(EXAMPLES / "wheel-rim.toml"))[0]
    assert not drawing.counterclockwise
    assert drawing.position_xy[19] == pytest.approx((1.0, 0.0), abs=1e-12)
    assert drawing.position_xy[55] == pytest.approx((-1.0, 0.0), abs=1e-12)
    assert drawing.position_xy[1] == pytest.approx((0.0, 1.0), abs=1e-12)
    assert sorted(drawing.blocked_xy) == [36, 37, 38]


def test_chosen_parts_are_drawn_at_their_positions(supply_fan):
    for drawing, plane in zip(_drawings(supply_fan), supply_fan.planes):
        fitted = {p.position for p in plane.chosen.parts if p.action == "fit"}
        assert set(drawing.fit_xy) == fitted
        assert fitted
        for k in fitted:
            assert drawing.fit_xy[k] == drawing.position_xy[k]


def test_required_correction_arrow(supply_fan):
    # Drive side: correction 18.5 g at 132° (supply-fan.toml); the larger of required and
    # residual is drawn 0.78 long, so the required arrow points to page angle 90 + 132.
    drawing = _drawings(supply_fan)[0]
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


def test_parts_to_take_off_and_holes_to_drill(supply_fan):
    plane = supply_fan.planes[1]
    g = plane.plane.geometry
    parts = (FittedPart(3, g.angles_deg[2], g.radii_mm[2], "M10", 3.57, 1, "remove"),
             FittedPart(7, g.angles_deg[6], g.radii_mm[6], "D8x5", -2.29, 1, "fit"),
             FittedPart(9, g.angles_deg[8], g.radii_mm[8], "M16", 11.3, 2, "fit"))
    edited = dataclasses.replace(plane, chosen=dataclasses.replace(plane.chosen, parts=parts))
    result = dataclasses.replace(supply_fan, planes=(supply_fan.planes[0], edited))
    drawing = _drawings(result)[1]
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
        d0, d1, d2 = np.meshgrid(grid, grid, grid, indexing="ij")
        p0, p1, p2 = wanted[0] + d0, wanted[1] + d1, wanted[2] + d2
        feasible = ((p1 - p0 >= (gaps[0] + gaps[1]) / 2)
                    & (p2 - p1 >= (gaps[1] + gaps[2]) / 2))
        best = float(np.min(np.where(feasible, d0 ** 2 + d1 ** 2 + d2 ** 2, np.inf)))
        assert cost <= best + 1e-9


# --- what the sheet says, and where its text goes -------------------------------------

LAYOUT_DPI = PNG_DPI
"""Pages for the layout checks are measured at the PNG's resolution: Agg hints glyphs to
whole pixels, so text extents depend on the dpi (at 72 dpi a line of 7.5 pt text
measures 8 % wider than at 150 dpi or in the PDF)."""

LONG_NAME = ("Induced-draught fan impeller ID-4 (replacement wheel, second stage), "
             "Northern Kiln Works boiler house, east annex, line 3")

SCRATCH_JOBS = {
    # A rotor name far wider than the page, planes with long names: header and bands wrap.
    "long-name.toml": """
[rotor]
name = "LONG_NAME"
mass_kg = 120.0
service_rpm = 1480
grade = "G6.3"
angle_sense = "clockwise"

[[planes]]
name = "drive side back plate outer ring"
radius_mm = 410.0
positions = 16
catalog = "washers-steel"
correction = { gmm = 5200.0, angle_deg = 47.0 }

[[planes]]
name = "middle disc inner and outer bolt circles"
radii_mm = [300.0, 300.0, 300.0, 300.0, 300.0, 300.0, 200.0, 200.0, 200.0, 200.0, 200.0, 200.0]
angles_deg = [0, 60, 120, 180, 240, 300, 30, 90, 150, 210, 270, 330]
catalog = "washers-steel"
correction = { gmm = 1900.0, angle_deg = 100.0 }

[[planes]]
name = "free side front shroud outer ring"
radius_mm = 395.0
positions = 16
catalog = "washers-steel"
correction = { gmm = 3100.0, angle_deg = 200.0 }

[[planes]]
name = "coupling hub flange"
radius_mm = 90.0
positions = 8
catalog = "washers-steel"
correction = { gmm = 700.0, angle_deg = 320.0 }
""".replace("LONG_NAME", LONG_NAME),
    # Existing washers whose own correction is exactly the total: nothing to do.
    # M12 = 6.27 g at position 4 (90°) and M8 = 1.83 g at position 10 (270°), r = 100 mm:
    # 627 - 183 = 444 g·mm at 90°.
    "existing-cancel.toml": """
[rotor]
name = "Return fan RF-1"
angle_sense = "against rotation"
correction_basis = "total"

[[planes]]
name = "hub"
radius_mm = 100.0
positions = 12
capacity = 2
catalog = "washers-steel"
existing = [{ position = 4, item = "M12", count = 1 }, { position = 10, item = "M8", count = 1 }]
correction = { gmm = 444.0, angle_deg = 90.0 }
tolerance_gmm = 20.0
""",
    # Washers and drilled holes, add-only and remove-only positions, existing parts with
    # the correction given for the rotor without them.
    "drill.toml": """
[rotor]
name = "Drilled boss test rotor"
angle_sense = "with rotation"
correction_basis = "total"

[[planes]]
name = "boss ring"
radius_mm = 120.0
positions = 8
capacity = 2
blocked = [4]
add_only = [1, 2]
remove_only = [5, 6]
catalog = ["washers-steel", "drill-steel"]
existing = [{ position = 3, item = "M10", count = 1 }, { position = 8, item = "M8", count = 1 }]
correction = { gmm = 900.0, angle_deg = 10.0 }
tolerance_gmm = 8.0
max_parts = 4
""",
    "tight.toml": """
[rotor]
name = "Tight tolerance disc"

[[planes]]
name = "face"
radius_mm = 50.0
positions = 6
catalog = "washers-steel"
correction = { gmm = 250.0, angle_deg = 33.0 }
tolerance_gmm = 0.001
""",
}


@pytest.fixture(scope="module")
def scratch(tmp_path_factory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("jobs")
    paths = {}
    for name, text in SCRATCH_JOBS.items():
        paths[name] = folder / name
        paths[name].write_text(text, encoding="utf-8")
    return paths


_SOLVED: dict[Path, object] = {}


def _solved(path: Path):
    if path not in _SOLVED:
        _SOLVED[path] = solve_job(read_job(path))
    return _SOLVED[path]


def _page(result, index: int = 1):
    """A page laid out at LAYOUT_DPI: (figure, drawing, [(text, window extent)])."""
    fig, drawing = plane_page(result, index, when=WHEN, dpi=LAYOUT_DPI)
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    texts = [(t.get_text(), t.get_window_extent(renderer))
             for ax in fig.axes for t in ax.texts
             if t.get_visible() and t.get_text().strip()]
    return fig, drawing, texts


def _strings(texts) -> list[str]:
    return [t for t, _ in texts]


def _flat(texts) -> str:
    """All the page's text as one line (wrapped lines joined by spaces)."""
    return " ".join(t for t, _ in texts).replace("\n", " ")


_overlapping = overlapping


def _arrows_through_text(drawing, texts) -> list[str]:
    """Texts that the required or residual arrow's shaft runs through."""
    hit = []
    for segment in (drawing.required_xy, drawing.residual_xy):
        if segment is None:
            continue
        (x0, y0), (x1, y1) = segment
        for k in range(61):
            px, py = drawing.ax.transData.transform((x0 + (x1 - x0) * k / 60,
                                                     y0 + (y1 - y0) * k / 60))
            hit += [t for t, box in texts
                    if box.x0 + 1 < px < box.x1 - 1 and box.y0 + 1 < py < box.y1 - 1]
    return hit


LAYOUT_CASES = [p.name for p in _job_files()] + ["long-name.toml", "existing-cancel.toml",
                                                 "drill.toml", "tight.toml"]


@pytest.mark.parametrize("name", LAYOUT_CASES)
def test_text_never_overlaps_and_stays_on_the_page(name, scratch):
    # No text is meant to sit on another on this sheet, so no pair is excluded.
    result = _solved(scratch[name] if name in scratch else EXAMPLES / name)
    for index in range(1, len(result.planes) + 1):
        fig, drawing, texts = _page(result, index)
        assert _overlapping(texts) == [], f"plane {index}"
        width, height = fig.bbox.width, fig.bbox.height
        edge = 0.2 * LAYOUT_DPI                            # 0.2 in inside the paper's edge
        outside = [t for t, box in texts if box.x0 < edge or box.y0 < edge
                   or box.x1 > width - edge or box.y1 > height - edge]
        assert outside == [], f"plane {index}"
        assert _arrows_through_text(drawing, texts) == [], f"plane {index}"


def test_overlap_check_sees_an_overlap():
    # The check itself: two texts that touch are reported, two apart are not.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(3, 3), dpi=LAYOUT_DPI)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    renderer = fig.canvas.get_renderer()
    first = ax.text(0.05, 0.5, "pump-impeller-rework.toml")
    end = ax.transData.inverted().transform((first.get_window_extent(renderer).x1, 0))[0]
    ax.text(end, 0.5, "2026-12-02")                       # touching, as the old header did
    ax.text(0.05, 0.1, "apart")
    texts = [(t.get_text(), t.get_window_extent(renderer)) for t in ax.texts]
    assert _overlapping(texts) == [("pump-impeller-rework.toml", "2026-12-02")]


def test_long_rotor_name_wraps_and_header_facts_stay_apart(scratch):
    result = _solved(scratch["long-name.toml"])
    fig, _, texts = _page(result, 1)
    name = result.job.rotor.name
    title = [t for t in _strings(texts) if t.replace("\n", " ").startswith(name[:30])]
    assert len(title) == 1
    assert "\n" in title[0]                                # wrapped, every word kept
    assert title[0].replace("\n", " ") == name
    # Every plane's tolerance is listed, each whole on one line.
    line = next(t for t in _strings(texts) if t.startswith("drive side back plate"))
    for plane in result.planes:
        assert any(row.startswith(plane.name) or f"·   {plane.name}:" in row
                   for row in line.split("\n"))


@pytest.mark.parametrize("value, text", [
    # One decimal from 10 g·mm up, three significant digits below (placer/sheet.py).
    (0.001, "0.001"), (0.0123, "0.0123"), (0.875, "0.875"), (3.05, "3.05"), (2.2, "2.2"),
    (21.34, "21.3"), (1639.84, "1 639.8"), (0.0, "0")])
def test_small_values_keep_their_significant_digits(value, text):
    assert fmt_gmm(value) == text


def test_tight_tolerance_is_printed_as_given(scratch):
    _, _, texts = _page(_solved(scratch["tight.toml"]))
    flat = _flat(texts)
    assert "0.001 g·mm" in flat                             # tolerance_gmm = 0.001
    assert "0.0 g·mm" not in flat and " 0 g·mm" not in flat


def test_existing_parts_that_cancel_draw_no_arrows(scratch):
    result = _solved(scratch["existing-cancel.toml"])
    plane = result.planes[0]
    assert plane.chosen.used_parts == 0
    _, drawing, texts = _page(result)
    strings = _strings(texts)
    assert drawing.required_xy is None and drawing.residual_xy is None
    assert "required ≈ 0\nresidual ≈ 0" in strings
    assert "≈ 0 g·mm" in strings                           # the residual in the result box
    # Both washers stay on, drawn where the job file puts them.
    assert drawing.stay_xy == {4: drawing.position_xy[4], 10: drawing.position_xy[10]}
    assert drawing.fit_xy == {} and drawing.remove_xy == {}
    # The key lists what is drawn and nothing else.
    assert "part on the rotor: leave it on" in strings
    for absent in ("required correction", "residual after the plan", "part to fit",
                   "blocked: takes no part", "part on the rotor: remove it"):
        assert absent not in strings
    sentence = next(t for t in strings if t.startswith("Required correction: total"))
    flat = sentence.replace("\n", " ")
    # Four significant digits (placer.units.significant): 444 g·mm.
    assert "total 444 g·mm at 90.0°" in flat and "existing parts 444 g·mm at 90.0°" in flat
    assert "= further ≈ 0 g·mm" in flat


def _unit_deg(angle_deg: float) -> complex:
    return complex(math.cos(math.radians(angle_deg)), math.sin(math.radians(angle_deg)))


def test_total_basis_draws_the_further_correction(scratch):
    # drill.toml: 900 g·mm at 10° for the rotor without its parts; on it M10 (3.57 g) at
    # position 3 (90°) and M8 (1.83 g) at position 8 (315°), r = 120 mm, 8 positions from 0°.
    result = _solved(scratch["drill.toml"])
    further = 900.0 * _unit_deg(10.0) - 120.0 * (3.57 * _unit_deg(90.0) + 1.83 * _unit_deg(315.0))
    _, drawing, texts = _page(result)
    plane = result.planes[0]
    scale = 0.78 / max(abs(further), plane.chosen.residual_gmm)
    radius, angle = _unit_circle_deg(drawing.required_xy[1])
    assert radius == pytest.approx(abs(further) * scale)
    expected = page_angle_deg(math.degrees(np.angle(further)), False) % 360.0   # with rotation
    assert abs((angle - expected + 180.0) % 360.0 - 180.0) < 1e-6
    strings = _strings(texts)
    shown = f"{abs(further):.4g}"                           # four significant digits
    assert any(t.startswith(f"{shown} g·mm at {math.degrees(np.angle(further)) % 360:.1f}°")
               for t in strings)
    flat = " ".join(strings).replace("\n", " ")
    assert f"= further {shown} g·mm" in flat


def test_existing_parts_measured_on_are_drawn_to_stay_or_go():
    # pump-impeller-rework.toml: M12 on position 6, M8 on position 7, correction measured
    # with them on (correction_basis = "further").
    result = _solved(EXAMPLES / "pump-impeller-rework.toml")
    plane = result.planes[0]
    removed = {p.position for p in plane.chosen.parts if p.action == "remove"}
    _, drawing, texts = _page(result)
    assert set(drawing.remove_xy) == removed
    assert set(drawing.stay_xy) == {6, 7} - removed
    assert "measured with the existing parts on" in _flat(texts)
    # The correction is 600 g·mm at 2°, counted against rotation; the rotor turns
    # counterclockwise seen from the working side, so angles grow clockwise on the
    # page: page angle 90° - 2° = 88°.
    _, angle = _unit_circle_deg(drawing.required_xy[1])
    assert angle == pytest.approx(88.0)
    if removed:
        assert "part on the rotor: remove it" in _strings(texts)


def test_add_only_and_remove_only_positions_have_their_own_markers(supply_fan):
    # pump-impeller-rework.toml: accepts = "add", remove_only = [3, 8], blocked = [1].
    result = _solved(EXAMPLES / "pump-impeller-rework.toml")
    _, drawing, texts = _page(result)
    assert {"pos_add", "pos_remove", "blocked"} <= set(drawing.kinds)
    assert "pos_both" not in drawing.kinds
    assert {"position for added parts only", "position for drilling only"} <= set(
        _strings(texts))
    # supply-fan.toml takes parts everywhere: one kind of position, no such key rows.
    _, drawing, texts = _page(supply_fan)
    assert [k for k in drawing.kinds if k.startswith("pos_")] == ["pos_both"]
    assert "position for added parts only" not in _strings(texts)


def test_drilled_holes_are_drilled_with_the_caution(scratch, supply_fan):
    result = _solved(scratch["drill.toml"])
    plane = result.planes[0]
    holes = [p for p in plane.chosen.parts if p.action == "fit" and p.mass_g < 0]
    assert holes                                           # the plan drills (precondition)
    _, drawing, texts = _page(result)
    strings = _strings(texts)
    assert strings.count("DRILL") == len(holes)            # the table's action cells
    assert "FIT" not in strings or any(p.action == "fit" and p.mass_g > 0
                                       for p in plane.chosen.parts)
    assert any("DRILL" in t and not t.startswith("DRILL:") and t.isupper() for t in strings)
    assert set(drawing.drill_xy) == {p.position for p in holes}
    flat = " ".join(strings).replace("\n", " ")
    assert DRILL_CAUTION in flat
    assert "hole to drill" in strings
    _, _, texts = _page(supply_fan)
    assert DRILL_CAUTION not in " ".join(_strings(texts)).replace("\n", " ")


def _with_residual(result, share: float, angle_deg: float = 200.0):
    plane = result.planes[0]
    chosen = dataclasses.replace(plane.chosen, residual_gmm=share * plane.required_gmm,
                                 residual_angle_deg=angle_deg)
    return dataclasses.replace(result, planes=(dataclasses.replace(plane, chosen=chosen),)
                               + result.planes[1:])


def test_residual_is_drawn_to_scale_enlarged_or_not_at_all(supply_fan):
    # 23 % of the required correction: to the required arrow's scale (0.78 long), no note.
    _, drawing, texts = _page(_with_residual(supply_fan, 0.23))
    (start, tip) = drawing.residual_xy
    assert start == (0.0, 0.0)
    assert _unit_circle_deg(tip)[0] == pytest.approx(0.78 * 0.23)
    assert not any("enlarged" in t for t in _strings(texts))
    # 5 %: too short to see, so drawn enlarged and labelled so.
    _, drawing, texts = _page(_with_residual(supply_fan, 0.05))
    assert drawing.residual_xy[0] != (0.0, 0.0)
    assert "residual\n(enlarged)" in _strings(texts)
    # Zero: no arrow, a note instead.
    _, drawing, texts = _page(_with_residual(supply_fan, 0.0))
    assert drawing.residual_xy is None
    assert "residual ≈ 0" in _strings(texts)
    assert "residual after the plan" not in _strings(texts)


def test_chance_columns_only_when_the_options_carry_a_chance(supply_fan):
    plane = supply_fan.planes[0]
    assert all(o.chance_within is None for o in plane.front)    # no fitting errors given
    _, _, texts = _page(supply_fan)
    assert "Chance" not in _strings(texts) and "95 %" not in _strings(texts)
    rated = [dataclasses.replace(o, chance_within=0.5, residual_p95_gmm=2 * o.residual_gmm)
             for o in plane.front]
    edited = dataclasses.replace(plane, front=tuple(rated))
    _, _, texts = _page(dataclasses.replace(supply_fan, planes=(edited,) + supply_fan.planes[1:]))
    assert "Chance" in _strings(texts) and "95 %" in _strings(texts)


def test_large_plane_numbers_every_few_positions_and_those_that_matter():
    # wheel-rim.toml, inner flange: 72 slots, blocked 36, 37, 38.  Every 6th slot is
    # numbered (1, 7, ... 67) with the slots used and the blocked run (as "36–38"); a
    # regular number too close to one of those gives way.
    result = _solved(EXAMPLES / "wheel-rim.toml")
    plane = result.planes[0]
    used = {p.position for p in plane.chosen.parts}
    _, drawing, _ = _page(result)
    shown = {t.get_text() for t in drawing.ax.texts if re.fullmatch(r"\d+(–\d+)?", t.get_text())}
    assert "36–38" in shown and not {"36", "37", "38"} & shown
    assert {str(k) for k in used} <= shown
    regular = {str(k) for k in range(1, 73, 6)}
    assert shown <= regular | {str(k) for k in used} | {"36–38"}
    assert len(regular - shown) <= 2 * len(used) + 1       # only neighbours give way


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
    assert capsys.readouterr().err == (
        "placer: error: --sheet needs matplotlib, which placer installs with it; it is "
        "missing here (expected matplotlib installed: pip install matplotlib)\n")
    assert not (tmp_path / "s.pdf").exists()


def test_sheet_module_does_not_import_matplotlib_at_start_up():
    import subprocess
    import sys

    code = ("import sys, placer.cli, placer.views.sheet; "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "False"


def test_stated_angle_math():
    # page_angle_deg is 90 ± angle: check one value against trigonometry by hand.
    x, y = math.cos(math.radians(page_angle_deg(30.0, True))), \
        math.sin(math.radians(page_angle_deg(30.0, True)))
    assert (x, y) == pytest.approx((-0.5, math.sqrt(3) / 2))
