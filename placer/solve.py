"""Solving a whole job: tolerance per plane, exact fronts, chosen plans, shared stock.

Pure: takes a :class:`placer.job.Job`, returns a :class:`JobResult`.
"""

from __future__ import annotations

import itertools
import time
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from placer.catalog import Catalog, Item
from placer.geometry import PlaneGeometry, angle_of_deg
from placer.job import ExistingPart, Job, PlaneJob
from placer.plan import FittedPart, PlanOption, choose, improving
from placer.residual import residual_vector_gmm
from placer.robust import DEFAULT_SAMPLES, DEFAULT_SEED, robustness
from placer.engine.search import PartList, PlacementSearch, Selection, is_proven, residual_of
from placer.tolerance import PlaneShare, allocate_to_planes, permissible_residual_gmm

DEFAULT_TIME_LIMIT_S = 10.0
"""Time the CP-SAT model may take for one decision when it is needed."""

MAX_MODEL_PLACEMENTS = 6000
"""Past this many (position, item) placements the CP-SAT model takes longer to build
than it can use; the part counts the search declines are then left unproven, with
the best plan of fewer parts (measured: 8640 placements took 20 s to build)."""


@dataclass(frozen=True)
class PlaneResult:
    """The outcome for one correction plane."""

    plane: PlaneJob
    tolerance_gmm: float | None
    tolerance_source: str
    front: tuple[PlanOption, ...]
    chosen: PlanOption
    within_tolerance: bool | None
    optimal: bool
    notes: tuple[str, ...]
    elapsed_s: float
    method: str

    @property
    def name(self) -> str:
        return self.plane.geometry.name

    @property
    def required_gmm(self) -> float:
        return abs(self.plane.correction_gmm)

    @property
    def trade_off(self) -> tuple[PlanOption, ...]:
        """The rows of the trade-off table: parts against residual, fewest first.

        The front, with the plan of no parts first when that is the choice,
        and the chosen plan added where it is not on the front (chosen with
        other planes under shared stock).
        """
        rows = [self.chosen] if self.chosen.used_parts == 0 else []
        rows += list(self.front)
        if self.chosen.used_parts and all(o.parts != self.chosen.parts for o in rows):
            rows.append(self.chosen)
            rows.sort(key=lambda o: (o.used_parts, o.residual_gmm))
        return tuple(rows)


@dataclass(frozen=True)
class JobResult:
    """The outcome for a whole job."""

    job: Job
    planes: tuple[PlaneResult, ...]
    permissible_gmm: float | None
    shares: tuple[PlaneShare, ...] | None
    notes: tuple[str, ...]
    stock_short: tuple[str, ...] = ()

    @property
    def all_within(self) -> bool:
        """False when any plane with a tolerance is outside it, or the plans overdraw stock."""
        return not self.stock_short and not any(p.within_tolerance is False
                                                for p in self.planes)


@dataclass(frozen=True)
class PlaneArrays:
    """One plane as arrays for the search and the model.

    ``row_position[r]`` is the position index (number - 1) that row ``r`` of
    ``effects`` acts at; ``row_existing[r]`` is the index into the plane's
    existing parts for a row that takes one off, else -1.
    """

    effects: np.ndarray
    target: np.ndarray
    capacity: np.ndarray
    stock: np.ndarray
    row_position: np.ndarray | None = None
    row_existing: np.ndarray | None = None

    def row_of(self, position_index: int, hole: bool) -> int:
        """The row that fits an added part (or drills a hole) at a position."""
        if not hole:
            return position_index
        rows = np.nonzero((self.row_position == position_index) & (self.row_existing < 0))[0]
        return int(rows.max())     # rows[0] is the position's own row for added parts


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
    return PlaneArrays(effects, np.array([complex(target_gmm)]), capacity, stock,
                       row_position, row_existing)


