"""The blade pipeline (placer.arrange): moves, tolerance, swaps and the trim stage.

Every arrangement is checked against brute-force enumeration of the permutations
(n ≤ 8) with the residual recomputed here with numpy as |d + Σ w·e^{iθ}|
([FathiGinjupalli1993]); the fewest swaps against enumeration with the swap count
n − cycles ([PermutationCycles]); the tolerance against U_per = 1000·G·m/ω
([ISO21940-11]); the trim stage against a job built here and solved by the job
pipeline, and against the rotor's final unbalance recomputed from the parts.
"""

from __future__ import annotations

import cmath
import itertools
import math
from dataclasses import replace

import numpy as np
import pytest

from placer.arrange import BladeJob, TrimPlane, arrange_blades, blade_tolerance, swaps_to
from placer.blades import Blade, Disc, Limits
from placer.catalog import Catalog, Item
from placer.errors import InputError
from placer.geometry import PlaneGeometry, polar
from placer.job import Job, PlaneJob, Rotor
from placer.solve import solve_job

TIGHT = 1e-9
"""Relative agreement of a residual with the enumeration's (float sums of ~10 terms)."""


def _blades(weights, **extra) -> tuple[Blade, ...]:
    return tuple(Blade(f"B{i + 1}", float(w), **extra) for i, w in enumerate(weights))


def _residual(weights: dict[str, float], order, angles_deg, disc_gmm: complex = 0j) -> float:
    """|d + Σ w·e^{iθ}| of blade ids ``order`` in slots at ``angles_deg``
    [FathiGinjupalli1993]."""
    z = np.exp(1j * np.radians(np.asarray(angles_deg, dtype=float)))
    return float(abs(disc_gmm + sum(weights[b] * z[k] for k, b in enumerate(order))))


def _swaps(start, target) -> int:
    """Fewest swaps between two arrangements, counted by sorting ``start`` into ``target``
    one slot at a time, a swap whenever a slot holds the wrong blade: n − cycles of the
    permutation between them [PermutationCycles]."""
    slots, count = list(start), 0
    for k, wanted in enumerate(target):
        if slots[k] != wanted:
            j = slots.index(wanted, k + 1)
            slots[k], slots[j] = slots[j], slots[k]
            count += 1
    return count


RNG = np.random.default_rng(14)
WEIGHTS = [round(float(w), 1) for w in 1000.0 * (1 + 0.02 * RNG.uniform(-1, 1, 7))]
ANGLES = tuple(360.0 * k / 7 for k in range(7))
DISC_GMM = polar(9.0, 70.0)


def _job(move: str, slots_now=None, tolerance=None, stays=(), trim=None) -> BladeJob:
    blades = _blades(WEIGHTS)
    slots_now = tuple(range(1, 8)) if slots_now is None else slots_now
    pinned = tuple((slots_now[int(b[1:]) - 1], b) for b in stays)
    disc = Disc(7, unbalance_gmm=9.0, unbalance_angle_deg=70.0, pinned=pinned)
    return BladeJob(Rotor("test disc"), blades, disc, slots_now=slots_now, move=move,
                    tolerance_gmm=tolerance, trim=trim)


def test_all_equals_enumeration_and_residual_recomputes():
    result = arrange_blades(_job("all"))
    weight = {f"B{i + 1}": w for i, w in enumerate(WEIGHTS)}
    best = min(_residual(weight, p, ANGLES, DISC_GMM) for p in itertools.permutations(weight))
    a = result.arrangement
    assert a.residual_gmm == pytest.approx(best, rel=TIGHT, abs=1e-9)
    assert a.residual_gmm == pytest.approx(_residual(weight, a.blade_ids, ANGLES, DISC_GMM))
    static = DISC_GMM + sum(weight[b] * cmath.rect(1, math.radians(t))
                            for b, t in zip(a.blade_ids, ANGLES))
    assert a.residual_angle_deg == pytest.approx(math.degrees(cmath.phase(static)) % 360)
    assert a.proven


