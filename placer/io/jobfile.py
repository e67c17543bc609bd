"""Job files (TOML) -> :class:`placer.job.Job`.  The only reader of job files.

Quantities are read in metric or inch-pound units, each from its own
unit-suffixed key (``radius_mm`` or ``radius_in``, ``mass_kg`` or
``mass_lb``, ``mass_g`` or ``mass_oz``, ``gmm`` or ``oz_in``), and converted
to metric here (:mod:`placer.units`); ``[job] units`` chooses what the
output is shown in.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import replace
from pathlib import Path

from placer.catalog import Catalog
from placer.errors import JobError, ToleranceError
from placer.geometry import (
    ACCEPTS,
    ANGLE_SENSES,
    ROTATIONS,
    PlaneGeometry,
    equally_spaced_deg,
    polar,
)
from placer.io.catalogfile import read_catalog, resolve_catalog
from placer.io.inputs import read_toml
from placer.io.sizes import check_count
from placer.io.tables import Table, quantity_key, shown
from placer.job import (
    CORRECTION_BASES,
    DEFAULT_ANGLE_SENSE,
    ENDS,
    ExistingPart,
    Job,
    Paperwork,
    PlaneJob,
    Rotor,
)
from placer.limits import (
    DEFAULT_MAX_PARTS,
    MAX_CAPACITY,
    MAX_PARTS_LIMIT,
    MAX_PLANES,
    MAX_POSITIONS,
)
from placer.tolerance import parse_grade
from placer.units import (
    LENGTH_UNITS,
    MASS_UNITS,
    METRIC,
    ROTOR_MASS_UNITS,
    UNBALANCE_UNITS,
    UNIT_SYSTEMS,
)

ROTOR_KEYS = ("name", "mass_kg", "mass_lb", "service_rpm", "grade", "com_distances_mm",
              "com_distances_in", "angle_sense", "placement_error_deg", "rotation")
JOB_ROTOR_KEYS = ROTOR_KEYS + ("correction_basis", "aim_share", "reference_mark", "front",
                               "back")
"""Keys of a job file's [rotor] (a session's takes ROTOR_KEYS and its own)."""
GEOMETRY_KEYS = ("name", "radius_mm", "radius_in", "radii_mm", "radii_in", "positions",
                 "start_deg", "angles_deg", "blocked", "capacity", "catalog", "accepts",
                 "add_only", "remove_only")
"""Keys of a plane's positions and catalogue, in a job and in a session."""
TOLERANCE_KEYS = tuple(quantity_key("tolerance", unit)
                       for unit in (*UNBALANCE_UNITS, *MASS_UNITS))
"""A plane's tolerance: in g·mm or oz·in, or as the mass at the plane's radius (g or oz)."""
PLANE_KEYS = GEOMETRY_KEYS + ("correction", "unbalance", *TOLERANCE_KEYS, "aim_share",
                              "max_parts", "existing", "worked_from")
VECTOR_KEYS = (*(quantity_key("mass", unit) for unit in MASS_UNITS), *UNBALANCE_UNITS,
               "angle_deg")
PAPERWORK_KEYS = ("customer", "work_order", "technician", "date", "units")
"""Keys of a job file's [job]: what the shop writes on the sheet, and the units shown."""
SESSION_TABLES = ("machine", "readings", "sensors", "runs", "visit", "solve")
"""Tables of a field session file, which a job file does not have."""


