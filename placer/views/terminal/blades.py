"""The blade arrangement in the terminal (rich): slot table, residual, proof, trim.

Renders; never computes.  The trim plane is shown as ``placer solve`` shows a
plane (:func:`placer.views.terminal.job.plane_panel`).
"""

from __future__ import annotations

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.arrange import BladeResult
from placer.views.bladewording import (
    MOVE_TEXT,
    fmt_moment,
    limit_texts,
    proof_text,
    row_status,
    summary_text,
    verdict_text,
)
from placer.views.terminal.job import plane_panel
from placer.views.wording import cautions_for, units_of

VERDICT_STYLE = {"WITHIN TOLERANCE": ("[OK] ", "bold green"),
                 "OUTSIDE TOLERANCE": ("[!!] ", "bold red reverse"),
                 "NO TOLERANCE GIVEN": ("", "bold")}


def _header(result: BladeResult) -> Panel:
    rotor = result.job.rotor
    lines = Text()
    lines.append(f"{rotor.name}\n", style="bold")
    facts = [f"mass {rotor.mass_kg:g} kg" if rotor.mass_kg is not None else "",
             f"service speed {rotor.service_rpm:g} r/min" if rotor.service_rpm is not None
             else "", f"grade G{rotor.grade_mm_s:g}" if rotor.grade_mm_s is not None else ""]
    if any(facts):
        lines.append(", ".join(f for f in facts if f) + "\n")
    if result.permissible_gmm is not None:
        lines.append(f"Permissible residual U_per {result.permissible_gmm:.1f} g·mm "
                     "(ISO 21940-11)\n")
    lines.append(f"Angles: degrees from the reference mark, counted {rotor.angle_sense}; "
                 "slot numbers as marked on the disc.")
    return Panel(lines, title="placer blade arrangement", title_align="left", box=box.HEAVY)


def _facts(result: BladeResult) -> Text:
    job = result.job
    disc = job.disc
    weights = [b.moment_gmm for b in job.blades]
    text = Text()
    text.append(f"{disc.slot_count} slots; {len(job.blades)} blades, moment weights "
                f"{fmt_moment(min(weights))} to {fmt_moment(max(weights))} g·mm (sum "
                f"{fmt_moment(result.total_moment_gmm)} g·mm)")
    if disc.unbalance_gmm:
        text.append(f"; bare disc {fmt_moment(disc.unbalance_gmm)} g·mm at "
                    f"{disc.unbalance_angle_deg % 360.0:.1f}°")
    text.append(".\n")
    for limit in limit_texts(disc):
        text.append(f"Limit: {limit}.\n")
    return text


def _slot_table(result: BladeResult) -> Table:
    blades = result.job.blades
    fitted = any(s is not None for s in result.job.slots_now)
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    table.add_column("Slot", justify="right")
    table.add_column("Angle °", justify="right")
    table.add_column("Blade")
    table.add_column("Moment g·mm", justify="right")
    frequency = any(b.frequency_hz is not None for b in blades)
    axial = any(b.axial_moment_gmm2 is not None for b in blades)
    if frequency:
        table.add_column("Hz", justify="right")
    if axial:
        table.add_column("Axial g·mm²", justify="right")
    if fitted or result.job.disc.pinned:
        table.add_column("Move")
    for row in result.rows():
        status = row_status(row, fitted)
        cells = [str(row.slot), f"{row.angle_deg:.1f}", row.blade.blade_id,
                 fmt_moment(row.blade.moment_gmm)]
        if frequency:
            cells.append("-" if row.blade.frequency_hz is None else f"{row.blade.frequency_hz:g}")
        if axial:
            cells.append(fmt_moment(row.blade.axial_moment_gmm2))
        if fitted or result.job.disc.pinned:
            cells.append(status)
        table.add_row(*cells, style="bold" if row.moves or status == "new" else None)
    return table