def test_new_moves_only_the_new_blades_into_the_empty_slots():
    # Blades 3 and 6 are new (no slot); slots 2 and 5 are empty.  Enumeration: the two
    # ways of putting them in, every other blade where it is.
    slots_now = (1, None, 3, 4, None, 6, 7)
    result = arrange_blades(_job("new", slots_now=slots_now))
    weight = {f"B{i + 1}": w for i, w in enumerate(WEIGHTS)}
    fixed = {s: f"B{i + 1}" for i, s in enumerate(slots_now) if s is not None}
    options = []
    for first, second in itertools.permutations(["B2", "B5"]):
        order = [fixed.get(k) for k in range(1, 8)]
        order[order.index(None)] = first
        order[order.index(None)] = second
        options.append((_residual(weight, order, ANGLES, DISC_GMM), order))
    best, order = min(options)
    assert list(result.arrangement.blade_ids) == order
    assert result.arrangement.residual_gmm == pytest.approx(best, rel=TIGHT)
    rows = result.rows()
    assert {r.slot for r in rows if r.stays} == set(fixed)
    assert {r.blade.blade_id for r in rows if r.from_slot is None} == {"B2", "B5"}


def test_new_with_no_new_blade_moves_nothing():
    result = arrange_blades(_job("new"))
    assert result.arrangement.blade_ids == tuple(f"B{k}" for k in range(1, 8))
    assert result.swaps_from_now() == 0


@pytest.mark.parametrize("tolerance", [1.0, 4.0, 12.0, 40.0])
def test_fewest_swaps_equal_enumeration(tolerance):
    # Every permutation, by its swap count from the rotor as it is: the fewest that reach
    # the tolerance, and among those the least residual.
    job = _job("fewest", tolerance=tolerance)
    weight = {f"B{i + 1}": w for i, w in enumerate(WEIGHTS)}
    start = job.assembled()
    scored = [(_swaps(start, p), _residual(weight, p, ANGLES, DISC_GMM))
              for p in itertools.permutations(start)]
    reach = [(k, r) for k, r in scored if r <= tolerance]
    result = arrange_blades(job)
    assert reach                     # every tolerance here is reached (0 is tested below)
    fewest = min(k for k, _ in reach)
    least = min(r for k, r in reach if k == fewest)
    assert len(result.arrangement.swaps) == fewest
    assert result.arrangement.residual_gmm == pytest.approx(least, rel=TIGHT, abs=1e-9)
    assert result.arrangement.proven and result.within_tolerance
    # The swaps, made in order on the rotor as it is, give the arrangement.
    slots = list(start)
    for a, b, in_a, in_b in result.swap_steps():
        assert (slots[a - 1], slots[b - 1]) == (in_a, in_b)
        slots[a - 1], slots[b - 1] = slots[b - 1], slots[a - 1]
    assert tuple(slots) == result.arrangement.blade_ids


def test_fewest_out_of_reach_gives_the_least_residual_and_says_so():
    # Tolerance 0: no arrangement reaches it; the least residual of all is shown (the
    # enumeration's), with the swaps that make it and a note; the verdict is outside.
    job = _job("fewest", tolerance=0.0)
    result = arrange_blades(job)
    weight = {f"B{i + 1}": w for i, w in enumerate(WEIGHTS)}
    best = min(_residual(weight, p, ANGLES, DISC_GMM) for p in itertools.permutations(weight))
    assert result.arrangement.residual_gmm == pytest.approx(best, rel=TIGHT)
    assert result.arrangement.swaps == swaps_to(job, result.arrangement.blade_ids)
    assert len(result.arrangement.swaps) == _swaps(job.assembled(),
                                                   result.arrangement.blade_ids)
    assert result.within_tolerance is False and not result.all_within
    assert any("no arrangement within the tolerance" in n for n in result.notes)


def test_blades_that_stay_stay_in_every_move():
    for move, tolerance in (("all", None), ("fewest", 2.0)):
        result = arrange_blades(_job(move, tolerance=tolerance, stays=("B1", "B4")))
        assert result.arrangement.blade_in(1) == "B1" and result.arrangement.blade_in(4) == "B4"


def test_fewest_needs_a_tolerance():
    with pytest.raises(InputError) as err:
        arrange_blades(_job("fewest"))
    assert err.value.key == "rotor.tolerance_gmm"
    assert err.value.file == "(built in Python)"


def test_limits_that_cannot_be_kept_name_the_limits():
    job = _job("all")
    job = replace(job, disc=replace(job.disc, limits=Limits(opposite_gmm=0.0)))
    with pytest.raises(InputError) as err:
        arrange_blades(job)
    assert err.value.key == "limits" and err.value.file