def read_job(path: Path, *, template: bool = False) -> Job:
    """Read and check a job file, with its catalogues.

    Parameters
    ----------
    path : Path
        The job file (TOML).
    template : bool
        Read it as the template of a production batch: its planes need no
        correction (one given is checked like any job file's and then not
        used); every plane's correction is zero, given as "batch template".

    Returns
    -------
    Job

    Raises
    ------
    JobError
        Naming the file, the key and what was expected.
    CatalogError
        For a catalogue it names that is missing or bad.
    """
    path = Path(path)
    file = str(path)
    what = "template file" if template else "job file"
    root = Table(read_toml(path, JobError, what), file, "", JobError)
    session = [name for name in SESSION_TABLES if root.has(name)]
    if session:
        raise root.fail(session[0], f"is a table of a field-balancing session file, not of a "
                        f"{what}", f"'placer field {file}' for a session file; a {what} has "
                        "[job], [rotor] and [[planes]]")
    root.allow_only(("job", "rotor", "planes"))
    if not template:
        _refuse_template(root)
    paperwork = _paperwork(root.sub("job"))
    rotor_table = root.sub("rotor", required=True)
    rotor = rotor_of(rotor_table, JOB_ROTOR_KEYS[len(ROTOR_KEYS):])
    rotor = replace(rotor, reference_mark=_name(rotor_table, "reference_mark"),
                    front_name=_name(rotor_table, "front"), back_name=_name(rotor_table, "back"))
    basis = rotor_table.text("correction_basis", default="further")
    if basis not in CORRECTION_BASES:
        raise rotor_table.fail("correction_basis", f"is '{basis}'",
                               "further (measured with the existing parts on) or total "
                               "(without them)")
    catalogs: dict[Path, Catalog] = {}
    planes = []
    tables = root.tables("planes", required=True)
    check_count(len(tables), MAX_PLANES, "planes", file=root.file, key="planes", error=JobError)
    for table in tables:
        planes.append(_plane(table, path.parent, catalogs, basis, template, rotor))
    if rotor.com_distances_mm is not None and len(rotor.com_distances_mm) != len(planes):
        key = next(k for k in ("com_distances_mm", "com_distances_in") if rotor_table.has(k))
        raise JobError(f"gives {len(rotor.com_distances_mm)} distances for {len(planes)} planes",
                       file=file, key=f"rotor.{key}", expected="one distance per plane")
    return Job(rotor=rotor, planes=tuple(planes), source=file, paperwork=paperwork)


def _refuse_template(root: Table) -> None:
    """A file whose planes all lack a correction is a batch template: say which command."""
    planes = root.data.get("planes")
    if not isinstance(planes, list) or not planes or not all(isinstance(p, dict) for p in planes):
        return
    if any(k in p for p in planes for k in ("correction", "unbalance")):
        return
    raise root.fail("planes[1].correction", "missing on every plane, as in a batch template",
                    f"correction = {{ mass_g = ..., angle_deg = ... }} on each plane, or "
                    f"'placer batch {root.file} READINGS' for a template")


def _name(t: Table, key: str) -> str:
    """An optional short name (of the reference mark, of an end), stripped; "" when not given."""
    text = (t.text(key) or "").strip()
    if "\n" in text:
        raise t.fail(key, "holds a new line", "a name on one line, such as \"keyway\"")
    return text


def _paperwork(t: Table | None) -> Paperwork:
    """The [job] table: customer, work order, technician, date, units."""
    if t is None:
        return Paperwork()
    t.allow_only(PAPERWORK_KEYS)
    units = t.text("units", default=METRIC.name)
    if units not in UNIT_SYSTEMS:
        raise t.fail("units", f"is '{units}'", "metric (g, mm, g·mm, kg) or imperial "
                     "(oz, in, oz·in, lb)")
    date = ""
    if t.has("date"):
        value = t.data["date"]
        expected = "a date such as 2026-03-14"
        if isinstance(value, str):
            try:
                value = dt.date.fromisoformat(value.strip())
            except ValueError:
                raise t.fail("date", f"is '{shown(value)}'", expected) from None
        if isinstance(value, dt.datetime):
            value = value.date()
        if not isinstance(value, dt.date):
            raise t.fail("date", "is not a date", expected)
        date = value.isoformat()
    return Paperwork(customer=_name(t, "customer"), work_order=_name(t, "work_order"),
                     technician=_name(t, "technician"), date=date, units=units)


