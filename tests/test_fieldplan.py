"""From readings to a plan: synthetic machines, the example visit, and the enumeration oracle.

Synthetic machines are linear models whose influence coefficients and
unbalance the test sets (invented data); their readings are V = A·(U + w)
(REFERENCES.md, "Influence coefficients").  Discrete plans are checked
against tests/oracle.py (brute-force enumeration).
"""

from __future__ import annotations

import cmath
import math
from pathlib import Path

import numpy as np
import pytest
from oracle import brute_front
from sessions import (
    EXAMPLE_A,
    EXAMPLE_U,
    ROOT,
    placement_problem,
    rect,
    session_toml,
    synthetic,
    unit_vector,
    write,
)

from placer.fieldplan import objective_of, solve_session
from placer.influence import StoredCoefficients
from placer.io.sessionfile import read_session


def test_example_visit_recovers_its_synthetic_machine():
    result = solve_session(read_session(ROOT / "examples" / "exhaust-fan-visit.toml"))
    # Readings rounded to 0.01 mm/s and 1°: coefficients within 3 % of the set values.
    np.testing.assert_allclose(result.coefficients.matrix, EXAMPLE_A, rtol=0.03)
    # The correction puts mass opposite the unbalance (REFERENCES.md), within 2 %.
    np.testing.assert_allclose(result.correction_gmm, -EXAMPLE_U, rtol=0.02)
    assert not result.coefficients.warnings


@pytest.mark.parametrize("norm", ["rms", "max"])
def test_every_front_entry_is_the_enumerated_optimum(tmp_path, norm):
    a, u0 = synthetic()
    session = read_session(write(tmp_path, session_toml(a, u0, norm=norm)))
    result = solve_session(session)
    np.testing.assert_allclose(result.coefficients.matrix, a, rtol=1e-6)
    # Oracle: exhaustive enumeration over both planes' positions together, on the
    # problem written out in this test (tests/oracle.py, brute force).
    effects, cap, stock = placement_problem(a, 4, 100.0, 1)
    expected = brute_front(effects, a @ u0, cap, stock, session.max_parts,
                           "euclidean" if norm == "rms" else "max")
    for k, value in enumerate(expected):
        assert result.best_with_at_most(k).objective == pytest.approx(value, rel=1e-6,
                                                                      abs=1e-9), k
    # The predicted vibration is the linear model applied to the listed parts.
    added = np.zeros(2, dtype=complex)
    for p, part in result.chosen.parts:
        added[p] += part.count * part.mass_g * part.radius_mm * cmath.exp(
            1j * math.radians(part.angle_deg))
    np.testing.assert_allclose(result.chosen.predicted, a @ (u0 + added), rtol=1e-6)
    assert objective_of(result.chosen.predicted, np.ones(3), session.norm) == pytest.approx(
        result.chosen.objective)
    # Compared at the same part count, solving the planes together is never worse
    # than rounding each on its own.
    same = result.coupled_same_parts
    assert same.used_parts <= result.rounded.used_parts
    assert same.objective <= result.rounded.objective + 1e-12


def test_noisy_readings_still_give_a_near_correction(tmp_path):
    a, u0 = synthetic(5, channels=4)
    session = read_session(write(tmp_path, session_toml(a, u0, noise=0.02)))
    result = solve_session(session)
    # 4 sensors, 2 planes: least squares; with noise of 0.02 µm on readings of ~10 µm
    # the correction stays within 5 % of the truth.
    assert np.abs(result.correction_gmm + u0).max() < 0.05 * np.abs(u0).max()


def test_check_run_gives_a_trim_plan_from_the_same_coefficients(tmp_path):
    a, u0 = synthetic(7)
    check = [(0, 2, "M12", 1)]
    session = read_session(write(tmp_path, session_toml(a, u0, check=check)))
    result = solve_session(session)
    fitted = np.array([6.27 * unit_vector(2, 4, 100.0), 0])
    assert "check run" in result.basis
    np.testing.assert_allclose(result.vibration_now, a @ (u0 + fitted), rtol=1e-6)
    np.testing.assert_allclose(result.correction_gmm, -(u0 + fitted), rtol=1e-5)


