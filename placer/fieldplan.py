"""From readings to a plan: coefficients, continuous correction, coupled discrete plan.

Pure: takes a :class:`placer.session.Session` (and optionally stored
coefficients), returns a :class:`FieldResult`.  The discrete plan is the
exact search of :mod:`placer.engine.search` with one channel per sensor: the
effect of a part is the vibration it adds at every sensor, A[:, plane]·m·r·e^{iθ},
so the planes are solved together, not each plane's correction rounded on
its own.  After a check run, the parts fitted for it take room on their
positions and may be taken off: taking one off has the opposite effect of
fitting it.  Trial weights left on their positions are parts on the rotor in
the same way (:mod:`placer.onrotor`).  Before the plan, the data is judged
(:mod:`placer.trialruns`); a session without a phase reference is solved by
the four-run method (:mod:`placer.fourrun`) and then planned the same way,
with the coefficient's magnitude alone.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from placer.engine.arrays import PlaneArrays, part_of_row, placement_arrays
from placer.engine.search import PlacementSearch
from placer.engine.selection import Selection
from placer.errors import InputError
from placer.fieldresult import FieldOption, FieldResult
from placer.fourrun import FourRunSolution, four_run_checks, solve_four_run
from placer.influence import (
    Coefficients,
    StoredCoefficients,
    adapt_stored,
    checked_coefficients,
    coefficients_from_runs,
    least_squares_correction,
    static_couple,
)
from placer.job import ExistingPart
from placer.limits import DEFAULT_EFFORT, DEFAULT_WORK, MAX_FIELD_CELLS
from placer.onrotor import plan_view
from placer.plan import FittedPart
from placer.residual import objective_of
from placer.residualcheck import ResidualCheckResult, check_limit_gmm, residual_check
from placer.session import FIELD_NORMS, PlacedMass, Session
from placer.trialruns import (
    DataCheck,
    TrialVerdict,
    conditioning_check,
    judge_runs,
    trial_check,
)

__all__ = ["FieldOption", "FieldResult", "PlaneBlock", "field_search", "objective_of",
           "solve_session"]
"""FieldOption and FieldResult live in :mod:`placer.fieldresult` and are re-exported here."""


@dataclass(frozen=True)
class PlaneBlock:
    """One plane's rows in the coupled search.

    ``arrays`` is the plane as :func:`placer.engine.arrays.placement_arrays` builds
    it (positions, one hole per position, parts fitted for a check run to
    take off); its rows stand at ``first_row`` onwards in the search, and its
    column k is the search's column ``columns[k]``: one column per drawer
    (catalogue file and item, so planes sharing a catalogue share its stock),
    and one of its own for each part on the rotor.

    Parameters
    ----------
    plane : int
        Index of the plane in the session.
    arrays : PlaneArrays
        The plane's own arrays (target zero).
    first_row : int
        The search row of the plane's row 0.
    columns : int array (n_plane_columns,)
        Search column of each of the plane's columns.
    existing : tuple of ExistingPart
        Parts fitted for check runs on this plane, as parts on the rotor.
    """

    plane: int
    arrays: PlaneArrays
    first_row: int
    columns: np.ndarray
    existing: tuple[ExistingPart, ...]

    def part(self, session: Session, row: int, column: int, count: int) -> FittedPart:
        """The part that ``count`` on search row ``row``, search column ``column`` stands for.

        Parameters
        ----------
        session : Session
            The visit the search was built for.
        row, column : int
            Row and column of the coupled search's effects.
        count : int
            How many parts.

        Returns
        -------
        FittedPart
            The parts, on this block's plane.
        """
        plane = session.planes[self.plane]
        local = int(np.nonzero(self.columns == column)[0][0])
        return part_of_row(plane.geometry, plane.catalog, self.existing, self.arrays,
                           row - self.first_row, local, count)


def _on_rotor(session: Session, plane_index: int,
              fitted: tuple[PlacedMass, ...]) -> tuple[ExistingPart, ...]:
    """Parts fitted for check runs on one plane, as parts on the rotor."""
    catalog = session.planes[plane_index].catalog
    return tuple(ExistingPart(m.position, catalog.item_index(m.item), m.count)
                 for m in fitted if m.plane == plane_index)


def field_search(session: Session, matrix: np.ndarray,
                 fitted: tuple[PlacedMass, ...] = ()) -> tuple[PlacementSearch, list[PlaneBlock]]:
    """The exact search over every plane's positions, with sensors as channels.

    Parameters
    ----------
    session : Session
        The visit: planes, sensors and their weights, norm and part limit.
    matrix : complex (channels, planes)
        Influence coefficients [reading per g·mm].
    fitted : tuple of PlacedMass
        Parts on the rotor that a plan may take off (fitted for a check run):
        each takes ``count`` places of its position's capacity and gets a row
        of its own whose effect is minus the part's, with room and stock
        ``count``.

    Returns
    -------
    (PlacementSearch, blocks)
        The search, and per plane where its rows and columns are.

    Notes
    -----
    A plane's arrays hold each part's correction effect e (g·mm, the
    residual's change in :mod:`placer.solve`: minus the part's unbalance);
    at the sensors the part adds A[:, plane]·(−e), weighted by the square
    root of each sensor's weight.
    """
    weights = np.sqrt(np.array([c.weight for c in session.channels]))
    blocks: list[PlaneBlock] = []
    drawers: dict[str, int] = {}
    column_stock: list[int] = []
    first_row = 0
    for p, plane in enumerate(session.planes):
        existing = _on_rotor(session, p, fitted)
        arrays = placement_arrays(plane.geometry, plane.catalog, existing, session.max_parts, 0j)
        columns = []
        for k, item in enumerate(plane.catalog.items):
            if item.stock_key not in drawers:
                drawers[item.stock_key] = len(column_stock)
                column_stock.append(int(arrays.stock[k]))
            columns.append(drawers[item.stock_key])
        for k in range(len(plane.catalog.items), arrays.stock.size):
            columns.append(len(column_stock))
            column_stock.append(int(arrays.stock[k]))
        blocks.append(PlaneBlock(p, arrays, first_row, np.array(columns), existing))
        first_row += arrays.effects.shape[0]
    _check_size(session, first_row, len(column_stock))
    effects = np.zeros((first_row, len(column_stock), len(session.channels)), dtype=complex)
    capacity = np.zeros(first_row, dtype=np.int64)
    for b in blocks:
        rows = slice(b.first_row, b.first_row + b.arrays.effects.shape[0])
        at_sensors = -weights * matrix[:, b.plane]
        for local, column in enumerate(b.columns):
            effects[rows, column, :] = b.arrays.effects[:, local, 0][:, None] * at_sensors[None, :]
        capacity[rows] = b.arrays.capacity
    search = PlacementSearch(effects, capacity, np.array(column_stock, dtype=np.int64),
                             session.max_parts, norm=FIELD_NORMS[session.norm])
    return search, blocks


PEAK_BYTES_PER_CELL = 112
"""Memory the coupled search takes at its peak per cell (position x column x sensor)
[bytes]: measured 100 to 103 (8 planes of 3600 positions, 13 and 27 sensors; VmHWM less
the interpreter's), with a margin."""


def _check_size(session: Session, rows: int, columns: int) -> None:
    """Refuse a coupled search larger than :data:`placer.limits.MAX_FIELD_CELLS`, before
    its arrays are made (naming the session's planes); then take its peak memory once
    and give it back, so that a memory limit stops it here, not inside LAPACK (which
    writes to stderr when it cannot get its workspace)."""
    cells = rows * columns * len(session.channels)
    if cells > MAX_FIELD_CELLS:
        raise InputError(f"make a coupled search of {rows} positions x {columns} catalogue "
                         f"items x {len(session.channels)} sensors = {cells} cells",
                         file=session.source, key="planes",
                         expected=f"at most {MAX_FIELD_CELLS} cells, placer's limit: fewer "
                                  "positions, catalogue items or sensors")
    # Untouched pages cost no time; a MemoryError here is the command's memory limit.
    probe = np.empty(cells * PEAK_BYTES_PER_CELL, dtype=np.uint8)
    del probe


def _predicted(session: Session, parts, matrix: np.ndarray, now: np.ndarray) -> np.ndarray:
    """Vibration predicted once ``parts`` ((plane, FittedPart) pairs) are carried out: V + A·w.

    A part taken off counts with a minus sign.
    """
    added = np.zeros(len(session.planes), dtype=complex)
    for p, part in parts:
        added[p] += part.signed_count * part.mass_g * part.radius_mm * np.exp(
            1j * np.radians(part.angle_deg))
    return now + matrix @ added


def _field_option(session: Session, part_count: int, parts, matrix: np.ndarray,
                  now: np.ndarray, proven: bool) -> FieldOption:
    predicted = _predicted(session, parts, matrix, now)
    weights = np.array([c.weight for c in session.channels])
    return FieldOption(part_count, tuple(parts), predicted,
                       objective_of(predicted, weights, session.norm), proven)


def _option(session: Session, selection: Selection, blocks: list[PlaneBlock],
            matrix: np.ndarray, now: np.ndarray) -> FieldOption:
    parts = []
    for row, column, count in selection.parts:
        block = next(b for b in reversed(blocks) if b.first_row <= row)
        parts.append((block.plane, block.part(session, row, column, count)))
    parts.sort(key=lambda pp: (pp[1].action != "remove", pp[0], pp[1].position))
    return _field_option(session, selection.part_count, parts, matrix, now, selection.proven)


def _coefficients(session: Session, stored: StoredCoefficients | None
                  ) -> tuple[Coefficients, str, FourRunSolution | None]:
    weights = np.array([c.weight for c in session.channels])
    if stored is not None:
        matrix, notes = adapt_stored(stored, session.unit, session.measure,
                                     session.rotor.angle_sense, session.rotor.rotation,
                                     session.rotor.service_rpm)
        return checked_coefficients(matrix, weights, notes), stored.label, None
    trial_index = [i for i, r in enumerate(session.runs) if r.kind == "trial"]
    if session.amplitude_only:
        trials = [session.runs[i].added[0] for i in trial_index]
        solution = solve_four_run(abs(session.runs[0].readings[0]),
                                  [m.angle_deg for m in trials],
                                  [abs(session.runs[i].readings[0]) for i in trial_index],
                                  trials[0].mass_g * trials[0].radius_mm)
        return (checked_coefficients(np.array([[solution.coefficient]], dtype=complex)),
                (f"{len(trial_index)} trial runs of this visit, amplitudes only (four-run "
                 "method)"), solution)
    during, _ = session.weights_in()
    readings = np.array([session.runs[i].readings for i in trial_index])
    coefficients = coefficients_from_runs(
        session.runs[0].readings, readings, during[trial_index],
        [c.name for c in session.channels], [p.geometry.name for p in session.planes],
        channel_weights=weights)
    return coefficients, f"{len(trial_index)} trial run(s) of this visit", None


def _data_checks(session: Session, coefficients: Coefficients, stored: bool,
                 four_run: FourRunSolution | None
                 ) -> tuple[tuple[TrialVerdict, ...], tuple[DataCheck, ...]]:
    """The verdict on the data before the plan: trial runs, plane separation, construction."""
    if four_run is not None:
        return (), four_run_checks(four_run, session.channels[0].name)
    verdicts = () if stored else judge_runs(
        session.runs, len(session.planes), [c.name for c in session.channels],
        session.rotor.mass_kg, session.rotor.service_rpm)
    checks = [trial_check(v) for v in verdicts]
    if len(session.planes) > 1:
        checks.append(conditioning_check(coefficients.condition,
                                         [p.geometry.name for p in session.planes]))
    return verdicts, tuple(checks)


def _residual_checks(session: Session) -> tuple[ResidualCheckResult, ...]:
    """Each residual-unbalance check with its plane's limit."""
    from placer.tolerance import allocate_to_planes, permissible_residual_gmm

    rotor = session.rotor
    u_per = None
    if None not in (rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm):
        u_per = permissible_residual_gmm(rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm)
    names = [p.geometry.name for p in session.planes]
    distances = rotor.com_distances_mm if len(names) == 2 else None
    shares = [s.share for s in allocate_to_planes(1.0, [f"{i}" for i in range(len(names))],
                                                  distances)]
    out = []
    for check in session.residual_checks:
        limit, source = check_limit_gmm(check, shares[check.plane], u_per, rotor.service_rpm)
        out.append(residual_check(check, limit, source))
    return tuple(out)


def solve_session(session: Session, stored: StoredCoefficients | None = None,
                  effort: float = DEFAULT_EFFORT) -> FieldResult:
    """Coefficients, continuous correction and the coupled discrete plan of a visit.

    Parameters
    ----------
    session : Session
        The visit.
    stored : StoredCoefficients, optional
        Coefficients of an earlier visit (``coefficients = "stored"``); they
        are brought to this session's unit, measure and angle sense.
    effort : float
        Multiple of the default work budget of the coupled search (counted,
        not timed); part counts it cannot finish keep the best plan with
        fewer parts, marked not proven.  The per-plane rounded plan for
        comparison gets the same budget.

    Returns
    -------
    FieldResult
        Coefficients, the checks of the data, correction, coupled front,
        chosen and rounded plans, warnings, residual checks.

    Raises
    ------
    CoefficientMismatch
        Stored coefficients that cannot serve this session (naming its file).
    InputError
        Trial runs that do not move every plane (key "runs").

    References
    ----------
    Correction W = -(Aᴴ D A)⁻¹ Aᴴ D V (:func:`placer.influence.least_squares_correction`);
    without a phase reference [FourRun] (:mod:`placer.fourrun`).
    """
    _, state = session.weights_in()
    try:
        coefficients, source, four_run = _coefficients(session, stored)
    except InputError as exc:
        raise type(exc)(exc.detail, file=session.source, key=exc.key,
                        expected=exc.expected) from None
    except ValueError as exc:
        raise InputError(str(exc), file=session.source, key="runs",
                         expected="the readings of the four-run method") from None
    matrix = coefficients.matrix
    checks = [r for r in session.runs if r.kind == "check"]
    if four_run is not None:
        now = np.array([-four_run.coefficient * four_run.correction_gmm])
        basis = "reference run"
    elif checks:
        now, basis = checks[-1].readings, f"check run '{checks[-1].name}' (trim plan)"
    else:
        now = session.runs[0].readings + matrix @ state
        basis = "reference run" + (" with the trial weights left on" if np.any(state) else "")
    weights = np.array([c.weight for c in session.channels])
    correction = least_squares_correction(matrix, now, weights)
    sc = None
    if len(session.planes) == 2:
        sc = static_couple(correction[0], correction[1], session.plane_separation_mm)
    planned, fitted, fixed = plan_view(session)
    search, blocks = field_search(planned, matrix, fitted)
    front = search.front(np.sqrt(weights) * now, work=int(DEFAULT_WORK * effort))
    options = [_option(planned, e, blocks, matrix, now) for e in front.entries]
    rounded = _rounded_plan(planned, correction, matrix, now, fitted, effort)
    # The rounded plan is a coupled plan too: where the search ran out of time it may be
    # the better one found.  A count proven by the search is never beaten by it.
    options = [replace(rounded, part_count=o.part_count, proven=False)
               if not o.proven and o.part_count >= rounded.used_parts
               and rounded.objective < o.objective else o for o in options]
    tidy = [options[0]] + [o for prev, o in zip(options, options[1:])
                           if o.used_parts > prev.used_parts and o.objective < prev.objective]
    warnings = list(coefficients.warnings)
    unproven = [o.part_count for o in options if not o.proven]
    if unproven:
        warnings.append(f"the coupled search did not finish {min(unproven)} to "
                        f"{max(unproven)} parts within the effort given ({effort:g}): "
                        "those plans are the best found, not proven")
    if sc is not None and sc.couple_negligible:
        warnings.append("the couple part is negligible (under 10 % of the static part, "
                        "placer's own rule): one plane would do")
    for m in fixed:
        warnings.append(f"the trial weight of {m.mass_g:g} g at {m.angle_deg:g}° on "
                        f"{session.planes[m.plane].geometry.name} sits on no position: it "
                        "stays on, outside the plan; take it off and take a new reference "
                        "run if it should go")
    chosen = options[-1]
    if session.vibration_limit is not None:
        chosen = next((o for o in tidy if o.largest <= session.vibration_limit), options[-1])
    verdicts, data_checks = _data_checks(session, coefficients, stored is not None, four_run)
    return FieldResult(session, coefficients, source, now, basis, correction, sc,
                       tuple(tidy), chosen, rounded, tuple(warnings), fitted,
                       verdicts=verdicts, checks=data_checks, fixed=fixed, four_run=four_run,
                       residual_checks=_residual_checks(session))


def _rounded_plan(session: Session, correction: np.ndarray, matrix: np.ndarray,
                  now: np.ndarray, fitted: tuple[PlacedMass, ...] = (),
                  effort: float = DEFAULT_EFFORT) -> FieldOption:
    """Each plane's continuous correction rounded on its own (exactly), then predicted.

    Each plane gets an equal share of max_parts (at least one) and its own
    least-residual plan [g·mm] for its own correction, with the same room on
    its positions and the same parts on the rotor to take off as the coupled
    plan; the planes are not coupled.
    """
    share = max(1, session.max_parts // len(session.planes))
    parts = []
    proven = True
    for p, plane in enumerate(session.planes):
        existing = _on_rotor(session, p, fitted)
        arrays = placement_arrays(plane.geometry, plane.catalog, existing, share, correction[p])
        search = PlacementSearch(arrays.effects, arrays.capacity, arrays.stock, share)
        best = search.front(arrays.target,
                            work=int(DEFAULT_WORK * effort / len(session.planes))).entries[-1]
        proven &= best.proven
        parts += [(p, part_of_row(plane.geometry, plane.catalog, existing, arrays, r, k, c))
                  for r, k, c in best.parts]
    return _field_option(session, sum(c.count for _, c in parts), parts, matrix, now, proven)
