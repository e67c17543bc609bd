"""What is on the rotor when a field plan starts: trial weights left on, parts fitted for checks.

A trial weight left on its position (``removed = false``) takes room there
like any part, and the plan may keep it or take it off.  So that it goes
through the same path as the parts fitted for a check run
(:func:`placer.engine.arrays.placement_arrays` with parts on the rotor), each
plane's catalogue gets one item per left-on trial mass: stock 0, so it is
never fitted, only taken off.  A trial weight placed by angle, or at another
radius than its position's, sits on no position: it stays on, outside the
plan, and the plan says so.
"""

from __future__ import annotations

import math
from dataclasses import replace

from placer.catalog import Catalog, Item
from placer.session import FieldPlane, PlacedMass, Session

TRIAL_SOURCE = "trial weights left on"
"""The catalogue source of the items that stand for left-on trial weights."""


def left_on_trials(session: Session) -> tuple[PlacedMass, ...]:
    """Trial weights still on the rotor after the last run, as they were fitted.

    Parameters
    ----------
    session : Session
        The visit.

    Returns
    -------
    tuple of PlacedMass
        The masses of every trial run marked ``removed = false``.
    """
    return tuple(m for run in session.runs if run.kind == "trial" and not run.removed_after
                 for m in run.added)


def on_its_position(session: Session, mass: PlacedMass) -> bool:
    """Whether a mass sits on a numbered position (its number given, at that position's radius).

    Parameters
    ----------
    session : Session
        The visit.
    mass : PlacedMass
        The mass.

    Returns
    -------
    bool
        True when it takes room on a position.
    """
    if mass.position is None:
        return False
    radius = session.planes[mass.plane].geometry.radii_mm[mass.position - 1]
    return math.isclose(mass.radius_mm, radius, rel_tol=1e-9)


def trial_item_id(mass_g: float, catalog: Catalog) -> str:
    """The item id that stands for a left-on trial weight of ``mass_g`` in ``catalog``.

    Parameters
    ----------
    mass_g : float
        The trial mass [g].
    catalog : Catalog
        The plane's catalogue (an id it already has is not reused).

    Returns
    -------
    str
        "trial 20 g", or "trial 20 g (left on)" when the catalogue has that id.
    """
    name = f"trial {mass_g:g} g"
    ids = {item.id for item in catalog.items if item.source != TRIAL_SOURCE}
    return name if name not in ids else f"{name} (left on)"


def plan_view(session: Session) -> tuple[Session, tuple[PlacedMass, ...], tuple[PlacedMass, ...]]:
    """The visit as the plan sees it, the parts it may take off, and the ones it may not.

    Parameters
    ----------
    session : Session
        The visit.

    Returns
    -------
    session : Session
        The visit with each plane's catalogue holding an item (stock 0) for
        each left-on trial mass on a position of that plane.
    removable : tuple of PlacedMass
        Parts on the rotor the plan may take off: the left-on trial weights
        on positions (their ``item`` set), then the parts fitted for the
        check runs.
    fixed : tuple of PlacedMass
        Left-on trial weights on no position: they stay on.
    """
    trials = left_on_trials(session)
    placed = [m for m in trials if on_its_position(session, m)]
    fixed = tuple(m for m in trials if not on_its_position(session, m))
    planes = list(session.planes)
    named = []
    for p, plane in enumerate(planes):
        masses = sorted({m.mass_g for m in placed if m.plane == p})
        if not masses:
            continue
        extra = tuple(Item(trial_item_id(mass, plane.catalog), mass, stock=0,
                           description="trial weight left on", source=TRIAL_SOURCE,
                           catalog=TRIAL_SOURCE) for mass in masses)
        catalog = Catalog(plane.catalog.name, plane.catalog.items + extra, plane.catalog.source,
                          plane.catalog.description)
        planes[p] = FieldPlane(plane.geometry, catalog)
    for m in placed:
        named.append(replace(m, item=trial_item_id(m.mass_g, session.planes[m.plane].catalog)))
    removable = _grouped(named) + session.fitted_parts()
    if len(planes) == len(session.planes) and all(a is b for a, b in zip(planes, session.planes)):
        return session, removable, fixed
    return replace(session, planes=tuple(planes)), removable, fixed


def _grouped(masses: list[PlacedMass]) -> tuple[PlacedMass, ...]:
    """One mass per (plane, position, item), counts summed."""
    groups: dict[tuple[int, int | None, str | None], PlacedMass] = {}
    for m in masses:
        key = (m.plane, m.position, m.item)
        groups[key] = replace(groups[key], count=groups[key].count + m.count) \
            if key in groups else m
    return tuple(groups.values())