def test_trim_respects_the_room_taken_by_fitted_parts(tmp_path):
    """Two M8 fill position 2 of plane 1 (capacity 2); what is still needed is an
    M16 exactly there, which no longer fits."""
    a, _ = synthetic(11)
    check = [(0, 2, "M8", 2)]
    u0 = np.array([-(11.30 + 2 * 1.83) * unit_vector(2, 4, 100.0), 0])
    session = read_session(write(tmp_path, session_toml(a, u0, capacity=2, check=check)))
    result = solve_session(session)
    for option in list(result.front) + [result.rounded]:
        on_full = [p for plane, p in option.parts
                   if plane == 0 and p.position == 2 and p.action == "fit"]
        assert not on_full, option.parts
    # Without the fitted parts' room one M16 would leave nothing; now it cannot.
    assert result.best_with_at_most(1).objective > 1e-3
    # Every entry against enumeration of the problem written out here (tests/oracle.py).
    effects, cap, stock = placement_problem(a, 4, 100.0, 2, check)
    assert cap[1] == 0
    expected = brute_front(effects, result.vibration_now, cap, stock, 3, "euclidean")
    for k, value in enumerate(expected):
        assert result.best_with_at_most(k).objective == pytest.approx(value, rel=1e-6,
                                                                      abs=1e-9), k


def test_trim_takes_off_one_of_two_fitted_parts_when_one_is_too_many(tmp_path):
    """Plane 1 needs one M16 at position 1; two were fitted.  With three positions
    120° apart no single added part cancels the extra one (it would need the
    opposite position), so the best single operation takes one M16 off."""
    a, _ = synthetic(13)
    u0 = np.array([-11.30 * unit_vector(1, 3, 100.0), 0])
    check = [(0, 1, "M16", 2)]
    text = session_toml(a, u0, positions=3, capacity=2, check=check, limit=1e-6,
                        trials=((0, 20.0, 2, True), (1, 20.0, 1, True)))
    result = solve_session(read_session(write(tmp_path, text)))
    best = result.best_with_at_most(1)
    assert [(plane, p.position, p.item, p.count, p.action) for plane, p in best.parts] == [
        (0, 1, "M16", 1, "remove")]
    assert best.objective == pytest.approx(0.0, abs=1e-9)
    assert result.chosen is best
    # The prediction is the model with one M16 taken off: V_check - A·(M16 at position 1).
    np.testing.assert_allclose(best.predicted, 0, atol=1e-9)
    effects, cap, stock = placement_problem(a, 3, 100.0, 2, check)
    expected = brute_front(effects, result.vibration_now, cap, stock, 3, "euclidean")
    assert expected[1] == pytest.approx(0.0, abs=1e-9)
    for k, value in enumerate(expected):
        assert result.best_with_at_most(k).objective == pytest.approx(value, rel=1e-6,
                                                                      abs=1e-9), k


def test_trial_weights_left_on_are_taken_off_the_correction(tmp_path):
    """REFERENCES.md, single plane: with the trial weight left on, add W - T."""
    a, u0 = synthetic(17)
    trials = ((0, 20.0, 2, False), (1, 15.0, 3, False))
    result = solve_session(read_session(write(tmp_path, session_toml(a, u0, trials=trials))))
    t = np.array([20.0 * unit_vector(2, 4, 100.0), 15.0 * unit_vector(3, 4, 100.0)])
    w = -u0  # the correction without trial weights: W = -U for an exact machine
    np.testing.assert_allclose(result.coefficients.matrix, a, rtol=1e-6)
    np.testing.assert_allclose(result.correction_gmm, w - t, rtol=1e-6)
    assert "left on" in result.basis
    # Round trip: fitting W - T on top of the trial weights leaves no vibration.
    np.testing.assert_allclose(a @ (u0 + t + result.correction_gmm), 0, atol=1e-9)


def test_trial_run_is_judged_against_the_run_it_adds_to(tmp_path):
    """A strong trial 1 left on, then a weak trial 2: trial 2 changes the readings
    of run 2 (its own starting point) by far less than 30 % / 30° (common practice),
    though it differs a lot from the reference run."""
    a = np.array([[rect(0.01, 10), rect(0.01, 100)], [rect(0.01, 200), rect(0.012, 300)]])
    u0 = np.array([rect(500, 0), rect(400, 90)])
    trials = ((0, 60.0, 2, False), (1, 0.5, 1, True))
    result = solve_session(read_session(write(tmp_path, session_toml(a, u0, trials=trials))))
    named = [w for w in result.warnings if w.startswith("trial run")]
    assert len(named) == 1 and named[0].startswith("trial run 2"), result.warnings
    assert "whose weights it adds to" in named[0]