def rotor_of(t: Table, extra_keys: tuple[str, ...] = ()) -> Rotor:
    """The ``[rotor]`` table of a job or session file (``extra_keys``: a session's own).

    Parameters
    ----------
    t : Table
        The ``[rotor]`` table.
    extra_keys : tuple of str
        Keys allowed besides :data:`ROTOR_KEYS`; the caller reads them.

    Returns
    -------
    Rotor
        The rotor; name "rotor" and angle sense "against rotation" unless given.

    Raises
    ------
    InputError
        Of the table's error class, naming the key: an unknown key, a grade
        not in ISO 21940-11, or a bad value.
    """
    t.allow_only(ROTOR_KEYS + extra_keys)
    grade = None
    if t.has("grade"):
        raw = t.data["grade"]
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise t.fail("grade", "is not a grade", "a grade such as \"G6.3\"")
        if isinstance(raw, str):
            t.check_text("grade", raw)
        try:
            grade = parse_grade(raw)
        except ToleranceError as exc:
            raise t.fail("grade", exc.detail, exc.expected) from None
    values, _ = t.quantities("com_distances", LENGTH_UNITS, non_negative=True)
    distances = None if values is None else tuple(values)
    sense = t.text("angle_sense", default=DEFAULT_ANGLE_SENSE)
    if sense not in ANGLE_SENSES:
        raise t.fail("angle_sense", f"is '{sense}'", "one of " + ", ".join(ANGLE_SENSES))
    rotation = t.text("rotation")
    if rotation is not None and rotation not in ROTATIONS:
        raise t.fail("rotation", f"is '{rotation}'",
                     "clockwise or counterclockwise, seen from the side you work on")
    return Rotor(
        aim_share=_share(t, "aim_share"),
        placement_error_deg=t.number("placement_error_deg", default=0.0, non_negative=True),
        name=t.text("name", default="rotor"),
        mass_kg=t.quantity("mass", ROTOR_MASS_UNITS, positive=True)[0],
        service_rpm=t.number("service_rpm", positive=True),
        grade_mm_s=grade,
        com_distances_mm=distances,
        angle_sense=sense,
        rotation=rotation,
    )


def _plane(t: Table, base_dir: Path, catalogs: dict[Path, Catalog],
           basis: str = "further", template: bool = False,
           rotor: Rotor | None = None) -> PlaneJob:
    t.allow_only(PLANE_KEYS)
    geometry, catalog = plane_geometry(t, base_dir, catalogs)
    if template:
        if t.has("correction") or t.has("unbalance"):
            _requirement(t, geometry)         # checked like any job file's, then not used
        correction, given_as = 0j, "batch template"
    else:
        correction, given_as = _requirement(t, geometry)
    tolerance, tolerance_text = _tolerance(t, geometry)
    return PlaneJob(
        geometry=geometry,
        catalog=catalog,
        correction_gmm=correction,
        given_as=given_as,
        tolerance_gmm=tolerance,
        tolerance_given_as=tolerance_text,
        worked_from=_end(t, rotor or Rotor("rotor")),
        max_parts=t.integer("max_parts", default=DEFAULT_MAX_PARTS, minimum=1,
                            maximum=MAX_PARTS_LIMIT),
        existing=_existing(t, geometry, catalog),
        correction_basis=basis,
        aim_share=_share(t, "aim_share"),
    )


def _end(t: Table, rotor: Rotor) -> str:
    """worked_from: "front", "back", or the name the rotor gives one of its ends."""
    given = t.text("worked_from", default="front").strip()
    for end in ENDS:
        if given in (end, rotor.end_name(end)):
            return end
    names = [f"'{rotor.end_name(e)}'" for e in ENDS]
    names += [f"'{e}'" for e in ENDS if rotor.end_name(e) != e]
    raise t.fail("worked_from", f"is '{given}'", "the end the plane is worked from: "
                 + " or ".join(names))


def plane_radius_mm(t: Table, geometry: PlaneGeometry, key: str) -> float:
    """The plane's one radius, for a value given as a mass at it; refused with radii per
    position.

    Parameters
    ----------
    t : Table
        The table holding ``key``.
    geometry : PlaneGeometry
        The plane's positions.
    key : str
        The key given as a mass (for the message).

    Returns
    -------
    float
        The radius [mm].

    Raises
    ------
    InputError
        Of the table's error class when the positions have different radii.
    """
    radii = set(geometry.radii_mm)
    if len(radii) != 1:
        raise t.fail(key, "is a mass, but the plane's positions have radii of their own",
                     "a value in g·mm or oz·in (gmm, oz_in) when positions have their own radii")
    return radii.pop()


def _tolerance(t: Table, geometry: PlaneGeometry) -> tuple[float | None, str]:
    """The plane's own tolerance [g·mm] and how it was given (mass forms at the radius)."""
    unbalance, key = t.quantity("tolerance", UNBALANCE_UNITS, non_negative=True)
    mass, mass_key = t.quantity("tolerance", MASS_UNITS, non_negative=True)
    if key and mass_key:
        raise t.fail(mass_key, f"given together with '{key}'", "one tolerance per plane")
    if mass_key is None:
        if key == "tolerance_oz_in":
            return unbalance, f"{t.data[key]:g} oz·in"
        return unbalance, ""
    radius = plane_radius_mm(t, geometry, mass_key)
    unit = mass_key.rsplit("_", 1)[1]
    length = "in" if t.has("radius_in") else "mm"
    shown = t.data["radius_in"] if length == "in" else radius
    return mass * radius, f"{t.data[mass_key]:g} {unit} at r {shown:g} {length}"


