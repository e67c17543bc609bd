"""The field-balancing sheet in the terminal (rich).

In the order a technician needs it: the verdict on the data first (each
trial run, the plane separation), then the coefficients and the correction,
then the plan with its predictions, what is on the rotor when the
technician leaves, the residual checks, warnings and cautions.  Every
reading is a physical amplitude in the unit and measure read; the weighted
objective the plan minimises appears only where it is labelled.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from rich import box
from rich.console import Console, Group, RenderableType
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.fieldresult import FieldOption, FieldResult
from placer.geometry import angle_of_deg
from placer.records import visit_record
from placer.residualcheck import ResidualCheckResult
from placer.trialruns import DataCheck
from placer.units import kg_mm2_from_gmm2
from placer.views.numbers import angle_text, phasor_text, significant
from placer.views.wording import action_word, cautions_for
from placer.visitreport import RotorPart, on_rotor_after, on_rotor_before

G_PER_KG = 1000.0
"""Coefficients are shown per kg·mm: 1 kg·mm = 1000 g·mm."""

FAILED_DATA = "THE PLAN BELOW IS FROM DATA THAT FAILS THESE CHECKS"
"""The banner over a plan made from data that failed a check."""


def unit_text(unit: str, measure: str) -> str:
    """The unit and measure of readings as shown: "mm/s peak".

    Parameters
    ----------
    unit : str
        The amplitude unit.
    measure : str
        The amplitude measure.

    Returns
    -------
    str
        Both, separated by a space.
    """
    return f"{unit} {measure}"


def reading_text(value: complex, amplitude_only: bool) -> str:
    """A reading or prediction: amplitude∠angle, or the amplitude alone without a phase.

    Parameters
    ----------
    value : complex
        The phasor [session unit and measure].
    amplitude_only : bool
        The visit has no phase reference.

    Returns
    -------
    str
        The text, with significant digits.
    """
    return significant(abs(value)) if amplitude_only else phasor_text(value)


def check_lines(checks: Sequence[DataCheck]) -> list[Text]:
    """The checks of the data as lines: [OK] or [!!], what was found, what to do.

    Parameters
    ----------
    checks : sequence of DataCheck
        The checks.

    Returns
    -------
    list of Text
        One or two lines per check, then the rules once each.
    """
    lines = []
    for c in checks:
        mark = "[OK]" if c.passed else "[!!]"
        line = Text(f"{mark} ", style="bold green" if c.passed else "bold red")
        line.append(f"{c.subject}: ", style="bold")
        line.append(c.finding)
        lines.append(line)
        if c.action:
            lines.append(Text(f"     What to do: {c.action}.", style="bold"))
    for rule in dict.fromkeys(c.rule for c in checks):
        lines.append(Text(f"Rule: {rule}.", style="italic"))
    return lines


def _coefficient_table(result: FieldResult) -> RenderableType:
    s = result.session
    unit = unit_text(s.unit, s.measure)
    if result.four_run is not None:
        f = result.four_run
        return Text(
            f"No phase reference (four-run method): reference {significant(f.reference)} "
            f"{unit}; trial {significant(f.trial_gmm)} g·mm at "
            + ", ".join(f"{angle_text(a)} gave {significant(x)}"
                        for a, x in zip(f.angles_deg, f.amplitudes))
            + f". The circles meet at {significant(f.effect)} {unit} at "
            f"{angle_text(angle_of_deg(f.meeting_point), 1)}: the trial's effect and the "
            f"correction's angle. Coefficient {significant(f.coefficient * G_PER_KG)} {unit} "
            "per kg·mm (its phase is not known).")
    table = Table(title=f"Influence coefficients ({unit} per kg·mm)", title_justify="left",
                  box=box.SIMPLE, pad_edge=False, caption=f"Phases as angles counted "
                  f"{s.rotor.angle_sense}.", caption_justify="left")
    table.add_column("Sensor", overflow="fold")
    for plane in s.planes:
        table.add_column(plane.geometry.name, justify="right", overflow="fold")
    for c, channel in enumerate(s.channels):
        table.add_row(channel.name, *(phasor_text(result.coefficients.matrix[c, p] * G_PER_KG)
                                      for p in range(len(s.planes))))
    return table


def _correction_lines(result: FieldResult) -> list[Text]:
    s = result.session
    lines = []
    if len(s.planes) > 1:
        lines.append(Text(f"Condition number {significant(result.coefficients.condition)} "
                          "(each plane's column scaled to unit length; 1 is ideal)"))
    if any(c.weight != 1.0 for c in s.channels):
        lines.append(Text("Sensor weights in the fit: " + ", ".join(
            f"{c.name} {c.weight:g}" for c in s.channels)
            + " (the plan minimises the weighted readings; amplitudes are shown as read)"))
    corr = Text("Continuous correction: ")
    corr.append("; ".join(
        f"{plane.geometry.name} {significant(abs(w), 4)} g·mm at "
        f"{angle_text(angle_of_deg(w), 1)} ({significant(abs(w) / plane.geometry.radii_mm[0])} g"
        f" at r {plane.geometry.radii_mm[0]:g} mm)"
        for plane, w in zip(s.planes, result.correction_gmm)))
    lines.append(corr)
    if result.static_couple is not None:
        sc = result.static_couple
        line = (f"Static part {significant(abs(sc.static_gmm), 4)} g·mm at "
                f"{angle_text(angle_of_deg(sc.static_gmm), 1)}; couple part "
                f"±{significant(abs(sc.couple_gmm), 4)} g·mm at "
                f"{angle_text(angle_of_deg(sc.couple_gmm), 1)} (plane 1) / opposite (plane 2)")
        if sc.couple_moment_gmm2 is not None:
            line += f", moment {kg_mm2_from_gmm2(sc.couple_moment_gmm2):.1f} kg·mm²"
        lines.append(Text(line))
    return lines


def _parts_table(option: FieldOption, result: FieldResult) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    for name, justify in (("Plane", "left"), ("Pos.", "right"), ("Angle °", "right"),
                          ("Do", "left"), ("Item", "left"), ("Count", "right"),
                          ("Mass g", "right")):
        table.add_column(name, justify=justify, overflow="fold")
    for p, part in option.parts:
        table.add_row(result.session.planes[p].geometry.name, str(part.position),
                      angle_text(part.angle_deg, 1).rstrip("°"), action_word(part),
                      part.item, str(part.count), f"{part.mass_g * part.count:g}")
    return table


def _prediction_table(result: FieldResult) -> Table:
    """Vibration now, after the chosen plan, and both ways at the rounded plan's part count."""
    s = result.session
    only = s.amplitude_only
    same = result.coupled_same_parts
    n = result.rounded.used_parts
    rounded = "each plane rounded on its own" if len(s.planes) > 1 else "correction rounded"
    together = "planes solved together" if len(s.planes) > 1 else "least vibration"
    table = Table(title=f"Vibration ({unit_text(s.unit, s.measure)}): now; after the plan "
                        f"({result.chosen.used_parts} part(s)); with {n} part(s), {rounded} "
                        f"or {together}",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Sensor", overflow="fold")
    table.add_column("Now", justify="right", no_wrap=True)
    table.add_column(f"Plan ({result.chosen.used_parts})", justify="right", no_wrap=True)
    table.add_column(f"Rounded ({n})", justify="right", no_wrap=True)
    table.add_column(f"Together ({same.used_parts})" if len(s.planes) > 1
                     else f"Best ({same.used_parts})", justify="right", no_wrap=True)
    for c, channel in enumerate(s.channels):
        table.add_row(channel.name, reading_text(result.vibration_now[c], only),
                      reading_text(result.chosen.predicted[c], only),
                      reading_text(result.rounded.predicted[c], only),
                      reading_text(same.predicted[c], only))
    return table


def weighted(result: FieldResult) -> bool:
    """Whether the objective differs from the largest reading (weights, or the rms norm).

    Parameters
    ----------
    result : FieldResult
        The solved visit.

    Returns
    -------
    bool
        True when the weighted objective needs a column of its own.
    """
    s = result.session
    return s.norm != "max" or any(c.weight != 1.0 for c in s.channels)


def _front_table(result: FieldResult) -> Table:
    s = result.session
    table = Table(title="Trade-off: parts and largest reading",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Parts", justify="right")
    table.add_column(f"Largest {unit_text(s.unit, s.measure)}", justify="right")
    if weighted(result):
        label = "weighted largest" if s.norm == "max" else "weighted rss"
        table.add_column(f"Objective ({label})", justify="right")
    table.add_column("")
    for option in result.front:
        mark = "<- chosen" if option.parts == result.chosen.parts else ""
        proof = "" if option.proven else " (not proven)"
        row = [str(option.used_parts), f"{significant(option.largest)}{proof}"]
        if weighted(result):
            row.append(significant(option.objective))
        table.add_row(*row, mark)
    return table


def rotor_part_text(part: RotorPart, plane_names: Sequence[str]) -> str:
    """One entry of what is on the rotor: where, what, how many, since when.

    Parameters
    ----------
    part : RotorPart
        The parts.
    plane_names : sequence of str
        The planes' names.

    Returns
    -------
    str
        E.g. "inboard flange #2 at 45°: trial 20 g ×1 (trial weight left on)".
    """
    where = (f"#{part.position} at {angle_text(part.angle_deg)}" if part.position is not None
             else f"at {angle_text(part.angle_deg, 1)}, r {part.radius_mm:g} mm")
    return (f"{plane_names[part.plane]} {where}: {part.label} ×{part.count} "
            f"({part.origin})")


def _leaving_lines(result: FieldResult) -> list[Text]:
    names = [p.geometry.name for p in result.session.planes]
    after = on_rotor_after(visit_record(result))
    if not after:
        return [Text("Nothing: no part is fitted and none is left on.")]
    return [Text(f"- {rotor_part_text(p, names)}") for p in after]


def residual_lines(results: Sequence[ResidualCheckResult], plane_names: Sequence[str],
                   sensor_names: Sequence[str], unit: str) -> list[Text]:
    """The residual-unbalance checks, each with its two estimates and its verdict.

    Parameters
    ----------
    results : sequence of ResidualCheckResult
        The checks.
    plane_names : sequence of str
        The planes' names.
    sensor_names : sequence of str
        The sensors' names.
    unit : str
        Unit and measure of the readings, for the text.

    Returns
    -------
    list of Text
        A few lines per check.
    """
    lines = []
    for r in results:
        c = r.check
        amplitudes = np.asarray(c.amplitudes)
        lines.append(Text(f"{plane_names[c.plane]}, read at {sensor_names[c.sensor]}: "
                          f"{c.mass_g:g} g at r {c.radius_mm:g} mm = "
                          f"{significant(c.trial_gmm, 4)} g·mm at {len(amplitudes)} positions; "
                          f"readings {significant(amplitudes.min())} to "
                          f"{significant(amplitudes.max())} {unit}.", style="bold"))
        lines.append(Text(f"Residual {significant(r.from_range_gmm)} g·mm from the largest and "
                          f"smallest reading, {significant(r.from_circle_gmm)} g·mm from the "
                          f"circle through all of them (heavy spot at "
                          f"{angle_text(r.heavy_spot_deg)}); judged on "
                          f"{significant(r.residual_gmm)} g·mm."))
        if r.limit_gmm is None:
            lines.append(Text(f"No limit: {r.limit_source}."))
        else:
            word = "WITHIN THE LIMIT" if r.within else "ABOVE THE LIMIT"
            lines.append(Text(f"[{'OK' if r.within else '!!'}] {word} of "
                              f"{significant(r.limit_gmm)} g·mm ({r.limit_source})",
                              style="bold green" if r.within else "bold red reverse"))
        lines += [Text(f"Note: {note}.") for note in r.notes]
    return lines


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
    unit = unit_text(s.unit, s.measure)
    head = Text()
    head.append(f"{s.machine_name} [{s.machine_id}]\n", style="bold")
    phase = "no phase reference (amplitudes only)" if s.amplitude_only else f"phase {s.phase_sense}"
    head.append(f"Readings: {unit}, {phase}; angles from the reference mark counted "
                f"{s.rotor.angle_sense}; position numbers as marked.\n")
    head.append(f"Coefficients from {result.coefficient_source}; plan from the "
                f"{result.basis}.")
    console.print(Panel(head, title="placer field sheet", title_align="left", box=box.HEAVY))
    judged: list[RenderableType] = list(check_lines(result.checks))
    if not result.data_ok:
        judged.append(Text(f"[!!] {FAILED_DATA}: take the runs again as said above before "
                           "fitting it.", style="bold red reverse"))
    console.print(Panel(Group(*judged), title="The data, judged before the plan",
                        title_align="left", box=box.ROUNDED))
    body: list[RenderableType] = [_coefficient_table(result), *_correction_lines(result)]
    console.print(Panel(Group(*body), title="Machine", title_align="left", box=box.ROUNDED))
    plan: list[RenderableType] = []
    if not result.data_ok:
        plan.append(Text(f"[!!] {FAILED_DATA}", style="bold red reverse"))
    before = on_rotor_before(visit_record(result))
    if before:
        names = [p.geometry.name for p in s.planes]
        plan.append(Text("On the rotor before the plan (the plan may take off those on a "
                         "position):"))
        plan += [Text(f"- {rotor_part_text(p, names)}") for p in before]
    plan += [Text(f"Carry out these {result.chosen.used_parts} operation(s):"
                  if any(p.action == "remove" for _, p in result.chosen.parts)
                  else f"Fit these {result.chosen.used_parts} part(s):", style="bold"),
             _parts_table(result.chosen, result), _prediction_table(result)]
    same = result.coupled_same_parts
    rounded_label = ("each plane's correction rounded on its own" if len(s.planes) > 1
                     else "the correction rounded on its own")
    together = "planes solved together" if len(s.planes) > 1 else "least predicted vibration"
    plan.append(Text(
        f"Predicted after the plan: largest reading {significant(result.chosen.largest)} {unit}. "
        f"With {result.rounded.used_parts} part(s): {rounded_label} "
        f"{significant(result.rounded.largest)} {unit}, {together} "
        f"{significant(same.largest)} {unit}.", style="bold"))
    if result.within_limit is not None:
        verdict = ("[OK] BELOW THE LIMIT" if result.within_limit else "[!!] ABOVE THE LIMIT")
        plan.append(Text(f"{verdict} of {result.session.vibration_limit:g} {unit} "
                         "at every sensor",
                         style="bold green" if result.within_limit else "bold red reverse"))
    plan.append(_front_table(result))
    title = "Plan (planes solved together)" if len(s.planes) > 1 else "Plan"
    if not result.data_ok:
        title += " from data that fails the checks"
    console.print(Panel(Group(*plan), title=title, title_align="left", box=box.ROUNDED))
    console.print(Panel(Group(*_leaving_lines(result)), title="On the rotor when you leave",
                        title_align="left", box=box.ROUNDED))
    if result.residual_checks:
        console.print(Panel(Group(*residual_lines(
            result.residual_checks, [p.geometry.name for p in s.planes],
            [c.name for c in s.channels], unit)), title="Residual unbalance after balancing",
            title_align="left", box=box.ROUNDED))
    for warning in result.warnings:
        console.print(Text(f"Warning: {warning}", style="bold yellow"))
    cautions = cautions_for(trial_runs=any(r.kind == "trial" for r in s.runs))
    console.print(Panel("\n".join(f"- {c}" for c in cautions),
                        title="Cautions", title_align="left", box=box.SQUARE))
