"""Solving whole jobs: tolerances per plane, choice from the front, shared stock, fallbacks."""

from __future__ import annotations

import cmath
import math
from pathlib import Path

import numpy as np
import pytest
from oracle import brute_front, ring_effects

import placer.engine.search
from placer.choice import aim_of, choose_plan
from placer.engine.arrays import PlaneArrays
from placer.engine.front import exact_front
from placer.io.jobfile import read_job
from placer.residual import residual_vector_gmm
from placer.solve import solve_job

CATALOG = """
name = "test drawer"
[[items]]
id = "A"
mass_g = 5.0
stock = {stock}
[[items]]
id = "B"
mass_g = 2.0
"""


def write_job(tmp_path: Path, body: str, stock: int = 10) -> Path:
    (tmp_path / "drawer.toml").write_text(CATALOG.format(stock=stock))
    job = tmp_path / "job.toml"
    job.write_text(body)
    return job


TWO_PLANES = """
[rotor]
name = "test rotor"
mass_kg = 12.0
service_rpm = 2950
grade = "G2.5"
{extra}
[[planes]]
name = "A side"
radius_mm = 100.0
positions = 4
catalog = "drawer.toml"
correction = {{ mass_g = 5.0, angle_deg = 0.0 }}
[[planes]]
name = "B side"
radius_mm = 100.0
positions = 4
catalog = "drawer.toml"
correction = {{ mass_g = 5.0, angle_deg = 90.0 }}
"""


def test_grade_share_gives_each_plane_half(tmp_path):
    result = solve_job(read_job(write_job(tmp_path, TWO_PLANES.format(extra=""))))
    # ISO 21940-11: U_per = 1000·G·m/ω = 1000·2.5·12/(2π·2950/60) = 97.11 g·mm,
    # half each for equal shares (symmetric rotor).
    u_per = 1000 * 2.5 * 12 / (2 * math.pi * 2950 / 60)
    assert result.permissible_gmm == pytest.approx(u_per)
    assert [p.tolerance_gmm for p in result.planes] == pytest.approx([u_per / 2] * 2)


def test_lever_rule_share_from_centre_of_mass_distances(tmp_path):
    job = write_job(tmp_path, TWO_PLANES.format(extra="com_distances_mm = [100.0, 300.0]"))
    result = solve_job(read_job(job))
    # Lever rule (ISO 21940-11 allocation): U_A = U·L_B/L = 0.75 U, held to 0.7 U
    # (the 0.3-0.7 limits are from memory), U_B = 0.3 U.
    u = result.permissible_gmm
    assert [p.tolerance_gmm for p in result.planes] == pytest.approx([0.7 * u, 0.3 * u])


def test_shared_stock_is_planned_together(tmp_path):
    # Both planes want the one 5 g part (exact); the drawer has one.
    result = solve_job(read_job(write_job(tmp_path, TWO_PLANES.format(extra=""), stock=1)))
    used = sum(p.count for r in result.planes for p in r.chosen.parts if p.item == "A")
    assert used == 1
    assert any("share stock" in n for n in result.notes)
    for r in result.planes:
        again = abs(residual_vector_gmm(r.plane.correction_gmm, r.chosen.parts))
        assert again == pytest.approx(r.chosen.residual_gmm)


def test_stock_is_shared_per_catalogue_file_across_merged_catalogues(tmp_path):
    # Plane A draws on the drawer and a hole catalogue together, plane B on the
    # drawer alone: both still share the drawer's one 5 g part (by reasoning).
    (tmp_path / "holes.toml").write_text('name = "holes"\n[[items]]\nid = "H"\n'
                                         'mass_g = -1.0\nremoves = true\n')
    body = TWO_PLANES.format(extra="").replace('catalog = "drawer.toml"',
                                               'catalog = ["drawer.toml", "holes.toml"]', 1)
    result = solve_job(read_job(write_job(tmp_path, body, stock=1)))
    used = sum(p.count for r in result.planes for p in r.chosen.parts if p.item == "A")
    assert used == 1
    assert any("share stock" in n for n in result.notes)
    # The plan that had to do without the 5 g part is marked on its sheet, and its
    # lower bound is still a bound: at most its own least residual.
    for r in result.planes:
        assert r.chosen.lower_bound_gmm <= r.chosen.residual_gmm + 1e-9


