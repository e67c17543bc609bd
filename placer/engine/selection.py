"""What the exact search returns.

A :class:`Selection` is the best plan found with at most k parts, with its
residual and its proof; a :class:`Front` holds one per part count.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

PartList = tuple[tuple[int, int, int], ...]
"""Parts as (position_index, item_index, count), sorted by position then item."""


@dataclass(frozen=True)
class Selection:
    """The best selection found with at most ``part_count`` parts.

    Parameters
    ----------
    part_count : int
        Most parts allowed (k).
    parts : PartList
        The parts, as (row, column, count) of the effects array.
    residual : complex array (n_channels,)
        ``target + Σ count·effect`` [the target's unit: g·mm for a plane].
    residual_norm : float
        Its norm, the one the search minimises [as ``residual``].
    lower_bound : float
        Proven least residual norm with at most ``part_count`` parts [as
        ``residual``]; 0.0 when none is known.
    proven : bool
        Whether ``residual_norm`` is proven least (within the proof tolerances).
    mass : float
        Added mass of the parts [g] (:attr:`PlacementSearch.mass` of each).
    """

    part_count: int
    parts: PartList
    residual: np.ndarray = field(repr=False)
    residual_norm: float
    lower_bound: float
    proven: bool
    mass: float = 0.0

    @property
    def used_parts(self) -> int:
        """Number of parts the selection really uses (may be below part_count)."""
        return sum([count for _, _, count in self.parts])


@dataclass(frozen=True)
class Front:
    """Least residual for every part count 0 .. max_parts.

    Parameters
    ----------
    entries : tuple of Selection
        Entry k: the least residual with at most k parts.
    work : int
        Work the search counted (head nodes, grid cells and rows looked at).
    method : str
        "exact", or "exact (not proven past its budget)" when a part count was
        declined (its entry is the best with fewer parts, not proven).
    """

    entries: tuple[Selection, ...]
    work: int
    method: str

    @property
    def optimal(self) -> bool:
        return all(entry.proven for entry in self.entries)
