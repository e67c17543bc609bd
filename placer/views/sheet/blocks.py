"""The blocks of a page: header, plane band, key, result box, work table, trade-off table."""

from __future__ import annotations

from datetime import date
from pathlib import Path

from placer.job import Job
from placer.plan import JobResult, PlaneResult
from placer.units import significant
from placer.views.sheet.facts import (
    PlaneDrawing,
    PlaneFacts,
    basis_lines,
    fmt_vector,
    tolerance_text,
)
from placer.views.sheet.symbols import POSITION_MARKERS
from placer.views.sheet.typeset import (
    GREY,
    INK,
    MARGIN_IN,
    PAGE_IN,
    Page,
    fit_title,
    join_lines,
    lines_in,
    text_width_in,
    wrap_chars,
    wrap_words,
)
from placer.views.wording import (
    AIM,
    OUTSIDE_ADVICE,
    OUTSIDE_HEADING,
    REQUIRED,
    RESIDUAL,
    TOLERANCE,
    action_word,
    at_radius,
    drills,
    header_facts,
    part_mass,
    part_note,
    part_unbalance,
    plan_kind,
    trade_off_columns,
    unbalance_text,
    units_of,
    verdict_word,
    work_columns,
    worked_from_text,
)


def draw_header(page: Page, result: JobResult, index: int, heading: str, when: date) -> float:
    """Title, the job's facts in columns as wide as they need, tolerance per plane.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    result : JobResult
        The solved job.
    index : int
        Number of this page's plane (from 1).
    heading : str
        The title (the rotor's name).
    when : date
        The date printed.

    Returns
    -------
    float
        The y below the header [in].
    """
    rotor = result.job.rotor
    units = units_of(result.job)
    left, right = MARGIN_IN, PAGE_IN[0] - MARGIN_IN
    width = right - left
    page.rule(0.42, lw=3.0)
    page.text(left, 0.50, "F I T T I N G   S H E E T", 8.5, weight="bold")
    page.text(right, 0.50, f"plane {index} of {len(result.planes)}", 8.5, weight="bold",
              ha="right")
    lines, size = fit_title(heading, width)
    page.text(left, 0.70, "\n".join(lines), size, weight="bold", linespacing=1.15)
    y = 0.70 + lines_in(len(lines), size, 1.15) + 0.11
    papers = dict(header_facts(result.job))
    papers["Date"] = papers["Date"] or when.isoformat()
    facts = [(label.upper(), value or "") for label, value in papers.items()]
    facts.insert(0, ("JOB FILE", Path(result.job.source).name))
    facts += [
        ("SERVICE SPEED", "-" if rotor.service_rpm is None else f"{rotor.service_rpm:g} r/min"),
        ("ROTOR MASS", "-" if rotor.mass_kg is None else units.rotor_mass_text(rotor.mass_kg)),
        ("GRADE", "-" if rotor.grade_mm_s is None else f"G {rotor.grade_mm_s:g}"),
        ("U_per (ISO 21940-11)", "-" if result.permissible_gmm is None
         else unbalance_text(result.permissible_gmm, units)),
    ]
    if len(result.planes) == 1:
        facts.append(("TOLERANCE", tolerance_text(result.planes[0], units)))
    x, gap, row_h = left, 0.28, 0.0
    for label, value in facts:
        value = value or " " * 24             # a blank the shop fills in by hand
        value_lines = [value] if text_width_in(value, 9) <= width else wrap_chars(value, width, 9)
        w = max(text_width_in(label, 6.5, True), max(text_width_in(s, 9) for s in value_lines))
        if x > left and x + w > right:
            x, y, row_h = left, y + 0.21 + row_h, 0.0
        page.text(x, y, label, 6.5, color=GREY, weight="bold")
        if value.strip():
            page.text(x, y + 0.13, "\n".join(value_lines), 9)
        else:
            page.rule(y + 0.30, x, x + w, lw=0.5)
        row_h = max(row_h, lines_in(len(value_lines), 9, 1.2))
        x += w + gap
    y += 0.13 + row_h + 0.06
    if len(result.planes) > 1:
        y += 0.02
        page.text(left, y, "TOLERANCE PER PLANE", 6.5, color=GREY, weight="bold")
        lines = join_lines([f"{p.name}: {tolerance_text(p, units)}" for p in result.planes],
                            "   ·   ", width, 9)
        page.text(left, y + 0.13, "\n".join(lines), 9, linespacing=1.3)
        y += 0.13 + lines_in(len(lines), 9) + 0.06
    page.rule(y, lw=0.8)
    return y + 0.09


