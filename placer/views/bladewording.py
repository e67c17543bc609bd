"""Words of the blade arrangement that the terminal and the printed sheet share.

How blades may move, what the shop limits mean (and which slots are opposite),
how sure the arrangement is, what happens to each slot, and the verdict.

References
----------
[OppositeDifferences] opposite slots of an even count; [Li2021] the opposite
and neighbour limits; [ISO21940-11] the tolerance.
"""

from __future__ import annotations

from placer.arrange import BladeResult, SlotRow, slot_gaps_deg
from placer.blades import ANGLE_TOL_DEG, Disc

MOVE_TEXT = {
    "new": "only the new blades move, into the empty slots",
    "fewest": "the fewest swaps into the tolerance",
    "all": "every blade may move",
}
"""How blades may move, as the heading says it."""

BLADE_STEP = ("Tick each slot when its blade is in and its fastening is done to the "
              "maker's figure; check the blade's mark against the table before the run.")
"""The instruction above the table to tick off."""

FROM_TEXT = ("From: the slot the blade comes from; here: it stays in its slot; stays: it "
             "must not move; new: a blade not on the disc now.")
"""What the "From" column of the printed table says."""


def fmt_moment(value_gmm: float) -> str:
    """A moment weight or residual [g·mm] as the terminal and the limits print it.

    Parameters
    ----------
    value_gmm : float
        The value [g·mm].

    Returns
    -------
    str
        One decimal from 10 up ("2148.4"), else three significant digits.
    """
    if abs(value_gmm) >= 10:
        return f"{value_gmm:.1f}"
    if value_gmm == 0:
        return "0"
    return f"{value_gmm:.3g}"


def equally_spaced(disc: Disc) -> bool:
    """Whether the slots are equally spaced round the disc.

    Parameters
    ----------
    disc : Disc
        The disc.

    Returns
    -------
    bool
        True when every gap between neighbouring slots is 360°/n.
    """
    pitch = 360.0 / disc.slot_count
    return all(abs(g - pitch) <= ANGLE_TOL_DEG for g in slot_gaps_deg(disc))


def opposite_text(disc: Disc) -> str:
    """Which slots count as opposite on this disc.

    Parameters
    ----------
    disc : Disc
        The disc.

    Returns
    -------
    str
        The slot 180° across (an even count of equally spaced slots), the two
        either side of that point (odd), or the nearest (uneven spacing).

    References
    ----------
    [OppositeDifferences].
    """
    if not equally_spaced(disc):
        return "the slot or slots nearest 180° across"
    if disc.slot_count % 2 == 0:
        return "the slot 180° across"
    return "the two slots either side of the point 180° across (odd count)"


def limit_texts(disc: Disc) -> list[str]:
    """The shop limits the arrangement keeps, one sentence each.

    Parameters
    ----------
    disc : Disc
        The disc and its limits.

    Returns
    -------
    list of str
        Empty when no limit is set.

    References
    ----------
    [Li2021] opposite and neighbour limits; alternation: common practice, no source.
    """
    limits, out = disc.limits, []
    if limits.opposite_gmm is not None:
        out.append(f"opposite blades within {fmt_moment(limits.opposite_gmm)} g·mm of each "
                   f"other (opposite: {opposite_text(disc)})")
    if limits.neighbour_hz is not None:
        out.append(f"neighbouring blades within {limits.neighbour_hz:g} Hz of each other")
    if limits.alternate_frequency:
        out.append("frequencies alternate high and low round the disc")
    if limits.couple_gmm2 is not None:
        out.append(f"couple unbalance at most {fmt_moment(limits.couple_gmm2)} g·mm²")
    return out


def row_status(row: SlotRow, fitted: bool, short: bool = False) -> str:
    """What happens in a slot: the blade stays, is new, comes from another slot, or is there.

    Parameters
    ----------
    row : SlotRow
        The slot.
    fitted : bool
        Whether any blade is on the disc now (else every blade is simply fitted).
    short : bool
        The words of a narrow "From" column: "N" for "from slot N", "here" for
        "in place".

    Returns
    -------
    str
        "stays", "new", "from slot N", "in place", or "" when no blade is on yet.
    """
    if row.stays:
        return "stays"
    if row.from_slot is None:
        return "new" if fitted else ""
    if row.moves:
        return str(row.from_slot) if short else f"from slot {row.from_slot}"
    return "here" if short else "in place"


def proof_text(result: BladeResult) -> str:
    """How sure the arrangement is: zero shown, proven least, or a lower bound.

    Parameters
    ----------
    result : BladeResult
        The arranged blades.

    Returns
    -------
    str
        One or two sentences.
    """
    a = result.arrangement
    total = result.total_moment_gmm
    if result.job.move == "fewest" and a.swap_lower_bound is not None:
        count = len(a.swaps or ())
        if count == 0:
            return "Nothing to swap: the rotor as it is is within the tolerance."
        if a.proven:
            return (f"Proven fewest: fewer swaps cannot reach the tolerance; of the "
                    f"{count}-swap changes this leaves the least.")
        return (f"Not proven fewest: fewer than {a.swap_lower_bound} swaps cannot reach the "
                "tolerance; these were found after the search ran out of effort.")
    if a.zero_shown:
        return ("Exactly zero: shown in whole-number arithmetic on the moment weights as "
                "given.")
    what = "of the blades that may move" if result.job.disc_for_move().pinned else ""
    within = " within the limits" if limit_texts(result.job.disc) else ""
    if a.proven:
        return f"Proven least: no arrangement {what}{within} leaves less.".replace("  ", " ")
    gap = a.residual_gmm - a.lower_bound_gmm
    if a.lower_bound_gmm <= 0:
        return (f"Not proven least (the least may be zero); this one leaves "
                f"{a.residual_gmm / total:.1e} of the blades' total moment weight.")
    return (f"Not proven least: no arrangement can leave less than "
            f"{fmt_moment(a.lower_bound_gmm)} g·mm (proven lower bound), so this one is at "
            f"most {fmt_moment(gap)} g·mm above the least.")


def verdict_text(within: bool | None) -> str:
    """The plain verdict: within, outside, or no tolerance given.

    Parameters
    ----------
    within : bool or None
        The verdict; None without a tolerance.

    Returns
    -------
    str
        "WITHIN TOLERANCE", "OUTSIDE TOLERANCE" or "NO TOLERANCE GIVEN".
    """
    if within is None:
        return "NO TOLERANCE GIVEN"
    return "WITHIN TOLERANCE" if within else "OUTSIDE TOLERANCE"


def summary_text(result: BladeResult) -> str:
    """The closing sentence: the rotor as it will run, against its tolerance.

    Parameters
    ----------
    result : BladeResult
        The arranged blades and the trim.

    Returns
    -------
    str
        One sentence.
    """
    final = result.final_within
    if final is None:
        return "No tolerance given: residuals only, nothing checked against a grade."
    trimmed = result.trim is not None and bool(result.trim.planes[0].chosen.parts)
    if final:
        return ("Within tolerance with the blades as listed and the trim parts fitted."
                if trimmed else "Within tolerance with the blades as listed.")
    return ("OUTSIDE tolerance even with the least residual found: see the notes before "
            "running the machine.")
