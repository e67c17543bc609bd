"""Stock shared by several planes: one drawer per catalogue file and item, planned exactly.

Each plane is planned on its own first (:mod:`placer.choice`).  When the
plans of planes that draw on one drawer together need more of an item than
it holds, those planes are planned together.

How the joint plan is found and proven (Notes)
----------------------------------------------
* Only the items that are short matter: the conflict set S starts with the
  items the separate plans overdraw.
* Give each plane a cap on each item of S.  The plane's best plan under a
  cap is its own choice with that much stock (the exact engine); a plan
  found under a larger cap that uses no more than a smaller cap is also the
  best under the smaller one, so most caps need no new search.
* The planes' plans are combined by dynamic programming over the stock of
  S that is left, plane after plane, maximising the sum of the planes'
  scores (:class:`placer.choice.Choice`) in lexicographic order: most planes
  within their aim, then within their tolerance, then the least residual
  outside a tolerance, the fewest parts, the least added mass and the least
  residual.  Lexicographic order is kept by sums, so the dynamic programme
  is exact for the caps on S.
* The joint plan obeys every other item's stock too, or that item joins S
  and the planes are combined again.  When it obeys them all, it is the
  optimum: the problem with only S limited is a relaxation of the real one.
* Past :data:`MAX_CAP_STATES` combinations of caps the CP-SAT model plans the
  group instead (:func:`placer.engine.model.solve_shared_stock`, with a
  deterministic limit), and says whether it proved its plan.

References
----------
[HorowitzSahni1974] and textbook dynamic programming over a resource (from
memory); [CPSAT] for the fallback.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from placer.catalog import Item
from placer.choice import Aim, Choice, choose_plan
from placer.engine.arrays import PlaneArrays, plane_arrays
from placer.engine.search import PlacementSearch
from placer.engine.selection import Selection
from placer.job import PlaneJob
from placer.limits import DEFAULT_EFFORT
from placer.plan import FittedPart
from placer.residual import residual_of

MAX_CAP_STATES = 200_000
"""Most (plane, cap, stock left) combinations the exact combination examines before it
leaves the group to the CP-SAT model."""


@dataclass
class PlanePlanner:
    """One plane's choice under any stock, searched once per stock and remembered.

    Parameters
    ----------
    plane : PlaneJob
        The plane.
    arrays : PlaneArrays
        The plane as arrays (the further correction as target).
    search : PlacementSearch
        The exact search over those arrays, built once.
    tolerance_gmm : float or None
        The plane's tolerance [g·mm].
    aim : Aim
        What its plan aims at.
    effort : float
        Multiple of the default work budget.
    parts : int or None
        A count asked for instead of the rule.
    drawer : dict of str to int, optional
        Parts left in each drawer (by stock key) when they are fewer than the
        catalogue's stock: a production line drawing its drawers down.
    tradeoff : bool
        Whether each choice keeps the whole trade-off (see
        :func:`placer.choice.choose_plan`); a batch wants the plan alone.
    memo : dict
        The choices found so far, by the stock they were found with.
    """

    plane: PlaneJob
    arrays: PlaneArrays
    search: PlacementSearch
    tolerance_gmm: float | None
    aim: Aim
    effort: float = DEFAULT_EFFORT
    parts: int | None = None
    drawer: dict[str, int] | None = None
    tradeoff: bool = True
    memo: dict[tuple[int, ...], Choice] = field(default_factory=dict, repr=False)

    @classmethod
    def of(cls, plane: PlaneJob, tolerance_gmm: float | None, aim: Aim,
           effort: float = DEFAULT_EFFORT, parts: int | None = None) -> PlanePlanner:
        """A planner for a job's plane (arrays and search built here).

        Parameters
        ----------
        plane : PlaneJob
            The plane.
        tolerance_gmm : float or None
            Its tolerance [g·mm].
        aim : Aim
            What its plan aims at.
        effort : float
            Multiple of the default work budget.
        parts : int, optional
            A count asked for instead of the rule.
        """
        arrays = plane_arrays(plane)
        search = PlacementSearch(arrays.effects, arrays.capacity, arrays.stock, plane.max_parts,
                                 masses=arrays.masses)
        return cls(plane, arrays, search, tolerance_gmm, aim, effort, parts)

    def __post_init__(self) -> None:
        self._keys = self.plane.catalog.stock_keys
        self._own_stock: np.ndarray | None = None   # stock() without caps, worked out once

    def keys(self) -> tuple[str, ...]:
        """The drawer of each of the plane's catalogue columns."""
        return self._keys

    def choice(self, caps: dict[str, int] | None = None) -> Choice:
        """The plane's choice with at most ``caps[key]`` parts from each drawer named.

        Parameters
        ----------
        caps : dict of str to int, optional
            Parts the plane may take from a drawer (by stock key); drawers not
            named keep the plane's own stock.
        """
        stock = self.stock(caps)
        signature = tuple(stock.tolist())
        if signature in self.memo:
            return self.memo[signature]
        for wider, known in self.memo.items():
            # A plan found with more stock that fits in this stock is the best here too.
            if all(w >= s for w, s in zip(wider, signature)) and all(
                    used <= s for used, s in zip(self.column_use(known), signature)):
                self.memo[signature] = known
                return known
        found = choose_plan(self.arrays, self.plane.max_parts, self.tolerance_gmm, self.aim,
                            effort=self.effort, search=self.search, stock=stock,
                            parts=self.parts, tradeoff=self.tradeoff)
        self.memo[signature] = found
        return found

    def stock(self, caps: dict[str, int] | None = None) -> np.ndarray:
        """Parts of each catalogue column the plane may take: its own stock, less what
        is left in the drawers, at most ``caps[key]`` from each drawer named.

        Parameters
        ----------
        caps : dict of str to int, optional
            Parts the plane may take from a drawer (by stock key).
        """
        if not self.drawer and not caps:
            return self.arrays.stock.copy()
        if not caps and self._own_stock is not None:
            return self._own_stock.copy()
        stock = self.arrays.stock.tolist()
        for column, key in enumerate(self.keys()):
            for limits in (self.drawer, caps):
                if limits and key in limits:
                    stock[column] = min(stock[column], limits[key])
        if caps:
            return np.array(stock, dtype=self.arrays.stock.dtype)
        self._own_stock = np.array(stock, dtype=self.arrays.stock.dtype)
        return self._own_stock.copy()

    def column_use(self, choice: Choice) -> list[int]:
        """Parts of each column the choice fits (parts taken off are not drawn from stock).

        Parameters
        ----------
        choice : Choice
            One of this plane's choices.
        """
        use = [0] * len(self.arrays.stock)
        n_items = len(self.plane.catalog.items)
        for row, column, count in choice.chosen.parts:
            if column < n_items and self.arrays.row_existing[row] < 0:
                use[column] += count
        return use

    def drawer_use(self, choice: Choice) -> dict[str, int]:
        """Parts the choice takes from each drawer (by stock key).

        Parameters
        ----------
        choice : Choice
            One of this plane's choices.
        """
        use: dict[str, int] = {}
        for key, count in zip(self.keys(), self.column_use(choice)):
            if count:
                use[key] = use.get(key, 0) + count
        return use


