"""The printed blade sheet: pages, where the disc puts each blade, and where its text goes.

Slot positions are checked against the drawing convention (reference mark at the
top; angles counted against a clockwise rotation grow counterclockwise on the
page, counted clockwise they grow clockwise), recomputed here with numpy.  Page
counts are read from the PDF's own page objects (PDF 1.7, ISO 32000-1, 7.7.3).
Text layout is checked on matplotlib's own measure of every text it drew, as in
tests/views/test_sheet.py, with the labels set along the radius of a large disc
measured as the rotated rectangles they are (their corners turned about the
anchor, as matplotlib's ``rotation_mode="anchor"`` sets them) and separated by
the separating-axis test: no two texts share ink space and every text lies on
the page.
"""

from __future__ import annotations

import math
import re
from datetime import date
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("matplotlib")

from placer.arrange import BladeJob, TrimPlane, arrange_blades
from placer.blades import Blade, Disc, Limits
from placer.geometry import PlaneGeometry, equally_spaced_deg
from placer.io.bladefile import read_blade_file
from placer.io.catalogfile import load_bundled
from placer.job import Rotor
from placer.views.sheet.bladepage import (
    blade_page_count,
    blade_pages,
    disc_page,
    write_blade_sheet,
)
from placer.views.sheet.disc import ROOT_R, TIP_R
from placer.views.sheet.files import PNG_DPI

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "fan-reblade.toml"
WHEN = date(2025, 3, 14)
CLEAR_PX = 2.0
"""Least gap between two texts [px], as in tests/views/test_sheet.py."""


def _shop(n: int, seed: int, *, ids: str = "C{:03d}", freq: bool = False,
          axial: bool = False) -> tuple[Blade, ...]:
    """Invented blades, ±2 % about 12 500 g·mm (seeded)."""
    rng = np.random.default_rng(seed)
    return tuple(Blade(ids.format(k + 1),
                       round(float(12500 * (1 + 0.02 * rng.uniform(-1, 1))), 1),
                       frequency_hz=round(float(rng.uniform(180, 200)), 1) if freq else None,
                       axial_moment_gmm2=round(float(rng.normal(0, 4000)), 1) if axial else None)
                 for k in range(n))


def _trim(n: int, on_blades: bool = True) -> TrimPlane:
    angles = equally_spaced_deg(n if on_blades else 8)
    geometry = PlaneGeometry("trim on the blades (position = slot)" if on_blades else "bolts",
                             angles_deg=angles, radii_mm=(150.0,) * len(angles), capacity=2)
    return TrimPlane(geometry, load_bundled("fan-blade-clips"), max_parts=3,
                     on_blades=on_blades)


def _case(name: str):
    """A solved job of each kind the sheet must lay out."""
    if name.startswith("example-"):
        return arrange_blades(read_blade_file(EXAMPLE, move=name.split("-")[1]))
    rng = np.random.default_rng(7)
    if name == "60-fewest-bolts":
        blades = _shop(60, 1)
        slots = tuple(int(s) + 1 for s in rng.permutation(60))
        job = BladeJob(Rotor("Compressor stage 2, test rig", mass_kg=9.0, service_rpm=2950.0,
                             grade_mm_s=6.3), blades, Disc(60), slots_now=slots,
                       move="fewest", trim=_trim(60, on_blades=False), source="c60.toml")
    elif name == "120-all":
        blades = _shop(120, 2)
        job = BladeJob(Rotor("Large runner", rotation="counterclockwise"), blades, Disc(120),
                       slots_now=tuple(int(s) + 1 for s in rng.permutation(120)),
                       tolerance_gmm=50.0, source="c120.toml")
    elif name == "13-odd-clockwise":
        blades = _shop(13, 3, freq=True)
        angles = (0, 27, 55, 83, 110, 138, 166, 194, 221, 249, 277, 304, 332)
        slots = tuple(int(s) + 1 for s in rng.permutation(13))
        disc = Disc(13, angles_deg=angles, unbalance_gmm=80.0, unbalance_angle_deg=33.0,
                    pinned=((slots[0], "C001"), (slots[5], "C006")),
                    limits=Limits(opposite_gmm=300.0, neighbour_hz=12.0))
        job = BladeJob(Rotor("Runner", angle_sense="clockwise"), blades, disc,
                       slots_now=slots, tolerance_gmm=40.0, source="c13.toml")
    elif name == "24-couple-long-names":
        blades = _shop(24, 4, ids="SN-2024-{:06d}", axial=True)
        job = BladeJob(Rotor("Induced-draught fan impeller ID-4 (replacement wheel, second "
                             "stage), boiler house east annex, line 3", rotation="clockwise"),
                       blades, Disc(24, limits=Limits(couple_gmm2=3000.0)),
                       slots_now=tuple(int(s) + 1 for s in rng.permutation(24)),
                       move="fewest", tolerance_gmm=30.0, trim=_trim(24),
                       source="a-rather-long-blade-file-name-for-the-header.toml")
    else:
        job = BladeJob(Rotor("Fresh build"), _shop(8, 5), Disc(8), source="c8.toml")
    return arrange_blades(job)


