"""Catalogue files (TOML) -> :class:`placer.catalog.Catalog`.

Format::

    name = "Steel washers, ISO 7089"
    description = "optional free text"
    [[items]]
    id = "M8"
    mass_g = 1.83         # or mass_oz = 0.25 (converted to grams, placer.units)
    stock = 40            # optional: parts on hand
    description = "..."   # optional
    fixing = "M8 bolt, 25 N·m"   # optional: how it is fastened, printed beside each part
    mass_tol_g = 0.05     # optional: mass tolerance of one part, ± g (or mass_tol_oz,
                          # mass_tol_pct)
    removes = true        # optional: a removal item (drilled hole), mass negative
"""

from __future__ import annotations

from pathlib import Path

from placer.catalog import Catalog, Item
from placer.errors import CatalogError, shown_path
from placer.io.inputs import NAME_EXPECTED, name_problem, read_toml
from placer.io.sizes import check_count
from placer.io.tables import Table, quantity_key, shown
from placer.io.values import closest
from placer.limits import MAX_ITEMS
from placer.units import MASS_UNITS

ITEM_KEYS = ("id", *(quantity_key("mass", u) for u in MASS_UNITS), "stock", "description",
             "fixing", "removes", *(quantity_key("mass_tol", u) for u in MASS_UNITS),
             "mass_tol_pct")
"""Keys of a catalogue's [[items]]."""


def bundled_dir() -> Path:
    """Folder of the bundled catalogue files: a source checkout's own, else the installed ones."""
    return package_data_dir("catalogs")


def package_data_dir(name: str) -> Path:
    """A folder of files shipped with placer (``catalogs``, ``examples``).

    In a source checkout (a ``pyproject.toml`` beside the ``placer`` package)
    its own folder, so that another install of placer on the path does not
    lend its files; otherwise the installed package ``placer.<name>``.

    Parameters
    ----------
    name : str
        The folder: "catalogs" or "examples".

    Returns
    -------
    Path
        The folder.
    """
    checkout = Path(__file__).resolve().parents[2]
    if (checkout / "pyproject.toml").is_file() and (checkout / name).is_dir():
        return checkout / name
    try:
        from importlib.resources import files

        folder = Path(str(files(f"placer.{name}")))
        if folder.is_dir():
            return folder
    except (ModuleNotFoundError, TypeError):
        pass
    return checkout / name


def bundled_names() -> list[str]:
    """Names of the bundled catalogues (file names without ``.toml``)."""
    return sorted(p.stem for p in bundled_dir().glob("*.toml"))


def read_catalog(path: Path) -> Catalog:
    """Read and check one catalogue file.

    Parameters
    ----------
    path : Path
        The catalogue file (TOML, see the module docstring).

    Returns
    -------
    Catalog
        Its items, each with the file's resolved path as ``source`` and the
        catalogue's name.

    Raises
    ------
    CatalogError
        A missing or unreadable file, or a bad value (naming file and key).
    """
    path = Path(path)
    root = Table(read_toml(path, CatalogError, "catalogue file"), str(path), "", CatalogError)
    root.allow_only(("name", "description", "items"))
    name = root.text("name", required=True)
    items = []
    seen: set[str] = set()
    source = str(path.resolve())
    tables = root.tables("items", required=True)
    check_count(len(tables), MAX_ITEMS, "catalogue items", file=root.file, key="items",
                error=CatalogError)
    for table in tables:
        table.allow_only(ITEM_KEYS)
        item_id = table.text("id", required=True)
        if not item_id.strip():
            raise table.fail("id", "is empty", "a label such as 'M8'")
        if item_id in seen:
            raise table.fail("id", f"'{item_id}' appears twice", "each id once")
        seen.add(item_id)
        removes = table.data.get("removes", False)
        if not isinstance(removes, bool):
            raise table.fail("removes", "is not true/false", "true for a removal item")
        mass, key = table.quantity("mass", MASS_UNITS, required=True)
        if removes and mass >= 0:
            raise table.fail(key, f"is {table.data[key]:g} on a removal item",
                             "a negative mass (the mass the removal takes off)")
        if not removes and mass <= 0:
            raise table.fail(key, f"is {table.data[key]:g}", "a number above zero "
                             "(or removes = true and a negative mass for a removal item)")
        tolerance, tol_key = table.quantity("mass_tol", MASS_UNITS, default=0.0,
                                            non_negative=True)
        if tol_key and table.has("mass_tol_pct"):
            raise table.fail("mass_tol_pct", f"given together with '{tol_key}'",
                             "one of the two")
        if table.has("mass_tol_pct"):
            tolerance = abs(mass) * table.number("mass_tol_pct", non_negative=True) / 100.0
        items.append(Item(
            id=item_id,
            mass_g=mass,
            stock=table.integer("stock", minimum=0),
            description=table.text("description", default="", multiline=True),
            fixing=_one_line(table, "fixing"),
            mass_tolerance_g=tolerance,
            source=source,
            catalog=name,
        ))
    return Catalog(name=name, items=tuple(items), source=source,
                   description=root.text("description", default="", multiline=True))


