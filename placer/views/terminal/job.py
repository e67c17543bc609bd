"""The fitting sheet in the terminal (rich).  Renders; never computes.

Every quantity is shown in the job's units (``[job] units``), with the
same labels as the printed sheet (:mod:`placer.views.wording`).
"""

from __future__ import annotations

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.geometry import angle_of_deg
from placer.plan import JobResult, PlaneResult
from placer.tolerance import PlaneShare
from placer.units import UnitSystem, significant
from placer.views.wording import (
    AIM,
    OUTSIDE_ADVICE,
    OUTSIDE_HEADING,
    REQUIRED,
    RESIDUAL,
    TOLERANCE,
    action_word,
    at_radius,
    cautions_for,
    drills,
    header_facts,
    part_mass,
    part_note,
    part_unbalance,
    plan_kind,
    trade_off_columns,
    trade_off_title,
    unbalance_text,
    units_of,
    verdict_word,
    work_columns,
    worked_from_text,
)


def _verdict(within: bool | None) -> Text:
    if within is None:
        return Text("no tolerance given", style="bold")
    if within:
        return Text("[OK] WITHIN TOLERANCE", style="bold green")
    return Text(f"[!!] OUTSIDE TOLERANCE: this plan {OUTSIDE_HEADING.lower()}",
                style="bold red reverse")


def _header(result: JobResult, units: UnitSystem) -> Panel:
    rotor = result.job.rotor
    lines = Text()
    lines.append(f"{rotor.name}\n", style="bold")
    paperwork = [f"{label} {value}" for label, value in header_facts(result.job) if value]
    if paperwork:
        lines.append(";  ".join(paperwork) + "\n")
    facts = []
    if rotor.mass_kg is not None:
        facts.append(f"mass {units.rotor_mass_text(rotor.mass_kg)}")
    if rotor.service_rpm is not None:
        facts.append(f"service speed {rotor.service_rpm:g} r/min")
    if rotor.grade_mm_s is not None:
        facts.append(f"grade G{rotor.grade_mm_s:g}")
    if facts:
        lines.append(", ".join(facts) + "\n")
    if result.permissible_gmm is not None:
        lines.append(f"Permissible residual U_per {unbalance_text(result.permissible_gmm, units)}"
                     " (ISO 21940-11)\n")
    mark = f"the {rotor.reference_mark}" if rotor.reference_mark else "the reference mark"
    lines.append(f"Angles: degrees from {mark}, counted {rotor.angle_sense}; "
                 "position numbers as marked on the rotor.")
    return Panel(lines, title="placer fitting sheet", title_align="left", box=box.HEAVY)


def _parts_table(result: PlaneResult, units: UnitSystem) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    notes = [part_note(p, result.plane.catalog) for p in result.chosen.parts]
    headings = work_columns(units)
    if not any(notes):
        headings = headings[:-1]
    for k, heading in enumerate(headings):
        table.add_column(heading, justify="left" if k in (0, 3, 7) else "right")
    for p, note in zip(result.chosen.parts, notes):
        cells = [action_word(p, emphasise=True), str(p.position), f"{p.angle_deg:.1f}", p.item,
                 str(p.count), part_mass(p, units), part_unbalance(p, units)]
        table.add_row(*(cells + [note] if len(headings) > 7 else cells))
    return table


def _front_table(result: PlaneResult, units: UnitSystem) -> Table:
    rows = result.trade_off
    robust = any(o.chance_within is not None for o in rows)
    table = Table(title=trade_off_title(units), title_justify="left", box=box.SIMPLE,
                  show_edge=False, pad_edge=False, padding=(0, 1, 0, 0))
    for heading in trade_off_columns(units, robust):
        table.add_column(heading, justify="left" if heading in ("Least", "Verdict")
                         else "right")
    table.add_column("")
    required = result.required_gmm
    for option in rows:
        share = "" if required == 0 else f"{option.residual_gmm / required:.1%}"
        mark = "<- chosen" if option.parts == result.chosen.parts else ""
        if robust and mark:
            mark = "<-"
        proof = "" if option.proven else " *"
        cells = [str(option.used_parts),
                 f"{significant(units.unbalance(option.residual_gmm), 4)}{proof}", share,
                 significant(units.mass(option.mass_g), 4), plan_kind(option),
                 verdict_word(result, option)]
        if robust:
            cells += ["-" if option.chance_within is None else f"{option.chance_within:.0%}",
                      "-" if option.residual_p95_gmm is None
                      else significant(units.unbalance(option.residual_p95_gmm), 4)]
        table.add_row(*cells, mark)
    return table