def test_already_within_tolerance_needs_no_parts():
    entries_effects = ring_effects(6, [1.0], 100.0)
    arrays = PlaneArrays(entries_effects[:, :, None], np.array([30.0 + 0j]), np.ones(6, int),
                         np.array([4]), masses=np.ones((6, 1)))
    # 30 g·mm left, tolerance 50, aim 35 (70 %): nothing to fit.
    choice = choose_plan(arrays, 3, 50.0, aim_of(50.0, 30.0, 0.7, "test"))
    assert choice.chosen.parts == ()
    # Tolerance 40, aim 28: no plan reaches 28 (by enumeration: 100 g·mm parts against
    # 30 g·mm), so the fewest parts within the tolerance: none, 30 <= 40.
    front = brute_front(entries_effects, np.array([30.0 + 0j]), np.ones(6, int),
                        np.array([4]), 3)
    assert min(front) > 28.0
    choice = choose_plan(arrays, 3, 40.0, aim_of(40.0, 30.0, 0.7, "test"))
    assert choice.chosen.parts == () and "no plan reaches the aim" in choice.rule


def test_unreachable_correction_is_solved_and_flagged(tmp_path):
    body = TWO_PLANES.format(extra="").replace("mass_g = 5.0, angle_deg = 90.0",
                                               "mass_g = 500.0, angle_deg = 90.0")
    result = solve_job(read_job(write_job(tmp_path, body)))
    plane = result.planes[1]
    assert plane.within_tolerance is False
    assert plane.chosen.parts
    assert any("cannot be reached" in n for n in plane.notes)
    assert not result.all_within


def test_counts_past_the_work_budget_are_left_unproven():
    """A part count the search cannot finish within its effort is left unproven and says so."""
    effects = ring_effects(5, [1.5, 4.0], 100.0)
    target = np.array([620.0 * cmath.exp(1j * 0.7)])
    arrays = PlaneArrays(effects[:, :, None], target, np.full(5, 2), np.array([3, 3]))
    entries, _, method = exact_front(arrays, 3, effort=1e-9)
    assert "not proven" in method
    expected = brute_front(effects, target, np.full(5, 2), np.array([3, 3]), 3)
    # Oracle: exhaustive enumeration. Every entry is a real plan (never below the least
    # residual), its bound really is below the least residual, and a count the search
    # declined keeps the plan of fewer parts.
    for entry, least in zip(entries, expected):
        assert entry.residual_norm >= least - 1e-9
        assert entry.lower_bound <= least + 1e-9
    assert not all(e.proven for e in entries)
    for before, entry in zip(entries, entries[1:]):
        assert entry.residual_norm <= before.residual_norm
        if not entry.proven:
            assert entry.parts == before.parts


def test_singles_tail_past_the_pair_budget_is_still_exact(monkeypatch):
    """Without the pair table the search completes heads from single placements."""
    monkeypatch.setattr(placer.engine.search, "MAX_TAIL_ROWS", 0)
    effects = ring_effects(7, [1.5, 4.0, 6.0], 100.0)
    target = np.array([1320.0 * cmath.exp(1j * 0.4)])
    arrays = PlaneArrays(effects[:, :, None], target, np.full(7, 2), np.array([3, 3, 2]))
    entries, _, method = exact_front(arrays, 4)
    assert method == "exact search"
    expected = brute_front(effects, target, np.full(7, 2), np.array([3, 3, 2]), 4)
    # Oracle: exhaustive enumeration.
    assert [e.residual_norm for e in entries] == pytest.approx(expected, rel=1e-9, abs=1e-9)
