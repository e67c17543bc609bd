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
from placer.io.history import MassRecord, VisitRecord, utc_label
from placer.views.terminal.job import CAUTIONS

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
                          ("Do", "left"), ("Item", "left"), ("Count", "right"),
                          ("Mass g", "right")):
        table.add_column(name, justify=justify)
    for p, part in option.parts:
        table.add_row(result.session.planes[p].geometry.name, str(part.position),
                      f"{part.angle_deg:.1f}", {"fit": "fit", "drill": "drill", "remove": "take off"}[part.verb],
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
        table.add_row(channel.name, _amp(result.vibration_now[c]),
                      _amp(result.chosen.predicted[c]), _amp(result.rounded.predicted[c]),
                      _amp(same.predicted[c]))
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


def couple_moment_kg_mm2(moment_gmm2: float) -> float:
    """A couple moment in kg·mm² from g·mm² (1 kg = 1000 g)."""
    return moment_gmm2 / 1000.0


def render_field(result: FieldResult, console: Console) -> None:
    """Print the field sheet of a solved visit."""
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
            line += f", moment {couple_moment_kg_mm2(sc.couple_moment_gmm2):.1f} kg·mm²"
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
    cautions = ((TRIAL_CAUTION,) if any(r.kind == "trial" for r in s.runs) else ()) + CAUTIONS
    console.print(Panel("\n".join(f"- {c}" for c in cautions),
                        title="Cautions", title_align="left", box=box.SQUARE))


def _option_dict(option: FieldOption, result: FieldResult) -> dict[str, Any]:
    return {
        "part_count": option.used_parts,
        "objective": option.objective,
        "proven": option.proven,
        "parts": [{"plane": p + 1, "plane_name": result.session.planes[p].geometry.name,
                   "position": part.position, "angle_deg": part.angle_deg,
                   "radius_mm": part.radius_mm, "item": part.item, "mass_g": part.mass_g,
                   "count": part.count, "action": part.verb} for p, part in option.parts],
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
        "amplitudes": f"{s.unit} {s.measure}, as read",
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
        "coupled_same_parts": _option_dict(result.coupled_same_parts, result),
        "fitted_on_rotor": [{"plane": m.plane + 1, "position": m.position, "item": m.item,
                             "count": m.count} for m in result.fitted],
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
                                "couple_moment_kg_mm2": None if sc.couple_moment_gmm2 is None
                                else couple_moment_kg_mm2(sc.couple_moment_gmm2),
                                "couple_negligible": bool(sc.couple_negligible)}
    return out


def trial_suggestion(mass_kg: float, rpm: float, radius_mm: float) -> str:
    """One line suggesting a trial mass by the 10 % force rule (from memory)."""
    grams = trial_mass_g(mass_kg, rpm, radius_mm)
    force_n = grams / 1000 * radius_mm / 1000 * (2 * math.pi * rpm / 60) ** 2
    return (f"Trial mass about {grams:.1f} g at r {radius_mm:g} mm: its centrifugal force "
            f"{force_n:.0f} N is 10 % of the rotor's weight (rule of thumb, from memory).")



def _mass_text(mass: MassRecord, plane_names: tuple[str, ...]) -> str:
    where = f"#{mass.position}" if mass.position is not None else f"{mass.angle_deg:.1f}°"
    what = f"{mass.item}×{abs(mass.count)}" if mass.item else f"{mass.mass_g:g} g"
    verb = "take off " if mass.count < 0 else ""
    kept = " (removed after)" if mass.role == "trial" and mass.removed_after else (
        " (left on)" if mass.role == "trial" else "")
    return f"{verb}{plane_names[mass.plane]} {where} {what}{kept}"


def render_visit(visit_id: int, record: VisitRecord, console: Console) -> None:
    """Print one stored visit: runs with readings as read, coefficients, plan, result."""
    unit = f"{record.unit} {record.measure}"
    head = Text()
    head.append(f"{record.machine_name} [{record.machine_id}]\n", style="bold")
    head.append(f"Visit {visit_id} of {utc_label(record.started_at)}\n", style="bold")
    speed = "speed not stored" if record.service_rpm is None else f"{record.service_rpm:g} r/min"
    head.append(f"Readings: {unit}, phase {record.phase_sense}; angles counted "
                f"{record.angle_sense}"
                + (f", rotation {record.rotation}" if record.rotation else "")
                + f"; {speed}.\nSession file: {record.session_file}")
    console.print(Panel(head, title="placer history: one visit", title_align="left",
                        box=box.HEAVY))
    runs = Table(title=f"Runs: readings as read ({unit}, amplitude∠phase)",
                 title_justify="left", box=box.SIMPLE, pad_edge=False)
    runs.add_column("Run", overflow="fold")
    cells = ["\n".join(f"{name}: {a:g}∠{p:g}°"
                       for name, (a, p) in zip(record.channel_names, run.readings))
             for run in record.runs]
    longest = max((len(line) for cell in cells for line in cell.splitlines()), default=8)
    runs.add_column("Readings", overflow="fold", min_width=min(longest, 40))
    runs.add_column("Masses", overflow="fold", min_width=16)
    for run, readings in zip(record.runs, cells):
        runs.add_row(f"{run.name}\n({run.kind})", readings,
                     "\n".join(_mass_text(m, record.plane_names) for m in run.masses) or "-")
    body: list[Any] = [runs]
    if record.coefficients is not None:
        table = Table(title=f"Influence coefficients ({unit} per kg·mm, phase in the rotor's "
                            f"angle sense); from {record.coefficient_source}",
                      title_justify="left", box=box.SIMPLE, pad_edge=False)
        table.add_column("Sensor", overflow="fold")
        for name in record.plane_names:
            table.add_column(name, justify="right", overflow="fold")
        for name, row in zip(record.channel_names, record.coefficients):
            table.add_row(name, *(_amp(v * 1e3) for v in row))   # 1 kg·mm = 1000 g·mm
        body.append(table)
        body.append(Text("Condition number "
                         + ("-" if record.condition is None else f"{record.condition:.2f}")))
    else:
        body.append(Text(f"No coefficients stored ({record.coefficient_source})."))
    plan = "; ".join(_mass_text(m, record.plane_names) for m in record.planned) or "none"
    body.append(Text(f"Plan: {plan}"))
    before, after = record.result.get("vibration_before"), record.result.get("vibration_after")
    if isinstance(before, (int, float)) and isinstance(after, (int, float)):
        body.append(Text(f"Predicted: {before:.3f} → {after:.3f} {unit} "
                         f"({record.result.get('norm', '')}, from the "
                         f"{record.result.get('basis', 'readings')})"))
    for warning in record.result.get("warnings", []):
        body.append(Text(f"Warning then: {warning}", style="yellow"))
    console.print(Panel(Group(*body), box=box.ROUNDED))


def visit_dict(visit_id: int, record: VisitRecord) -> dict[str, Any]:
    """The JSON object of ``placer history MACHINE --visit N``."""
    def mass(m: MassRecord) -> dict[str, Any]:
        return {"plane": m.plane + 1, "plane_name": record.plane_names[m.plane],
                "position": m.position, "angle_deg": m.angle_deg, "radius_mm": m.radius_mm,
                "mass_g": m.mass_g, "item": m.item, "count": m.count, "role": m.role,
                "removed_after": m.removed_after}

    return {
        "visit": visit_id, "machine": {"id": record.machine_id, "name": record.machine_name},
        "started_at": record.started_at, "started_at_utc": utc_label(record.started_at),
        "session_file": record.session_file, "unit": record.unit, "measure": record.measure,
        "phase_sense": record.phase_sense, "angle_sense": record.angle_sense,
        "rotation": record.rotation, "service_rpm": record.service_rpm,
        "sensors": list(record.channel_names), "planes": list(record.plane_names),
        "runs": [{"name": r.name, "kind": r.kind,
                  "readings": [{"amplitude": a, "phase_deg": p} for a, p in r.readings],
                  "masses": [mass(m) for m in r.masses]} for r in record.runs],
        "coefficient_source": record.coefficient_source,
        "coefficients_per_gmm": None if record.coefficients is None else [
            [{"re": float(v.real), "im": float(v.imag)} for v in row]
            for row in record.coefficients],
        "condition_number": record.condition,
        "planned": [mass(m) for m in record.planned],
        "result": record.result,
    }
