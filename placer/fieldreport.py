"""The field-balancing sheet in the terminal (rich), and its JSON shape."""

from __future__ import annotations

import math
from typing import Any

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.fieldplan import FieldOption, FieldResult
from placer.geometry import angle_of_deg
from placer.influence import trial_mass_g
from placer.report import CAUTIONS

TRIAL_CAUTION = ("Trial runs spin the rotor with a weight fitted for the purpose: fasten it as "
                 "firmly as a final weight, keep out of the plane of rotation, and remove or "
                 "account for it afterwards.")


def _amp(value: complex) -> str:
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
            row.append(_amp(result.coefficients.matrix[c, p] * plane.geometry.radii_mm[0]))
        table.add_row(*row)
    return table


def _parts_table(option: FieldOption, result: FieldResult) -> Table:
    table = Table(box=box.SIMPLE_HEAVY, show_edge=False, pad_edge=False)
    for name, justify in (("Plane", "left"), ("Pos.", "right"), ("Angle °", "right"),
                          ("Item", "left"), ("Count", "right"), ("Mass g", "right")):
        table.add_column(name, justify=justify)
    for p, part in option.parts:
        table.add_row(result.session.planes[p].geometry.name, str(part.position),
                      f"{part.angle_deg:.1f}", part.item, str(part.count),
                      f"{part.mass_g * part.count:g}")
    return table


def _prediction_table(result: FieldResult) -> Table:
    s = result.session
    table = Table(title=f"Vibration ({s.unit} {s.measure})", title_justify="left",
                  box=box.SIMPLE, pad_edge=False)
    table.add_column("Sensor")
    table.add_column("Now", justify="right")
    table.add_column("After plan", justify="right")
    table.add_column("Rounded per plane", justify="right")
    for c, channel in enumerate(s.channels):
        table.add_row(channel.name, _amp(result.vibration_now[c]),
                      _amp(result.chosen.predicted[c]), _amp(result.rounded.predicted[c]))
    return table


def _front_table(result: FieldResult) -> Table:
    label = "largest reading" if result.session.norm == "max" else "root-sum-square"
    table = Table(title=f"Trade-off: parts against predicted vibration ({label})",
                  title_justify="left", box=box.SIMPLE, pad_edge=False)
    table.add_column("Parts", justify="right")
    table.add_column(f"Predicted {result.session.unit}", justify="right")
    table.add_column("")
    for option in result.front:
        mark = "<- chosen" if option.parts == result.chosen.parts else ""
        proof = "" if option.proven else " (not proven)"
        table.add_row(str(option.used_parts), f"{option.objective:.3f}{proof}", mark)
    return table


def render_field(result: FieldResult, console: Console) -> None:
    """Print the field sheet of a solved visit."""
    s = result.session
    head = Text()
    head.append(f"{s.machine_name} [{s.machine_id}]\n", style="bold")
    head.append(f"Readings: {s.unit} {s.measure}, phase {s.phase_sense}; angles from the "
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
            line += f", moment {sc.couple_moment_gmm2 / 1e6:.2f} kg·mm²"
        body.append(Text(line))
    console.print(Panel(Group(*body), title="Machine", title_align="left", box=box.ROUNDED))
    plan = [Text(f"Fit these {result.chosen.used_parts} part(s):", style="bold"),
            _parts_table(result.chosen, result), _prediction_table(result)]
    same = result.best_with_at_most(result.rounded.used_parts)
    plan.append(Text(
        f"Predicted after the plan: {result.chosen.objective:.3f} {s.unit}. With "
        f"{result.rounded.used_parts} part(s): each plane's correction rounded on its own "
        f"{result.rounded.objective:.3f} {s.unit}, planes solved together "
        f"{same.objective:.3f} {s.unit}.", style="bold"))
    if result.within_limit is not None:
        verdict = ("[OK] BELOW THE LIMIT" if result.within_limit else "[!!] ABOVE THE LIMIT")
        plan.append(Text(f"{verdict} of {result.session.vibration_limit:g} {s.unit}",
                         style="bold green" if result.within_limit else "bold red reverse"))
    plan.append(_front_table(result))
    console.print(Panel(Group(*plan), title="Plan (planes solved together)", title_align="left",
                        box=box.ROUNDED))
    for warning in result.warnings:
        console.print(Text(f"Warning: {warning}", style="bold yellow"))
    console.print(Panel("\n".join(f"- {c}" for c in (TRIAL_CAUTION,) + CAUTIONS),
                        title="Cautions", title_align="left", box=box.SQUARE))


def _option_dict(option: FieldOption, result: FieldResult) -> dict[str, Any]:
    return {
        "part_count": option.used_parts,
        "objective": option.objective,
        "proven": option.proven,
        "parts": [{"plane": p + 1, "plane_name": result.session.planes[p].geometry.name,
                   "position": part.position, "angle_deg": part.angle_deg,
                   "radius_mm": part.radius_mm, "item": part.item, "mass_g": part.mass_g,
                   "count": part.count} for p, part in option.parts],
        "predicted": [_phasor_dict(v) for v in option.predicted],
    }


def _phasor_dict(value: complex) -> dict[str, float]:
    return {"amplitude": float(abs(value)), "angle_deg": angle_of_deg(complex(value))}


def field_dict(result: FieldResult) -> dict[str, Any]:
    """The JSON object of ``placer field --json``."""
    s = result.session
    matrix = result.coefficients.matrix
    out: dict[str, Any] = {
        "machine": {"id": s.machine_id, "name": s.machine_name},
        "unit": s.unit, "measure": s.measure, "norm": s.norm,
        "angle_convention": f"degrees from the reference mark, counted {s.rotor.angle_sense}",
        "coefficient_source": result.coefficient_source,
        "coefficients_per_gmm": [[{"re": float(v.real), "im": float(v.imag)} for v in row]
                                 for row in matrix],
        "condition_number": result.coefficients.condition,
        "basis": result.basis,
        "vibration_now": [_phasor_dict(v) for v in result.vibration_now],
        "correction": [{"plane": p + 1, "gmm": float(abs(w)), "angle_deg": angle_of_deg(w)}
                       for p, w in enumerate(result.correction_gmm)],
        "pareto": [_option_dict(o, result) for o in result.front],
        "chosen": _option_dict(result.chosen, result),
        "rounded_per_plane": _option_dict(result.rounded, result),
        "coupled_same_parts": _option_dict(result.best_with_at_most(result.rounded.used_parts),
                                           result),
        "vibration_limit": s.vibration_limit,
        "within_limit": result.within_limit,
        "warnings": list(result.warnings),
    }
    if result.static_couple is not None:
        sc = result.static_couple
        out["static_couple"] = {"static_gmm": float(abs(sc.static_gmm)),
                                "static_angle_deg": angle_of_deg(sc.static_gmm),
                                "couple_gmm": float(abs(sc.couple_gmm)),
                                "couple_angle_deg": angle_of_deg(sc.couple_gmm),
                                "couple_moment_gmm2": sc.couple_moment_gmm2,
                                "couple_negligible": bool(sc.couple_negligible)}
    return out


def trial_suggestion(mass_kg: float, rpm: float, radius_mm: float) -> str:
    """One line suggesting a trial mass by the 10 % force rule (from memory)."""
    grams = trial_mass_g(mass_kg, rpm, radius_mm)
    force_n = grams / 1000 * radius_mm / 1000 * (2 * math.pi * rpm / 60) ** 2
    return (f"Trial mass about {grams:.1f} g at r {radius_mm:g} mm: its centrifugal force "
            f"{force_n:.0f} N is 10 % of the rotor's weight (rule of thumb, from memory).")

