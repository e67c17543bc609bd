"""The fitting sheet in the terminal (rich).  Renders; never computes."""

from __future__ import annotations

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.geometry import angle_of_deg
from placer.plan import JobResult, PlaneResult
from placer.tolerance import PlaneShare
from placer.views.wording import (
    action_word,
    cautions_for,
    drills,
    plan_kind,
    verdict_word,
)


def _verdict(within: bool | None) -> Text:
    if within is None:
        return Text("no tolerance given", style="bold")
    if within:
        return Text("[OK] WITHIN TOLERANCE", style="bold green")
    return Text("[!!] OUTSIDE TOLERANCE", style="bold red reverse")


def _header(result: JobResult) -> Panel:
    rotor = result.job.rotor
    lines = Text()
    lines.append(f"{rotor.name}\n", style="bold")
    facts = []
    if rotor.mass_kg is not None:
        facts.append(f"mass {rotor.mass_kg:g} kg")
    if rotor.service_rpm is not None:
        facts.append(f"service speed {rotor.service_rpm:g} r/min")
    if rotor.grade_mm_s is not None:
        facts.append(f"grade G{rotor.grade_mm_s:g}")
    if facts:
        lines.append(", ".join(facts) + "\n")
    if result.permissible_gmm is not None:
        lines.append(f"Permissible residual U_per {result.permissible_gmm:.1f} g·mm "
                     "(ISO 21940-11)\n")
    lines.append(f"Angles: degrees from the reference mark, counted {rotor.angle_sense}; "
                 "position numbers as marked on the rotor.")
    return Panel(lines, title="placer fitting sheet", title_align="left", box=box.HEAVY)


def _parts_table(result: PlaneResult) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    table.add_column("Do")
    table.add_column("Pos.", justify="right")
    table.add_column("Angle °", justify="right")
    table.add_column("Item")
    table.add_column("Count", justify="right")
    table.add_column("Each g", justify="right")
    table.add_column("Total g·mm", justify="right")
    for p in result.chosen.parts:
        table.add_row(action_word(p, emphasise=True), str(p.position),
                      f"{p.angle_deg:.1f}", p.item, str(p.count),
                      f"{p.mass_g:g}", f"{p.mass_g * p.count * p.radius_mm:.0f}")
    return table


def _front_table(result: PlaneResult) -> Table:
    table = Table(title="Trade-off: parts against residual (g·mm) and added mass (g)",
                  title_justify="left", box=box.SIMPLE, show_edge=False, pad_edge=False)
    table.add_column("Parts", justify="right")
    table.add_column("Residual", justify="right")
    table.add_column("% req.", justify="right")
    table.add_column("Mass", justify="right")
    table.add_column("Least")
    table.add_column("Verdict")
    rows = result.trade_off
    robust = any(o.chance_within is not None for o in rows)
    if robust:
        table.add_column("Chance", justify="right")
        table.add_column("p95", justify="right")
    table.add_column("")
    required = result.required_gmm
    for option in rows:
        share = "" if required == 0 else f"{option.residual_gmm / required:.1%}"
        mark = "<- chosen" if option.parts == result.chosen.parts else ""
        if robust and mark:
            mark = "<-"
        proof = "" if option.proven else " (not proven)"
        cells = [str(option.used_parts), f"{option.residual_gmm:.2f}{proof}", share,
                 f"{option.mass_g:.4g}", plan_kind(option), verdict_word(result, option)]
        if robust:
            cells += ["-" if option.chance_within is None else f"{option.chance_within:.0%}",
                      "-" if option.residual_p95_gmm is None else f"{option.residual_p95_gmm:.1f}"]
        table.add_row(*cells, mark)
    return table


def plane_panel(index: int, result: PlaneResult, share: PlaneShare | None) -> Panel:
    """One plane of the sheet: parts, residual, tolerance, aim, verdict, trade-off, notes.

    Parameters
    ----------
    index : int
        The plane's number (from 1).
    result : PlaneResult
        The solved plane.
    share : PlaneShare or None
        Its share of U_per, when the grade gives one.

    Returns
    -------
    Panel
        The plane's panel, for a rich console.
    """
    plane = result.plane
    geometry = plane.geometry
    info = Text()
    radii = sorted(set(geometry.radii_mm))
    radius = f"r {radii[0]:g} mm" if len(radii) == 1 else f"r {radii[0]:g} to {radii[-1]:g} mm"
    blocked = (", blocked " + ", ".join(str(b) for b in sorted(geometry.blocked))
               if geometry.blocked else "")
    info.append(f"{geometry.n_positions} positions, {radius}{blocked}; up to "
                f"{geometry.capacity} part(s) per position; catalogue: {plane.catalog.name}\n")
    info.append(f"Required: {abs(plane.correction_gmm):.1f} g·mm at "
                f"{angle_of_deg(plane.correction_gmm):.1f}° ({plane.given_as})\n")
    if plane.existing:
        on = ", ".join(f"{plane.catalog.items[e.item].id}×{e.count} on {e.position}"
                       for e in plane.existing)
        basis = ("measured with them on" if plane.correction_basis == "further"
                 else "for the rotor without them")
        info.append(f"Already on the rotor: {on}; the correction is {basis}.\n")
    if not result.chosen.parts:
        if result.within_tolerance:
            info.append("Fit: nothing - the plane is already within tolerance.\n", style="bold")
        else:
            info.append("Fit: nothing - no combination of the parts allowed improves on the "
                        "rotor as it is.\n", style="bold")
    body = [info]
    if result.chosen.parts:
        actions = {action_word(p, emphasise=True) for p in result.chosen.parts}
        if actions == {"fit"}:
            heading = "Fit these parts:"
        elif "REMOVE" in actions:
            heading = "Do in this order (parts to remove first):"
        else:
            heading = "Do these operations:"
        body.append(Text(heading, style="bold"))
        body.append(_parts_table(result))
    res = Text()
    res.append(f"Residual {result.chosen.residual_gmm:.2f} g·mm", style="bold")
    res.append(f" (further correction would go at {result.chosen.residual_angle_deg:.1f}°)\n")
    if result.tolerance_gmm is not None:
        res.append(f"Tolerance {result.tolerance_gmm:.2f} g·mm - {result.tolerance_source}")
        if share is not None and plane.tolerance_gmm is None:
            res.append(f" [{share.name}]")
        elif share is not None:
            res.append(f" (the grade's share would be {share.permissible_gmm:.2f} g·mm)")
        res.append("\n")
    else:
        res.append("No tolerance given for this plane.\n", style="bold")
    if result.aim_gmm is not None:
        res.append(f"Aim {result.aim_gmm:.2f} g·mm ({result.aim_text})\n")
    res.append(f"Chosen: {result.rule}; {result.chosen.mass_g:.4g} g added.\n")
    res.append_text(_verdict(result.within_tolerance))
    if not result.optimal:
        res.append("\nNot every plan below was proven optimal with the effort given.",
                   style="yellow")
    body.append(res)
    body.append(_front_table(result))
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
    console.print(_header(result))
    for i, plane in enumerate(result.planes, start=1):
        share = None
        if result.shares is not None:
            share = result.shares[i - 1]
        console.print(plane_panel(i, plane, share))
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
