"""The report's blocks with drawings: readings per sensor, the four-run construction, a
plane's rotor face, a residual check.

Each function returns blocks ``draw(page, y, drawn) -> y below`` (see
:mod:`placer.views.report.pages`); a drawing goes into an axes of its own,
placed in page inches, and is recorded in ``drawn`` for the caller.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from placer.geometry import angle_of_deg
from placer.plan import PlanOption
from placer.views.numbers import angle_text, significant
from placer.views.report.blocks import reading, unit_of
from placer.views.report.layout import (
    BODY_PT,
    WIDTH_IN,
    black_band,
    paragraphs,
    section,
)
from placer.views.report.polar import (
    MARKERS,
    PolarPoint,
    draw_construction,
    draw_readings,
    draw_residual,
)
from placer.views.sheet.blocks import draw_key
from placer.views.sheet.convention import angles_counterclockwise, convention_text
from placer.views.sheet.face import DRAW_IN, draw_plane
from placer.views.sheet.facts import ZERO_SHARE, PlaneFace, PlaneFacts, StayingPart
from placer.views.sheet.typeset import MARGIN_IN, PAGE_IN, Page
from placer.views.wording import action_word
from placer.visitreport import ReportPlane, VisitReport

Block = Callable[[Page, float, object], float]

CELL_GAP_IN = 0.3
"""Space between two polar plots side by side [in]."""


def _axes(page: Page, x: float, y: float, w: float, h: float):
    """An axes at (x, y) from the page's top-left corner, w × h [in]."""
    return page.fig.add_axes((x / PAGE_IN[0], 1 - (y + h) / PAGE_IN[1], w / PAGE_IN[0],
                              h / PAGE_IN[1]))


def _ccw(report: VisitReport) -> bool:
    return angles_counterclockwise(report.record.angle_sense, report.record.rotation)


def run_labels(report: VisitReport) -> dict[str, str]:
    """The short label of each run on the plots: R, T1.., C1.. (by run name).

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    dict of str to str
        Run name -> label.
    """
    labels, counts = {}, {"trial": 0, "check": 0}
    for run in report.record.runs:
        if run.kind == "reference":
            labels[run.name] = "R"
        else:
            counts[run.kind] = counts.get(run.kind, 0) + 1
            labels[run.name] = ("T" if run.kind == "trial" else "C") + str(counts[run.kind])
    return labels


def _legend(page: Page, y: float, sense: str) -> float:
    """The plot symbols in a row: reference, trial, check, predicted; returns the y below."""
    x = MARGIN_IN
    for kind, text in (("reference", "R reference run"), ("trial", "T trial runs"),
                       ("check", "C check runs"), ("predicted", "P predicted after the plan")):
        page.mark(x + 0.08, y + 0.07, linestyle="none", **MARKERS[kind])
        page.text(x + 0.2, y, text, BODY_PT)
        x += 1.6
    y += 0.22
    return paragraphs(page, y, ["Distance from the centre: the amplitude read. Angle: the "
                                f"phase as an angle counted {sense}, 0° at the top, as on "
                                "the rotor face. Dashed: a trial run's change from the run "
                                "it adds to, and the plan's from the reading it starts at."],
                      6.5, style="italic")


