"""Words every view shares: the cautions, the action words, the verdicts.

The terminal sheets and the printed sheet take them from here, so that a
technician reads the same words on both.

References
----------
[Cautions] in REFERENCES.md: lock out and tag out (OSHA 29 CFR 1910.147),
guarding (ISO 21940-23), a weight that comes off is a projectile; local codes
and the machine maker's instructions come first.
"""

from __future__ import annotations

from placer.catalog import Catalog
from placer.geometry import PlaneGeometry
from placer.job import Job, PlaneJob
from placer.plan import LIGHTEST, FittedPart, PlaneResult, PlanOption
from placer.units import UnitSystem, mass_at_radius_g, significant

REQUIRED, RESIDUAL, TOLERANCE, AIM = "Required", "Residual", "Tolerance", "Aim"
"""The labels of a plane's result, on the terminal and on the sheet."""

OUTSIDE_HEADING = "DOES NOT REACH THE TOLERANCE"
"""What the terminal and the sheet say first when the best plan is outside the tolerance."""

OUTSIDE_ADVICE = (
    "This is the best these positions and parts can do, and it is not good enough: do not "
    "fit it and sign the rotor off as balanced. Instead: offer more positions (more holes or "
    "slots, or angles between them), other parts (finer or larger sizes, more stock), more "
    "parts per plane (max_parts), or fit this plan as a first step, take a second run and "
    "trim with what it shows.")
"""What to do when no plan reaches the tolerance (common practice, no source)."""

AS_LEFT_LINES = ("Residual measured after fitting",)
"""The "as left" line of the printed sheet, filled in by hand after the check run (the
sign-off below it names who checked)."""


def work_columns(units: UnitSystem) -> tuple[str, ...]:
    """The headings of the parts table, on the terminal and on the sheet.

    Parameters
    ----------
    units : UnitSystem
        The job's units (the mass and unbalance columns name them).

    Returns
    -------
    tuple of str
        Do, position, angle, item, count, mass of one part, its unbalance, how it is fixed.
    """
    return ("Do", "Pos.", "Angle °", "Item", "Count", f"Each {units.mass_unit}",
            units.unbalance_unit, "Fixing or hole")


def trade_off_columns(units: UnitSystem, rated: bool) -> tuple[str, ...]:
    """The headings of the trade-off table, on the terminal and on the sheet.

    Parameters
    ----------
    units : UnitSystem
        The job's units.
    rated : bool
        Whether the plans carry a Monte Carlo chance (adds "Chance" and "95 %").

    Returns
    -------
    tuple of str
        The headings, without the column that marks the chosen plan.
    """
    return (("Parts", "Residual", "% req.", "Mass", "Least", "Verdict")
            + (("Chance", "95 %") if rated else ()))


def trade_off_title(units: UnitSystem) -> str:
    """The title of the trade-off table, with the units of its residual and mass columns.

    Parameters
    ----------
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The title, as the terminal prints it (the sheet in capitals, units as they are).
    """
    return (f"Trade-off: parts against residual ({units.unbalance_unit}) and added mass "
            f"({units.mass_unit})")


def header_facts(job: Job) -> list[tuple[str, str]]:
    """What the shop writes on the sheet: customer, work order, technician, date.

    Parameters
    ----------
    job : Job
        The job (its ``paperwork``).

    Returns
    -------
    list of (str, str)
        Label and value, "" where the job does not say.
    """
    papers = job.paperwork
    return [("Customer", papers.customer), ("Work order", papers.work_order),
            ("Technician", papers.technician), ("Date", papers.date)]


def worked_from_text(job: Job, plane: PlaneJob) -> str:
    """Which end a plane is worked from, when the job says anything about ends.

    Parameters
    ----------
    job : Job
        The job (its rotor's end names and its planes).
    plane : PlaneJob
        The plane.

    Returns
    -------
    str
        "Worked from the drive end (front)" and the like; "" when every plane
        is worked from the front and the rotor names no end.
    """
    rotor = job.rotor
    if (all(p.worked_from == "front" for p in job.planes) and not rotor.front_name
            and not rotor.back_name):
        return ""
    end = plane.worked_from
    name = rotor.end_name(end)
    which = "" if name == end else f" ({end})"
    mirror = (", the other end from the front: the face is drawn as seen from there"
              if end == "back" else "")
    return f"Worked from the {name}{which}{mirror}."


def plane_radius_mm(geometry: PlaneGeometry) -> float:
    """The radius a plane's residual and tolerance are shown as a mass at: its one radius,
    or its largest when positions have radii of their own.

    Parameters
    ----------
    geometry : PlaneGeometry
        The plane's positions.

    Returns
    -------
    float
        The radius [mm].
    """
    return max(geometry.radii_mm)


def at_radius(unbalance_gmm: float, geometry: PlaneGeometry, units: UnitSystem) -> str:
    """An unbalance as the mass that makes it at the plane's radius ("0.299 g at r 210 mm").

    The figure a balancing machine set to that radius shows, and what wheel
    shops state their tolerance in (common practice, no source).

    Parameters
    ----------
    unbalance_gmm : float
        The unbalance [g·mm].
    geometry : PlaneGeometry
        The plane (:func:`plane_radius_mm`).
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The text.

    References
    ----------
    [ISO21940-11] U = m·r.
    """
    radius_mm = plane_radius_mm(geometry)
    return (f"{units.mass_text(mass_at_radius_g(unbalance_gmm, radius_mm))} at r "
            f"{units.length_text(radius_mm)}")