def _share(t: Table, name: str) -> float | None:
    """A share above 0 and at most 1 (None when the key is not given)."""
    value = t.number(name)
    if value is not None and not 0 < value <= 1:
        raise t.fail(name, f"is {value:g}", "a share of the tolerance above 0 and at most 1, "
                     "such as 0.7")
    return value


def _existing(t: Table, geometry: PlaneGeometry, catalog: Catalog) -> tuple[ExistingPart, ...]:
    parts = []
    per_position: dict[int, int] = {}
    holes: set[int] = set()
    for i, value in enumerate(t.array("existing") or [], start=1):
        e = Table(value, t.file, f"{t.key('existing')}[{i}]", t.error)
        e.allow_only(("position", "item", "count"))
        position = e.integer("position", required=True, minimum=1, maximum=geometry.n_positions)
        item_id = e.text("item", required=True)
        try:
            item = catalog.item_index(item_id)
        except KeyError:
            raise e.fail("item", f"'{item_id}' is not in catalogue '{catalog.name}'",
                         "an item id of the plane's catalogue") from None
        count = e.integer("count", default=1, minimum=1)
        if catalog.items[item].removes:
            if count != 1 or position in holes:
                raise e.fail("count", f"more than one hole on position {position}",
                             "one drilled hole per position")
            holes.add(position)
        else:
            per_position[position] = per_position.get(position, 0) + count
            if per_position[position] > geometry.capacity:
                raise e.fail("count", f"{per_position[position]} parts on position {position} "
                             f"but the plane's capacity is {geometry.capacity}",
                             f"at most {geometry.capacity} parts per position (or raise "
                             "capacity)")
        parts.append(ExistingPart(position, item, count))
    return tuple(parts)


def plane_geometry(t: Table, base_dir: Path,
                   catalogs: dict[Path, Catalog]) -> tuple[PlaneGeometry, Catalog]:
    """A plane's positions and catalogue from its table (shared with session files).

    ``catalogs`` caches catalogues by resolved path, so that planes naming the
    same file share one Catalog (and its stock).

    Parameters
    ----------
    t : Table
        The plane's table (``[[planes]]``).
    base_dir : Path
        Folder that catalogue paths are relative to (the file's own).
    catalogs : dict of Path to Catalog
        Catalogues read so far, by resolved path; new ones are added.

    Returns
    -------
    geometry : PlaneGeometry
        The plane's positions.
    catalog : Catalog
        Its catalogue, or several merged into one.

    Raises
    ------
    InputError
        Of the table's error class, naming the key, for a bad value.
    CatalogError
        For a catalogue that is missing or bad.
    """
    name = t.text("name", default=t.path)
    angles = _angles(t)
    radii = _radii(t, len(angles))
    blocked = _blocked(t, len(angles))
    capacity = t.integer("capacity", default=1, minimum=1, maximum=MAX_CAPACITY)
    raw = t.data.get("catalog")
    references = raw if isinstance(raw, list) else [t.text("catalog", required=True)]
    parts = []
    for i, reference in enumerate(references, start=1):
        key_name = t.key("catalog") + (f"[{i}]" if isinstance(raw, list) else "")
        if not isinstance(reference, str):
            raise t.fail(f"catalog[{i}]", "is not text", "a catalogue name or path")
        catalog_path = resolve_catalog(reference, base_dir, t.file, key_name)
        path_key = catalog_path.resolve()
        if path_key not in catalogs:
            catalogs[path_key] = read_catalog(catalog_path)
        parts.append(catalogs[path_key])
    if not parts:
        raise t.fail("catalog", "is empty", "a catalogue name, or a list of them")
    catalog = parts[0] if len(parts) == 1 else _merged(parts, t)
    accepts = _accepts(t, len(angles))
    geometry = PlaneGeometry(name=name, angles_deg=angles, radii_mm=radii, blocked=blocked,
                             capacity=capacity, accepts=accepts)
    return geometry, catalog


def _merged(parts: list[Catalog], t: Table) -> Catalog:
    """Several catalogues as one (washers to add and drill sizes to remove, say)."""
    seen: dict[str, str] = {}
    for catalog in parts:
        for item in catalog.items:
            if item.id in seen:
                raise t.fail("catalog", f"item id '{item.id}' is in both '{seen[item.id]}' and "
                             f"'{catalog.name}'", "catalogues with distinct item ids")
            seen[item.id] = catalog.name
    return Catalog(name=" + ".join(c.name for c in parts),
                   items=tuple(i for c in parts for i in c.items),
                   source=" + ".join(c.source for c in parts))