def plane_panel(index: int, result: PlaneResult, share: PlaneShare | None,
                job: JobResult, units: UnitSystem) -> Panel:
    """One plane of the sheet: parts, residual, tolerance, aim, verdict, trade-off, notes.

    Parameters
    ----------
    index : int
        The plane's number (from 1).
    result : PlaneResult
        The solved plane.
    share : PlaneShare or None
        Its share of U_per, when the grade gives one.
    job : JobResult
        The solved job the plane belongs to.
    units : UnitSystem
        The units to show.

    Returns
    -------
    Panel
        The plane's panel, for a rich console.
    """
    plane = result.plane
    geometry = plane.geometry
    info = Text()
    radii = sorted(set(geometry.radii_mm))
    radius = (f"r {units.length_text(radii[0])}" if len(radii) == 1 else
              f"r {units.length_text(radii[0])} to {units.length_text(radii[-1])}")
    blocked = (", blocked " + ", ".join(str(b) for b in sorted(geometry.blocked))
               if geometry.blocked else "")
    room = ("one part per position" if geometry.capacity == 1
            else f"up to {geometry.capacity} parts per position")
    info.append(f"{geometry.n_positions} positions, {radius}{blocked}; {room}; "
                f"catalogue: {plane.catalog.name}\n")
    side = worked_from_text(job.job, plane)
    if side:
        info.append(side + "\n", style="bold")
    required = plane.correction_gmm
    info.append(f"{REQUIRED} {unbalance_text(abs(required), units)} = "
                f"{at_radius(abs(required), geometry, units)}, at "
                f"{angle_of_deg(required):.1f}° ({plane.given_as})\n")
    if plane.existing:
        on = ", ".join(f"{plane.catalog.items[e.item].id}×{e.count} on {e.position}"
                       for e in plane.existing)
        basis = ("measured with them on" if plane.correction_basis == "further"
                 else "for the rotor without them")
        info.append(f"Already on the rotor: {on}; the correction is {basis}.\n")
    outside = result.within_tolerance is False
    if not result.chosen.parts:
        if result.within_tolerance:
            info.append("Fit: nothing - the plane is already within tolerance.\n", style="bold")
        else:
            info.append("Fit: nothing - no combination of the parts allowed improves on the "
                        "rotor as it is.\n", style="bold")
    body = [info]
    if result.chosen.parts:
        actions = {action_word(p, emphasise=True) for p in result.chosen.parts}
        if outside:
            heading = "Best plan found, which does NOT reach the tolerance:"
        elif actions == {"fit"}:
            heading = "Fit these parts:"
        elif "REMOVE" in actions:
            heading = "Do in this order (parts to remove first):"
        else:
            heading = "Do these operations:"
        body.append(Text(heading, style="bold"))
        body.append(_parts_table(result, units))
    res = Text()
    chosen = result.chosen
    res.append(f"{RESIDUAL} {unbalance_text(chosen.residual_gmm, units)} = "
               f"{at_radius(chosen.residual_gmm, geometry, units)}", style="bold")
    res.append(f", at {chosen.residual_angle_deg:.1f}° (where a further part would go)\n")
    if result.tolerance_gmm is not None:
        res.append(f"{TOLERANCE} {unbalance_text(result.tolerance_gmm, units)} = "
                   f"{at_radius(result.tolerance_gmm, geometry, units)} - "
                   f"{result.tolerance_source}")
        if share is not None and plane.tolerance_gmm is None:
            res.append(f" [{share.name}]")
        elif share is not None:
            res.append(f" (the grade's share would be "
                       f"{unbalance_text(share.permissible_gmm, units)})")
        res.append("\n")
    else:
        res.append("No tolerance given for this plane.\n", style="bold")
    if result.aim_gmm is not None:
        res.append(f"{AIM} {unbalance_text(result.aim_gmm, units)} ({result.aim_text})\n")
    res.append(f"Chosen: {result.rule}; {units.mass_text(chosen.mass_g, 4)} added.\n")
    res.append_text(_verdict(result.within_tolerance))
    if outside:
        res.append(f"\n{OUTSIDE_ADVICE}", style="bold")
    if not result.optimal:
        res.append("\n* not proven optimal with the effort given.", style="yellow")
    body.append(res)
    body.append(_front_table(result, units))
    for note in result.notes:
        body.append(Text(f"Note: {note}", style="bold yellow"))
    return Panel(Group(*body), title=f"Plane {index}: {geometry.name}", title_align="left",
                 box=box.ROUNDED)


def render_job(result: JobResult, console: Console) -> None:
    """Print the fitting sheet of a solved job.

    Parameters
    ----------
    result : JobResult
        The solved job.
    console : Console
        The rich console to print on.
    """
    units = units_of(result.job)
    console.print(_header(result, units))
    for i, plane in enumerate(result.planes, start=1):
        share = None
        if result.shares is not None:
            share = result.shares[i - 1]
        console.print(plane_panel(i, plane, share, result, units))
    for note in result.notes:
        console.print(Text(f"Note: {note}", style="bold yellow"))
    if all(p.within_tolerance is None for p in result.planes):
        summary = "No tolerance given: residuals only, nothing checked against a grade."
    elif result.all_within:
        summary = "All planes within tolerance." if all(
            p.within_tolerance for p in result.planes) else \
            "Every plane with a tolerance is within it."
    else:
        summary = ("At least one plane is OUTSIDE tolerance: see the notes above before "
                   "running the machine.")
    console.print(Text(summary, style="bold"))
    cautions = cautions_for(drilling=any(drills(plane.chosen.parts) for plane in result.planes))
    console.print(Panel("\n".join(f"- {c}" for c in cautions), title="Cautions",
                        title_align="left", box=box.SQUARE))
