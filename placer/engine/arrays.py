"""A plane as arrays for the engine, and the engine's answers back in domain terms.

``residual = target + Σ count·effect`` [g·mm]: this module is the one place
where positions, items and the parts already on the rotor become the rows
and columns of ``effects``, and where a row and column become a part again.
Jobs (:func:`plane_arrays`) and field visits (:mod:`placer.fieldplan`, parts
fitted for a check run) both use it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from placer.catalog import Catalog
from placer.engine.selection import Selection
from placer.geometry import PlaneGeometry, angle_of_deg
from placer.job import ExistingPart, PlaneJob
from placer.plan import LEAST_RESIDUAL, FittedPart, PlanOption
from placer.residual import residual_vector_gmm


@dataclass(frozen=True)
class PlaneArrays:
    """One plane as arrays for the search and the model.

    ``row_position[r]`` is the position index (number - 1) that row ``r`` of
    ``effects`` acts at; ``row_existing[r]`` is the index into the plane's
    existing parts for a row that takes one off, else -1.

    Parameters
    ----------
    effects : complex array (n_rows, n_columns, 1)
        What one part of column k on row r changes in the residual [g·mm].
    target : complex array (1,)
        The residual with no parts: the correction still needed [g·mm].
    capacity : int array (n_rows,)
        Most parts on each row; 0 for a blocked position or a row with no room.
    stock : int array (n_columns,)
        Parts of each column on hand.
    row_position : int array (n_rows,) or None
        Position index of each row (see above).
    row_existing : int array (n_rows,) or None
        Existing-part index of each row that takes one off, else -1.
    masses : float array (n_rows, n_columns) or None
        What one part of a column on a row adds to the plan's mass [g]: the
        part's own mass, by its magnitude for a hole or a part taken off.
    """

    effects: np.ndarray
    target: np.ndarray
    capacity: np.ndarray
    stock: np.ndarray
    row_position: np.ndarray | None = None
    row_existing: np.ndarray | None = None
    masses: np.ndarray | None = None



def placement_arrays(geometry: PlaneGeometry, catalog: Catalog,
                     existing: Sequence[ExistingPart], max_parts: int,
                     target_gmm: complex) -> PlaneArrays:
    """The plane as arrays for the search: residual = target + Σ count·effect [g·mm].

    Rows: the plane's positions for added parts; then, for each position that
    takes removal and has no hole yet, one row for drilling there (capacity
    1: one hole per position, whatever the position's capacity for added
    parts); then one row per existing added part (taking it off).  Columns
    are the catalogue's items, then one per existing part.  A part fitted at
    position j has effect -mass_g·radius_mm·e^{iθ_j} (a hole, with negative
    mass, takes mass away); removing an existing part gives its correction
    back, +mass·radius·e^{iθ}.  A position holding existing parts has that
    much less room for new ones.  An existing hole cannot be taken back.
    Items without a stock count get ``max_parts``.

    This is the one place where positions, items and parts on the rotor
    become arrays: jobs (:func:`plane_arrays`) and field visits
    (:mod:`placer.fieldplan`, parts fitted for a check run) both use it.

    Parameters
    ----------
    geometry : PlaneGeometry
        The plane's positions.
    catalog : Catalog
        The items that may be fitted (or drilled).
    existing : sequence of ExistingPart
        Parts already on the rotor in this plane.
    max_parts : int
        Longest plan; the stock of an item without a stock count.
    target_gmm : complex
        The residual with no parts: the correction still needed [g·mm].

    Returns
    -------
    PlaneArrays
        One channel; rows and columns as above.

    References
    ----------
    Unbalance of a part U = m·e [BlochGeitner]; unbalances in one plane add
    as vectors [StaticCouple].
    """
    items = catalog.items
    n_pos, n_items, n_old = geometry.n_positions, len(items), len(existing)
    masses = np.array([item.mass_g for item in items], dtype=float)
    removal = masses < 0
    unit = geometry.unit_vectors_mm()
    drilled = {old.position - 1 for old in existing if items[old.item].removes}
    drill_rows = [j for j in range(n_pos) if removal.any() and j not in drilled
                  and geometry.takes(j + 1, removal=True)]
    removable = [e for e, old in enumerate(existing) if not items[old.item].removes]
    n_rows = n_pos + len(drill_rows) + len(removable)
    effects = np.zeros((n_rows, n_items + n_old, 1), dtype=complex)
    effects[:n_pos, :n_items, 0] = -(unit[:, None] * masses[None, :])
    effects[:n_pos, :n_items][:, removal] = 0
    for j in range(n_pos):
        if not geometry.takes(j + 1, removal=False):
            effects[j, :n_items] = 0
    caps = geometry.capacities()
    capacity = np.concatenate([caps, np.zeros(n_rows - n_pos, dtype=np.int64)])
    row_position = np.concatenate([np.arange(n_pos), np.array(drill_rows, dtype=np.int64),
                                   np.array([existing[e].position - 1 for e in removable],
                                            dtype=np.int64)])
    row_existing = np.full(n_rows, -1, dtype=np.int64)
    for r, j in enumerate(drill_rows, start=n_pos):
        effects[r, :n_items, 0] = np.where(removal, -unit[j] * masses, 0)
        capacity[r] = 1 if caps[j] > 0 else 0
    for r, e in enumerate(removable, start=n_pos + len(drill_rows)):
        old = existing[e]
        effects[r, n_items + e, 0] = items[old.item].mass_g * unit[old.position - 1]
        capacity[r] = old.count
        row_existing[r] = e
    for old in existing:
        if not items[old.item].removes:
            capacity[old.position - 1] = max(0, capacity[old.position - 1] - old.count)
    stock = np.array([max_parts if item.stock is None else item.stock for item in items]
                     + [old.count for old in existing], dtype=np.int64)
    column_mass = np.abs(np.concatenate([masses, [items[o.item].mass_g for o in existing]]))
    return PlaneArrays(effects, np.array([complex(target_gmm)]), capacity, stock,
                       row_position, row_existing,
                       np.broadcast_to(column_mass, (n_rows, n_items + n_old)).copy())


def part_of_row(geometry: PlaneGeometry, catalog: Catalog, existing: Sequence[ExistingPart],
                arrays: PlaneArrays, row: int, column: int, count: int) -> FittedPart:
    """What ``count`` of column ``column`` on row ``row`` of :func:`placement_arrays` means.

    A row that takes off an existing part gives that part with action
    "remove"; any other row fits (or drills) the column's item at the row's
    position.

    Parameters
    ----------
    geometry : PlaneGeometry
        The plane's positions.
    catalog : Catalog
        The items, as given to :func:`placement_arrays`.
    existing : sequence of ExistingPart
        The parts already on the rotor, as given to :func:`placement_arrays`.
    arrays : PlaneArrays
        What :func:`placement_arrays` built from them.
    row, column : int
        The row and column of ``arrays.effects``.
    count : int
        How many parts.

    Returns
    -------
    FittedPart
        The parts at the row's position (number = index + 1).
    """
    j = int(arrays.row_position[row])
    if arrays.row_existing[row] >= 0:
        item, action = catalog.items[existing[int(arrays.row_existing[row])].item], "remove"
    else:
        item, action = catalog.items[column], "fit"
    return FittedPart(position=j + 1, angle_deg=geometry.angles_deg[j],
                      radius_mm=geometry.radii_mm[j], item=item.id, mass_g=item.mass_g,
                      count=count, action=action)


def _removals_first(part: FittedPart) -> tuple[bool, int, str]:
    """Order of a plan's parts: parts to remove first, then by position and item."""
    return (part.action != "remove", part.position, part.item)


