"""Blades, the disc they go on, and the arrangement found for them.

A disc (fan hub, propeller hub, compressor disc, runner crown) has numbered
slots, each taking one blade.  Slot numbers start at 1, as they are marked on
the rotor; slot k is at ``Disc.slot_angles_deg()[k - 1]``.  Every blade is
weighed for its moment weight (mass times the radius of its centre of
gravity, g·mm) and may carry an axial moment (mass times the axial offset of
its centre of gravity from the disc's mid-plane, g·mm²) and a frequency (its
first bending frequency, Hz).  The values here are checked when they are
made; :func:`placer.engine.arrangement.arrange` turns them into an
:class:`ArrangementResult`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

from placer.errors import InputError

ANGLE_TOL_DEG = 1e-6
"""Two slot angles closer than this [deg] are the same angle (common practice, no source)."""


def _finite(value: object, key: str, expected: str, *, positive: bool = False,
            non_negative: bool = False) -> float:
    """``value`` as a float, or InputError naming ``key`` and ``expected``."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"not a number: {value!r}", key=key, expected=expected)
    number = float(value)
    if not math.isfinite(number):
        raise InputError(f"not a finite number: {value!r}", key=key, expected=expected)
    if positive and number <= 0.0:
        raise InputError(f"must be above zero, got {value!r}", key=key, expected=expected)
    if non_negative and number < 0.0:
        raise InputError(f"must not be negative, got {value!r}", key=key, expected=expected)
    return number


@dataclass(frozen=True)
class Blade:
    """One blade as weighed.

    Parameters
    ----------
    blade_id : str
        The blade's mark or serial number, unique on the disc.
    moment_gmm : float
        Moment weight [g·mm]: mass times the radius of the centre of gravity.
    axial_moment_gmm2 : float or None
        Axial moment [g·mm²]: mass times the radius times the axial offset of the
        centre of gravity from the disc's mid-plane (signed), when measured.
    frequency_hz : float or None
        The blade's (first bending) frequency [Hz], when measured.
    """

    blade_id: str
    moment_gmm: float
    axial_moment_gmm2: float | None = None
    frequency_hz: float | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.blade_id, str) or not self.blade_id.strip():
            raise InputError(f"blade id {self.blade_id!r} is empty", key="blade_id",
                             expected="a non-empty mark or serial number")
        key = f"blades[{self.blade_id}]"
        _finite(self.moment_gmm, f"{key}.moment_gmm", "a moment weight in g·mm above zero",
                positive=True)
        if self.axial_moment_gmm2 is not None:
            _finite(self.axial_moment_gmm2, f"{key}.axial_moment_gmm2",
                    "an axial moment in g·mm² (any sign)")
        if self.frequency_hz is not None:
            _finite(self.frequency_hz, f"{key}.frequency_hz", "a frequency in Hz above zero",
                    positive=True)


@dataclass(frozen=True)
class Limits:
    """Shop limits on an arrangement; None (or False) leaves a limit off.

    Parameters
    ----------
    opposite_gmm : float or None
        Largest moment-weight difference [g·mm] of two blades in opposite
        slots.  A slot's opposite slots are those whose angle is nearest to its
        own angle plus 180°: one slot for an even count of equally spaced
        slots, the two slots either side of the opposite point for an odd count.
    neighbour_hz : float or None
        Largest frequency difference [Hz] of two blades in neighbouring slots
        (neighbours in the order of slot angles, round the disc).
    alternate_frequency : bool
        Blades alternate high and low frequency round the disc (intentional
        mistuning): each blade's frequency is above both neighbours' or below
        both.  Needs an even slot count.
    couple_gmm2 : float or None
        Largest couple unbalance [g·mm²] from the blades' axial moments (and the
        disc's own couple).  The static residual is minimised among the
        arrangements within this limit.
    """

    opposite_gmm: float | None = None
    neighbour_hz: float | None = None
    alternate_frequency: bool = False
    couple_gmm2: float | None = None

    def __post_init__(self) -> None:
        for name, unit in (("opposite_gmm", "g·mm"), ("neighbour_hz", "Hz"),
                           ("couple_gmm2", "g·mm²")):
            value = getattr(self, name)
            if value is not None:
                _finite(value, f"limits.{name}", f"a limit in {unit}, zero or above",
                        non_negative=True)
        if not isinstance(self.alternate_frequency, bool):
            raise InputError(f"not true or false: {self.alternate_frequency!r}",
                             key="limits.alternate_frequency", expected="true or false")

    @property
    def needs_frequency(self) -> bool:
        """Whether a limit reads the blades' frequencies."""
        return self.neighbour_hz is not None or self.alternate_frequency