def part_of_row(geometry: PlaneGeometry, catalog: Catalog, existing: Sequence[ExistingPart],
                arrays: PlaneArrays, row: int, column: int, count: int) -> FittedPart:
    """What ``count`` of column ``column`` on row ``row`` of :func:`placement_arrays` means.

    A row that takes off an existing part gives that part with action
    "remove"; any other row fits (or drills) the column's item at the row's
    position.
    """
    j = int(arrays.row_position[row])
    if arrays.row_existing[row] >= 0:
        item, action = catalog.items[existing[int(arrays.row_existing[row])].item], "remove"
    else:
        item, action = catalog.items[column], "fit"
    return FittedPart(position=j + 1, angle_deg=geometry.angles_deg[j],
                      radius_mm=geometry.radii_mm[j], item=item.id, mass_g=item.mass_g,
                      count=count, action=action)


def plane_arrays(plane: PlaneJob) -> PlaneArrays:
    """A job's plane as arrays (see :func:`placement_arrays`), target the further correction."""
    return placement_arrays(plane.geometry, plane.catalog, plane.existing, plane.max_parts,
                            further_correction_gmm(plane))


def exact_front(arrays: PlaneArrays, max_parts: int,
                time_limit_s: float = DEFAULT_TIME_LIMIT_S,
                search: PlacementSearch | None = None) -> tuple[list[Selection], float, str]:
    """The trade-off front of one plane, proven; CP-SAT takes what the search declines."""
    started = time.perf_counter()
    if search is None:
        search = PlacementSearch(arrays.effects, arrays.capacity, arrays.stock, max_parts)
    front = search.front(arrays.target, budget_s=time_limit_s)
    entries = list(front.entries)
    method = "exact search"
    for k, entry in enumerate(entries):
        if entry.proven:
            continue
        if search.n > MAX_MODEL_PLACEMENTS:
            method = "exact search (not proven past its budget)"
            continue
        from placer.engine.model import ModelPlane, min_residual

        method = "exact search + CP-SAT"
        previous = entries[k - 1]
        outcome = min_residual(ModelPlane(arrays.effects, arrays.target, arrays.capacity,
                                          arrays.stock, k, hint=previous.parts), time_limit_s)
        parts = outcome.parts[0]
        residual = residual_of(arrays.target, arrays.effects, parts)
        norm = float(np.linalg.norm(residual))
        if norm >= previous.residual_norm:
            parts, residual, norm = previous.parts, previous.residual, previous.residual_norm
        lower = min(outcome.lower_bounds[0], norm)
        # CP-SAT's OPTIMAL is for its scaled integer model; the proof that counts
        # is its bound on the true residual, rounding taken off.
        entries[k] = Selection(k, parts, residual, norm, lower, is_proven(norm, lower))
    # At most k parts is never worse than at most k - 1, and is proven only if both are.
    for k in range(1, len(entries)):
        before, entry = entries[k - 1], entries[k]
        if entry.residual_norm > before.residual_norm:
            entry = replace(before, part_count=k)
        entries[k] = replace(entry, proven=entry.proven and before.proven,
                             lower_bound=min(entry.lower_bound, before.lower_bound))
    return entries, time.perf_counter() - started, method


def further_correction_gmm(plane: PlaneJob) -> complex:
    """The correction still needed with the existing parts on [g·mm].

    With correction_basis "further" that is the correction as measured; with
    "total" the existing parts' own correction is taken off it.
    """
    if plane.correction_basis != "total" or not plane.existing:
        return plane.correction_gmm
    unit = plane.geometry.unit_vectors_mm()
    items = plane.catalog.items
    return complex(plane.correction_gmm - sum(items[o.item].mass_g * o.count
                                              * unit[o.position - 1] for o in plane.existing))


def to_option(plane: PlaneJob, entry: Selection,
              rows: PlaneArrays | None = None) -> PlanOption:
    """A search result in domain terms, its residual recomputed from the listed parts.

    Parts to remove come first (they are taken off before new ones go on).
    """
    arrays = plane_arrays(plane) if rows is None else rows
    parts = tuple(sorted((part_of_row(plane.geometry, plane.catalog, plane.existing, arrays,
                                      r, k, c) for r, k, c in entry.parts),
                         key=lambda p: (p.action != "remove", p.position, p.item)))
    vector = residual_vector_gmm(further_correction_gmm(plane), parts)
    return PlanOption(part_count=sum(p.count for p in parts), parts=parts,
                      residual_gmm=float(abs(vector)),
                      residual_angle_deg=angle_of_deg(vector),
                      lower_bound_gmm=entry.lower_bound, proven=entry.proven)