def plane_band(page: Page, plane: PlaneResult, index: int, y: float,
               result: JobResult) -> float:
    """A black band with the plane's name; its facts beside it, or on lines below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    plane : PlaneResult
        The solved plane.
    index : int
        Its number (from 1).
    y : float
        Top of the band [in].
    result : JobResult
        The whole job (its units and the end each plane is worked from).

    Returns
    -------
    float
        The y below the band [in].
    """
    geometry = plane.plane.geometry
    left, width = MARGIN_IN, PAGE_IN[0] - 2 * MARGIN_IN
    title = f"PLANE {index}:  {geometry.name.upper()}"
    title_lines, title_pt = [title], 11.0
    if text_width_in(title, 11, True) > width - 0.24:
        title_lines, title_pt = wrap_words(title, width - 0.24, 10, True), 10.0
    units = units_of(result.job)
    radii = sorted(set(geometry.radii_mm))
    radius = (f"r {units.length_text(radii[0])}" if len(radii) == 1 else
              f"r {units.length_text(radii[0])} to {units.length_text(radii[-1])}")
    room = ("one part per position" if geometry.capacity == 1
            else f"up to {geometry.capacity} parts per position")
    facts = (f"{geometry.n_positions} positions, {radius}, {room}   ·   "
             f"{plane.plane.catalog.name}")
    side = worked_from_text(result.job, plane.plane)
    if side:
        end = result.job.rotor.end_name(plane.plane.worked_from)
        facts += f"   ·   WORKED FROM THE {end.upper()}"
    fits = len(title_lines) == 1 and \
        text_width_in(title, 11, bold=True) + text_width_in(facts, 7.5) + 0.5 < width
    title_h = lines_in(len(title_lines), title_pt, 1.1)
    if fits:
        height = 0.34
    else:
        fact_lines = wrap_words(facts, width - 0.24, 7.5)
        height = 0.10 + title_h + 0.06 + lines_in(len(fact_lines), 7.5) + 0.06
    page.box(left, y, width, height, fill=True, fc=INK, ec=INK)
    if fits:
        page.text(left + 0.12, y + 0.17, title, 11, weight="bold", color="white", va="center")
        page.text(left + width - 0.12, y + 0.17, facts, 7.5, color="white", va="center",
                  ha="right")
    else:
        page.text(left + 0.12, y + 0.08, "\n".join(title_lines), title_pt, weight="bold",
                  color="white", linespacing=1.1)
        page.paragraph(left + 0.12, y + 0.08 + title_h + 0.06, facts, width - 0.24, 7.5,
                       color="white")
    return y + height


KEY_TEXT = {
    "pos_both": "position, number as on the rotor",
    "pos_add": "position for added parts only",
    "pos_remove": "position for drilling only",
    "blocked": "blocked: takes no part",
    "fit": "part to fit",
    "drill": "hole to drill",
    "remove": "part on the rotor: remove it",
    "stay": "part on the rotor: leave it on",
    "required": "required correction",
    "residual": "residual after the plan",
    "angle": "angles grow this way (dash-dot arc)",
    "rotation": "the rotor turns this way (heavy arc)",
}


def _key_rows(drawing: PlaneDrawing) -> list[tuple[str, str]]:
    rows = []
    for kind in drawing.kinds:
        text = KEY_TEXT[kind]
        if kind == "pos_both" and drawing.accepts_all in ("add", "remove"):
            text = ("position for added parts only" if drawing.accepts_all == "add"
                    else "position for drilling only")
        elif kind == "pos_both" and not drawing.accepts_all:
            text = "position for parts or drilling"
        rows.append((kind, text))
    return rows


KEY_ROW_IN = 0.215


