"""The CP-SAT model: the general engine for side constraints.

The exact search (:mod:`placer.engine.search`) proves the trade-off front of each
plane on its own.  What it does not do is left to this integer model, solved
by OR-Tools CP-SAT: stock shared by several planes of one job (one drawer for
both sides of a fan) past what :mod:`placer.stock` combines exactly; all
planes are solved together, seeded with the search's plans.  (Part counts the
search declines are no longer given to it: it never proved one in the
measurements of issue 10.)

The residual norm is exact up to integer scaling: each residual component
is an integer linear expression, squared with a multiplication constraint,
so the objective is the squared Euclidean norm, not a polygon.  Scaling
rounds each effect by at most half a unit; :func:`min_residual` turns the
solver's bound into a proven lower bound on the true residual by taking
that rounding off again.

References
----------
Perron, L. and Didier, F., CP-SAT, OR-Tools (Google), v9; the
multiplication constraint is ``AddMultiplicationEquality`` (OR-Tools
documentation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from placer.budget import wall_clock_cap_s
from placer.engine.selection import PartList
from placer.limits import DEFAULT_EFFORT, DEFAULT_MODEL_EFFORT

_SCALE_UNITS = 1.0e6
"""Integer units the largest effect or target is scaled to (at most; see `_scale_units`)."""
_INT_LIMIT = 2 ** 60
"""Largest integer a variable of the model may need to hold (CP-SAT works in int64)."""


def _scale_units(max_parts: int, n_components: int) -> float:
    """Units for the largest effect, as fine as the squared residual's range allows.

    A scaled component lies within ``units * (1 + max_parts)``; the sum of the
    squares of ``n_components`` of them must stay below ``_INT_LIMIT``.
    """
    room = math.sqrt(_INT_LIMIT / max(1, n_components)) / (1 + max_parts) - 2
    return max(1.0, min(_SCALE_UNITS, room))


@dataclass(frozen=True)
class ModelPlane:
    """One plane as the integer model sees it (arrays as in :class:`PlacementSearch`).

    ``stock_keys[k]`` names the drawer of item column k; columns of planes
    with the same key draw on the one stock given for it to
    :func:`solve_shared_stock`.  Columns past ``stock_keys`` are the plane's own.

    Parameters
    ----------
    effects : complex array (n_rows, n_columns, n_channels)
        What one part of column k on row r changes in the residual [g·mm].
    target : complex array (n_channels,)
        The residual with no parts [g·mm].
    capacity : int array (n_rows,)
        Most parts on each row.
    stock : int array (n_columns,)
        Parts of each column on hand (the plane's own limit).
    max_parts : int
        Longest plan.
    tolerance : float or None
        Permissible residual [g·mm]; None when the plane has none.
    stock_keys : tuple of str
        Drawer of each item column (:attr:`placer.catalog.Item.stock_key`).
    hint : PartList
        A plan to start from, as (row, column, count).
    """

    effects: np.ndarray
    target: np.ndarray
    capacity: np.ndarray
    stock: np.ndarray
    max_parts: int
    tolerance: float | None = None
    stock_keys: tuple[str, ...] = ()
    hint: PartList = ()


@dataclass(frozen=True)
class ModelOutcome:
    """Parts per plane, whether the solver proved them optimal, and bounds.

    Parameters
    ----------
    parts : tuple of PartList
        The plan of each plane, as (row, column, count); the hints when the
        solver found nothing.
    proven : bool
        Whether CP-SAT reported every stage OPTIMAL (for its scaled model).
    lower_bounds : tuple of float
        Per plane, a proven least residual [g·mm]; 0.0 where none is known
        (always for shared stock).
    status : str
        CP-SAT's status name ("OPTIMAL", "FEASIBLE", "INFEASIBLE", "UNKNOWN",
        "MODEL_INVALID").
    """

    parts: tuple[PartList, ...]
    proven: bool
    lower_bounds: tuple[float, ...]
    status: str


class _Built:
    def __init__(self, planes: list[ModelPlane], shared_stock: dict[str, int]) -> None:
        from ortools.sat.python import cp_model

        self.cp_model = cp_model
        self.model = cp_model.CpModel()
        self.x: list[dict[tuple[int, int], object]] = []
        self.squares = []
        self.counts = []
        self.scales = []
        self.errors = []
        self.within = []
        self.outside_sq = []
        shared_terms: dict[str, list] = {}
        for p, plane in enumerate(planes):
            n_pos, n_items, n_ch = plane.effects.shape
            ref = max(float(np.abs(plane.target).max(initial=0.0)),
                      float(np.abs(plane.effects).max(initial=0.0)), 1e-12)
            units = _scale_units(plane.max_parts, 2 * n_ch)
            scale = units / ref
            self.scales.append(scale)
            xs = {}
            for j in range(n_pos):
                if plane.capacity[j] <= 0:
                    continue
                for k in range(n_items):
                    upper = int(min(plane.capacity[j], plane.stock[k], plane.max_parts))
                    if upper > 0:
                        xs[j, k] = self.model.NewIntVar(0, upper, f"x{p}_{j}_{k}")
            self.x.append(xs)
            for j in range(n_pos):
                on_j = [v for (jj, _), v in xs.items() if jj == j]
                if on_j:
                    self.model.Add(sum(on_j) <= int(plane.capacity[j]))
            for k in range(n_items):
                of_k = [v for (_, kk), v in xs.items() if kk == k]
                if of_k:
                    self.model.Add(sum(of_k) <= int(plane.stock[k]))
                    if k < len(plane.stock_keys) and plane.stock_keys[k] in shared_stock:
                        shared_terms.setdefault(plane.stock_keys[k], []).extend(of_k)
            count = sum(xs.values()) if xs else 0
            self.model.Add(count <= plane.max_parts)
            self.counts.append(count)
            total_sq = []
            bound = int(units * (1 + plane.max_parts)) + 2
            for c in range(n_ch):
                for part in (np.real, np.imag):
                    expr = int(round(float(part(plane.target[c])) * scale))
                    for (j, k), v in xs.items():
                        coef = int(round(float(part(plane.effects[j, k, c])) * scale))
                        if coef:
                            expr = expr + coef * v
                    comp = self.model.NewIntVar(-bound, bound, "")
                    self.model.Add(comp == expr)
                    sq = self.model.NewIntVar(0, bound * bound, "")
                    self.model.AddMultiplicationEquality(sq, [comp, comp])
                    total_sq.append(sq)
            square = self.model.NewIntVar(0, bound * bound * len(total_sq), f"sq{p}")
            self.model.Add(square == sum(total_sq))
            self.squares.append(square)
            # Each scaled component is off by at most 0.5 (target) + 0.5 per part.
            self.errors.append(math.sqrt(len(total_sq)) * 0.5 * (1 + plane.max_parts))
            # o = the squared residual of a plane that is not within tolerance, else 0.
            outside = self.model.NewIntVar(0, bound * bound * len(total_sq), f"o{p}")
            if plane.tolerance is not None:
                w = self.model.NewBoolVar(f"w{p}")
                limit = int(math.floor((plane.tolerance * scale) ** 2))
                self.model.Add(square <= limit).OnlyEnforceIf(w)
                self.model.Add(outside >= square).OnlyEnforceIf(w.Not())
                self.within.append(w)
            else:
                self.model.Add(outside >= square)
            self.outside_sq.append(outside)
            for (j, k, n) in plane.hint:
                if (j, k) in xs:
                    self.model.AddHint(xs[j, k], int(n))
        for key, terms in shared_terms.items():
            self.model.Add(sum(terms) <= int(shared_stock[key]))

    def solve(self, effort: float):
        solver = self.cp_model.CpSolver()
        # One worker, a fixed seed and a deterministic time limit: the same model gives the
        # same answer on any machine and load ([CPSAT]).
        solver.parameters.max_deterministic_time = max(0.05, DEFAULT_MODEL_EFFORT * effort)
        solver.parameters.num_workers = 1
        solver.parameters.random_seed = 0
        cap = wall_clock_cap_s()  # past the command's time limit: stops it, decides nothing
        if cap is not None:
            solver.parameters.max_time_in_seconds = cap
        status = solver.Solve(self.model)
        return solver, status

    def parts(self, solver) -> tuple[PartList, ...]:
        out = []
        for xs in self.x:
            out.append(tuple(sorted((j, k, int(solver.Value(v)))
                                    for (j, k), v in xs.items() if solver.Value(v) > 0)))
        return tuple(out)


def solve_shared_stock(planes: list[ModelPlane], shared_stock: dict[str, int],
                       effort: float = DEFAULT_EFFORT) -> ModelOutcome:
    """All planes at once under shared stock, lexicographically.

    First the most planes within tolerance; then the least residual of the
    planes that are not within (or have no tolerance); then the fewest parts
    in all; then the least sum of squared residuals.  Residuals are each
    plane's own, scaled to its own size so that no plane dominates.

    Parameters
    ----------
    planes : list of ModelPlane
        The planes, each with its own capacity, stock and part limit.
    shared_stock : dict of str to int
        Drawer key -> parts on hand, shared by every column with that key.
    effort : float
        Multiple of the model's default deterministic time for all stages
        together, split evenly between them.

    Returns
    -------
    ModelOutcome
        The plans of the last stage solved.  When a later stage finds nothing
        the earlier stage's plans stand (status "FEASIBLE", not proven); when
        the first finds nothing, the hints are returned with the solver's
        status.
    """
    built = _Built(planes, shared_stock)
    cp_model = built.cp_model
    stages = []
    if built.within:
        stages.append(("max", sum(built.within)))
    stages.append(("min", sum(built.outside_sq)))
    stages.append(("min", sum(built.counts)))
    stages.append(("min", sum(built.squares)))
    proven = True
    solver = status = None
    found: tuple[PartList, ...] | None = None
    for sense, objective in stages:
        if sense == "max":
            built.model.Maximize(objective)
        else:
            built.model.Minimize(objective)
        solver, status = built.solve(effort / len(stages))
        if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
            if found is not None:          # an earlier stage's plans stand, unproven
                return ModelOutcome(found, False, tuple(0.0 for _ in planes), "FEASIBLE")
            return ModelOutcome(tuple(p.hint for p in planes), False,
                                tuple(0.0 for _ in planes), solver.StatusName(status))
        found = built.parts(solver)
        proven &= status == cp_model.OPTIMAL
        value = int(round(solver.ObjectiveValue()))
        if sense == "max":
            built.model.Add(objective >= value)
        else:
            built.model.Add(objective <= value)
        built.model.ClearHints()
        for xs in built.x:
            for v in xs.values():
                built.model.AddHint(v, solver.Value(v))
    return ModelOutcome(built.parts(solver), proven, tuple(0.0 for _ in planes),
                        solver.StatusName(status))


def min_residual(plane: ModelPlane, effort: float = DEFAULT_EFFORT) -> ModelOutcome:
    """Least residual of one plane with at most ``plane.max_parts`` parts.

    The lower bound is the solver's bound on the scaled squared norm, turned
    back into g·mm with the rounding error taken off, so it holds for the
    true residual.

    Parameters
    ----------
    plane : ModelPlane
        The plane; its ``max_parts`` is the part count asked about.
    effort : float
        Multiple of the model's default deterministic time.

    Returns
    -------
    ModelOutcome
        One plan and its lower bound; the hint, with bound 0.0 and not proven,
        when the solver found nothing.

    References
    ----------
    [CPSAT] in REFERENCES.md (the multiplication constraint for the squared norm).
    """
    built = _Built([plane], {})
    built.model.Minimize(built.squares[0])
    solver, status = built.solve(effort)
    cp_model = built.cp_model
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return ModelOutcome((plane.hint,), False, (0.0,), solver.StatusName(status))
    bound = max(0.0, solver.BestObjectiveBound())
    lower = max(0.0, (math.sqrt(bound) - built.errors[0]) / built.scales[0])
    return ModelOutcome(built.parts(solver), status == cp_model.OPTIMAL, (lower,),
                        solver.StatusName(status))
