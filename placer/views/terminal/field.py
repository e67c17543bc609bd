"""The field-balancing sheet in the terminal (rich)."""

from __future__ import annotations

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.fieldplan import FieldOption, FieldResult
from placer.geometry import angle_of_deg
from placer.units import kg_mm2_from_gmm2
from placer.views.wording import action_word, cautions_for


def amp(value: complex) -> str:
    """A reading or coefficient as amplitude∠angle.

    Parameters
    ----------
    value : complex
        The reading or coefficient.

    Returns
    -------
    str
        Amplitude with two decimals, angle [deg] in whole degrees: ``1.25∠40°``.
    """
    return f"{abs(value):.2f}∠{angle_of_deg(value):.0f}°"


def _coefficient_table(result: FieldResult) -> Table:
    s = result.session
    table = Table(title=f"Influence coefficients ({s.unit} {s.measure} per g at the plane "
                        "radius, phase in the rotor's angle sense)",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Sensor")
    for plane in s.planes:
        table.add_column(plane.geometry.name, justify="right")
    for c, channel in enumerate(s.channels):
        row = [channel.name]
        for p, plane in enumerate(s.planes):
            row.append(amp(result.coefficients.matrix[c, p] * plane.geometry.radii_mm[0]))
        table.add_row(*row)
    return table


def _parts_table(option: FieldOption, result: FieldResult) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    for name, justify in (("Plane", "left"), ("Pos.", "right"), ("Angle °", "right"),
                          ("Do", "left"), ("Item", "left"), ("Count", "right"),
                          ("Mass g", "right")):
        table.add_column(name, justify=justify)
    for p, part in option.parts:
        table.add_row(result.session.planes[p].geometry.name, str(part.position),
                      f"{part.angle_deg:.1f}", action_word(part),
                      part.item, str(part.count), f"{part.mass_g * part.count:g}")
    return table


def _prediction_table(result: FieldResult) -> Table:
    """Vibration now, after the chosen plan, and both ways at the rounded plan's part count."""
    s = result.session
    same = result.coupled_same_parts
    n = result.rounded.used_parts
    rounded = "each plane rounded on its own" if len(s.planes) > 1 else "correction rounded"
    together = "planes solved together" if len(s.planes) > 1 else "least vibration"
    table = Table(title=f"Vibration ({s.unit} {s.measure}): now; after the plan "
                        f"({result.chosen.used_parts} part(s)); with {n} part(s), {rounded} "
                        f"or {together}",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Sensor")
    table.add_column("Now", justify="right", no_wrap=True)
    table.add_column(f"Plan ({result.chosen.used_parts})", justify="right", no_wrap=True)
    table.add_column(f"Rounded ({n})", justify="right", no_wrap=True)
    table.add_column(f"Together ({same.used_parts})" if len(s.planes) > 1
                     else f"Best ({same.used_parts})", justify="right", no_wrap=True)
    for c, channel in enumerate(s.channels):
        table.add_row(channel.name, amp(result.vibration_now[c]),
                      amp(result.chosen.predicted[c]), amp(result.rounded.predicted[c]),
                      amp(same.predicted[c]))
    return table


def _front_table(result: FieldResult) -> Table:
    label = "largest reading" if result.session.norm == "max" else "root-sum-square"
    table = Table(title=f"Trade-off: parts against predicted vibration ({label})",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Parts", justify="right")
    table.add_column(f"Predicted {result.session.unit} {result.session.measure}",
                     justify="right")
    table.add_column("")
    for option in result.front:
        mark = "<- chosen" if option.parts == result.chosen.parts else ""
        proof = "" if option.proven else " (not proven)"
        table.add_row(str(option.used_parts), f"{option.objective:.3f}{proof}", mark)
    return table


def render_field(result: FieldResult, console: Console) -> None:
    """Print the field sheet of a solved visit.

    Parameters
    ----------
    result : FieldResult
        The solved visit.
    console : Console
        The rich console to print on.
    """
    s = result.session
    unit = f"{s.unit} {s.measure}"
    head = Text()
    head.append(f"{s.machine_name} [{s.machine_id}]\n", style="bold")
    head.append(f"Readings: {unit}, phase {s.phase_sense}; angles from the "
                f"reference mark counted {s.rotor.angle_sense}; position numbers as marked.\n")
    head.append(f"Coefficients from {result.coefficient_source}; plan from the "
                f"{result.basis}.")
    console.print(Panel(head, title="placer field sheet", title_align="left", box=box.HEAVY))
    body = [_coefficient_table(result),
            Text(f"Condition number {result.coefficients.condition:.2f} (1 is ideal)")]
    corr = Text("Continuous correction: ")
    corr.append("; ".join(
        f"{plane.geometry.name} {abs(w):.0f} g·mm at {angle_of_deg(w):.1f}° "
        f"({abs(w) / plane.geometry.radii_mm[0]:.1f} g at r {plane.geometry.radii_mm[0]:g})"
        for plane, w in zip(s.planes, result.correction_gmm)))
    body.append(corr)
    if result.static_couple is not None:
        sc = result.static_couple
        line = (f"Static part {abs(sc.static_gmm):.0f} g·mm at {angle_of_deg(sc.static_gmm):.1f}°;"
                f" couple part ±{abs(sc.couple_gmm):.0f} g·mm at "
                f"{angle_of_deg(sc.couple_gmm):.1f}° (plane 1) / opposite (plane 2)")
        if sc.couple_moment_gmm2 is not None:
            line += f", moment {kg_mm2_from_gmm2(sc.couple_moment_gmm2):.1f} kg·mm²"
        body.append(Text(line))
    console.print(Panel(Group(*body), title="Machine", title_align="left", box=box.ROUNDED))
    if result.fitted:
        on = ", ".join(f"{s.planes[m.plane].geometry.name} #{m.position} {m.item}×{m.count}"
                       for m in result.fitted)
        plan = [Text(f"On the rotor from the check run(s): {on}; the plan may take them off.")]
    else:
        plan = []
    plan += [Text(f"Carry out these {result.chosen.used_parts} operation(s):"
                  if any(p.action == "remove" for _, p in result.chosen.parts)
                  else f"Fit these {result.chosen.used_parts} part(s):", style="bold"),
             _parts_table(result.chosen, result), _prediction_table(result)]
    same = result.coupled_same_parts
    rounded_label = ("each plane's correction rounded on its own" if len(s.planes) > 1
                     else "the correction rounded on its own")
    together = "planes solved together" if len(s.planes) > 1 else "least predicted vibration"
    plan.append(Text(
        f"Predicted after the plan: {result.chosen.objective:.3f} {unit}. With "
        f"{result.rounded.used_parts} part(s): {rounded_label} "
        f"{result.rounded.objective:.3f} {unit}, {together} "
        f"{same.objective:.3f} {unit}.", style="bold"))
    if result.within_limit is not None:
        verdict = ("[OK] BELOW THE LIMIT" if result.within_limit else "[!!] ABOVE THE LIMIT")
        plan.append(Text(f"{verdict} of {result.session.vibration_limit:g} {unit}",
                         style="bold green" if result.within_limit else "bold red reverse"))
    plan.append(_front_table(result))
    title = "Plan (planes solved together)" if len(s.planes) > 1 else "Plan"
    console.print(Panel(Group(*plan), title=title, title_align="left", box=box.ROUNDED))
    for warning in result.warnings:
        console.print(Text(f"Warning: {warning}", style="bold yellow"))
    cautions = cautions_for(trial_runs=any(r.kind == "trial" for r in s.runs))
    console.print(Panel("\n".join(f"- {c}" for c in cautions),
                        title="Cautions", title_align="left", box=box.SQUARE))