def draw_key(page: Page, x: float, y: float, w: float, drawing: PlaneDrawing,
             row_in: float = KEY_ROW_IN, columns: int = 1) -> float:
    """The symbols drawn on this plane, each beside its meaning; returns the y below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    x, y : float
        Top-left corner [in].
    w : float
        Width available [in].
    drawing : PlaneDrawing
        What was drawn on the face (its ``kinds``).
    row_in : float
        Least height of a row [in].
    columns : int
        Columns the rows are set in, side by side, ``w / columns`` wide each.

    Returns
    -------
    float
        The y below the key [in].
    """
    page.text(x, y, "KEY", 8, weight="bold")
    rows = _key_rows(drawing)
    per = -(-len(rows) // columns)
    width = w / columns
    return max([y + 0.22] + [_key_column(page, x + c * width, y + 0.22, width,
                                         rows[c * per:(c + 1) * per], row_in)
                             for c in range(columns)])


def _key_column(page: Page, x: float, y: float, w: float, rows: list[tuple[str, str]],
                row_in: float) -> float:
    """One column of the key; returns the y below it."""
    from matplotlib.patches import Circle, FancyArrowPatch

    sx = x + 0.14
    for kind, text in rows:
        cy = y + 0.06
        if kind.startswith("pos_"):
            marker = POSITION_MARKERS[kind[4:]]
            page.mark(sx, cy, marker=marker, ms=7 if marker == "o" else 9, mfc="white", mec=INK,
                      mew=1.0)
            page.mark(sx, cy, marker="o", ms=2.1, mfc=INK, mec=INK)
        elif kind == "blocked":
            page.mark(sx, cy, marker="s", ms=8, mfc="white", mec=INK, mew=1.0)
            page.mark(sx, cy, marker="x", ms=6.3, mec=INK, mew=1.3)
        elif kind == "fit":
            page.patch(lambda: Circle((sx, cy), 0.065, fc=INK, ec=INK))
        elif kind == "drill":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.8))
            page.mark(sx, cy, marker="+", ms=13, mec=INK, mew=1.1)
        elif kind == "remove":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.3))
            page.mark(sx, cy, marker="x", ms=10.5, mec=INK, mew=2.0)
        elif kind == "stay":
            page.patch(lambda: Circle((sx, cy), 0.065, fc="white", ec=INK, lw=1.1,
                                      hatch="/////"))
        elif kind:
            # Straight arrows for the vectors, arcs for the two senses, as on the face.
            style = {"required": dict(arrowstyle="-|>", lw=2.4),
                     "residual": dict(arrowstyle="->", lw=1.6, linestyle=(0, (4, 2.5))),
                     "angle": dict(arrowstyle="-|>", lw=1.0, linestyle="-.",
                                   connectionstyle="arc3,rad=-0.55"),
                     "rotation": dict(arrowstyle="-|>", lw=2.0,
                                      connectionstyle="arc3,rad=-0.55")}[kind]
            dy = 0.03 if kind in ("angle", "rotation") else 0.0
            page.patch(lambda: FancyArrowPatch((sx - 0.13, cy + dy), (sx + 0.15, cy + dy),
                                               color=INK, mutation_scale=12, shrinkA=0,
                                               shrinkB=0, **style))
        end = page.paragraph(x + 0.40, cy - lines_in(1, 7.5) / 2, text, w - 0.40, 7.5)
        y = max(y + row_in, end + 0.04)
    return y


