"""The machine history on the terminal: machines, a machine's visits, one visit.

Coefficients are shown per kg·mm, as on the field sheet; readings as read;
predicted vibration as the largest physical amplitude (a visit stored
before placer kept it shows what was stored, marked).  Long lists wrap at
word boundaries, never cut.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from rich import box
from rich.console import Console, Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from placer.records import (
    LastSaved,
    MachineSummary,
    MassRecord,
    VisitRecord,
    VisitSummary,
    utc_label,
)
from placer.views.numbers import as_read_text, phasor_text, significant
from placer.views.terminal.field import G_PER_KG, rotor_part_text
from placer.visitreport import on_rotor

STORED_BEFORE = ("* as stored by an older placer: the objective the plan minimised (weighted "
                 "where sensors had weights), not always the largest reading")
"""The footnote for vibration figures stored before the largest reading was kept."""


def _mass_text(mass: MassRecord, plane_names: tuple[str, ...]) -> str:
    where = f"#{mass.position}" if mass.position is not None else f"{mass.angle_deg:.1f}°"
    what = f"{mass.item}×{abs(mass.count)}" if mass.item else f"{mass.mass_g:g} g"
    verb = "remove " if mass.count < 0 else ""
    kept = " (removed after)" if mass.role == "trial" and mass.removed_after else (
        " (left on)" if mass.role == "trial" else "")
    return f"{verb}{plane_names[mass.plane]} {where} {what}{kept}"


def vibration_figures(result: dict) -> tuple[str, bool] | None:
    """The stored vibration before and after the plan, "4.25→0.853", and whether it is old.

    Parameters
    ----------
    result : dict
        A visit's stored result.

    Returns
    -------
    (str, bool) or None
        The text and True when it was stored before placer kept the largest
        reading (:data:`STORED_BEFORE`); None when nothing was stored.
    """
    before, after = result.get("vibration_before"), result.get("vibration_after")
    if not isinstance(before, (int, float)) or not isinstance(after, (int, float)):
        return None
    old = result.get("figures") != "largest reading"
    return f"{significant(before)}→{significant(after)}" + ("*" if old else ""), old


def saved_text(saved_at: str | None) -> str:
    """When a visit was saved, for people: "saved 2026-12-02 11:03 UTC".

    Parameters
    ----------
    saved_at : str or None
        ISO 8601 in UTC, as stored; None for a visit saved before placer kept it.

    Returns
    -------
    str
        The words.
    """
    return ("time of saving not kept (saved by an older placer)" if saved_at is None
            else f"saved {utc_label(saved_at)}")


def last_saved_text(last: LastSaved | None) -> str:
    """The line that tells a technician which visit was saved last, and when.

    Parameters
    ----------
    last : LastSaved or None
        The visit saved last; None when the database holds none.

    Returns
    -------
    str
        The line.
    """
    if last is None:
        return "No visit is saved in this database."
    return (f"Saved last in this database: visit {last.visit_id} of {last.machine_id} "
            f"(the visit of {utc_label(last.started_at)}), {saved_text(last.saved_at)}.")


def render_visit(visit_id: int, record: VisitRecord, saved_at: str | None,
                 console: Console) -> None:
    """Print one stored visit: runs with readings as read, coefficients, plan, result.

    Parameters
    ----------
    visit_id : int
        The visit's id.
    record : VisitRecord
        The visit as stored.
    saved_at : str or None
        When it was saved, ISO 8601 (see :func:`saved_text`).
    console : Console
        The rich console to print on.
    """
    unit = f"{record.unit} {record.measure}"
    only = record.phase_sense == "none"
    head = Text()
    head.append(f"{record.machine_name} [{record.machine_id}]\n", style="bold")
    head.append(f"Visit {visit_id} of {utc_label(record.started_at)}", style="bold")
    head.append(f"; {saved_text(saved_at)}\n")
    speed = "speed not stored" if record.service_rpm is None else f"{record.service_rpm:g} r/min"
    phase = "no phase reference" if only else f"phase {record.phase_sense}"
    head.append(f"Readings: {unit}, {phase}; angles counted {record.angle_sense}"
                + (f", rotation {record.rotation}" if record.rotation else "")
                + f"; {speed}.\nSession file: {record.session_file}")
    console.print(Panel(head, title="placer history: one visit", title_align="left",
                        box=box.HEAVY))
    body: list[Any] = [Text(f"Runs: readings as read ({unit}"
                            + (")" if only else ", amplitude∠phase)"), style="bold")]
    for run in record.runs:
        body.append(Text(f"{run.name} ({run.kind})", style="bold"))
        body += [Text(f"  {name}: {as_read_text(a, None if only else p)}")
                 for name, (a, p) in zip(record.channel_names, run.readings)]
        body += [Text(f"  + {_mass_text(m, record.plane_names)}") for m in run.masses]
    if record.coefficients is not None:
        body.append(Text(f"Influence coefficients ({unit} per kg·mm)", style="bold"))
        body.append(Text(f"From {record.coefficient_source}"
                         + ("." if only else f"; phases as angles counted {record.angle_sense}.")))
        table = Table(box=box.SIMPLE, pad_edge=False)
        table.add_column("Sensor", overflow="fold")
        for name in record.plane_names:
            table.add_column(name, justify="right", overflow="fold")
        for name, row in zip(record.channel_names, record.coefficients):
            table.add_row(name, *(significant(abs(v) * G_PER_KG) if only
                                  else phasor_text(v * G_PER_KG) for v in row))
        body.append(table)
        if record.condition is not None and len(record.plane_names) > 1:
            body.append(Text(f"Condition number {significant(record.condition)}"))
    else:
        body.append(Text(f"No coefficients stored ({record.coefficient_source})."))
    plan = "; ".join(_mass_text(m, record.plane_names) for m in record.planned) or "none"
    body.append(Text(f"Plan: {plan}"))
    after = on_rotor([m for run in record.runs for m in run.masses
                      if not (m.role == "trial" and m.removed_after)], record.planned)
    body.append(Text("On the rotor after the visit: "
                     + ("; ".join(rotor_part_text(p, record.plane_names) for p in after)
                        or "nothing")))
    figures = vibration_figures(record.result)
    if figures is not None:
        label = "largest reading" if not figures[1] else record.result.get("norm", "")
        body.append(Text(f"Predicted: {figures[0]} {unit} ({label}, from the "
                         f"{record.result.get('basis', 'readings')})"))
        if figures[1]:
            body.append(Text(STORED_BEFORE, style="italic"))
    if record.result.get("data_ok") is False:
        body.append(Text("The plan came from data that failed the checks:", style="bold red"))
        body += [Text(f"  {c.get('subject')}: {c.get('finding')}")
                 for c in record.result.get("checks", []) if not c.get("passed")]
    for entry in record.result.get("residual_checks", []):
        within = entry.get("within")
        body.append(Text(f"Residual check, {record.plane_names[entry['plane']]}: "
                         f"{significant(entry['residual_gmm'])} g·mm"
                         + ("" if within is None else
                            f", {'within' if within else 'ABOVE'} the limit of "
                            f"{significant(entry['limit_gmm'])} g·mm")))
    for warning in record.result.get("warnings", []):
        body.append(Text(f"Warning then: {warning}", style="yellow"))
    console.print(Panel(Group(*body), box=box.ROUNDED))


def render_machines(machines: Sequence[MachineSummary], db_label: str,
                    last: LastSaved | None, console: Console) -> None:
    """The machines of a history database, one row each (``placer machines``).

    Parameters
    ----------
    machines : sequence of MachineSummary
        The machines.
    db_label : str
        The database, as named in the title.
    last : LastSaved or None
        The visit saved last (see :func:`last_saved_text`).
    console : Console
        The rich console to print on.
    """
    table = Table(title=f"Machines in {db_label}", title_justify="left")
    for column in ("Id", "Name", "Visits", "Last visit"):
        table.add_column(column, overflow="fold")
    for m in machines:
        table.add_row(m.id, m.name, str(m.visits), utc_label(m.last_visit) if m.last_visit
                      else "-")
    console.print(table)
    console.print(Text(last_saved_text(last)))


def render_visits(machine_id: str, visits: Sequence[VisitSummary], last: LastSaved | None,
                  console: Console) -> None:
    """A machine's visits, one row each (``placer history MACHINE``), then the last save.

    Parameters
    ----------
    machine_id : str
        The machine's tag.
    visits : sequence of VisitSummary
        Its visits.
    last : LastSaved or None
        The visit saved last in the database (see :func:`last_saved_text`).
    console : Console
        The rich console to print on.
    """
    table = Table(title=f"Visits of {machine_id} (times in UTC; 'placer history "
                        f"{machine_id} --visit N' shows one in full)", title_justify="left",
                  box=box.SIMPLE_HEAD, pad_edge=False)
    table.add_column("Visit", justify="right", no_wrap=True)
    table.add_column("Date", no_wrap=True)
    table.add_column("Runs", justify="right", no_wrap=True)
    table.add_column("Coefficients", overflow="fold")
    table.add_column("On the rotor after", overflow="fold", ratio=1)
    table.add_column("Largest", no_wrap=True)
    old = False
    for v in visits:
        after = on_rotor(v.kept, v.planned)
        parts = ", ".join(f"P{p.plane + 1}#{p.position if p.position is not None else '-'}"
                          f"\u00a0{p.label.replace(' ', chr(0xa0))}"
                          + (f"×{p.count}" if p.count != 1 else "") for p in after)
        figures = vibration_figures(v.result)
        old |= bool(figures and figures[1])
        source = v.coefficient_source
        source = (source.split(" of ")[0] if source.startswith("visit ")
                  else source.replace(" of this visit", "").replace("trial run(s)", "trials"))
        source = source.split(",")[0]
        if v.condition is not None:
            source += f", cond. {significant(v.condition, 2)}"
        if v.result.get("data_ok") is False:
            source += ", DATA FAILED CHECKS"
        table.add_row(str(v.id), utc_label(v.started_at).removesuffix(" UTC"), str(v.runs),
                      source, parts or "nothing", figures[0] if figures else "-")
    console.print(table)
    if old:
        console.print(Text(STORED_BEFORE, style="italic"))
    console.print(Text(last_saved_text(last)))