CASES = ["example-new", "example-fewest", "example-all", "60-fewest-bolts", "120-all",
         "13-odd-clockwise", "24-couple-long-names", "8-fresh"]
_SOLVED: dict = {}


def _solved(name: str):
    if name not in _SOLVED:
        _SOLVED[name] = _case(name)
    return _SOLVED[name]


def _corners(text, renderer) -> list[tuple[float, float]]:
    """A text's outline on the page [px]: its box, turned about its anchor when rotated."""
    box = text.get_window_extent(renderer)
    rotation = text.get_rotation() % 360.0
    if rotation == 0.0:
        return [(box.x0, box.y0), (box.x1, box.y0), (box.x1, box.y1), (box.x0, box.y1)]
    text.set_rotation(0.0)
    box = text.get_window_extent(renderer)
    text.set_rotation(rotation)
    ax_, ay_ = text.get_transform().transform(text.get_position())
    c, s = math.cos(math.radians(rotation)), math.sin(math.radians(rotation))
    return [(ax_ + (x - ax_) * c - (y - ay_) * s, ay_ + (x - ax_) * s + (y - ay_) * c)
            for x, y in ((box.x0, box.y0), (box.x1, box.y0), (box.x1, box.y1), (box.x0, box.y1))]


def _apart(a, b, clear: float) -> bool:
    """Separating-axis test of two convex outlines, with ``clear`` px to spare."""
    for poly in (a, b):
        for (x0, y0), (x1, y1) in zip(poly, poly[1:] + poly[:1]):
            nx, ny = y0 - y1, x1 - x0
            length = math.hypot(nx, ny) or 1.0
            pa = [(x * nx + y * ny) / length for x, y in a]
            pb = [(x * nx + y * ny) / length for x, y in b]
            if max(pa) + clear <= min(pb) or max(pb) + clear <= min(pa):
                return True
    return False


def _texts(fig):
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    return [(t.get_text(), _corners(t, renderer)) for ax in fig.axes for t in ax.texts
            if t.get_visible() and t.get_text().strip()]


def _overlapping(texts) -> list[tuple[str, str]]:
    return [(a, b) for i, (a, pa) in enumerate(texts) for b, pb in texts[i + 1:]
            if not _apart(pa, pb, CLEAR_PX)]


def _symbols_under_text(fig, texts) -> list[str]:
    """Texts that run into a symbol of the key (blade shapes, arrows, swap discs) drawn
    on the page itself; a symbol's own label inside it (the swap's "1") excepted."""
    from matplotlib.patches import Circle, FancyArrowPatch, Polygon

    renderer = fig.canvas.get_renderer()
    hit = []
    for patch in fig.axes[0].patches:
        if not isinstance(patch, (Circle, FancyArrowPatch, Polygon)):
            continue
        box = patch.get_window_extent(renderer)
        poly = [(box.x0, box.y0), (box.x1, box.y0), (box.x1, box.y1), (box.x0, box.y1)]
        for text, outline in texts:
            cx = sum(x for x, _ in outline) / 4
            cy = sum(y for _, y in outline) / 4
            inside = box.x0 <= cx <= box.x1 and box.y0 <= cy <= box.y1
            if not inside and not _apart(poly, outline, CLEAR_PX):
                hit.append(text)
    return hit


@pytest.mark.parametrize("name", CASES)
def test_text_never_overlaps_and_stays_on_the_page(name):
    result = _solved(name)
    figures = blade_pages(result, WHEN, dpi=PNG_DPI)
    assert len(figures) == blade_page_count(result.job)
    for number, fig in enumerate(figures, start=1):
        texts = _texts(fig)
        assert _overlapping(texts) == [], f"page {number}"
        edge = 0.2 * PNG_DPI
        width, height = fig.bbox.width, fig.bbox.height
        outside = [t for t, poly in texts if min(x for x, _ in poly) < edge
                   or min(y for _, y in poly) < edge or max(x for x, _ in poly) > width - edge
                   or max(y for _, y in poly) > height - edge]
        assert outside == [], f"page {number}"
        assert _symbols_under_text(fig, texts) == [], f"page {number}"
        flat = " ".join(t for t, _ in texts)
        assert "SAFETY" in flat and "Fitted by" in flat
        assert f"sheet {number} of {len(figures)}" in flat


@pytest.mark.parametrize("name", CASES)
def test_every_slot_has_its_number_and_its_blade(name):
    result = _solved(name)
    _, drawing = disc_page(result, WHEN, 1, 1, dpi=50)
    texts = [t.get_text() for t in drawing.ax.texts]
    for row in result.rows():
        if drawing.along_radius:
            assert f"{row.slot}  {row.blade.blade_id}" in texts
        else:
            assert str(row.slot) in texts and row.blade.blade_id in texts