def test_tolerance_is_u_per_of_the_whole_rotor_in_one_plane():
    # [ISO21940-11]: U_per = 1000·G·m/ω, ω = 2π·n/60; G6.3, 38 kg, 1480 r/min.
    rotor = Rotor("fan", mass_kg=38.0, service_rpm=1480.0, grade_mm_s=6.3)
    job = replace(_job("all"), rotor=rotor)
    tolerance, source, u_per = blade_tolerance(job)
    expected = 1000.0 * 6.3 * 38.0 / (2 * math.pi * 1480.0 / 60.0)
    assert tolerance == pytest.approx(expected) and u_per == pytest.approx(expected)
    assert "U_per" in source
    own = blade_tolerance(replace(job, tolerance_gmm=500.0))
    assert own[0] == 500.0 and own[2] == pytest.approx(expected)
    assert blade_tolerance(_job("all"))[0] is None


CLIPS = Catalog("clips", (Item("C2", 2.0), Item("C5", 5.0), Item("C8", 8.0)), source="test")


def test_trim_stage_is_the_job_pipeline_on_the_blades():
    # A job built here: one plane, a clip seat per slot at 150 mm, the correction opposite
    # the arrangement's residual; solved by solve_job, it must give the same plan.
    geometry = PlaneGeometry("clips", angles_deg=ANGLES, radii_mm=(150.0,) * 7, capacity=2)
    slots_now = (1, None, 3, 4, 5, 6, 7)
    weights = list(WEIGHTS)
    weights[1] += 400.0                      # the new blade is heavier: a residual to trim
    blades = _blades(weights)
    rotor = Rotor("fan", mass_kg=1.0, service_rpm=2900.0, grade_mm_s=6.3)
    job = BladeJob(rotor, blades, Disc(7), slots_now=slots_now, move="new",
                   trim=TrimPlane(geometry, CLIPS, max_parts=3))
    result = arrange_blades(job)
    weight = {b.blade_id: b.moment_gmm for b in blades}
    z = np.exp(1j * np.radians(ANGLES))
    heavy = sum(weight[b] * z[k] for k, b in enumerate(result.arrangement.blade_ids))
    plane = PlaneJob(geometry, CLIPS, correction_gmm=-heavy, given_as="by hand", max_parts=3)
    by_hand = solve_job(Job(rotor, (plane,))).planes[0]
    trim = result.trim.planes[0]
    assert [(p.position, p.item, p.count) for p in trim.chosen.parts] == \
        [(p.position, p.item, p.count) for p in by_hand.chosen.parts]
    assert trim.chosen.residual_gmm == pytest.approx(by_hand.chosen.residual_gmm)
    assert trim.tolerance_gmm == pytest.approx(1000 * 6.3 * 1.0 / (2 * math.pi * 2900 / 60))
    assert trim.chosen.parts                    # about 400 g·mm against 20.7: clips are fitted
    # The rotor as it will run: blades plus clips, recomputed from the parts.
    final = heavy + sum(p.count * p.mass_g * 150.0 * z[p.position - 1]
                        for p in trim.chosen.parts)
    assert abs(final) == pytest.approx(trim.chosen.residual_gmm, rel=1e-9, abs=1e-9)
    assert result.final_within == trim.within_tolerance


def test_trim_on_the_blades_needs_a_seat_per_slot():
    geometry = PlaneGeometry("clips", angles_deg=(0.0, 90.0, 180.0), radii_mm=(150.0,) * 3)
    with pytest.raises(InputError) as err:
        _job("all", trim=TrimPlane(geometry, CLIPS))
    assert err.value.key == "trim"


@pytest.mark.parametrize("slots_now, stays, key", [
    ((1, 1, 3, 4, 5, 6, 7), (), "blades[B2].slot"),
    ((1, 2, 3, 4, 5, 6, 9), (), "blades[B7].slot"),
    ((1, 2), (), "slots_now"),
])
def test_bad_slots_now(slots_now, stays, key):
    with pytest.raises(InputError) as err:
        BladeJob(Rotor("x"), _blades(WEIGHTS), Disc(7), slots_now=slots_now)
    assert err.value.key == key


def test_stays_must_be_where_the_blade_is():
    disc = Disc(7, pinned=((2, "B1"),))
    with pytest.raises(InputError) as err:
        BladeJob(Rotor("x"), _blades(WEIGHTS), disc, slots_now=tuple(range(1, 8)))
    assert err.value.key == "blades[B1].stays"


def test_fewest_needs_blades_in_slots():
    with pytest.raises(InputError) as err:
        BladeJob(Rotor("x"), _blades(WEIGHTS), Disc(7), move="fewest")
    assert err.value.key == "blades"


def test_same_job_same_answer():
    # Work is counted, not timed, and every random choice is seeded.
    first = arrange_blades(_job("all"))
    second = arrange_blades(_job("all"))
    assert first.arrangement == second.arrangement
