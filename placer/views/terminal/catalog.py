"""The bundled catalogues and one catalogue's items, on the terminal."""

from __future__ import annotations

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from placer.catalog import Catalog
from placer.units import METRIC, UnitSystem, significant


def render_catalog_list(names: list[str], catalogs: list[Catalog], console: Console,
                        units: UnitSystem = METRIC) -> None:
    """The bundled catalogues, one line each.

    Parameters
    ----------
    names : list of str
        The bundled catalogues' names.
    catalogs : list of Catalog
        The catalogues, in the same order.
    console : Console
        The rich console to print on.
    units : UnitSystem
        The units masses are shown in.
    """
    table = Table(title="Bundled catalogues", box=box.SIMPLE, title_justify="left")
    table.add_column("Name")
    table.add_column("Title")
    table.add_column("Items", justify="right")
    table.add_column(f"Masses {units.mass_unit}")
    for name, catalog in zip(names, catalogs):
        masses = [units.mass(i.mass_g) for i in catalog.items]
        table.add_row(name, catalog.name, str(len(masses)),
                      f"{significant(min(masses), 3)} to {significant(max(masses), 3)}")
    console.print(table)
    console.print("Show one with: placer catalogs NAME")


def render_catalog(catalog: Catalog, console: Console, units: UnitSystem = METRIC) -> None:
    """One catalogue's items (with their fixing notes), then its description.

    Parameters
    ----------
    catalog : Catalog
        The catalogue.
    console : Console
        The rich console to print on.
    units : UnitSystem
        The units masses are shown in.
    """
    table = Table(title=catalog.name, box=box.SIMPLE, title_justify="left")
    unit = units.mass_unit
    table.add_column("Id")
    table.add_column(f"Mass {unit}", justify="right")
    tolerances = any(item.mass_tolerance_g for item in catalog.items)
    if tolerances:
        table.add_column(f"± {unit}", justify="right")
    table.add_column("Stock", justify="right")
    table.add_column("Description; fixing")
    for item in catalog.items:
        cells = [item.id, significant(units.mass(item.mass_g), 4)]
        if tolerances:
            cells.append(significant(units.mass(item.mass_tolerance_g), 3))
        text = item.description + (f"; fixing: {item.fixing}" if item.fixing else "")
        cells += ["-" if item.stock is None else str(item.stock), text]
        table.add_row(*cells)
    console.print(table)
    if catalog.description:
        console.print(Text(catalog.description))