def result_box(page: Page, x: float, y: float, w: float, plane: PlaneResult,
               facts: PlaneFacts, job: Job) -> float:
    """Required correction, residual and tolerance, then the verdict in a box.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    x, y : float
        Top-left corner [in].
    w : float
        Width available [in].
    plane : PlaneResult
        The solved plane.
    facts : PlaneFacts
        Its facts (:func:`placer.views.sheet.facts.plane_facts`).
    job : Job
        The job (its units).

    Returns
    -------
    float
        The y below the box [in].
    """
    chosen = plane.chosen
    units = units_of(job)
    geometry = plane.plane.geometry
    page.text(x, y, "RESULT", 8, weight="bold")
    y += 0.22
    further = facts.further_gmm
    lines = [(REQUIRED, fmt_vector(further, facts, units) + ("" if facts.negligible(abs(further))
                                                           else " = " + at_radius(abs(further),
                                                                                  geometry, units)))]
    lines += [("", s) for s in basis_lines(plane, facts)]
    residual = (f"≈ 0 {units.unbalance_unit}" if facts.negligible(chosen.residual_gmm) else
                f"{unbalance_text(chosen.residual_gmm, units)} at "
                f"{chosen.residual_angle_deg:.1f}° = "
                f"{at_radius(chosen.residual_gmm, geometry, units)}")
    lines += [(RESIDUAL, residual),
              (TOLERANCE, "none given" if plane.tolerance_gmm is None
               else f"{unbalance_text(plane.tolerance_gmm, units)} = "
                    f"{at_radius(plane.tolerance_gmm, geometry, units)}, "
                    f"{plane.tolerance_source}")]
    if plane.aim_gmm is not None:
        lines.append((AIM, f"{unbalance_text(plane.aim_gmm, units)}, {plane.aim_text}"))
    for label, value in lines:
        page.text(x, y, label, 7.5, weight="bold")
        y = page.paragraph(x + 0.68, y, value, w - 0.68, 7.5) + 0.02
    y += 0.06
    words = ""
    if plane.tolerance_gmm:
        share = chosen.residual_gmm / plane.tolerance_gmm
        words = ("residual ≈ 0" if facts.negligible(chosen.residual_gmm)
                 else f"residual = {share:.0%} of the tolerance" if share <= 10
                 else f"residual = {share:,.0f} times the tolerance".replace(",", " "))
    height = 0.56 if words else 0.42
    verdict_y = y + (0.19 if words else 0.21)
    ink = INK
    if plane.within_tolerance is None:
        page.box(x, y, w, height, lw=1.2, linestyle=(0, (3, 2)))
        page.text(x + w / 2, verdict_y, "NO TOLERANCE GIVEN", 10, weight="bold", ha="center",
                  va="center")
    elif plane.within_tolerance:
        page.box(x, y, w, height, lw=2.6)
        page.text(x + w / 2, verdict_y, "WITHIN TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center")
    else:
        page.box(x, y, w, height, fill=True, fc=INK, ec=INK)
        page.text(x + w / 2, verdict_y, "OUTSIDE TOLERANCE", 11.5, weight="bold", ha="center",
                  va="center", color="white")
        ink = "white"
    if words:
        page.text(x + w / 2, y + 0.42, words, 7.5, ha="center", va="center", color=ink)
    return y + height + 0.06


def work_tables(page: Page, x: float, y: float, w: float, plane: PlaneResult,
                facts: PlaneFacts, job: Job) -> float:
    """The work in the order to do it: remove, then drill, then fit; what stays on.

    A plan outside the tolerance is not set out as work to tick off: the
    table has no tick boxes and the sheet says plainly what to do instead.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    x, y : float
        Top-left corner [in].
    w : float
        Width available [in].
    plane : PlaneResult
        The solved plane.
    facts : PlaneFacts
        Its facts; the parts left on.
    job : Job
        The job (its units).

    Returns
    -------
    float
        The y below the tables [in].
    """
    units = units_of(job)
    outside = plane.within_tolerance is False
    parts = sorted(plane.chosen.parts, key=lambda p: (
        ["REMOVE", "DRILL", "FIT"].index(action_word(p).upper()), p.position, p.item))
    if outside:
        page.text(x, y, f"THIS PLAN {OUTSIDE_HEADING}", 8.5, weight="bold")
        y = page.paragraph(x, y + 0.2, OUTSIDE_ADVICE, w, 7.5, weight="bold") + 0.04
    if parts:
        steps = []
        for p in parts:
            if action_word(p).upper() not in steps:
                steps.append(action_word(p).upper())
        heading = ", THEN ".join(steps) if len(steps) > 1 else steps[0]
        heading += " (IN THIS ORDER)" if len(steps) > 1 else ""
        if outside:
            heading = "BEST PLAN FOUND, FOR REFERENCE: " + heading
        page.text(x, y, heading, 8.5, weight="bold")
        notes = [part_note(p, plane.plane.catalog) for p in parts]
        headings = work_columns(units)
        columns = list(zip(headings[:7], ("l", "r", "r", "l", "r", "r", "r")))
        rows = [[action_word(p).upper(), str(p.position), f"{p.angle_deg:.1f}", p.item,
                 str(p.count), part_mass(p, units), part_unbalance(p, units)] for p in parts]
        # The fixing (or the hole's dimensions) under each part: the terminal's last column.
        notes = [f"{'Hole' if p.verb == 'drill' else 'Fixing'}: {note}" if note else ""
                 for p, note in zip(parts, notes)]
        shared = notes[0] if len(notes) > 1 and notes[0] and len(set(notes)) == 1 else ""
        y = page.table(x, y + 0.22, columns, rows, w, ticks=not outside,
                       notes=None if shared else notes)
        if shared:                          # the same for every part: said once, under them
            words = shared.split(": ", 1)
            y = page.paragraph(x, y, f"{words[0]}, every part: {words[1]}", w, 7,
                               style="italic")
        if drills(parts):
            y = page.paragraph(x, y, "DRILL: a hole; its mass, negative, is the metal it "
                               "takes out.", w, 7)
        y += 0.10
    elif not outside:
        page.text(x, y, "NOTHING TO REMOVE, DRILL OR FIT", 8.5, weight="bold")
        y = page.paragraph(x, y + 0.22, "The plane is within tolerance as it is.", w) + 0.1
    if facts.staying:
        staying = ", ".join(f"position {s.position}: {s.item} ×{s.count}" for s in facts.staying)
        y = page.paragraph(x, y, "Already on the rotor and staying: " + staying, w, 7.5) + 0.06
    return y