def readings_blocks(report: VisitReport) -> list[Block]:
    """A polar plot per sensor of every run's reading and the prediction, two to a row.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    list of Block
        The heading with the symbols, then one block per row of plots.
    """
    record = report.record
    unit = unit_of(report)
    labels = run_labels(report)

    def heading(page: Page, y: float, drawn) -> float:
        y = section(page, y, f"Readings of every run ({unit}; angles counted "
                             f"{record.angle_sense})")
        return _legend(page, y, record.angle_sense)

    effects = [(labels[v.against], labels[v.run]) for v in report.verdicts]
    start = next((labels[r.name] for r in reversed(record.runs)
                  if r.kind in ("check", "reference")
                  and np.allclose(np.array(r.phasors), report.now, rtol=0, atol=1e-12)), None)

    def cell(page: Page, x: float, y: float, w: float, c: int, drawn) -> float:
        name = record.channel_names[c]
        weight = report.weights[c]
        page.text(x, y, name + (f" (weight {weight:g})" if weight != 1.0 else ""), 8.5,
                  weight="bold")
        y += 0.22
        points = [PolarPoint(labels[r.name], complex(r.phasors[c]), r.kind) for r in record.runs]
        rows = [[labels[r.name], r.name, reading(report, r.phasors[c])] for r in record.runs]
        plot_effects = list(effects)
        if report.predicted is not None:
            points.append(PolarPoint("P", complex(report.predicted[c]), "predicted"))
            rows.append(["P", "predicted after the plan", reading(report, report.predicted[c])])
            if start is not None:
                plot_effects.append((start, "P"))
        if page.fig is not None:
            drawing = draw_readings(_axes(page, x, y, w, w), points, _ccw(report), w, unit,
                                    plot_effects)
            drawn.polars.append((f"readings at {name}", drawing))
        y += w + 0.06
        return page.table(x, y, [("", "l"), ("Run", "l"), ("Reading", "r")], rows, w,
                          size=7.5)

    def row(first: int) -> Block:
        def draw(page: Page, y: float, drawn) -> float:
            w = (WIDTH_IN - CELL_GAP_IN) / 2
            ends = [cell(page, MARGIN_IN + k * (w + CELL_GAP_IN), y, w, c, drawn)
                    for k, c in enumerate(range(first, min(first + 2,
                                                           len(record.channel_names))))]
            return max(ends)
        return draw

    return [heading] + [row(c) for c in range(0, len(record.channel_names), 2)]


def construction_block(report: VisitReport) -> Block:
    """The four-run construction, drawn as published, with its result.

    Parameters
    ----------
    report : VisitReport
        The visit (without a phase reference).

    Returns
    -------
    Block
        The block.

    References
    ----------
    [FourRun].
    """
    record = report.record
    f = report.four_run
    unit = unit_of(report)

    def draw(page: Page, y: float, drawn) -> float:
        y = section(page, y, f"The four-run construction at {record.channel_names[0]}")
        size = 4.3
        side_x = MARGIN_IN + size + 0.25
        side_w = WIDTH_IN - size - 0.25
        if page.fig is not None:
            drawing = draw_construction(_axes(page, MARGIN_IN, y, size, size), f.reference,
                                        f.angles_deg, f.amplitudes, f.meeting_point,
                                        _ccw(report), size, unit)
            drawn.polars.append(("four-run construction", drawing))
        trial = [r for r in record.runs if r.kind == "trial"][0].masses[0]
        w = f.correction_gmm
        texts = [
            f"Bold circle: the reference amplitude O = {significant(f.reference)} {unit}. "
            "On it, the trial weight's angles T1, T2, T3; about each, a dashed circle of "
            "that trial run's amplitude. Where they meet (P) lies the trial's effect t "
            "(its distance from the centre) and the angle of the correction (its direction).",
            f"t = {significant(f.effect)} {unit}; from the mean of the squares "
            f"{significant(f.mean_square_effect)} {unit}.",
            f"Correction = trial mass × O / t = {trial.mass_g:g} g × "
            f"{significant(f.reference)} / {significant(f.effect)} = "
            f"{significant(abs(w) / trial.radius_mm)} g at r {trial.radius_mm:g} mm, at "
            f"{angle_text(angle_of_deg(w), 1)} ({significant(abs(w), 4)} g·mm).",
        ]
        end = paragraphs(page, y, texts, BODY_PT, x=side_x, width=side_w)
        rows = [[f"T{k}", angle_text(a), significant(x)]
                for k, (a, x) in enumerate(zip(f.angles_deg, f.amplitudes), start=1)]
        end = page.table(side_x, end + 0.06, [("", "l"), ("Trial at", "r"), (unit, "r")],
                         [["O", "reference", significant(f.reference)]] + rows, side_w)
        return max(y + size, end)

    return draw


def plane_face_of(plane: ReportPlane) -> PlaneFace:
    """What the rotor face draws of a visit's plane: its plan, correction and parts left on.

    Parameters
    ----------
    plane : ReportPlane
        The plane (with its positions).

    Returns
    -------
    PlaneFace
        The arrows: the plane's continuous correction and what the plan leaves of it.
    """
    residual = plane.residual_gmm
    chosen = PlanOption(sum(p.count for p in plane.parts), plane.parts, abs(residual),
                        angle_of_deg(residual), 0.0, True)
    staying = tuple(StayingPart(p.position, p.label, p.mass_g, p.count)
                    for p in plane.staying if p.position is not None)
    largest = max(abs(plane.correction_gmm), abs(residual))
    facts = PlaneFacts(plane.correction_gmm, plane.correction_gmm, "none", ZERO_SHARE * largest,
                       staying)
    return PlaneFace(plane.geometry, chosen, facts)