def _tolerances(job: Job) -> tuple[float | None, tuple[PlaneShare, ...] | None, list[str]]:
    rotor = job.rotor
    given = [rotor.grade_mm_s is not None, rotor.mass_kg is not None,
             rotor.service_rpm is not None]
    if not all(given):
        notes = []
        if any(given):
            notes.append("grade, mass_kg and service_rpm are all needed for a tolerance "
                         "from the balance quality grade; planes use tolerance_gmm only")
        return None, None, notes
    u_per = permissible_residual_gmm(rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm)
    names = [p.geometry.name for p in job.planes]
    shares = allocate_to_planes(u_per, names, rotor.com_distances_mm)
    return u_per, tuple(shares), []


def _reach_note(plane: PlaneJob, arrays: PlaneArrays) -> str | None:
    """A note when no plan can reach the correction still needed.

    The reach is at most max_parts times the largest single effect among the
    placements allowed (open positions, items in stock, existing parts that
    may come off), by the triangle inequality.
    """
    size = np.abs(arrays.effects[:, :, 0])
    usable = (arrays.capacity[:, None] > 0) & (arrays.stock[None, :] > 0)
    largest = float(size[usable].max(initial=0.0))
    reach = plane.max_parts * largest
    need = float(np.abs(arrays.target[0]))
    if need > reach:
        return (f"cannot be reached: the correction still needed is {need:.1f} g·mm but "
                f"{plane.max_parts} of the largest part allowed reach at most {reach:.1f} g·mm; "
                "raise max_parts, use a heavier item or check the reading")
    return None


def solve_job(job: Job, time_limit_s: float = DEFAULT_TIME_LIMIT_S,
              errors: FittingErrors | None = None) -> JobResult:
    """Solve every plane of ``job`` and choose a plan for each."""
    u_per, shares, job_notes = _tolerances(job)
    results = []
    arrays_of = []
    for index, plane in enumerate(job.planes):
        arrays = plane_arrays(plane)
        arrays_of.append(arrays)
        if plane.tolerance_gmm is not None:
            tolerance, source = plane.tolerance_gmm, "job file (tolerance_gmm)"
        elif shares is not None:
            tolerance = shares[index].permissible_gmm
            source = f"{shares[index].share:.0%} of U_per from the grade"
        else:
            tolerance, source = None, "none given"
        entries, elapsed, method = exact_front(arrays, plane.max_parts, time_limit_s)
        chosen = choose(entries, tolerance)
        notes = [n for n in (_reach_note(plane, arrays),) if n]
        results.append(_plane_result(plane, tolerance, source, entries, chosen, notes,
                                     elapsed, method, errors=errors or FittingErrors(),
                                     placement_error_deg=job.rotor.placement_error_deg,
                                     rows=arrays))
    results, stock_notes, short = _share_stock(job, results, arrays_of, time_limit_s)
    return JobResult(job=job, planes=tuple(results), permissible_gmm=u_per, shares=shares,
                     notes=tuple(job_notes + stock_notes), stock_short=short)


@dataclass(frozen=True)
class FittingErrors:
    """How the Monte Carlo of fitting errors runs, and whether it picks the plan.

    ``min_chance``: choose the fewest parts whose chance of staying within
    tolerance is at least this (None: choose by residual alone).
    """

    samples: int = DEFAULT_SAMPLES
    seed: int = DEFAULT_SEED
    min_chance: float | None = None


def _with_robustness(plane: PlaneJob, option: PlanOption, tolerance: float,
                     errors: FittingErrors, placement_error_deg: float) -> PlanOption:
    mass_tol = {item.id: item.mass_tolerance_g for item in plane.catalog.items}
    r = robustness(further_correction_gmm(plane), option.parts, tolerance, mass_tol,
                   placement_error_deg, errors.samples, errors.seed)
    return replace(option, chance_within=r.chance_within, residual_p95_gmm=r.residual_p95_gmm)