def plane_arrays(plane: PlaneJob) -> PlaneArrays:
    """A job's plane as arrays (see :func:`placement_arrays`), target the further correction.

    Parameters
    ----------
    plane : PlaneJob
        The plane; its target is :attr:`PlaneJob.further_correction_gmm` and its
        ``max_parts`` stands for unlimited stock.

    Returns
    -------
    PlaneArrays
        The plane as arrays.
    """
    return placement_arrays(plane.geometry, plane.catalog, plane.existing, plane.max_parts,
                            plane.further_correction_gmm)


def option_of(plane: PlaneJob, entry: Selection, rows: PlaneArrays | None = None,
              kind: str = LEAST_RESIDUAL) -> PlanOption:
    """A search result in domain terms, its residual recomputed from the listed parts.

    Parts to remove come first (they are taken off before new ones go on).

    Parameters
    ----------
    plane : PlaneJob
        The plane the search solved.
    entry : Selection
        The search's answer, parts as (row, column, count) of the plane's arrays.
    rows : PlaneArrays or None
        The plane's arrays; built again from ``plane`` when None.
    kind : str
        What the plan is least in (:attr:`PlanOption.kind`).

    Returns
    -------
    PlanOption
        The parts, the residual they leave and its angle, with the entry's
        lower bound and proof flag.

    References
    ----------
    Residual unbalance as the vector left after correction [ISO21940-11].
    """
    arrays = plane_arrays(plane) if rows is None else rows
    parts = tuple(sorted([part_of_row(plane.geometry, plane.catalog, plane.existing, arrays,
                                      r, k, c) for r, k, c in entry.parts],
                         key=_removals_first))
    vector = residual_vector_gmm(plane.further_correction_gmm, parts)
    return PlanOption(part_count=sum([p.count for p in parts]), parts=parts,
                      residual_gmm=float(abs(vector)),
                      residual_angle_deg=angle_of_deg(vector),
                      lower_bound_gmm=entry.lower_bound, proven=entry.proven, kind=kind)