def _face_height(face: PlaneFace, sense: str, rotation: str | None, width: float) -> float:
    """Height of the rotor face drawn ``width`` wide [in] (drawn once, off the page)."""
    from matplotlib.figure import Figure

    ax = Figure(figsize=(width, width)).add_axes((0, 0, 1, 1))
    draw_plane(ax, face, sense, width, rotation)
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    return width * (y1 - y0) / (x1 - x0)


def plane_block(report: VisitReport, index: int) -> Block:
    """One plane: its band, the plan on the rotor face with the key, the work in order.

    Parameters
    ----------
    report : VisitReport
        The visit.
    index : int
        The plane (from 0).

    Returns
    -------
    Block
        The block (a page's worth).
    """
    record = report.record
    plane = report.planes[index]
    face = plane_face_of(plane) if plane.geometry is not None else None
    sense, rotation = record.angle_sense, record.rotation
    height = {}

    def draw(page: Page, y: float, drawn) -> float:
        y = section(page, y, f"Plane {index + 1}: {plane.name}", band=True)
        g = plane.geometry
        if g is not None:
            radii = sorted(set(g.radii_mm))
            radius = (f"r {radii[0]:g} mm" if len(radii) == 1
                      else f"r {radii[0]:g} to {radii[-1]:g} mm")
            room = ("one part per position" if g.capacity == 1
                    else f"up to {g.capacity} parts per position")
            facts = f"{g.n_positions} positions, {radius}, {room}"
            if plane.catalog:
                facts += f" · {plane.catalog}"
            y = paragraphs(page, y, [facts], BODY_PT)
        residual = plane.residual_gmm
        lines = [f"Correction (least squares): {significant(abs(plane.correction_gmm), 4)} g·mm "
                 f"at {angle_text(angle_of_deg(plane.correction_gmm), 1)}.",
                 f"The plan leaves {significant(abs(residual), 3)} g·mm of it, at "
                 f"{angle_text(angle_of_deg(residual), 1)}"
                 + (": the planes are solved together, so the vibration, not each plane, "
                    "is what the plan makes least." if len(report.planes) > 1 else ".")]
        if face is None:
            y = paragraphs(page, y, list(report.missing[:1]) + lines, BODY_PT)
        else:
            if "h" not in height:
                height["h"] = _face_height(face, sense, rotation, DRAW_IN)
            side_x = MARGIN_IN + DRAW_IN + 0.25
            side_w = PAGE_IN[0] - MARGIN_IN - side_x
            end = y + height["h"]
            if page.fig is not None:
                ax = _axes(page, MARGIN_IN, y, DRAW_IN, height["h"])
                drawing = draw_plane(ax, face, sense, DRAW_IN, rotation)
                for text in ax.texts:                  # the face speaks of a job file
                    text.set_text(_session_words(text.get_text()))
                drawn.faces.append((index, drawing))
                side = draw_key(page, side_x, y + 0.1, side_w, drawing)
            else:
                side = y + 0.1 + 0.25 * 9
            side = paragraphs(page, side + 0.1, lines, BODY_PT, x=side_x, width=side_w)
            y = max(end, side) + 0.06
            text = _session_words(convention_text(sense, rotation))
            y = paragraphs(page, y, [text], 7, style="italic")
        return _work_table(page, y + 0.06, plane)

    return draw


def _session_words(text: str) -> str:
    """The fitting sheet's words about a job's file, said of a field session instead."""
    return text.replace("job file", "session file").replace("The job ", "The session ")