def test_slots_lie_at_the_job_angles():
    # fan-reblade.toml: 12 slots from 0°, counted against a clockwise rotation, so
    # counterclockwise on the page with the mark at the top: slot k at 90 + 30·(k − 1).
    _, drawing = disc_page(_solved("example-new"), WHEN, 1, 1, dpi=50)
    assert drawing.counterclockwise and drawing.rotation_clockwise
    for slot, (x, y) in drawing.slot_xy.items():
        assert math.hypot(x, y) == pytest.approx((ROOT_R + TIP_R) / 2)
        expected = (90.0 + 30.0 * (slot - 1)) % 360.0
        assert abs((math.degrees(math.atan2(y, x)) - expected + 180) % 360 - 180) < 1e-9
    # Angles counted clockwise grow clockwise: slot 2 of the odd disc (27°) at 90 − 27.
    _, odd = disc_page(_solved("13-odd-clockwise"), WHEN, 1, 1, dpi=50)
    assert not odd.counterclockwise and odd.rotation_clockwise is None
    x, y = odd.slot_xy[2]
    assert math.degrees(math.atan2(y, x)) == pytest.approx(63.0)


def test_what_happens_to_each_blade_is_drawn():
    _, new = disc_page(_solved("example-new"), WHEN, 1, 1, dpi=50)
    assert {k for k, v in new.blade_kind.items() if v == "moved"} == {7}
    assert {k for k, v in new.blade_kind.items() if v == "stays"} == set(range(1, 13)) - {7}
    fewest = _solved("example-fewest")
    _, drawing = disc_page(fewest, WHEN, 1, 1, dpi=50)
    swapped = {s for a, b, _, _ in fewest.swap_steps() for s in (a, b)}
    assert set(drawing.swap_steps) == swapped
    assert {k for k, v in drawing.blade_kind.items() if v == "moved"} == swapped | {7}
    assert "swap" in drawing.kinds
    _, fresh = disc_page(_solved("8-fresh"), WHEN, 1, 1, dpi=50)
    assert set(fresh.blade_kind.values()) == {"fitted"} and "swap" not in fresh.kinds


def test_residual_points_to_the_heavy_spot():
    result = _solved("example-new")
    _, drawing = disc_page(result, WHEN, 1, 1, dpi=50)
    (x0, y0), (x1, y1) = drawing.residual_xy
    expected = 90.0 + result.arrangement.residual_angle_deg        # counterclockwise page
    assert abs((math.degrees(math.atan2(y1 - y0, x1 - x0)) - expected + 180) % 360 - 180) < 1e-6


def test_moved_blades_are_solid_in_the_png(tmp_path):
    from matplotlib.image import imread

    result = _solved("example-new")
    paths = write_blade_sheet(result, tmp_path / "fan.png", when=WHEN)
    _, drawing = disc_page(result, WHEN, 1, len(paths), dpi=PNG_DPI)
    image = imread(paths[0])[:, :, :3]
    to_px = drawing.ax.transData

    def ink(slot: int) -> float:
        x, y = to_px.transform(drawing.slot_xy[slot])
        row, col = round(image.shape[0] - y), round(x)
        return float(image[row - 2:row + 3, col - 2:col + 3].mean())

    assert ink(7) < 0.15                                  # the new blade: solid
    assert all(ink(k) > 0.3 for k in range(1, 13) if k != 7)   # hatched, mostly white


def test_page_counts_and_files(tmp_path):
    result = _solved("60-fewest-bolts")
    target = tmp_path / "c60.pdf"
    assert write_blade_sheet(result, target, when=WHEN) == [target] * 3
    data = target.read_bytes()
    assert len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data)) == 3
    pngs = write_blade_sheet(_solved("120-all"), tmp_path / "c120.png", when=WHEN)
    assert [p.name for p in pngs] == [f"c120-{k}.png" for k in range(1, len(pngs) + 1)]
    assert len(pngs) == blade_page_count(_solved("120-all").job) == 3
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]


def test_trim_page_is_the_fitting_sheet_of_the_trim_plane():
    figures = blade_pages(_solved("example-new"), WHEN, dpi=50)
    flat = " ".join(t for t, _ in _texts(figures[-1]))
    assert "F I T T I N G   S H E E T" in flat and "trim after the blades" in flat
    assert "PLANE 1:  TRIM ON THE BLADES (POSITION = SLOT)" in flat
    assert "sheet 2 of 2" in flat and "BC5" in flat


def test_key_lists_only_what_is_drawn():
    page = blade_pages(_solved("example-all"), WHEN, dpi=50)[0]
    texts = " ".join(t for t, _ in _texts(page)).replace("\n", " ")
    assert "blade to fit here: new, or from another slot" in texts
    assert "blade that stays where it is" not in texts
    assert "swap step" not in texts