@dataclass(frozen=True)
class Disc:
    """The disc: its slots, its own unbalance, the blades pinned in place, the limits.

    Parameters
    ----------
    slot_count : int
        Number of slots (each takes one blade).
    angles_deg : tuple of float or None
        Angle of each slot [deg] from the reference mark, slot k at
        ``angles_deg[k - 1]``; None spaces them equally, slot 1 at 0°.
    unbalance_gmm : float
        The bare disc's own static unbalance [g·mm] (0 when not measured).
    unbalance_angle_deg : float
        Angle of the disc's unbalance [deg], in the slots' angle sense.
    couple_gmm2 : float
        The bare disc's own couple unbalance [g·mm²] (0 when not measured).
    couple_angle_deg : float
        Angle of the disc's couple [deg].
    pinned : tuple of (int, str)
        Blades that stay where they are: (slot number, blade id) pairs.
    limits : Limits
        Shop limits on the arrangement.
    """

    slot_count: int
    angles_deg: tuple[float, ...] | None = None
    unbalance_gmm: float = 0.0
    unbalance_angle_deg: float = 0.0
    couple_gmm2: float = 0.0
    couple_angle_deg: float = 0.0
    pinned: tuple[tuple[int, str], ...] = ()
    limits: Limits = field(default_factory=Limits)

    def __post_init__(self) -> None:
        # Lists become tuples, so that a Disc stays immutable and hashable.
        if self.angles_deg is not None:
            object.__setattr__(self, "angles_deg", tuple(self.angles_deg))
        try:
            pinned = tuple(tuple(p) for p in self.pinned)
        except TypeError:
            pinned = ((),)
        if any(len(p) != 2 for p in pinned):
            raise InputError(f"pinned entries {self.pinned!r}", key="pinned",
                             expected="(slot number, blade id) pairs")
        object.__setattr__(self, "pinned", pinned)
        if isinstance(self.slot_count, bool) or not isinstance(self.slot_count, int) \
                or self.slot_count < 2:
            raise InputError(f"slot count {self.slot_count!r}", key="slot_count",
                             expected="a whole number of slots, 2 or more")
        self._check_angles()
        _finite(self.unbalance_gmm, "unbalance_gmm", "g·mm, zero or above", non_negative=True)
        _finite(self.unbalance_angle_deg, "unbalance_angle_deg", "an angle in degrees")
        _finite(self.couple_gmm2, "couple_gmm2", "g·mm², zero or above", non_negative=True)
        _finite(self.couple_angle_deg, "couple_angle_deg", "an angle in degrees")
        self._check_pinned()
        if self.limits.alternate_frequency and self.slot_count % 2:
            raise InputError(f"{self.slot_count} slots cannot alternate high and low",
                             key="limits.alternate_frequency",
                             expected="an even slot count (an odd ring has two like neighbours)")

    def _check_angles(self) -> None:
        if self.angles_deg is None:
            return
        if len(self.angles_deg) != self.slot_count:
            raise InputError(f"{len(self.angles_deg)} angles for {self.slot_count} slots",
                             key="angles_deg", expected="one angle per slot")
        wrapped = sorted(_finite(a, f"angles_deg[{k + 1}]", "an angle in degrees") % 360.0
                         for k, a in enumerate(self.angles_deg))
        gaps = [b - a for a, b in zip(wrapped, wrapped[1:] + [wrapped[0] + 360.0])]
        if min(gaps) < ANGLE_TOL_DEG:
            raise InputError("two slots at the same angle", key="angles_deg",
                             expected="a different angle for every slot")

    def _check_pinned(self) -> None:
        slots = [slot for slot, _ in self.pinned]
        ids = [blade_id for _, blade_id in self.pinned]
        for slot, blade_id in self.pinned:
            if isinstance(slot, bool) or not isinstance(slot, int) \
                    or not 1 <= slot <= self.slot_count:
                raise InputError(f"slot {slot!r}", key=f"pinned[{blade_id}]",
                                 expected=f"a slot number from 1 to {self.slot_count}")
        if len(set(slots)) != len(slots):
            raise InputError("a slot pinned twice", key="pinned", expected="one blade per slot")
        if len(set(ids)) != len(ids):
            raise InputError("a blade pinned twice", key="pinned", expected="one slot per blade")

    def slot_angles_deg(self) -> tuple[float, ...]:
        """Angle of every slot [deg], slot k at index k - 1."""
        if self.angles_deg is not None:
            return tuple(float(a) for a in self.angles_deg)
        return tuple(360.0 * k / self.slot_count for k in range(self.slot_count))

    def unbalance(self) -> complex:
        """The disc's own static unbalance as a complex value [g·mm]."""
        return self.unbalance_gmm * complex(math.cos(math.radians(self.unbalance_angle_deg)),
                                            math.sin(math.radians(self.unbalance_angle_deg)))

    def couple(self) -> complex:
        """The disc's own couple unbalance as a complex value [g·mm²]."""
        return self.couple_gmm2 * complex(math.cos(math.radians(self.couple_angle_deg)),
                                          math.sin(math.radians(self.couple_angle_deg)))


