"""From readings to a plan: coefficients, continuous correction, coupled discrete plan.

Pure: takes a :class:`placer.session.Session` (and optionally stored
coefficients), returns a :class:`FieldResult`.  The discrete plan is the
exact search of :mod:`placer.search` with one channel per sensor: the
effect of a part is the vibration it adds at every sensor, A[:, plane]·m·r·e^{iθ},
so the planes are solved together, not each plane's correction rounded on
its own.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from placer.influence import (Coefficients, StaticCouple, coefficients_from_runs,
                              least_squares_correction, static_couple)
from placer.plan import FittedPart
from placer.search import PlacementSearch, Selection
from placer.session import FIELD_NORMS, Session


@dataclass(frozen=True)
class FieldOption:
    """A discrete plan and the vibration it is predicted to leave."""

    part_count: int
    parts: tuple[tuple[int, FittedPart], ...]
    predicted: np.ndarray
    objective: float
    proven: bool

    @property
    def used_parts(self) -> int:
        return sum(p.count for _, p in self.parts)


@dataclass(frozen=True)
class FieldResult:
    """Everything a visit needs to print, store and fit."""

    session: Session
    coefficients: Coefficients
    coefficient_source: str
    vibration_now: np.ndarray
    basis: str
    correction_gmm: np.ndarray
    static_couple: StaticCouple | None
    front: tuple[FieldOption, ...]
    chosen: FieldOption
    rounded: FieldOption
    warnings: tuple[str, ...]

    def best_with_at_most(self, parts: int) -> FieldOption:
        """The coupled plan with the least predicted vibration using at most ``parts`` parts."""
        return [o for o in self.front if o.used_parts <= parts][-1]

    @property
    def within_limit(self) -> bool | None:
        """Whether the chosen plan's prediction is below the session's limit (None: no limit)."""
        limit = self.session.vibration_limit
        return None if limit is None else self.chosen.objective <= limit


def objective_of(values: np.ndarray, weights: np.ndarray, norm: str) -> float:
    """The session's measure of a vibration vector: largest or root-sum-square, weighted."""
    scaled = np.sqrt(weights) * np.abs(values)
    return float(scaled.max() if norm == "max" else np.linalg.norm(scaled))


def _layout(session: Session):
    """Positions of all planes in one list, items of all catalogues in one list."""
    positions = []
    for p, plane in enumerate(session.planes):
        for j in range(plane.geometry.n_positions):
            positions.append((p, j))
    items: list[tuple[str, int]] = []
    for plane in session.planes:
        for k in range(len(plane.catalog.items)):
            key = (plane.catalog.source, k)
            if key not in items:
                items.append(key)
    return positions, items


def field_search(session: Session, matrix: np.ndarray) -> tuple[PlacementSearch, list, list]:
    """The exact search over every plane's positions, with sensors as channels."""
    positions, items = _layout(session)
    weights = np.sqrt(np.array([c.weight for c in session.channels]))
    effects = np.zeros((len(positions), len(items), len(session.channels)), dtype=complex)
    capacity = np.zeros(len(positions), dtype=np.int64)
    for row, (p, j) in enumerate(positions):
        plane = session.planes[p]
        capacity[row] = plane.geometry.capacities()[j]
        unit = plane.geometry.unit_vectors_mm()[j]
        for col, (source, k) in enumerate(items):
            if source == plane.catalog.source:
                effects[row, col] = weights * matrix[:, p] * plane.catalog.items[k].mass_g * unit
    stock = np.zeros(len(items), dtype=np.int64)
    for col, (source, k) in enumerate(items):
        catalog = next(pl.catalog for pl in session.planes if pl.catalog.source == source)
        item = catalog.items[k]
        stock[col] = session.max_parts if item.stock is None else item.stock
    search = PlacementSearch(effects, capacity, stock, session.max_parts,
                             norm=FIELD_NORMS[session.norm])
    return search, positions, items


def _predicted(session: Session, parts, matrix: np.ndarray, now: np.ndarray) -> np.ndarray:
    """Vibration predicted once ``parts`` ((plane, FittedPart) pairs) are fitted: V + A·w."""
    added = np.zeros(len(session.planes), dtype=complex)
    for p, part in parts:
        added[p] += part.count * part.mass_g * part.radius_mm * np.exp(
            1j * np.radians(part.angle_deg))
    return now + matrix @ added


