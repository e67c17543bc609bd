"""Blade arrangement: the blades on a disc with the least static unbalance.

The entry point is :func:`arrange`; the modules under it, from the top:
:mod:`~placer.engine.arrangement.moves` (the fewest swaps into a tolerance),
:mod:`~placer.engine.arrangement.search` (the least residual: construction,
symmetry, incumbent, meet in the middle), :mod:`~placer.engine.arrangement.local`
(swap descent and a feasible start), :mod:`~placer.engine.arrangement.mitm`
(meet in the middle and its bound), :mod:`~placer.engine.arrangement.pairs`
(limits between slots), :mod:`~placer.engine.arrangement.exact` (zero by
construction), :mod:`~placer.engine.arrangement.model` (the problem).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from placer.blades import ArrangementResult, Blade, Disc
from placer.engine.arrangement.model import build_problems
from placer.engine.arrangement.moves import fewest_swaps
from placer.engine.arrangement.search import DEFAULT_WORK, solve, to_result


def arrange(blades: Iterable[Blade], disc: Disc, *, work_budget: int = DEFAULT_WORK,
            seed: int = 0, stop_gmm: float = 0.0,
            current: Sequence[str] | None = None,
            tolerance_gmm: float | None = None) -> ArrangementResult:
    """The arrangement of ``blades`` on ``disc`` with the least static unbalance.

    Parameters
    ----------
    blades : iterable of Blade
        One blade per slot.
    disc : Disc
        Slots, the disc's own unbalance, pinned blades and limits.
    work_budget : int
        Most work units (half-arrangements and swaps scored) [-].
    seed : int
        Seed of every random choice [-].
    stop_gmm : float
        Stop early once the residual is at most this [g·mm] (0: search on).
    current : sequence of str or None
        For a rotor already assembled: the blade id in each slot now.  With
        ``tolerance_gmm``, the fewest swaps that bring the residual within it.
    tolerance_gmm : float or None
        Permissible static residual [g·mm] for the fewest-swaps search.

    Returns
    -------
    ArrangementResult

    Raises
    ------
    InputError
        Bad blades or disc, or no arrangement keeps the limits.

    References
    ----------
    [FathiGinjupalli1993], [ISO21940-11].
    """
    blades = tuple(blades)
    problems = build_problems(blades, disc)
    if current is not None or tolerance_gmm is not None:
        return fewest_swaps(blades, problems, current, tolerance_gmm, work_budget, seed)
    share = max(1, work_budget // len(problems))
    answers = [solve(p, share, seed, stop_gmm) for p in problems]
    return to_result(blades, problems, answers)
