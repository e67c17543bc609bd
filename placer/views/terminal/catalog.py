"""The bundled catalogues and one catalogue's items, on the terminal."""

from __future__ import annotations

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from placer.catalog import Catalog


def render_catalog_list(names: list[str], catalogs: list[Catalog], console: Console) -> None:
    """The bundled catalogues, one line each.

    Parameters
    ----------
    names : list of str
        The bundled catalogues' names.
    catalogs : list of Catalog
        The catalogues, in the same order.
    console : Console
        The rich console to print on.
    """
    table = Table(title="Bundled catalogues", box=box.SIMPLE, title_justify="left")
    table.add_column("Name")
    table.add_column("Title")
    table.add_column("Items", justify="right")
    table.add_column("Masses g")
    for name, catalog in zip(names, catalogs):
        masses = [i.mass_g for i in catalog.items]
        table.add_row(name, catalog.name, str(len(masses)), f"{min(masses):g} to {max(masses):g}")
    console.print(table)
    console.print("Show one with: placer catalogs NAME")


def render_catalog(catalog: Catalog, console: Console) -> None:
    """One catalogue's items, then its description.

    Parameters
    ----------
    catalog : Catalog
        The catalogue.
    console : Console
        The rich console to print on.
    """
    table = Table(title=catalog.name, box=box.SIMPLE, title_justify="left")
    table.add_column("Id")
    table.add_column("Mass g", justify="right")
    tolerances = any(item.mass_tolerance_g for item in catalog.items)
    if tolerances:
        table.add_column("± g", justify="right")
    table.add_column("Stock", justify="right")
    table.add_column("Description")
    for item in catalog.items:
        cells = [item.id, f"{item.mass_g:g}"]
        if tolerances:
            cells.append(f"{item.mass_tolerance_g:.3g}")
        cells += ["-" if item.stock is None else str(item.stock), item.description]
        table.add_row(*cells)
    console.print(table)
    if catalog.description:
        console.print(Text(catalog.description))
