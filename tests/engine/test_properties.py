"""Properties the exact search must have, whatever the instance (hypothesis).

Each property follows from the problem's definition (no outside source
needed): more choice never hurts; the problem is invariant under rotation
and linear under scaling.  The reported residual is recomputed by hand
with numpy from the instance's own numbers: correction minus the sum of
count · mass_g · radius_mm · e^{i·angle} over the listed parts (vector
addition of unbalances in one plane, ISO 21940-11:2016 via
placer.residual's References), never through placer's own residual code;
and the least residual is checked against brute-force enumeration
(tests/oracle.py).
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from search_modes import NEAR_ZERO

from placer.engine.search import PlacementSearch

SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@st.composite
def instances(draw, max_positions: int = 9, max_items: int = 4, max_magnitude: float = 150.0,
              max_parts: int = 4):
    """Random planes: uneven angles and radii, capacity and stock 0..4, a target, a part limit."""
    n_pos = draw(st.integers(1, max_positions))
    n_items = draw(st.integers(1, max_items))
    angles = np.array(draw(st.lists(st.floats(0, 360), min_size=n_pos, max_size=n_pos)))
    radii = np.array(draw(st.lists(st.floats(10, 400), min_size=n_pos, max_size=n_pos)))
    masses = np.array(draw(st.lists(st.floats(0.2, 50), min_size=n_items, max_size=n_items)))
    capacity = np.array(draw(st.lists(st.integers(0, 3), min_size=n_pos, max_size=n_pos)))
    stock = np.array(draw(st.lists(st.integers(0, 4), min_size=n_items, max_size=n_items)))
    magnitude = draw(st.floats(0, max_magnitude)) * float(radii.mean())
    target = magnitude * cmath.exp(1j * math.radians(draw(st.floats(0, 360))))
    return angles, radii, masses, capacity, stock, target, draw(st.integers(1, max_parts))


def effects_of(angles, radii, masses):
    unit = radii * np.exp(1j * np.radians(angles))
    return -(unit[:, None] * masses[None, :])[:, :, None]


def front_of(angles, radii, masses, capacity, stock, target, k):
    search = PlacementSearch(effects_of(angles, radii, masses), capacity, stock, k)
    return search.front(np.array([target]))


def by_hand_gmm(correction: complex, parts, angles_deg, radii_mm, masses_g) -> complex:
    """Correction - sum of count·mass·radius·e^{i·angle} over (position, item, count) parts."""
    fitted = sum(count * masses_g[item] * radii_mm[position] *
                 np.exp(1j * np.radians(angles_deg[position]))
                 for position, item, count in parts)
    return complex(correction - fitted)


@SETTINGS
@given(instances())
def test_reported_residual_is_the_recomputed_one(inst):
    angles, radii, masses, capacity, stock, target, k = inst
    front = front_of(*inst)
    scale = max(abs(target), float(radii.max() * masses.max()))
    for entry in front.entries:
        again = by_hand_gmm(target, entry.parts, angles, radii, masses)
        assert abs(again) == pytest.approx(entry.residual_norm, rel=1e-9, abs=1e-9 * scale)
        assert entry.residual[0] == pytest.approx(again, rel=1e-9, abs=1e-9 * scale)
        assert entry.used_parts <= entry.part_count


@SETTINGS
@given(instances(), st.floats(0, 360), st.floats(10, 400), st.floats(0.2, 50))
def test_adding_a_position_or_an_item_never_makes_it_worse(inst, angle, radius, mass):
    angles, radii, masses, capacity, stock, target, k = inst
    base = [e.residual_norm for e in front_of(*inst).entries]
    more_positions = front_of(np.append(angles, angle), np.append(radii, radius), masses,
                              np.append(capacity, 2), stock, target, k)
    more_items = front_of(angles, radii, np.append(masses, mass), capacity,
                          np.append(stock, 2), target, k)
    for front in (more_positions, more_items):
        for got, was in zip((e.residual_norm for e in front.entries), base):
            assert got <= was + 1e-9 * max(1.0, was)


@SETTINGS
@given(instances(), st.floats(-720, 720))
def test_rotating_every_angle_rotates_the_plan(inst, shift):
    angles, radii, masses, capacity, stock, target, k = inst
    base = front_of(*inst)
    turned = front_of(angles + shift, radii, masses, capacity, stock,
                      target * cmath.exp(1j * math.radians(shift)), k)
    for a, b in zip(base.entries, turned.entries):
        # Within the proof tolerance of zero either may stop at another plan (proven).
        assert (b.residual_norm == pytest.approx(a.residual_norm, rel=1e-9, abs=1e-7)
                or max(a.residual_norm, b.residual_norm) <= NEAR_ZERO)
        # The rotated residual vector is the original one turned by the same angle.
        if a.parts == b.parts:
            assert b.residual[0] == pytest.approx(a.residual[0] * cmath.exp(
                1j * math.radians(shift)), rel=1e-9, abs=1e-7)


@SETTINGS
@given(instances(), st.floats(0.01, 100))
def test_scaling_masses_and_correction_scales_the_residual(inst, factor):
    angles, radii, masses, capacity, stock, target, k = inst
    base = front_of(*inst)
    scaled = front_of(angles, radii, masses * factor, capacity, stock, target * factor, k)
    for a, b in zip(base.entries, scaled.entries):
        # A plan within the proof tolerance of zero is proven as found, so a search that
        # stopped there only bounds the other's residual from above.
        if a.residual_norm <= NEAR_ZERO or b.residual_norm <= NEAR_ZERO:
            assert b.residual_norm <= max(NEAR_ZERO, a.residual_norm * factor * (1 + 1e-9))
            assert a.residual_norm <= max(NEAR_ZERO, b.residual_norm / factor * (1 + 1e-9))
            continue
        assert b.residual_norm == pytest.approx(a.residual_norm * factor, rel=1e-9,
                                                abs=1e-6 * factor)


def test_edge_sizes_one_and_720_positions():
    one = front_of(np.array([10.0]), np.array([100.0]), np.array([5.0]), np.array([3]),
                   np.array([9]), 1500 * cmath.exp(1j * math.radians(10.0)), 4)
    # Known by reasoning: three 5 g parts at 100 mm on the one position cancel exactly.
    assert one.entries[3].residual_norm == pytest.approx(0.0, abs=1e-9)
    angles = np.arange(720) * 0.5
    many = front_of(angles, np.full(720, 190.0), np.array([5.0, 10.0]), np.ones(720, int),
                    np.array([4, 4]), 1900 * cmath.exp(1j * math.radians(33.25)), 4)
    # 10 g at 190 mm is 1900 g·mm; position at 33.0° or 33.5° is 0.25° off: the one-part
    # residual is 2·1900·sin(0.125°) = 8.29 g·mm (computed by hand).
    assert many.entries[1].residual_norm == pytest.approx(8.290, abs=0.001)
    assert many.optimal


def test_positions_at_the_same_angle_and_huge_or_tiny_values():
    for scale in (1e-6, 1.0, 1e6):
        front = front_of(np.array([0.0, 0.0, 90.0]), np.array([100.0, 100.0, 100.0]) * scale,
                         np.array([1.0, 2.0]) * scale, np.ones(3, int), np.array([2, 2]),
                         300 * scale * scale + 0j, 2)
        # Known by reasoning: 1 g and 2 g on the two positions at 0° give 300 g·mm.
        assert front.entries[2].residual_norm == pytest.approx(0.0, abs=1e-9 * scale * scale)


# ------------------------------------------------- through the job file and solve_job
DECIMAL_ANGLES = st.floats(0, 359.9).map(lambda a: round(a, 4))


@st.composite
def job_numbers(draw):
    """A one-plane job's numbers: positions (angles, radii), items, stock, correction.

    Numbers as a technician writes them (at most 4 decimals): a file's numbers
    are zero or at least 1e-12 in size (placer.io.tables).
    """
    n_pos = draw(st.integers(1, 7))
    angles = draw(st.lists(DECIMAL_ANGLES, min_size=n_pos, max_size=n_pos))
    radii = draw(st.lists(st.floats(20, 300), min_size=n_pos, max_size=n_pos))
    n_items = draw(st.integers(1, 3))
    masses = draw(st.lists(st.floats(0.5, 30), min_size=n_items, max_size=n_items))
    stock = draw(st.lists(st.one_of(st.none(), st.integers(0, 3)), min_size=n_items,
                          max_size=n_items))
    capacity = draw(st.integers(1, 3))
    max_parts = draw(st.integers(1, 3))
    gmm = round(draw(st.floats(0, 1.5 * max_parts * max(masses) * max(radii))), 4)
    angle = draw(DECIMAL_ANGLES)
    return angles, radii, masses, stock, capacity, max_parts, gmm, angle


def job_text(numbers, catalog: str = "drawer.toml", correction: bool = True) -> str:
    angles, radii, masses, stock, capacity, max_parts, gmm, angle = numbers
    text = ('[rotor]\nname = "property rotor"\n[[planes]]\nname = "p"\n'
            f"angles_deg = [{', '.join(map(repr, angles))}]\n"
            f"radii_mm = [{', '.join(map(repr, radii))}]\n"
            f'capacity = {capacity}\nmax_parts = {max_parts}\ncatalog = "{catalog}"\n')
    if correction:
        text += f"correction = {{ gmm = {gmm!r}, angle_deg = {angle!r} }}\n"
    return text


def drawer_text(masses, stock) -> str:
    items = "".join(f'[[items]]\nid = "I{i}"\nmass_g = {m!r}\n'
                    + ("" if s is None else f"stock = {s}\n")
                    for i, (m, s) in enumerate(zip(masses, stock)))
    return 'name = "property drawer"\n' + items


def check_option_by_hand(option, correction: complex, angles, radii, masses) -> None:
    """residual_gmm and residual_angle_deg of a PlanOption against the by-hand sum."""
    parts = [(p.position - 1, int(p.item[1:]), p.count) for p in option.parts]
    assert all(p.action == "fit" for p in option.parts)
    again = by_hand_gmm(correction, parts, angles, radii, masses)
    scale = max(abs(correction), max(radii) * max(masses))
    assert option.residual_gmm == pytest.approx(abs(again), rel=1e-9, abs=1e-9 * scale)
    if abs(again) > 1e-6 * scale:  # the angle of a vanishing residual means nothing
        turn = (option.residual_angle_deg - np.degrees(np.angle(again))) % 360.0
        assert min(turn, 360.0 - turn) < 1e-6


@SETTINGS
@given(job_numbers())
def test_solve_job_residuals_recomputed_by_hand_and_least_by_enumeration(numbers):
    import tempfile
    from pathlib import Path

    from oracle import brute_front, brute_lightest

    from placer.io.jobfile import read_job
    from placer.solve import solve_job

    angles, radii, masses, stock, capacity, max_parts, gmm, angle = numbers
    with tempfile.TemporaryDirectory() as folder:
        (Path(folder) / "drawer.toml").write_text(drawer_text(masses, stock), encoding="utf-8")
        (Path(folder) / "job.toml").write_text(job_text(numbers), encoding="utf-8")
        result = solve_job(read_job(Path(folder) / "job.toml"))
    correction = gmm * np.exp(1j * np.radians(angle))
    plane = result.planes[0]
    for option in (plane.chosen, *plane.front):
        check_option_by_hand(option, correction, angles, radii, masses)
    # No tolerance: the aim is 5 % of the correction (placer's rule, placer.choice).  The
    # fewest parts that reach it, then the least added mass, by enumeration of every plan
    # (tests/oracle.py); when no plan reaches it, where one more part stops paying off.
    effects = -(np.array(radii) * np.exp(1j * np.radians(angles)))[:, None] * \
        np.array(masses)[None, :]
    limits = [max_parts if s is None else s for s in stock]
    caps = [capacity] * len(angles)
    front = brute_front(effects, np.array([correction]), caps, limits, max_parts)
    aim = 0.05 * gmm
    reach = next((k for k, r in enumerate(front) if r <= aim), None)
    if reach is None:
        step = 0.05 * gmm
        k = next(k for k, r in enumerate(front)
                 if all(r - q < step * (j - k) for j, q in enumerate(front) if j > k))
        assert plane.chosen.residual_gmm == pytest.approx(front[k], rel=1e-9,
                                                          abs=1e-9 * max(1.0, gmm))
    else:
        weights = [[abs(m) for m in masses] for _ in angles]
        mass, value = brute_lightest(effects, np.array([correction]), caps, limits, weights,
                                     reach, aim) if reach else (0.0, front[0])
        assert plane.chosen.used_parts == reach
        assert plane.chosen.mass_g == pytest.approx(mass, abs=1e-9)
        assert plane.chosen.residual_gmm == pytest.approx(value, rel=1e-9,
                                                          abs=1e-9 * max(1.0, gmm))


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(job_numbers(), st.lists(st.tuples(st.floats(0, 4000).map(lambda g: round(g, 2)),
                                         DECIMAL_ANGLES), min_size=1, max_size=6))
def test_batch_records_recomputed_by_hand(numbers, rows):
    import json
    import tempfile
    from pathlib import Path

    from placer.io.batchresults import run_batch

    angles, radii, masses, stock, *_ = numbers
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        (folder / "drawer.toml").write_text(drawer_text(masses, stock), encoding="utf-8")
        (folder / "t.toml").write_text(job_text(numbers, correction=False), encoding="utf-8")
        lines = ["serial,1_gmm,1_angle_deg"] + [f"P-{i},{g!r},{a!r}"
                                               for i, (g, a) in enumerate(rows)]
        (folder / "r.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
        _, paths = run_batch(folder / "t.toml", folder / "r.csv", jobs=1)
        records = [json.loads(line) for line in
                   paths.results_jsonl.read_text(encoding="utf-8").splitlines()
                   if '"placer_batch"' not in line]   # line 1 names the run
    assert len(records) == len(rows)
    for record, (gmm, angle) in zip(records, rows):
        plane = record["planes"][0]
        correction = gmm * np.exp(1j * np.radians(angle))
        parts = [(p["position"] - 1, int(p["item"][1:]), p["count"]) for p in plane["fitted"]]
        again = by_hand_gmm(correction, parts, angles, radii, masses)
        scale = max(gmm, max(radii) * max(masses))
        assert plane["residual_gmm"] == pytest.approx(abs(again), rel=1e-9, abs=1e-9 * scale)
        if abs(again) > 1e-6 * scale:
            turn = (plane["residual_angle_deg"] - np.degrees(np.angle(again))) % 360.0
            assert min(turn, 360.0 - turn) < 1e-6
        for p in plane["fitted"]:  # the listed part is the job's own position and item
            assert p["angle_deg"] == pytest.approx(angles[p["position"] - 1] % 360.0)
            assert p["mass_g"] == masses[int(p["item"][1:])]