def check_blades(blades: tuple[Blade, ...], disc: Disc) -> None:
    """Raise InputError unless ``blades`` fit ``disc``: one per slot, ids unique, data complete.

    Parameters
    ----------
    blades : tuple of Blade
        Every blade to go on the disc.
    disc : Disc
        The disc.
    """
    if len(blades) != disc.slot_count:
        raise InputError(f"{len(blades)} blades for {disc.slot_count} slots", key="blades",
                         expected="one blade per slot")
    ids = [b.blade_id for b in blades]
    if len(set(ids)) != len(ids):
        twice = sorted({i for i in ids if ids.count(i) > 1})
        raise InputError(f"blade ids used twice: {', '.join(twice)}", key="blades",
                         expected="a different id for every blade")
    unknown = [blade_id for _, blade_id in disc.pinned if blade_id not in set(ids)]
    if unknown:
        raise InputError(f"pinned blade {unknown[0]!r} is not among the blades", key="pinned",
                         expected="the id of one of the blades")
    _check_complete(blades, "frequency_hz", disc.limits.needs_frequency,
                    "a frequency for every blade (the limits compare frequencies)")
    _check_complete(blades, "axial_moment_gmm2", disc.limits.couple_gmm2 is not None,
                    "an axial moment for every blade (a couple limit is set)")
    given = [b.axial_moment_gmm2 is not None for b in blades]
    if any(given) and not all(given):
        raise InputError("axial moments given for some blades only", key="blades",
                         expected="an axial moment for every blade or for none")


def _check_complete(blades: tuple[Blade, ...], name: str, needed: bool, expected: str) -> None:
    if not needed:
        return
    missing = [b.blade_id for b in blades if getattr(b, name) is None]
    if missing:
        raise InputError(f"blade {missing[0]!r} has no {name}", key=f"blades[{missing[0]}]",
                         expected=expected)


@dataclass(frozen=True)
class ArrangementResult:
    """Which blade goes in which slot, how well it balances, and how sure that is.

    Parameters
    ----------
    blade_ids : tuple of str
        The blade in each slot, slot k at index k - 1.
    residual_gmm : float
        Static unbalance of the bladed disc [g·mm]: |d + Σ_k w_k·e^{iθ_k}|.
    residual_angle_deg : float
        Angle of that unbalance [deg], in [0, 360).
    couple_gmm2 : float or None
        Couple unbalance [g·mm²] when axial moments are given, else None.
    lower_bound_gmm : float
        No arrangement within the limits has a smaller static unbalance [g·mm].
    proven : bool
        Whether ``residual_gmm`` is the least possible (within the limits and,
        when fewest moves are asked for, with the fewest swaps; floating-point
        rounding of about 1e-12 of Σw aside).
    zero_shown : bool
        Whether the residual is exactly zero, shown in exact integer arithmetic.
    method : str
        How the arrangement was found and proven, in a few words.
    work : int
        Work units spent (arrangements and half-arrangements scored).
    swaps : tuple of (int, int) or None
        For a rotor already assembled: the blade swaps, as pairs of slot
        numbers, applied in order to the current arrangement.
    swap_lower_bound : int or None
        No fewer swaps reach the tolerance (equal to ``len(swaps)`` when proven).
    """

    blade_ids: tuple[str, ...]
    residual_gmm: float
    residual_angle_deg: float
    couple_gmm2: float | None
    lower_bound_gmm: float
    proven: bool
    zero_shown: bool
    method: str
    work: int
    swaps: tuple[tuple[int, int], ...] | None = None
    swap_lower_bound: int | None = None

    def __post_init__(self) -> None:
        if len(set(self.blade_ids)) != len(self.blade_ids):
            raise ValueError("a blade appears twice in an arrangement")
        if self.lower_bound_gmm > self.residual_gmm * (1 + 1e-9) + 1e-9:
            raise ValueError("lower bound above the residual")

    def blade_in(self, slot: int) -> str:
        """The id of the blade in slot ``slot`` (numbered from 1).

        Parameters
        ----------
        slot : int
            Slot number, from 1.

        Returns
        -------
        str
            The blade's id.
        """
        return self.blade_ids[slot - 1]

    def slot_of(self) -> Mapping[str, int]:
        """Slot number of every blade id."""
        return {blade_id: k + 1 for k, blade_id in enumerate(self.blade_ids)}