def shared_stock_groups(planes: Sequence[PlaneJob]) -> list[list[int]]:
    """Indices of planes linked by drawing on items of limited stock.

    Two planes are linked when both may use one item (same catalogue file,
    same id) whose stock is limited; links are followed through, so a
    group is every plane that one drawer's shortage can touch.

    Parameters
    ----------
    planes : sequence of PlaneJob
        The job's planes.
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
    """Items whose parts to fit, over all ``planes`` together, exceed their stock.

    Parameters
    ----------
    planes : sequence of PlaneJob
        The planes.
    parts_of : sequence of sequences of FittedPart
        Each plane's plan.
    """
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


def _drawers(planners: Sequence[PlanePlanner]) -> dict[str, int]:
    """Parts in every drawer of limited stock the planes draw on, by stock key (what is
    left in it, for a drawer drawn down)."""
    out = {}
    for planner in planners:
        for item in planner.plane.catalog.items:
            if item.stock is not None:
                left = (planner.drawer or {}).get(item.stock_key, item.stock)
                out[item.stock_key] = min(int(item.stock), int(left))
    return out


def _ids(planners: Sequence[PlanePlanner]) -> dict[str, str]:
    """Item id of every stock key."""
    return {item.stock_key: item.id for p in planners for item in p.plane.catalog.items}


def _short(planners: Sequence[PlanePlanner], choices: Sequence[Choice],
           drawers: dict[str, int]) -> list[str]:
    """Stock keys the choices together overdraw."""
    used: dict[str, int] = {}
    for planner, choice in zip(planners, choices):
        for key, count in planner.drawer_use(choice).items():
            used[key] = used.get(key, 0) + count
    return sorted(key for key, n in used.items() if key in drawers and n > drawers[key])


def _add(a: tuple[float, ...], b: tuple[float, ...]) -> tuple[float, ...]:
    return tuple(x + y for x, y in zip(a, b))


def plan_together(planners: Sequence[PlanePlanner], drawers: dict[str, int],
                  conflict: list[str]) -> tuple[list[Choice], bool] | None:
    """The planes' joint optimum under shared stock (see the module notes).

    Parameters
    ----------
    planners : sequence of PlanePlanner
        The planes of one group.
    drawers : dict of str to int
        Parts in each drawer of limited stock, by stock key.
    conflict : list of str
        Stock keys known to be short.

    Returns
    -------
    (choices, proven) or None
        One choice per plane and whether every search behind them finished;
        None when the combinations would pass :data:`MAX_CAP_STATES`.
    """
    keys = list(conflict)
    while True:
        totals = [int(drawers[k]) for k in keys]
        limit = [min(t, max(p.plane.max_parts for p in planners)) for t in totals]
        states = int(np.prod([t + 1 for t in totals])) if keys else 1
        caps_per_plane = int(np.prod([c + 1 for c in limit])) if keys else 1
        if len(planners) * states * caps_per_plane > MAX_CAP_STATES:
            return None
        # best[state] = (score sum, choices) for the planes from i on, with stock `state` left
        best: dict[tuple[int, ...], tuple[tuple[float, ...], list[Choice]]] = {}
        for i in range(len(planners) - 1, -1, -1):
            planner = planners[i]
            following = best
            best = {}
            for left in itertools.product(*(range(t, -1, -1) for t in totals)):
                top = None
                for cap in itertools.product(*(range(min(x, c), -1, -1)
                                               for x, c in zip(left, limit))):
                    choice = planner.choice(dict(zip(keys, cap)))
                    use = planner.drawer_use(choice)
                    after = tuple(x - use.get(k, 0) for x, k in zip(left, keys))
                    rest_score, rest = (following[after] if following
                                        else ((0.0,) * len(choice.score), []))
                    total = _add(choice.score, rest_score)
                    if top is None or total > top[0]:
                        top = (total, [choice] + rest)
                best[left] = top
        _, chosen = best[tuple(totals)]
        more = [k for k in _short(planners, chosen, drawers) if k not in keys]
        if not more:
            return chosen, all(c.proven for c in chosen)
        keys += more


def share_stock(planners: list[PlanePlanner], choices: list[Choice], effort: float
                ) -> tuple[list[Choice], set[int], list[str], tuple[str, ...]]:
    """Re-plan the planes that draw on one drawer when their plans overdraw its stock.

    Parameters
    ----------
    planners : list of PlanePlanner
        Every plane of the job.
    choices : list of Choice
        Each plane's choice on its own.
    effort : float
        Multiple of the default work budget (and of the model's time).

    Returns
    -------
    (choices, together, notes, short)
        The choices; the planes planned together; notes for the job; the
        ids of items still overdrawn (only when the CP-SAT fallback found no
        plan within the stock).
    """
    notes: list[str] = []
    together: set[int] = set()
    short_left: list[str] = []
    planes = [p.plane for p in planners]
    for members in shared_stock_groups(planes):
        group = [planners[i] for i in members]
        drawers = _drawers(group)
        conflict = _short(group, [choices[i] for i in members], drawers)
        if not conflict:
            continue
        names = ", ".join(p.plane.geometry.name for p in group)
        ids = _ids(group)
        short = ", ".join(sorted({ids[k] for k in conflict}))
        joint = plan_together(group, drawers, conflict)
        if joint is None:
            joint = _by_model(group, [choices[i] for i in members], effort)
            if joint is None:
                short_left += [ids[k] for k in conflict]
                notes.append(f"planes {names} together need more {short} than in stock, and "
                             "no plan within the stock was found: do not fit these plans as "
                             "printed; restock, or raise the effort")
                continue
        found, proven = joint
        notes.append(f"planes {names} share stock and the separate plans needed more {short} "
                     "than in stock: plans chosen together"
                     + ("" if proven else " (not every count proven)"))
        for i, choice in zip(members, found):
            choices[i] = choice
            together.add(i)
    return choices, together, notes, tuple(sorted(set(short_left)))


def _by_model(group: list[PlanePlanner], choices: list[Choice],
              effort: float) -> tuple[list[Choice], bool] | None:
    """The group planned by the CP-SAT model (most planes within tolerance, then the
    least residual of the others, then the fewest parts); None when it finds no plan."""
    from placer.engine.model import ModelPlane, solve_shared_stock

    shared = _drawers(group)
    model_planes = [ModelPlane(p.arrays.effects, p.arrays.target, p.arrays.capacity,
                               p.arrays.stock, p.plane.max_parts, p.tolerance_gmm, p.keys(),
                               tuple(c.chosen.parts)) for p, c in zip(group, choices)]
    outcome = solve_shared_stock(model_planes, shared, effort)
    if outcome.status not in ("OPTIMAL", "FEASIBLE"):
        return None
    out = []
    for planner, choice, parts in zip(group, choices, outcome.parts):
        out.append(replace(choice, chosen=_selection(planner.arrays, choice, parts,
                                                     outcome.proven),
                           rule="chosen with the planes that share its stock",
                           proven=choice.proven and outcome.proven))
    return out, outcome.proven


def _selection(arrays: PlaneArrays, choice: Choice, parts, proven: bool) -> Selection:
    """A plan the model found, as the engine's Selection (residual recomputed)."""
    residual = residual_of(arrays.target, arrays.effects, parts)
    count = sum(c for _, _, c in parts)
    # The plane's own least residual with at most this many parts bounds it below.
    lower = min([e.lower_bound for e in choice.front if e.used_parts <= count]
                + [float(np.linalg.norm(arrays.target))])
    return Selection(count, tuple(parts), residual, float(np.linalg.norm(residual)), lower,
                     proven)