def test_stored_coefficients_get_the_ill_conditioning_warning(tmp_path):
    a = np.array([[1e-3, 1.01e-3], [2e-3, 2.0e-3]], dtype=complex)  # nearly parallel columns
    u0 = np.array([rect(500, 0), rect(400, 90)])
    text = session_toml(a, u0, trials=None, coefficients="stored")
    session = read_session(write(tmp_path, text))
    stored = StoredCoefficients(a, "um", "peak", "against rotation", None, 1500.0,
                                ("s1", "s2"), ("plane 1", "plane 2"), "visit 1")
    result = solve_session(session, stored)
    # numpy.linalg.cond of the stored matrix (channel weights 1).
    assert result.coefficients.condition == pytest.approx(np.linalg.cond(a), rel=1e-12)
    assert any("ill-conditioned" in w for w in result.warnings)


def test_one_shot_in_other_units_and_angle_sense_gives_the_same_physical_plan(tmp_path):
    """Coefficients stored in mm/s peak, angles against rotation; next year's
    readings in in/s rms with angles counted with rotation.  1 in/s = 25.4 mm/s
    (inch definition), rms = peak/√2 (sinusoid); with the sense flipped every
    angle changes sign (REFERENCES.md, angles)."""
    visit = read_session(write(tmp_path, session_toml(
        EXAMPLE_A, EXAMPLE_U, unit="mm/s", norm="max", max_parts=4, positions=8,
        capacity=2), "visit.toml"))
    first = solve_session(visit)
    stored = StoredCoefficients(first.coefficients.matrix, "mm/s", "peak", "against rotation",
                                None, 1500.0, ("s1", "s2", "s3"), ("plane 1", "plane 2"),
                                "visit 1")
    u1 = np.array([rect(1400, 300), rect(900, 100)])
    common = dict(norm="max", max_parts=4, positions=8, capacity=2, trials=None,
                  coefficients="stored")
    same = solve_session(read_session(write(tmp_path, session_toml(
        EXAMPLE_A, u1, unit="mm/s", **common), "same.toml")), stored)
    # The same machine described with angles counted with rotation: conjugates.
    other = solve_session(read_session(write(tmp_path, session_toml(
        EXAMPLE_A.conj(), u1.conj(), unit="in/s", measure="rms", sense="with rotation",
        scale=1 / (25.4 * math.sqrt(2)), **common), "other.toml")), stored)
    np.testing.assert_allclose(same.correction_gmm, -u1, rtol=1e-6)
    # The same correction, its angles counted the other way.
    np.testing.assert_allclose(other.correction_gmm, np.conj(same.correction_gmm), rtol=1e-9)
    assert abs(other.correction_gmm[0]) == pytest.approx(1400, rel=1e-6)

    def physical(result, sign):
        return sorted((p, round(sign * part.angle_deg % 360, 6), part.item, part.count)
                      for p, part in result.chosen.parts)

    assert physical(other, -1) == physical(same, 1)
    assert other.chosen.objective * 25.4 * math.sqrt(2) == pytest.approx(same.chosen.objective,
                                                                         rel=1e-9)


def test_single_plane_session_matches_the_textbook_formula(tmp_path):
    """REFERENCES.md, single plane: α = (V1 - V0)/T, W = -V0/α, written out here."""
    a = np.array([[rect(0.004, 40)]])
    u0 = np.array([rect(700, 200)])
    session = read_session(write(tmp_path, session_toml(a, u0, trials=((0, 20.0, 2, True),),
                                                        max_parts=2)))
    result = solve_session(session)
    v0 = complex(a[0, 0] * u0[0])
    t = 20.0 * 100.0 * 1j  # 20 g at r 100 mm, position 2 of 4 = 90°
    v1 = complex(a[0, 0] * (u0[0] + t))
    alpha = (v1 - v0) / t
    assert result.coefficients.matrix[0, 0] == pytest.approx(alpha, rel=1e-9)
    assert result.correction_gmm[0] == pytest.approx(-v0 / alpha, rel=1e-9)
    assert result.static_couple is None


def test_more_fitted_parts_than_a_position_takes_is_bad_input(tmp_path):
    from placer.errors import SessionError

    a, u0 = synthetic(7)
    text = session_toml(a, u0, capacity=2, check=[(0, 2, "M8", 2), (0, 2, "M12", 1)])
    with pytest.raises(SessionError) as caught:
        read_session(write(tmp_path, text))
    assert caught.value.key == "runs[4].fitted[2].count"
    assert "takes 2" in caught.value.detail