def trade_off_table(page: Page, x: float, y: float, w: float, plane: PlaneResult,
                    facts: PlaneFacts, job: Job) -> float:
    """Parts against residual (with the Monte Carlo figures when rated), and its note.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    x, y : float
        Top-left corner [in].
    w : float
        Width available [in].
    plane : PlaneResult
        The solved plane; its :attr:`~placer.plan.PlaneResult.trade_off` rows.
    facts : PlaneFacts
        Its facts, for the zero threshold.
    job : Job
        The job (its units).

    Returns
    -------
    float
        The y below the table and its note [in].
    """
    units = units_of(job)
    rows_of = plane.trade_off
    rated = any(o.chance_within is not None for o in rows_of)
    page.text(x, y, "TRADE-OFF: PARTS AGAINST RESIDUAL", 8.5, weight="bold")
    headings = trade_off_columns(units, rated)
    columns = [(h, "l" if h in ("Least", "Verdict") else "r") for h in headings]
    columns.append(("", "l"))
    required = abs(facts.further_gmm)
    rows, bold, unproven = [], set(), False
    for i, option in enumerate(rows_of):
        star = "" if option.proven else " *"
        unproven |= not option.proven
        residual = "≈ 0" if facts.negligible(option.residual_gmm) else \
            significant(units.unbalance(option.residual_gmm), 4)
        row = [str(option.used_parts), f"{residual}{star}",
               "" if facts.negligible(required) else f"{option.residual_gmm / required:.1%}",
               significant(units.mass(option.mass_g), 4), plan_kind(option),
               verdict_word(plane, option)]
        if rated:
            row.append("-" if option.chance_within is None else f"{option.chance_within:.0%}")
            row.append("-" if option.residual_p95_gmm is None
                       else significant(units.unbalance(option.residual_p95_gmm), 4))
        chosen = option.parts == plane.chosen.parts
        row.append("◀" if chosen else "")
        if chosen:
            bold.add(i)
        rows.append(row)
    y = page.table(x, y + 0.22, columns, rows, w, bold=bold)
    note = (f"Residual in {units.unbalance_unit}, added mass in {units.mass_unit}. Parts: "
            "fitted plus removed. Least: residual for that many parts, or mass within the aim. "
            "◀ this sheet's plan.")
    if unproven:
        note += " * not proven optimal with the effort given."
    if rated:
        note += (" Chance: share of simulated fits (part masses within their tolerance, angles "
                 "within the job's placement error) that stay within tolerance; 95 %: the "
                 "residual 95 % of them stay below.")
    y = page.paragraph(x, y, note, w, 7)
    return y + 0.06