def _swap_table(result: BladeResult) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    table.add_column("Step", justify="right")
    table.add_column("Slots")
    table.add_column("Blades exchanged")
    for step, (a, b, in_a, in_b) in enumerate(result.swap_steps(), start=1):
        table.add_row(str(step), f"{a} and {b}", f"{in_a} (slot {a}) with {in_b} (slot {b})")
    return table


def _verdict(within: bool | None, after: str = "") -> Text:
    words = verdict_text(within)
    mark, style = VERDICT_STYLE[words]
    text = Text(f"{mark}{words}", style=style)
    if after:
        text.append(after)
    return text


def _arrangement_panel(result: BladeResult) -> Panel:
    job, a = result.job, result.arrangement
    body = [_facts(result)]
    steps = result.swap_steps()
    if job.move == "fewest" and steps:
        body.append(Text(f"Swap these blades, in this order ({len(steps)} "
                         f"swap{'s' * (len(steps) != 1)}):", style="bold"))
        body.append(_swap_table(result))
    body.append(Text("Blades, slot by slot:", style="bold"))
    body.append(_slot_table(result))
    res = Text()
    res.append(f"Residual unbalance {a.residual_gmm:.2f} g·mm at {a.residual_angle_deg:.1f}°",
               style="bold")
    res.append(" (the heavy spot of disc and blades)\n")
    if a.couple_gmm2 is not None:
        limit = job.disc.limits.couple_gmm2
        res.append(f"Couple unbalance {a.couple_gmm2:.1f} g·mm² " + (
            f"(limit {fmt_moment(limit)} g·mm², kept)\n" if limit is not None
            else "(no couple limit given: reported only)\n"))
    if result.tolerance_gmm is not None:
        res.append(f"Tolerance {result.tolerance_gmm:.2f} g·mm - {result.tolerance_source}\n")
    res.append_text(_verdict(result.within_tolerance,
                             " (the blades alone)" if result.trim is not None else ""))
    res.append("\n" + proof_text(result))
    moved = result.swaps_from_now()
    if moved and job.move != "fewest":
        res.append(f"\nFrom the rotor as it is, {moved} swap{'s' * (moved != 1)} make this "
                   "arrangement.")
    body.append(res)
    for note in result.notes:
        body.append(Text(f"Note: {note}", style="bold yellow"))
    return Panel(Group(*body), title=f"Blades: {MOVE_TEXT[job.move]}", title_align="left",
                 box=box.ROUNDED)


def _trim_lines(result: BladeResult) -> Text | None:
    """Which blade each trim part goes on, when the trim positions are the blades."""
    trim = result.trim
    if trim is None or not result.job.trim.on_blades or not trim.planes[0].chosen.parts:
        return None
    blade_in = result.arrangement.blade_in
    where = ", ".join(f"{p.item} on position {p.position} = the blade in slot {p.position} "
                      f"({blade_in(p.position)})" for p in trim.planes[0].chosen.parts)
    return Text(f"Trim positions are the blades' clip seats: {where}.")


def render_blades(result: BladeResult, console: Console) -> None:
    """Print the blade arrangement, its proof, the verdict and the trim.

    Parameters
    ----------
    result : BladeResult
        The arranged blades.
    console : Console
        The rich console to print on.
    """
    console.print(_header(result))
    console.print(_arrangement_panel(result))
    if result.trim is not None:
        share = None if result.trim.shares is None else result.trim.shares[0]
        console.print(plane_panel(1, result.trim.planes[0], share, result.trim,
                                  units_of(result.trim.job)))
        lines = _trim_lines(result)
        if lines is not None:
            console.print(lines)
    console.print(Text(summary_text(result), style="bold"))
    drilling = result.trim is not None and any(
        p.verb == "drill" for p in result.trim.planes[0].chosen.parts)
    cautions = cautions_for(drilling=drilling)
    console.print(Panel("\n".join(f"- {c}" for c in cautions), title="Cautions",
                        title_align="left", box=box.SQUARE))
