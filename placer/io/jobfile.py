"""Job files (TOML) -> :class:`placer.job.Job`.  The only reader of job files."""

from __future__ import annotations

import math
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
from placer.io.tables import Table, read_toml
from placer.job import (
    CORRECTION_BASES,
    DEFAULT_ANGLE_SENSE,
    ExistingPart,
    Job,
    PlaneJob,
    Rotor,
)
from placer.limits import (
    DEFAULT_MAX_PARTS,
    MAX_CAPACITY,
    MAX_PARTS_LIMIT,
    MAX_POSITIONS,
)
from placer.tolerance import parse_grade

ROTOR_KEYS = ("name", "mass_kg", "service_rpm", "grade", "com_distances_mm", "angle_sense",
              "placement_error_deg", "rotation")
JOB_ROTOR_KEYS = ROTOR_KEYS + ("correction_basis", "aim_share")
"""Keys of a job file's [rotor] (a session's takes ROTOR_KEYS and its own)."""
PLANE_KEYS = ("name", "radius_mm", "radii_mm", "positions", "start_deg", "angles_deg", "blocked",
              "capacity", "catalog", "correction", "unbalance", "tolerance_gmm", "aim_share",
              "max_parts", "accepts", "add_only", "remove_only", "existing")
VECTOR_KEYS = ("mass_g", "gmm", "angle_deg")


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
    root = Table(read_toml(path, JobError, "template file" if template else "job file"), file,
                 "", JobError)
    root.allow_only(("rotor", "planes"))
    rotor_table = root.sub("rotor", required=True)
    rotor = rotor_of(rotor_table, JOB_ROTOR_KEYS[len(ROTOR_KEYS):])
    basis = rotor_table.text("correction_basis", default="further")
    if basis not in CORRECTION_BASES:
        raise rotor_table.fail("correction_basis", f"is '{basis}'",
                               "further (measured with the existing parts on) or total "
                               "(without them)")
    catalogs: dict[Path, Catalog] = {}
    planes = []
    for table in root.tables("planes", required=True):
        planes.append(_plane(table, path.parent, catalogs, basis, template))
    if rotor.com_distances_mm is not None and len(rotor.com_distances_mm) != len(planes):
        raise JobError(f"gives {len(rotor.com_distances_mm)} distances for {len(planes)} planes",
                       file=file, key="rotor.com_distances_mm", expected="one distance per plane")
    return Job(rotor=rotor, planes=tuple(planes), source=file)


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
        try:
            grade = parse_grade(raw)
        except ToleranceError as exc:
            raise t.fail("grade", exc.detail, exc.expected) from None
    distances = None
    if t.has("com_distances_mm"):
        values = t.array("com_distances_mm")
        distances = tuple(t.check_number(f"com_distances_mm[{i + 1}]", v, non_negative=True)
                          for i, v in enumerate(values))
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
        mass_kg=t.number("mass_kg", positive=True),
        service_rpm=t.number("service_rpm", positive=True),
        grade_mm_s=grade,
        com_distances_mm=distances,
        angle_sense=sense,
        rotation=rotation,
    )


def _plane(t: Table, base_dir: Path, catalogs: dict[Path, Catalog],
           basis: str = "further", template: bool = False) -> PlaneJob:
    t.allow_only(PLANE_KEYS)
    geometry, catalog = plane_geometry(t, base_dir, catalogs)
    if template:
        if t.has("correction") or t.has("unbalance"):
            _requirement(t)                   # checked like any job file's, then not used
        correction, given_as = 0j, "batch template"
    else:
        correction, given_as = _requirement(t)
    return PlaneJob(
        geometry=geometry,
        catalog=catalog,
        correction_gmm=correction,
        given_as=given_as,
        tolerance_gmm=t.number("tolerance_gmm", non_negative=True),
        max_parts=t.integer("max_parts", default=DEFAULT_MAX_PARTS, minimum=1,
                            maximum=MAX_PARTS_LIMIT),
        existing=_existing(t, geometry, catalog),
        correction_basis=basis,
        aim_share=_share(t, "aim_share"),
    )


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
    if t.has("radii_mm"):
        values = t.array("radii_mm")
        if len(values) != count:
            raise t.fail("radii_mm", f"has {len(values)} radii for {count} positions",
                         "one radius per position")
        return tuple(t.check_number(f"radii_mm[{i + 1}]", v, positive=True)
                     for i, v in enumerate(values))
    radius = t.number("radius_mm", required=True, positive=True)
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


def _requirement(t: Table) -> tuple[complex, str]:
    given = [k for k in ("correction", "unbalance") if t.has(k)]
    if not given:
        raise t.fail("correction", "missing",
                     "correction = { mass_g = ..., angle_deg = ... } or unbalance = { ... }")
    if len(given) == 2:
        raise t.fail("unbalance", "given together with 'correction'", "one of the two")
    which = given[0]
    v = t.sub(which)
    v.allow_only(VECTOR_KEYS)
    if v.has("mass_g") and v.has("gmm"):
        raise v.fail("gmm", "given together with 'mass_g'", "one of mass_g or gmm")
    angle = v.number("angle_deg", required=True)
    if v.has("mass_g"):
        radius = t.number("radius_mm") if t.has("radius_mm") else None
        if radius is None:
            raise v.fail("mass_g", "needs the plane's radius_mm",
                         "gmm = ... when positions have their own radii_mm")
        mass = v.number("mass_g", non_negative=True)
        magnitude, text = mass * radius, f"{which} {mass:g} g at {angle:g}°"
    elif v.has("gmm"):
        magnitude = v.number("gmm", non_negative=True)
        text = f"{which} {magnitude:g} g·mm at {angle:g}°"
    else:
        raise v.fail("mass_g", "missing", "mass_g = ... or gmm = ...")
    vector = polar(magnitude, angle)
    if which == "unbalance":
        vector = -vector
    if not (math.isfinite(vector.real) and math.isfinite(vector.imag)):
        raise v.fail(None, "is not finite", "finite numbers")
    return vector, text