def _field_option(session: Session, part_count: int, parts, matrix: np.ndarray,
                  now: np.ndarray, proven: bool) -> FieldOption:
    predicted = _predicted(session, parts, matrix, now)
    weights = np.array([c.weight for c in session.channels])
    return FieldOption(part_count, tuple(parts), predicted,
                       objective_of(predicted, weights, session.norm), proven)


def _option(session, selection: Selection, positions, items, matrix, now) -> FieldOption:
    parts = []
    for row, col, count in selection.parts:
        p, j = positions[row]
        plane = session.planes[p]
        item = plane.catalog.items[items[col][1]]
        parts.append((p, FittedPart(position=j + 1, angle_deg=plane.geometry.angles_deg[j],
                                    radius_mm=plane.geometry.radii_mm[j], item=item.id,
                                    mass_g=item.mass_g, count=count)))
    return _field_option(session, selection.part_count, parts, matrix, now, selection.proven)


def solve_session(session: Session, stored: np.ndarray | None = None,
                  stored_label: str = "") -> FieldResult:
    """Coefficients, continuous correction and the coupled discrete plan of a visit."""
    during, state = session.weights_in()
    reference = session.runs[0].readings
    trial_index = [i for i, r in enumerate(session.runs) if r.kind == "trial"]
    names = [c.name for c in session.channels]
    plane_names = [p.geometry.name for p in session.planes]
    if stored is not None:
        coefficients = Coefficients(stored, float(np.linalg.cond(stored)), ())
        source = stored_label or "stored coefficients"
    else:
        readings = np.array([session.runs[i].readings for i in trial_index])
        coefficients = coefficients_from_runs(reference, readings, during[trial_index],
                                              names, plane_names)
        source = f"{len(trial_index)} trial run(s) of this visit"
    matrix = coefficients.matrix
    checks = [r for r in session.runs if r.kind == "check"]
    if checks:
        now, basis = checks[-1].readings, f"check run '{checks[-1].name}' (trim plan)"
    else:
        now = reference + matrix @ state
        basis = "reference run" + (" with the trial weights left on" if np.any(state) else "")
    weights = np.array([c.weight for c in session.channels])
    correction = least_squares_correction(matrix, now, weights)
    sc = None
    if len(session.planes) == 2:
        sc = static_couple(correction[0], correction[1], session.plane_separation_mm)
    search, positions, items = field_search(session, matrix)
    front = search.front(np.sqrt(weights) * now)
    options = [_option(session, e, positions, items, matrix, now) for e in front.entries]
    tidy = [options[0]] + [o for prev, o in zip(options, options[1:])
                           if o.used_parts > prev.used_parts and o.objective < prev.objective]
    rounded = _rounded_plan(session, correction, matrix, now)
    warnings = list(coefficients.warnings)
    if sc is not None and sc.couple_negligible:
        warnings.append("the couple part is negligible (under 10 % of the static part, "
                        "placer's own rule): one plane would do")
    chosen = options[-1]
    if session.vibration_limit is not None:
        chosen = next((o for o in tidy if o.objective <= session.vibration_limit), options[-1])
    return FieldResult(session, coefficients, source, now, basis, correction, sc,
                       tuple(tidy), chosen, rounded, tuple(warnings))


def _rounded_plan(session: Session, correction: np.ndarray, matrix: np.ndarray,
                  now: np.ndarray) -> FieldOption:
    """Each plane's continuous correction rounded on its own (exactly), then predicted.

    Each plane gets an equal share of max_parts (at least one) and its own
    least-residual plan for its own correction; the planes are not coupled.
    """
    from placer.solve import PlaneArrays, exact_front

    share = max(1, session.max_parts // len(session.planes))
    parts = []
    for p, plane in enumerate(session.planes):
        masses = np.array([i.mass_g for i in plane.catalog.items])
        effects = -(plane.geometry.unit_vectors_mm()[:, None] * masses[None, :])[:, :, None]
        stock = np.array([share if i.stock is None else i.stock for i in plane.catalog.items])
        arrays = PlaneArrays(effects, np.array([correction[p]]), plane.geometry.capacities(),
                             stock)
        entries, _, _ = exact_front(arrays, share)
        for j, k, c in entries[-1].parts:
            item = plane.catalog.items[k]
            parts.append((p, FittedPart(j + 1, plane.geometry.angles_deg[j],
                                        plane.geometry.radii_mm[j], item.id, item.mass_g, c)))
    return _field_option(session, sum(c.count for _, c in parts), parts, matrix, now, True)