def _plane_result(plane, tolerance, source, entries, chosen, notes, elapsed, method,
                  optimal=None, errors: FittingErrors | None = None,
                  placement_error_deg: float = 0.0,
                  rows: PlaneArrays | None = None) -> PlaneResult:
    rows = plane_arrays(plane) if rows is None else rows
    option = to_option(plane, chosen, rows)
    zero = to_option(plane, entries[0], rows)
    front = [to_option(plane, e, rows) for e in improving(entries)]
    errors = errors or FittingErrors()
    if tolerance is None and errors.min_chance is not None:
        notes = list(notes) + ["--min-chance needs a tolerance; this plane has none, so the "
                               "plan is chosen by residual alone"]
    rated = tolerance is not None and (errors.min_chance is not None or
                                       fitting_errors_given(plane, placement_error_deg))
    if rated:
        rate = lambda o: _with_robustness(plane, o, tolerance, errors,  # noqa: E731
                                          placement_error_deg)
        # Equal residuals: the plan whose parts keep it within tolerance more often.
        front = [max(map(rate, equal_mass_variants(plane, o)),
                     key=lambda v: v.chance_within) for o in front]
        zero = rate(zero)
        option = next((o for o in [zero] + front if o.parts == option.parts
                       or _same_places(o, option)), rate(option))
        if errors.min_chance is not None:
            pick = [o for o in [zero] + front if o.chance_within >= errors.min_chance]
            if pick:
                option = pick[0]
                notes = list(notes) + [f"chosen by the chance of staying within tolerance "
                                       f"(at least {errors.min_chance:.0%})"]
            else:
                option = max([zero] + front, key=lambda o: (o.chance_within, -o.residual_gmm))
                notes = list(notes) + [f"no plan reaches a {errors.min_chance:.0%} chance of "
                                       "staying within tolerance; the plan with the best "
                                       f"chance ({option.chance_within:.0%}) is shown"]
    within = None if tolerance is None else bool(option.residual_gmm <= tolerance)
    return PlaneResult(
        plane=plane, tolerance_gmm=tolerance, tolerance_source=source,
        front=tuple(front), chosen=option, within_tolerance=within,
        optimal=all(e.proven for e in entries) if optimal is None else optimal,
        notes=tuple(notes), elapsed_s=elapsed, method=method)


def fitting_errors_given(plane: PlaneJob, placement_error_deg: float) -> bool:
    """True when a part may be fitted off its nominal mass or angle."""
    return placement_error_deg > 0 or any(item.mass_tolerance_g > 0
                                          for item in plane.catalog.items)


def _same_places(a: PlanOption, b: PlanOption) -> bool:
    """Same part count on the same positions (items may differ, masses equal)."""
    key = lambda o: sorted((p.position, p.action, p.mass_g, p.count) for p in o.parts)  # noqa
    return key(a) == key(b)


def equal_mass_variants(plane: PlaneJob, option: PlanOption,
                        limit: int = 256) -> list[PlanOption]:
    """``option`` and the plans that differ only in items of the same nominal mass.

    They leave the same residual; their mass tolerances may differ, so the
    Monte Carlo can tell them apart.  Parts taken off are what is on the
    rotor and are not swapped.  Stock is respected; at most ``limit`` plans.
    """
    items = plane.catalog.items
    choices = []
    for part in option.parts:
        if part.action != "fit":
            choices.append([part])
            continue
        twins = [it for it in items if it.mass_g == part.mass_g]
        choices.append([replace(part, item=it.id) for it in twins])
    stock = {it.id: it.stock for it in items}
    out = []
    for combo in itertools.islice(itertools.product(*choices), limit):
        used: dict[str, int] = {}
        for p in combo:
            if p.action == "fit":
                used[p.item] = used.get(p.item, 0) + p.count
        if all(stock[i] is None or n <= stock[i] for i, n in used.items()):
            parts = tuple(sorted(combo, key=lambda p: (p.action != "remove", p.position, p.item)))
            out.append(replace(option, parts=parts))
    return out or [option]


def shared_stock_groups(planes: Sequence[PlaneJob]) -> list[list[int]]:
    """Indices of planes linked by drawing on items of limited stock.

    Two planes are linked when both may use one item (same catalogue file,
    same id) whose stock is limited; links are followed through, so a
    group is every plane that one drawer's shortage can touch.
    """
    users: dict[str, set[int]] = {}
    for i, plane in enumerate(planes):
        for item in plane.catalog.items:
            if item.stock is not None:
                users.setdefault(item.stock_key, set()).add(i)
    groups: list[set[int]] = []
    for members in users.values():
        if len(members) < 2:
            continue
        touching = [g for g in groups if g & members]
        merged = set(members).union(*touching)
        groups = [g for g in groups if not g & members] + [merged]
    return sorted(sorted(g) for g in groups)