def _angles(t: Table) -> tuple[float, ...]:
    if t.has("positions") and t.has("angles_deg"):
        raise t.fail("angles_deg", "given together with 'positions'", "one of the two")
    if t.has("angles_deg"):
        values = t.array("angles_deg")
        if not values:
            raise t.fail("angles_deg", "is empty", "at least one angle")
        if len(values) > MAX_POSITIONS:
            raise t.fail("angles_deg", f"has {len(values)} angles", f"at most {MAX_POSITIONS}")
        return tuple(t.check_number(f"angles_deg[{i + 1}]", v) % 360.0
                     for i, v in enumerate(values))
    if not t.has("positions"):
        raise t.fail("positions", "missing", "a count of equally spaced positions, or angles_deg")
    count = t.integer("positions", minimum=1, maximum=MAX_POSITIONS)
    start = t.number("start_deg", default=0.0)
    return equally_spaced_deg(count, start)


def _radii(t: Table, count: int) -> tuple[float, ...]:
    values, key = t.quantities("radii", LENGTH_UNITS, positive=True)
    if values is not None:
        one = next((k for k in ("radius_mm", "radius_in") if t.has(k)), None)
        if one is not None:
            raise t.fail(one, f"given together with '{key}'", "one of the two")
        if len(values) != count:
            raise t.fail(key, f"has {len(values)} radii for {count} positions",
                         "one radius per position")
        return tuple(values)
    radius, _ = t.quantity("radius", LENGTH_UNITS, required=True, positive=True)
    return (radius,) * count


def _blocked(t: Table, count: int) -> frozenset[int]:
    values = t.array("blocked") or []
    numbers = set()
    for i, value in enumerate(values):
        numbers.add(t.check_integer(f"blocked[{i + 1}]", value, minimum=1, maximum=count))
    return frozenset(numbers)


def _accepts(t: Table, count: int) -> tuple[str, ...]:
    default = t.text("accepts", default="both")
    if default not in ACCEPTS:
        raise t.fail("accepts", f"is '{default}'", "both, add or remove")
    kinds = [default] * count
    for key, kind in (("add_only", "add"), ("remove_only", "remove")):
        for i, value in enumerate(t.array(key) or [], start=1):
            number = t.check_integer(f"{key}[{i}]", value, minimum=1, maximum=count)
            kinds[number - 1] = kind
    return () if all(k == "both" for k in kinds) else tuple(kinds)


def _requirement(t: Table, geometry: PlaneGeometry) -> tuple[complex, str]:
    given = [k for k in ("correction", "unbalance") if t.has(k)]
    if not given:
        raise t.fail("correction", "missing",
                     "correction = { mass_g = ..., angle_deg = ... } or unbalance = { ... }")
    if len(given) == 2:
        raise t.fail("unbalance", "given together with 'correction'", "one of the two")
    which = given[0]
    v = t.sub(which)
    v.allow_only(VECTOR_KEYS)
    mass, mass_key = v.quantity("mass", MASS_UNITS, non_negative=True)
    gmm, gmm_key = v.quantity("", UNBALANCE_UNITS, non_negative=True)
    if mass_key and gmm_key:
        raise v.fail(gmm_key, f"given together with '{mass_key}'",
                     "a mass (mass_g, mass_oz) or an unbalance (gmm, oz_in), not both")
    angle = v.number("angle_deg", required=True)
    if mass_key:
        radius = plane_radius_mm(v, geometry, mass_key)
        magnitude = mass * radius
        text = f"{which} {v.data[mass_key]:g} {mass_key[5:]} at {angle:g}°"
    elif gmm_key:
        magnitude = gmm
        unit = "g·mm" if gmm_key == "gmm" else "oz·in"
        text = f"{which} {v.data[gmm_key]:g} {unit} at {angle:g}°"
    else:
        raise v.fail("mass_g", "missing", "mass_g, mass_oz, gmm or oz_in = ...")
    vector = polar(magnitude, angle)
    if which == "unbalance":
        vector = -vector
    if not (math.isfinite(vector.real) and math.isfinite(vector.imag)):
        raise v.fail(None, "is not finite", "finite numbers")
    return vector, text