def unbalance_text(unbalance_gmm: float, units: UnitSystem) -> str:
    """An unbalance in the job's units, four significant digits ("3885 g·mm", "5.395 oz·in").

    Parameters
    ----------
    unbalance_gmm : float
        The unbalance [g·mm].
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The text.
    """
    return units.unbalance_text(unbalance_gmm)


def units_of(job: Job) -> UnitSystem:
    """The unit system a job's output is shown in (``[job] units``).

    Parameters
    ----------
    job : Job
        The job.

    Returns
    -------
    UnitSystem
        Metric or imperial.
    """
    return UnitSystem(job.paperwork.units)


def part_mass(part: FittedPart, units: UnitSystem) -> str:
    """One part's mass as both views print it: the catalogue's sign (a hole is negative).

    Parameters
    ----------
    part : FittedPart
        The part.
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The number, without its unit.
    """
    return significant(units.mass(part.mass_g), 4)


def part_unbalance(part: FittedPart, units: UnitSystem) -> str:
    """Count × mass × radius of one row, signed as :func:`part_mass`, in the job's units.

    Parameters
    ----------
    part : FittedPart
        The part.
    units : UnitSystem
        The job's units.

    Returns
    -------
    str
        The number, without its unit.
    """
    return significant(units.unbalance(part.mass_g * part.count * part.radius_mm), 4)


def part_note(part: FittedPart, catalog: Catalog) -> str:
    """How a part is fixed (the catalogue's ``fixing``), or for a hole its dimensions
    (the catalogue's description of the drill item).

    Parameters
    ----------
    part : FittedPart
        The part.
    catalog : Catalog
        The plane's catalogue.

    Returns
    -------
    str
        The note; "" when the catalogue gives none.
    """
    try:
        item = catalog.items[catalog.item_index(part.item)]
    except KeyError:
        return ""
    if part.verb == "drill":
        return item.fixing or item.description
    return item.fixing

CAUTIONS = (
    "Lock out and tag out the machine before fitting or removing any part; "
    "try a start to prove it is isolated.",
    "A part that comes off a spinning rotor is a projectile: fasten every part "
    "as the machine maker specifies, and keep clear of the plane of rotation on test runs.",
    "Local codes and the machine maker's instructions come first.",
)
"""The cautions every sheet carries."""

DRILL_CAUTION = (
    "Drilling: check the wall or boss is thick enough and within the maker's drilling "
    "limits, drill only with the machine isolated and still, and clear every chip before "
    "the run.")
"""The caution a plan with a hole to drill adds."""

TRIAL_CAUTION = ("Trial runs spin the rotor with a weight fitted for the purpose: fasten it as "
                 "firmly as a final weight, keep out of the plane of rotation, and remove or "
                 "account for it afterwards.")
"""The caution a field visit with trial runs adds."""

ACTION_ORDER = ("remove", "drill", "fit")
"""The order the work is done in: parts to take off first, then holes, then parts to fit."""


def action_word(part: FittedPart, emphasise: bool = False) -> str:
    """What the technician does with ``part``: fit, drill or remove.

    Parameters
    ----------
    part : FittedPart
        The part.
    emphasise : bool
        Capitals for the actions that are not a plain fit (DRILL, REMOVE), as
        the terminal sheet prints them; the printed sheet capitalises all.
    """
    verb = part.verb
    return verb.upper() if emphasise and verb != "fit" else verb


def cautions_for(drilling: bool = False, trial_runs: bool = False) -> tuple[str, ...]:
    """The cautions of one sheet: the trial-run caution first, the drilling one last.

    Parameters
    ----------
    drilling : bool
        The plan drills a hole (adds :data:`DRILL_CAUTION`).
    trial_runs : bool
        The visit had trial runs (adds :data:`TRIAL_CAUTION`).

    Returns
    -------
    tuple of str
        The cautions, in the order printed.
    """
    return (((TRIAL_CAUTION,) if trial_runs else ()) + CAUTIONS
            + ((DRILL_CAUTION,) if drilling else ()))


def drills(parts) -> bool:
    """True when the parts include a hole to drill.

    Parameters
    ----------
    parts : iterable of FittedPart
        The parts of a plan.

    Returns
    -------
    bool
        Whether any part's verb is "drill".
    """
    return any(p.verb == "drill" for p in parts)


def plan_kind(option: PlanOption) -> str:
    """Which plan a trade-off row is: the least "residual", or the least "mass" in the aim.

    Parameters
    ----------
    option : PlanOption
        The row's plan.
    """
    return "mass" if option.kind == LIGHTEST else "residual"


def verdict_word(plane: PlaneResult, option: PlanOption) -> str:
    """A trade-off row against the plane's aim and tolerance: "in aim", "within",
    "outside", or "-" when the plane has no tolerance.

    Parameters
    ----------
    plane : PlaneResult
        The plane (its aim and tolerance).
    option : PlanOption
        The row's plan.
    """
    if plane.tolerance_gmm is None:
        return "-"
    if plane.aim_gmm is not None and option.residual_gmm <= plane.aim_gmm:
        return "in aim"
    return "within" if option.residual_gmm <= plane.tolerance_gmm else "outside"