def _work_table(page: Page, y: float, plane: ReportPlane) -> float:
    """The plan's parts on this plane in the order to do them, then what stays on."""
    parts = sorted(plane.parts, key=lambda p: (["remove", "drill", "fit"].index(p.verb),
                                               p.position, p.item))
    if not parts:
        page.text(MARGIN_IN, y, "NOTHING TO DO ON THIS PLANE", 8.5, weight="bold")
        y += 0.24
    else:
        steps = list(dict.fromkeys(action_word(p).upper() for p in parts))
        heading = ", THEN ".join(steps) + (" (IN THIS ORDER)" if len(steps) > 1 else "")
        page.text(MARGIN_IN, y, heading, 8.5, weight="bold")
        rows = [[action_word(p).upper(), str(p.position), angle_text(p.angle_deg, 1), p.item,
                 str(p.count), f"{abs(p.mass_g) * p.count:g}",
                 f"{abs(p.mass_g) * p.count * p.radius_mm:.0f}"] for p in parts]
        y = page.table(MARGIN_IN, y + 0.22, [("Do", "l"), ("Pos.", "r"), ("Angle", "r"),
                                             ("Item", "l"), ("Count", "r"), ("Mass g", "r"),
                                             ("g·mm", "r")], rows, WIDTH_IN, ticks=True)
    if plane.staying:
        staying = "; ".join(
            ("position " + str(p.position) if p.position is not None
             else f"at {angle_text(p.angle_deg, 1)}") + f": {p.label} ×{p.count} ({p.origin})"
            for p in plane.staying)
        y = paragraphs(page, y, ["Already on the rotor and staying: " + staying + "."], BODY_PT)
    return y


def residual_block(report: VisitReport, index: int) -> Block:
    """One residual-unbalance check: the readings at the trial angles and the circle, the result.

    Parameters
    ----------
    report : VisitReport
        The visit.
    index : int
        The check (from 0).

    Returns
    -------
    Block
        The block.

    References
    ----------
    [API617], [Kasa1976].
    """
    record = report.record
    result = report.residual_checks[index]
    check = result.check
    unit = unit_of(report)

    def draw(page: Page, y: float, drawn) -> float:
        y = section(page, y, f"Residual unbalance after balancing: "
                             f"{record.plane_names[check.plane]}")
        size = 3.0
        side_x = MARGIN_IN + size + 0.3
        side_w = WIDTH_IN - size - 0.3
        if page.fig is not None:
            drawing = draw_residual(_axes(page, MARGIN_IN, y, size, size), check.angles_deg,
                                    check.amplitudes, result.circle.centre,
                                    result.circle.radius, _ccw(report), size, unit)
            drawn.polars.append((f"residual check {index + 1}", drawing))
        texts = [f"A {check.mass_g:g} g trial weight at r {check.radius_mm:g} mm "
                 f"({significant(check.trial_gmm, 4)} g·mm) on each of "
                 f"{len(check.angles_deg)} equally spaced positions in turn, read at "
                 f"{record.channel_names[check.sensor]}; each reading is plotted at its "
                 "trial angle, with the circle fitted through them (dashed) and its centre "
                 "(+), which points to the residual heavy spot.",
                 f"From the largest and smallest reading: {significant(result.from_range_gmm)} "
                 f"g·mm. From the circle: {significant(result.from_circle_gmm)} g·mm at "
                 f"{angle_text(result.heavy_spot_deg)}. Judged on the larger, "
                 f"{significant(result.residual_gmm)} g·mm."]
        end = paragraphs(page, y, texts, BODY_PT, x=side_x, width=side_w)
        if result.limit_gmm is None:
            end = paragraphs(page, end, [f"No limit: {result.limit_source}."], BODY_PT,
                             x=side_x, width=side_w)
        else:
            words = (f"{'WITHIN' if result.within else 'ABOVE'} THE LIMIT OF "
                     f"{significant(result.limit_gmm)} g·mm")
            end = paragraphs(page, end, [f"Limit: {result.limit_source}."], BODY_PT, x=side_x,
                             width=side_w)
            if result.within:
                page.box(side_x, end + 0.02, side_w, 0.34, lw=2.2)
                page.text(side_x + side_w / 2, end + 0.19, words, 9, weight="bold",
                          ha="center", va="center")
                end += 0.42
            else:
                end = black_band(page, end + 0.02, words)
        end = paragraphs(page, end, [f"Note: {n}." for n in result.notes], 7, x=side_x,
                         width=side_w)
        rows = [[str(k), angle_text(a), significant(x)] for k, (a, x) in
                enumerate(zip(check.angles_deg, check.amplitudes), start=1)]
        table_end = page.table(MARGIN_IN, y + size + 0.06, [("", "l"), ("Trial at", "r"),
                                                           (unit, "r")], rows, size)
        return max(table_end, end)

    return draw