def _one_line(table: Table, key: str) -> str:
    """Optional text on one line (a fixing note), stripped; "" when not given."""
    text = (table.text(key) or "").strip()
    if "\n" in text:
        raise table.fail(key, "holds a new line", "a note on one line, such as "
                         "\"M10 bolt, 45 N·m\"")
    return text


def resolve_catalog(reference: str, base_dir: Path, job_file: str, key: str) -> Path:
    """A catalogue path relative to the job file, or the name of a bundled one.

    Parameters
    ----------
    reference : str
        What the job gives: a path, or a bundled catalogue's name.
    base_dir : Path
        Folder relative paths are taken from (the job file's).
    job_file : str
        The file that names the catalogue, for the message.
    key : str
        The key path that names it, for the message.

    Returns
    -------
    Path
        The catalogue file.

    Raises
    ------
    CatalogError
        When neither a file nor a bundled catalogue has that name; the
        message names the closest bundled name.
    """
    problem = name_problem(reference)
    if problem is not None:
        raise CatalogError(f"the catalogue name {problem}", file=job_file, key=key,
                           expected=NAME_EXPECTED)
    candidate = Path(reference)
    if not candidate.is_absolute():
        candidate = base_dir / candidate
    explicit = reference.endswith(".toml") or "/" in reference or "\\" in reference
    if _is_file(candidate) or explicit and _exists(candidate):
        return candidate  # a folder or a pipe is refused by the reader, in one line
    if explicit:
        raise CatalogError(f"catalogue file '{shown_path(str(candidate))}' not found", file=job_file,
                           key=key, expected="a path relative to the job file, or a bundled name")
    bundled = bundled_dir() / f"{reference}.toml"
    if _is_file(bundled):
        return bundled
    names = bundled_names()
    close = closest(reference, names)
    hint = f" (closest: '{close}')" if close else ""
    raise CatalogError(f"no catalogue file or bundled catalogue '{shown(reference)}'",
                       file=job_file, key=key,
                       expected=f"a bundled name{hint} or a file path; bundled: {', '.join(names)}")


def _exists(path: Path) -> bool:
    """Whether something is at ``path``; a path the system cannot look up has nothing."""
    try:
        return path.exists()
    except (OSError, ValueError):
        return False


def _is_file(path: Path) -> bool:
    """Whether ``path`` is a file; a path the system cannot look up is not one."""
    try:
        return path.is_file()
    except (OSError, ValueError):
        return False


def load_bundled(name: str) -> Catalog:
    """Read a bundled catalogue by name.

    Parameters
    ----------
    name : str
        The catalogue's name (its file name without ``.toml``); a path
        relative to the working folder is also taken.

    Returns
    -------
    Catalog
        The catalogue.

    Raises
    ------
    CatalogError
        When there is no such catalogue, or it is bad.
    """
    return read_catalog(resolve_catalog(name, Path.cwd(), "catalogue name", "name"))
