"""Blades on a disc, then stock parts for what is left: the blade pipeline.

Pure: takes a :class:`BladeJob` (what a blade file says) and returns a
:class:`BladeResult`.  Two stages:

1. **Arrange** the blades on the slots with
   :func:`placer.engine.arrangement.arrange`, in one of three ways
   (:data:`MOVES`): only the new blades go into the empty slots (``"new"``,
   every blade already fitted stays); the fewest blade swaps from the rotor as
   it is that bring the static residual within the tolerance (``"fewest"``);
   or every blade may move (``"all"``).  Blades marked to stay stay in every
   way.
2. **Trim** (when the job has a trim plane): the arrangement's residual
   unbalance is the required correction, opposite its heavy spot, of one
   correction plane whose positions are the blades' clip seats (one per slot)
   or a bolt circle; that plane is solved by the job pipeline
   (:func:`placer.solve.solve_job`), so the trim gets the same aim, the same
   least-mass rule, the same proof and the same fitting sheet as any job.

The tolerance is the job's: ``tolerance_gmm`` when given, else U_per from the
grade, mass and service speed, all of it in the one plane of a disc.

References
----------
[ISO21940-11] U_per, the residual a disc may keep; [BlochGeitner] a disc
corrected in one plane takes the whole tolerance; [PermutationCycles] swaps
between two arrangements; [FathiGinjupalli1993] the residual of an arrangement.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from placer import validate
from placer.blades import ArrangementResult, Blade, Disc, check_blades
from placer.catalog import Catalog
from placer.engine.arrangement import DEFAULT_WORK, arrange
from placer.engine.arrangement.moves import swaps_between
from placer.errors import InputError
from placer.geometry import PlaneGeometry, polar
from placer.job import Job, PlaneJob, Rotor
from placer.limits import DEFAULT_EFFORT, DEFAULT_MAX_PARTS, MAX_PARTS_LIMIT, MAX_SLOTS
from placer.plan import JobResult
from placer.solve import solve_job
from placer.tolerance import permissible_residual_gmm

MOVES = ("new", "fewest", "all")
"""How blades may move: only new blades into the empty slots, the fewest swaps from the
rotor as it is, or every blade not marked to stay."""


@dataclass(frozen=True)
class TrimPlane:
    """Where the trim parts go after the blades are arranged, and which parts.

    Parameters
    ----------
    geometry : PlaneGeometry
        The trim positions: one per slot at the slots' angles (``on_blades``),
        or a bolt circle.
    catalog : Catalog
        The parts that may be fitted.
    max_parts : int
        Longest trim plan.
    aim_share : float or None
        Share of the tolerance the trim aims at [1] (None: the rotor's, else
        placer's default).
    on_blades : bool
        Whether position k is the clip seat of the blade in slot k.
    """

    geometry: PlaneGeometry
    catalog: Catalog
    max_parts: int = DEFAULT_MAX_PARTS
    aim_share: float | None = None
    on_blades: bool = True

    def __post_init__(self) -> None:
        validate.whole(self.max_parts, "trim.max_parts", 1, MAX_PARTS_LIMIT)
        validate.share(self.aim_share, "trim.aim_share")


@dataclass(frozen=True)
class BladeJob:
    """Everything one ``placer blades`` run works on.

    ``disc.pinned`` holds the blades marked to stay; ``slots_now`` the slot
    each blade is in now (None for a new blade), or nothing when the rotor has
    no blades on yet.

    Parameters
    ----------
    rotor : Rotor
        Name, mass, service speed, grade, angle sense and rotation.
    blades : tuple of Blade
        One blade per slot.
    disc : Disc
        The slots, the bare disc's own unbalance, the blades that stay, the limits.
    slots_now : tuple of (int or None)
        Per blade (in the order of ``blades``) the slot it is in now, None for a
        new blade; empty when no blade is on the disc.
    move : str
        How blades may move (one of :data:`MOVES`).
    tolerance_gmm : float or None
        Permissible static residual [g·mm] given directly (None: U_per from the
        grade, mass and speed, when given).
    trim : TrimPlane or None
        Where stock parts trim the residual; None for no trim stage.
    source : str
        The blade file, or "(built in Python)".
    """

    rotor: Rotor
    blades: tuple[Blade, ...]
    disc: Disc
    slots_now: tuple[int | None, ...] = ()
    move: str = "all"
    tolerance_gmm: float | None = None
    trim: TrimPlane | None = None
    source: str = "(built in Python)"

    def __post_init__(self) -> None:
        object.__setattr__(self, "blades", tuple(self.blades))
        object.__setattr__(self, "slots_now", tuple(self.slots_now))
        validate.whole(self.disc.slot_count, "slot_count", 2, MAX_SLOTS)
        check_blades(self.blades, self.disc)
        validate.one_of(self.move, "move", MOVES)
        validate.number(self.tolerance_gmm, "tolerance_gmm", non_negative=True, allow_none=True)
        if self.slots_now:
            self._check_slots_now()
        elif self.disc.pinned:
            raise InputError("blades stay but no blade is in a slot", key="blades",
                             expected="the slot of every blade that stays")
        if self.move == "fewest" and not any(s is not None for s in self.slots_now):
            raise InputError("no blade is in a slot, so there is nothing to swap", key="blades",
                             expected="the slot each blade is in now, or move \"all\"")
        if self.trim is not None and self.trim.on_blades \
                and self.trim.geometry.n_positions != self.disc.slot_count:
            raise InputError(f"{self.trim.geometry.n_positions} trim positions on "
                             f"{self.disc.slot_count} blades", key="trim",
                             expected="one clip seat per slot")

    def _check_slots_now(self) -> None:
        n = self.disc.slot_count
        validate.same_length(self.slots_now, len(self.blades), "slots_now", "blade")
        taken: dict[int, str] = {}
        for blade, slot in zip(self.blades, self.slots_now):
            if slot is None:
                continue
            validate.whole(slot, f"blades[{blade.blade_id}].slot", 1, n)
            if slot in taken:
                raise InputError(f"slot {slot} holds both {taken[slot]} and {blade.blade_id}",
                                 key=f"blades[{blade.blade_id}].slot",
                                 expected="one blade per slot")
            taken[slot] = blade.blade_id
        now = dict(zip((b.blade_id for b in self.blades), self.slots_now))
        for slot, blade_id in self.disc.pinned:
            if now[blade_id] != slot:
                raise InputError(f"blade {blade_id} stays in slot {slot} but is in "
                                 f"{now[blade_id] or 'no slot'} now",
                                 key=f"blades[{blade_id}].stays",
                                 expected="a blade that stays where it is")

    def start(self) -> tuple[str | None, ...]:
        """The blade in each slot now (slot k at index k - 1), None for an empty slot.

        Returns
        -------
        tuple of (str or None)
            Every slot None when no blade is on the disc.
        """
        out: list[str | None] = [None] * self.disc.slot_count
        for blade, slot in zip(self.blades, self.slots_now):
            if slot is not None:
                out[slot - 1] = blade.blade_id
        return tuple(out)

    def assembled(self) -> tuple[str, ...]:
        """The rotor as it is with the new blades put into the empty slots.

        The new blades go into the empty slots in the order they are listed,
        the lowest slot number first: the start from which swaps are counted.

        Returns
        -------
        tuple of str
            The blade in each slot (slot k at index k - 1).
        """
        new = iter(b.blade_id for b, s in zip(self.blades, self.slots_now) if s is None)
        if not self.slots_now:
            new = iter(b.blade_id for b in self.blades)
        return tuple(blade if blade is not None else next(new) for blade in self.start())

    def disc_for_move(self) -> Disc:
        """The disc as the search sees it: with move "new", every blade in a slot stays.

        Returns
        -------
        Disc
            ``disc``, with more blades pinned for move "new".
        """
        if self.move != "new" or not self.slots_now:
            return self.disc
        pinned = tuple((s, b.blade_id) for b, s in zip(self.blades, self.slots_now)
                       if s is not None)
        return replace(self.disc, pinned=pinned)


@dataclass(frozen=True)
class SlotRow:
    """One slot of the arrangement, as the tables list it.

    Parameters
    ----------
    slot : int
        Slot number (from 1).
    angle_deg : float
        The slot's angle [deg].
    blade : Blade
        The blade that goes in it.
    stays : bool
        The blade was marked to stay (or, with move "new", was already there).
    from_slot : int or None
        The slot the blade is in now; None for a new blade or when no blade
        is on the disc.
    """

    slot: int
    angle_deg: float
    blade: Blade
    stays: bool
    from_slot: int | None

    @property
    def moves(self) -> bool:
        """Whether the blade goes into this slot from another one."""
        return self.from_slot is not None and self.from_slot != self.slot


@dataclass(frozen=True)
class BladeResult:
    """The arrangement, how sure it is, the verdict, and the trim that follows.

    Parameters
    ----------
    job : BladeJob
        The job as read.
    arrangement : ArrangementResult
        Which blade goes in which slot, its residual and its proof.
    tolerance_gmm : float or None
        Permissible static residual [g·mm]; None when none is given.
    tolerance_source : str
        Where the tolerance came from.
    permissible_gmm : float or None
        U_per of the rotor from the grade [g·mm]; None without grade, mass and speed.
    trim : JobResult or None
        The trim plane solved by the job pipeline; None without a trim stage.
    notes : tuple of str
        Sentences for the technician.
    """

    job: BladeJob
    arrangement: ArrangementResult
    tolerance_gmm: float | None
    tolerance_source: str
    permissible_gmm: float | None
    trim: JobResult | None
    notes: tuple[str, ...] = ()

    @property
    def within_tolerance(self) -> bool | None:
        """Whether the arrangement alone is within the tolerance (None without one)."""
        if self.tolerance_gmm is None:
            return None
        return bool(self.arrangement.residual_gmm <= self.tolerance_gmm)

    @property
    def final_within(self) -> bool | None:
        """The verdict on the rotor as it will run: after the trim when there is one."""
        if self.trim is not None:
            return self.trim.planes[0].within_tolerance
        return self.within_tolerance

    @property
    def all_within(self) -> bool:
        """False only when the rotor as it will run is outside its tolerance."""
        if self.trim is not None:
            return self.trim.all_within
        return self.within_tolerance is not False

    @property
    def residual_vector_gmm(self) -> complex:
        """The arrangement's residual unbalance (heavy spot) as a complex value [g·mm]."""
        return polar(self.arrangement.residual_gmm, self.arrangement.residual_angle_deg)

    @property
    def total_moment_gmm(self) -> float:
        """Sum of the blades' moment weights [g·mm]."""
        return float(sum(b.moment_gmm for b in self.job.blades))

    def rows(self) -> tuple[SlotRow, ...]:
        """Every slot with its blade, slot 1 first.

        Returns
        -------
        tuple of SlotRow
            One row per slot.
        """
        by_id = {b.blade_id: b for b in self.job.blades}
        now = dict(zip((b.blade_id for b in self.job.blades), self.job.slots_now))
        pinned = {blade_id for _, blade_id in self.job.disc_for_move().pinned}
        angles = self.job.disc.slot_angles_deg()
        return tuple(SlotRow(k, angles[k - 1] % 360.0, by_id[blade_id], blade_id in pinned,
                             now.get(blade_id))
                     for k, blade_id in enumerate(self.arrangement.blade_ids, start=1))

    def swaps_from_now(self) -> int | None:
        """Swaps that turn the rotor as it is (new blades put in) into this arrangement.

        Returns
        -------
        int or None
            The fewest swaps; None when no blade is on the disc.
        """
        steps = swaps_to(self.job, self.arrangement.blade_ids)
        return None if steps is None else len(steps)

    def swap_steps(self) -> tuple[tuple[int, int, str, str], ...]:
        """The swaps to make, in order, with the blades they exchange.

        Returns
        -------
        tuple of (int, int, str, str)
            (slot a, slot b, blade in a, blade in b) at the time of each swap,
            from the rotor as it is (new blades put in); empty when the
            arrangement was not found as swaps.
        """
        if not self.arrangement.swaps:
            return ()
        slots = list(self.job.assembled())
        steps = []
        for a, b in self.arrangement.swaps:
            steps.append((a, b, slots[a - 1], slots[b - 1]))
            slots[a - 1], slots[b - 1] = slots[b - 1], slots[a - 1]
        return tuple(steps)


def swaps_to(job: BladeJob, blade_ids: tuple[str, ...]) -> tuple[tuple[int, int], ...] | None:
    """The fewest swaps, as pairs of slot numbers, from the rotor as it is to ``blade_ids``.

    Parameters
    ----------
    job : BladeJob
        The job (the slot each blade is in now; new blades go into the empty
        slots as :meth:`BladeJob.assembled` puts them).
    blade_ids : tuple of str
        The blade wanted in each slot (slot k at index k - 1).

    Returns
    -------
    tuple of (int, int) or None
        The swaps in the order to make them; None when no blade is on the disc.

    References
    ----------
    [PermutationCycles] n minus the cycles of the permutation between them.
    """
    if not any(s is not None for s in job.slots_now):
        return None
    index = {b.blade_id: i for i, b in enumerate(job.blades)}
    start = np.array([index[b] for b in job.assembled()], dtype=np.int64)
    target = np.array([index[b] for b in blade_ids], dtype=np.int64)
    return tuple((int(a) + 1, int(b) + 1) for a, b in swaps_between(start, target))


def slot_gaps_deg(disc: Disc) -> list[float]:
    """The angle from each slot to the next round the disc [deg], in the order of angles.

    Parameters
    ----------
    disc : Disc
        The disc.

    Returns
    -------
    list of float
        One gap per slot; they add up to 360°.
    """
    angles = sorted(a % 360.0 for a in disc.slot_angles_deg())
    return [b - a for a, b in zip(angles, angles[1:] + [angles[0] + 360.0])]


def work_budget(effort: float) -> int:
    """Work units of the arrangement search at ``effort`` times the default.

    Parameters
    ----------
    effort : float
        Multiple of the engine's default budget [1].

    Returns
    -------
    int
        The budget, at least 1 [-].
    """
    return max(1, round(DEFAULT_WORK * effort))


def blade_tolerance(job: BladeJob) -> tuple[float | None, str, float | None]:
    """The permissible static residual of the bladed disc, where it came from, and U_per.

    A disc is corrected in one plane, which takes the whole of U_per.

    Parameters
    ----------
    job : BladeJob
        The job (its ``tolerance_gmm`` comes first, then the rotor's grade).

    Returns
    -------
    tolerance_gmm : float or None
        The tolerance [g·mm]; None when none is given.
    source : str
        Where it came from, for the sheet.
    permissible_gmm : float or None
        U_per from the grade, mass and speed [g·mm], when all three are given.

    References
    ----------
    [ISO21940-11] U_per = 1000·G·m/ω; [BlochGeitner] one plane takes all of it.
    """
    rotor = job.rotor
    u_per = None
    if None not in (rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm):
        u_per = permissible_residual_gmm(rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm)
    if job.tolerance_gmm is not None:
        return job.tolerance_gmm, "blade file (tolerance_gmm)", u_per
    if u_per is not None:
        return u_per, "U_per from the grade, all in the disc's one plane", u_per
    return None, "none given", None


def trim_job(job: BladeJob, arrangement: ArrangementResult) -> Job:
    """The trim stage as a job of one plane: the correction is opposite the residual.

    Parameters
    ----------
    job : BladeJob
        The blade job (its rotor, tolerance and trim plane).
    arrangement : ArrangementResult
        The arrangement whose residual unbalance the trim corrects.

    Returns
    -------
    Job
        One plane; its tolerance is the blade job's own ``tolerance_gmm``
        (else the rotor's U_per, all of it in the one plane).

    References
    ----------
    [InfluenceCoefficients] added mass goes opposite the heavy spot.
    """
    if job.trim is None:
        raise InputError("the job has no trim plane", key="trim", expected="a [trim] table")
    heavy = polar(arrangement.residual_gmm, arrangement.residual_angle_deg)
    given = (f"opposite the arrangement's residual unbalance, {arrangement.residual_gmm:.1f} "
             f"g·mm at {arrangement.residual_angle_deg:.1f}°")
    plane = PlaneJob(geometry=job.trim.geometry, catalog=job.trim.catalog,
                     correction_gmm=-heavy, given_as=given, tolerance_gmm=job.tolerance_gmm,
                     max_parts=job.trim.max_parts, aim_share=job.trim.aim_share)
    rotor = replace(job.rotor, com_distances_mm=None)
    return Job(rotor=rotor, planes=(plane,), source=job.source)


def arrange_blades(job: BladeJob, effort: float = DEFAULT_EFFORT, *,
                   aim_share: float | None = None) -> BladeResult:
    """Arrange the blades of ``job``, judge the residual, and plan the trim.

    Parameters
    ----------
    job : BladeJob
        The blades, the disc, how blades may move, the tolerance and the trim.
    effort : float
        Multiple of the default work budget of both stages [1]; counted, so
        the same input and effort give the same answer on any machine.
    aim_share : float, optional
        Share of the tolerance the trim aims at, for this run [1].

    Returns
    -------
    BladeResult

    Raises
    ------
    InputError
        With the blade file named: no arrangement keeps the limits, or the
        fewest swaps were asked for without a tolerance.

    References
    ----------
    [FathiGinjupalli1993], [ISO21940-11].
    """
    tolerance, source, u_per = blade_tolerance(job)
    budget = work_budget(effort)
    notes: list[str] = []
    try:
        if job.move != "fewest":
            result = arrange(job.blades, job.disc_for_move(), work_budget=budget)
        elif tolerance is None:
            raise InputError("the fewest swaps need a tolerance to reach",
                             key="rotor.tolerance_gmm",
                             expected="tolerance_gmm, or grade, mass_kg and service_rpm")
        else:
            result = _fewest_swaps(job, tolerance, budget, notes)
    except InputError as exc:
        if exc.file is not None:
            raise
        raise InputError(exc.detail, file=job.source, key=exc.key,
                         expected=exc.expected) from None
    trim = None
    if job.trim is not None:
        trim = solve_job(trim_job(job, result), effort=effort, aim_share=aim_share)
    return BladeResult(job=job, arrangement=result, tolerance_gmm=tolerance,
                       tolerance_source=source, permissible_gmm=u_per, trim=trim,
                       notes=tuple(notes))


def _fewest_swaps(job: BladeJob, tolerance: float, budget: int,
                  notes: list[str]) -> ArrangementResult:
    """The fewest swaps into the tolerance; else the least residual of all, with its swaps."""
    try:
        return arrange(job.blades, job.disc, work_budget=budget, current=job.assembled(),
                       tolerance_gmm=tolerance)
    except InputError as exc:
        if exc.key != "tolerance_gmm":
            raise
    best = arrange(job.blades, job.disc, work_budget=budget)
    swaps = swaps_to(job, best.blade_ids) or ()
    notes.append("no arrangement within the tolerance was found by swapping blades; the "
                 f"least residual of every arrangement is shown, {len(swaps)} swaps away")
    return replace(best, swaps=swaps, swap_lower_bound=None)