def test_time_limit_leaves_counts_unproven_and_says_so():
    # A 720-position plane (found by fuzzing) cannot be searched to 6 parts with a small effort:
    # the counts not finished are marked, a warning says so, and nothing found is
    # worse than the per-plane rounded plan, which is a coupled plan too (by reasoning).
    session = read_session(ROOT / "tests" / "fuzz_corpus" / "session-slow-720-positions.toml")
    result = solve_session(session, effort=0.0001)
    assert not all(o.proven for o in result.front)
    assert any("did not finish" in w for w in result.warnings)
    objectives = [o.objective for o in result.front]
    assert objectives == sorted(objectives, reverse=True)
    assert result.front[-1].objective <= result.rounded.objective + 1e-12


def _visit_with_catalogues(tmp_path: Path, first: str, second: str, capacity: int = 2) -> Path:
    """The example visit with the planes' catalogues (TOML values) and capacity replaced."""
    text = (ROOT / "examples" / "exhaust-fan-visit.toml").read_text(encoding="utf-8")
    head, planes = text.split("[[planes]]", 1)
    planes = planes.replace('catalog = "washers-steel"', "catalog = @", 2)
    planes = planes.replace("catalog = @", f"catalog = {first}", 1)
    planes = planes.replace("catalog = @", f"catalog = {second}", 1)
    planes = planes.replace("capacity = 2", f"capacity = {capacity}")
    path = tmp_path / "visit.toml"
    path.write_text(head + "[[planes]]" + planes, encoding="utf-8")
    return path


SMALL_DRAWER = ('name = "small drawer"\n[[items]]\nid = "A"\nmass_g = 11.0\nstock = 1\n'
                '[[items]]\nid = "B"\nmass_g = 6.0\nstock = 1\n')
HOLES = 'name = "holes"\n[[items]]\nid = "H"\nmass_g = -6.0\nremoves = true\n'


def test_field_plan_shares_a_drawer_across_merged_catalogues(tmp_path):
    # Both planes draw on the one small drawer (one A, one B), the second plane
    # through a merged list: no plan on the front may use more than the drawer
    # holds (stock is per catalogue file and item; by reasoning).
    (tmp_path / "drawer.toml").write_text(SMALL_DRAWER)
    (tmp_path / "holes.toml").write_text(HOLES)
    path = _visit_with_catalogues(tmp_path, '"drawer.toml"', '["drawer.toml", "holes.toml"]')
    result = solve_session(read_session(path))
    for option in (*result.front, result.chosen):
        used: dict[str, int] = {}
        for _, part in option.parts:
            used[part.item] = used.get(part.item, 0) + part.count
        assert used.get("A", 0) <= 1 and used.get("B", 0) <= 1, used


def test_field_plan_drills_one_hole_per_position(tmp_path):
    # Common practice, no source: one drilled hole per position, whatever the
    # position's capacity for added parts (here 3).
    (tmp_path / "holes.toml").write_text(HOLES)
    path = _visit_with_catalogues(tmp_path, '"holes.toml"', '"holes.toml"', capacity=3)
    result = solve_session(read_session(path))
    assert any(part.mass_g < 0 for o in result.front for _, part in o.parts)
    for option in (*result.front, result.chosen, result.rounded):
        places = [(plane, part.position) for plane, part in option.parts]
        assert all(part.count == 1 for _, part in option.parts)
        assert len(places) == len(set(places))


def test_a_slow_session_stops_within_its_time_limit():
    """A visit made to be slow (two planes of 720 positions, up to 8 parts, the largest
    reading) stops with exit 3 within its --time-limit + 10 %: the compiled search checks
    for the limit's signal while it works.  The margin over that covers the interpreter's
    start-up, measured beside it, and a loaded machine (common practice, no source)."""
    import subprocess
    import sys
    import time

    session = ROOT / "tests" / "fuzz_corpus" / "session-slow-720-positions.toml"
    limit_s = 1.5
    env = {**__import__("os").environ, "PYTHONPATH": str(ROOT)}
    started = time.perf_counter()
    subprocess.run([sys.executable, "-m", "placer", "field", "--help"], env=env,
                   capture_output=True, check=True)
    start_up_s = time.perf_counter() - started
    started = time.perf_counter()
    run = subprocess.run([sys.executable, "-m", "placer", "field", str(session),
                          "--max-parts", "8", "--norm", "max", "--time-limit", str(limit_s),
                          "--json"], env=env, capture_output=True, text=True)
    elapsed_s = time.perf_counter() - started
    assert run.returncode == 3, run.stderr
    assert "time limit" in run.stderr and run.stdout == ""
    assert elapsed_s <= 1.1 * limit_s + start_up_s + 0.5, (elapsed_s, start_up_s)