def overdrawn_items(planes: Sequence[PlaneJob],
                    parts_of: Sequence[Sequence[FittedPart]]) -> list[Item]:
    """Items whose parts to fit, over all ``planes`` together, exceed their stock."""
    used: dict[str, int] = {}
    seen: dict[str, Item] = {}
    for plane, parts in zip(planes, parts_of):
        by_id = {item.id: item for item in plane.catalog.items}
        for part in parts:
            if part.action == "fit":
                item = by_id[part.item]
                used[item.stock_key] = used.get(item.stock_key, 0) + part.count
                seen[item.stock_key] = item
    return [item for key, item in seen.items()
            if item.stock is not None and used[key] > item.stock]


def _share_stock(job: Job, results: list[PlaneResult], arrays_of: list[PlaneArrays],
                 time_limit_s: float) -> tuple[list[PlaneResult], list[str], tuple[str, ...]]:
    """Re-plan planes that draw on one drawer when their plans overdraw its stock.

    Returns the results, notes, and the ids of items still overdrawn (when
    CP-SAT found no plan within the shared stock in the time limit).
    """
    notes: list[str] = []
    short_left: list[str] = []
    for members in shared_stock_groups(job.planes):
        planes = [job.planes[i] for i in members]
        over = overdrawn_items(planes, [results[i].chosen.parts for i in members])
        if not over:
            continue
        from placer.engine.model import ModelPlane, solve_shared_stock

        shared = {item.stock_key: int(item.stock) for plane in planes
                  for item in plane.catalog.items if item.stock is not None}
        model_planes = []
        for i, plane in zip(members, planes):
            arrays = arrays_of[i]
            hint = tuple((arrays.row_of(p.position - 1, p.mass_g < 0),
                          plane.catalog.item_index(p.item), p.count)
                         for p in results[i].chosen.parts if p.action == "fit")
            model_planes.append(ModelPlane(
                arrays.effects, arrays.target, arrays.capacity, arrays.stock, plane.max_parts,
                results[i].tolerance_gmm, tuple(it.stock_key for it in plane.catalog.items),
                hint))
        outcome = solve_shared_stock(model_planes, shared, time_limit_s)
        names = ", ".join(plane.geometry.name for plane in planes)
        short = ", ".join(sorted({item.id for item in over}))
        if outcome.status not in ("OPTIMAL", "FEASIBLE"):
            short_left += [item.id for item in over]
            notes.append(f"planes {names} together need more {short} than in stock, and no "
                         f"plan within the stock was found in the time limit: do not fit "
                         "these plans as printed; restock or raise --time-limit")
            continue
        notes.append(f"planes {names} share stock and the separate plans needed more {short} "
                     "than in stock: plans chosen together"
                     + ("" if outcome.proven else " (not proven optimal in the time limit)"))
        for i, parts in zip(members, outcome.parts):
            results[i] = _rechosen(results[i], arrays_of[i], parts, outcome.proven)
    return results, notes, tuple(sorted(set(short_left)))


def _rechosen(result: PlaneResult, arrays: PlaneArrays, parts: PartList,
              proven: bool) -> PlaneResult:
    residual = residual_of(arrays.target, arrays.effects, parts)
    count = sum(c for _, _, c in parts)
    # The plane's own least residual with at most this many parts bounds it below.
    lower = min([o.lower_bound_gmm for o in result.front if o.used_parts <= count]
                + [float(np.linalg.norm(arrays.target))])
    entry = Selection(count, parts, residual, float(np.linalg.norm(residual)), lower, proven)
    option = to_option(result.plane, entry, arrays)
    within = None if result.tolerance_gmm is None else option.residual_gmm <= result.tolerance_gmm
    notes = result.notes + ("plan chosen together with the other planes that share its stock",)
    return replace(result, chosen=option, within_tolerance=within,
                   optimal=result.optimal and proven, notes=notes)
