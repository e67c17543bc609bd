"""The machine history on the terminal: machines, a machine's visits, one visit."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.records import (
    MachineSummary,
    MassRecord,
    VisitRecord,
    VisitSummary,
    utc_label,
)
from placer.views.terminal.field import amp


def _mass_text(mass: MassRecord, plane_names: tuple[str, ...]) -> str:
    where = f"#{mass.position}" if mass.position is not None else f"{mass.angle_deg:.1f}°"
    what = f"{mass.item}×{abs(mass.count)}" if mass.item else f"{mass.mass_g:g} g"
    verb = "remove " if mass.count < 0 else ""
    kept = " (removed after)" if mass.role == "trial" and mass.removed_after else (
        " (left on)" if mass.role == "trial" else "")
    return f"{verb}{plane_names[mass.plane]} {where} {what}{kept}"


def render_visit(visit_id: int, record: VisitRecord, console: Console) -> None:
    """Print one stored visit: runs with readings as read, coefficients, plan, result.

    Parameters
    ----------
    visit_id : int
        The visit's id.
    record : VisitRecord
        The visit as stored.
    console : Console
        The rich console to print on.
    """
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
            table.add_row(name, *(amp(v * 1e3) for v in row))   # 1 kg·mm = 1000 g·mm
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


def render_machines(machines: Sequence[MachineSummary], db_label: str, console: Console) -> None:
    """The machines of a history database, one row each (``placer machines``).

    Parameters
    ----------
    machines : sequence of MachineSummary
        The machines.
    db_label : str
        The database, as named in the title.
    console : Console
        The rich console to print on.
    """
    table = Table(title=f"Machines in {db_label}", title_justify="left")
    for column in ("Id", "Name", "Visits", "Last visit"):
        table.add_column(column)
    for m in machines:
        table.add_row(m.id, m.name, str(m.visits), utc_label(m.last_visit) if m.last_visit
                      else "-")
    console.print(table)


def render_visits(machine_id: str, visits: Sequence[VisitSummary], console: Console) -> None:
    """A machine's visits, one row each (``placer history MACHINE``).

    Parameters
    ----------
    machine_id : str
        The machine's tag.
    visits : sequence of VisitSummary
        Its visits.
    console : Console
        The rich console to print on.
    """
    table = Table(title=f"Visits of {machine_id} (times in UTC; 'placer history "
                        f"{machine_id} --visit N' shows one in full)", title_justify="left",
                  box=box.SIMPLE_HEAD, pad_edge=False)
    table.add_column("Visit", justify="right", no_wrap=True)
    table.add_column("Date", no_wrap=True)
    table.add_column("Runs", justify="right", no_wrap=True)
    table.add_column("Coefficients", no_wrap=True)
    table.add_column("Cond.", justify="right", no_wrap=True)
    table.add_column("Plan", overflow="fold", ratio=1)
    table.add_column("Predicted", no_wrap=True)
    for v in visits:
        plan = ", ".join(("−" if m.count < 0 else "") + f"P{m.plane + 1}#{m.position}\u00a0"
                         f"{m.item}" + (f"×{abs(m.count)}" if abs(m.count) != 1 else "")
                         for m in v.planned)
        before = v.result.get("vibration_before")
        after = v.result.get("vibration_after")
        predicted = ("-" if not isinstance(before, (int, float))
                     or not isinstance(after, (int, float)) else f"{before:.2f}→{after:.2f}")
        source = v.coefficient_source
        source = (source.split(" of ")[0] if source.startswith("visit ")
                  else source.replace(" of this visit", "").replace("trial run(s)", "trials"))
        table.add_row(str(v.id), utc_label(v.started_at).removesuffix(" UTC"), str(v.runs),
                      source, "-" if v.condition is None else f"{v.condition:.1f}",
                      plan or "-", predicted)
    console.print(table)
