"""Planes that share a drawer, planned together exactly.

The joint plan is checked against exhaustive enumeration of every pair of plans on
small two-plane jobs: the pair that obeys the shared stock and is best by the order of
placer.stock's notes (most planes within their aim, then within their tolerance, then
the least residual outside it, the fewest parts, the least mass, the least residual),
written out again here from that description.  A shop job with a drawer that binds is
solved twice and must give the same plans, proven.
"""

from __future__ import annotations

import itertools
import json

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from oracle import all_plans

from placer.io.jobfile import read_job
from placer.solve import solve_job

DRAWER = ('name = "shared drawer"\n[[items]]\nid = "S"\nmass_g = 3.0\nstock = {s}\n'
          '[[items]]\nid = "L"\nmass_g = 7.0\nstock = {l}\n')
PLANE = ('[[planes]]\nname = "{name}"\nradius_mm = 100.0\npositions = 5\ncapacity = 2\n'
         'catalog = "drawer.toml"\nmax_parts = 3\ntolerance_gmm = {tol}\n'
         'correction = {{ gmm = {gmm}, angle_deg = {angle} }}\n')


def _score(residual, parts, mass, tolerance):
    """The order of placer.stock's notes for one plane's plan (larger is better)."""
    aim = 0.7 * tolerance
    within = residual <= tolerance
    scale = max(tolerance, aim)
    return (float(residual <= aim), float(within), 0.0 if within else -residual / scale,
            -float(parts), -mass, -residual / scale)


def _plans(gmm, angle, tolerance, stock):
    """Every plan of 0..3 parts on one plane: (score, use of S, use of L)."""
    angles = np.radians(72.0 * np.arange(5))
    effects = -(100.0 * np.exp(1j * angles))[:, None] * np.array([3.0, 7.0])[None, :]
    target = np.array([gmm * np.exp(1j * np.radians(angle))])
    out = []
    for k in range(4):
        for value, combo in all_plans(effects, target, [2] * 5, list(stock), k):
            use = [sum(1 for _, i in combo if i == item) for item in (0, 1)]
            mass = 3.0 * use[0] + 7.0 * use[1]
            out.append((_score(value, k, mass, tolerance), use))
    return out


@settings(max_examples=25, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.integers(0, 3), st.integers(0, 2),
       st.lists(st.tuples(st.floats(300, 2000), st.floats(0, 359), st.floats(30, 300)),
                min_size=2, max_size=2))
def test_joint_plan_is_the_enumerated_optimum(tmp_path_factory, small, large, planes):
    folder = tmp_path_factory.mktemp("joint")
    (folder / "drawer.toml").write_text(DRAWER.format(s=small, l=large), encoding="utf-8")
    body = '[rotor]\nname = "two planes"\n' + "".join(
        PLANE.format(name=f"P{i}", tol=round(t, 3), gmm=round(g, 3), angle=round(a, 3))
        for i, (g, a, t) in enumerate(planes))
    (folder / "job.toml").write_text(body, encoding="utf-8")
    result = solve_job(read_job(folder / "job.toml"))
    got = tuple(sum(x) for x in zip(*(
        _score(p.chosen.residual_gmm, p.chosen.used_parts, p.chosen.mass_g, p.tolerance_gmm)
        for p in result.planes)))
    # Enumeration: every pair of plans within the shared stock.
    best = None
    first = _plans(*[round(v, 3) for v in planes[0]], (small, large))
    second = _plans(*[round(v, 3) for v in planes[1]], (small, large))
    for (s1, u1), (s2, u2) in itertools.product(first, second):
        if u1[0] + u2[0] <= small and u1[1] + u2[1] <= large:
            total = tuple(a + b for a, b in zip(s1, s2))
            best = total if best is None or total > best else best
    assert got == pytest.approx(best, abs=1e-6)
    used = {"S": 0, "L": 0}
    for p in result.planes:
        for part in p.chosen.parts:
            used[part.item] += part.count
    assert used["S"] <= small and used["L"] <= large
    assert not result.stock_short


SHOP_DRAWER = """name = "shop drawer"
[[items]]
id = "W3"
mass_g = 3.0
stock = 10
[[items]]
id = "W7"
mass_g = 7.0
stock = 4
[[items]]
id = "W15"
mass_g = 15.0
stock = 2
"""

SHOP_JOB = """[rotor]
name = "two-plane 16-hole disc"
[[planes]]
name = "A"
radius_mm = 100.0
positions = 16
capacity = 4
catalog = "drawer.toml"
max_parts = 6
correction = { mass_g = 31.0, angle_deg = 40.0 }
tolerance_gmm = 40.0
[[planes]]
name = "B"
radius_mm = 100.0
positions = 16
capacity = 4
catalog = "drawer.toml"
max_parts = 6
correction = { mass_g = 36.0, angle_deg = 200.0 }
tolerance_gmm = 40.0
"""


def test_a_binding_drawer_gives_the_same_proven_plans_every_run(tmp_path, run_cli):
    # Invented numbers in the shape of a shop job: both planes want both 15 g washers.
    (tmp_path / "drawer.toml").write_text(SHOP_DRAWER, encoding="utf-8")
    (tmp_path / "job.toml").write_text(SHOP_JOB, encoding="utf-8")
    outputs = []
    for _ in range(2):
        code, out, _ = run_cli("solve", tmp_path / "job.toml", "--json")
        assert code == 0
        data = json.loads(out)
        for plane in data["planes"]:
            plane.pop("elapsed_s")
        outputs.append(data)
    assert outputs[0] == outputs[1]
    data = outputs[0]
    assert all(plane["optimal"] for plane in data["planes"])
    assert any("plans chosen together" in note for note in data["notes"])
    used = sum(part["count"] for plane in data["planes"] for part in plane["chosen"]["parts"]
               if part["item"] == "W15")
    assert used <= 2
