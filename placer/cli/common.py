"""What every command shares: exit codes, consoles, the history path, the rotor options of
tolerance and trial, and the notes said after a command's work."""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

from placer.errors import InputError, shown, shown_path
from placer.limits import (
    MAX_MAGNITUDE,
    MIN_MAGNITUDE,
)

EXIT_OK, EXIT_OUTSIDE, EXIT_BAD_INPUT, EXIT_LIMIT = 0, 1, 2, 3
EXIT_UNTRUSTED = 4
"""placer field: the plan comes from data that fails the checks (before exit code 1)."""


def check_positive(*pairs: tuple[str, float]) -> None:
    """Command-line quantities must be positive and in the range every file is held to."""
    for name, value in pairs:
        if not (math.isfinite(value) and MIN_MAGNITUDE <= value <= MAX_MAGNITUDE):
            raise InputError(f"is {value:g}", option=name,
                             expected="a number above zero, between 1e-12 and 1e12")


def rich_console(width: int | None = None):
    """A rich console for the field view: 80 columns when not on a terminal.

    Parameters
    ----------
    width : int or None
        Columns asked for with --width; None for the terminal's own.
    """
    from rich.console import Console

    if width is None and not sys.stdout.isatty():
        width = 80
    return Console(width=width, highlight=False)


def db_path(args: argparse.Namespace) -> Path:
    """The history database a command uses: --db, else the default path.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line.
    """
    from placer.io.historyfile import default_db_path

    return Path(args.db) if args.db else default_db_path()


def plain_console(width: int | None = None):
    """The plain console of the job, blade and history views.

    Parameters
    ----------
    width : int or None
        Columns asked for with --width; None for the terminal's own (80 when piped).
    """
    from placer.views.terminal.plain import console

    return console(width)


def metric_options(args: argparse.Namespace) -> tuple[float, float | None, "object"]:
    """Rotor mass [kg], radius [mm] (None when not given) and the units to show, from
    whichever of --mass-kg/--mass-lb and --radius-mm/--radius-in was given.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line of ``placer tolerance`` or ``placer trial``.
    """
    from placer.units import IMPERIAL, METRIC, UnitSystem, kg_from_lb, mm_from_in

    given = [(name, getattr(args, name)) for name in ("mass_kg", "mass_lb", "radius_mm",
                                                      "radius_in")
             if getattr(args, name, None) is not None]
    check_positive(*given)
    values = dict(given)
    mass_kg = values["mass_kg"] if "mass_kg" in values else kg_from_lb(values["mass_lb"])
    radius_mm = (values["radius_mm"] if "radius_mm" in values else
                 mm_from_in(values["radius_in"]) if "radius_in" in values else None)
    imperial = "mass_lb" in values or "radius_in" in values or getattr(
        args, "distances_in", None) is not None
    units = UnitSystem(args.units) if args.units else IMPERIAL if imperial else METRIC
    return mass_kg, radius_mm, units


def print_plain(render, width: int | None, *values) -> None:
    """Print a history view: the terminal's width on a terminal, else 80 columns trimmed.

    Parameters
    ----------
    render : callable
        The view, called with ``*values`` and the console.
    width : int or None
        Columns asked for with --width.
    *values
        What the view shows.
    """
    from placer.views.terminal.plain import finish

    console = plain_console(width)
    render(*values, console)
    finish(console)


def print_result(args: argparse.Namespace, result, json_of, render) -> None:
    """Print a result as JSON (--json) or through its terminal view.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (``json``, ``width``).
    result : object
        What the command computed.
    json_of : callable
        The result's JSON shape (:mod:`placer.io.jsonout`).
    render : callable
        Its terminal view, called with the result and a console.
    """
    if args.json:
        from placer.io.values import json_text

        print(json_text(json_of(result), indent=2))
        return
    from placer.views.terminal.plain import finish

    console = plain_console(args.width)
    render(result, console)
    finish(console)


def say_written(what: str, paths) -> None:
    """Say on stderr which files a sheet or report went to, then what its font could not draw.

    Parameters
    ----------
    what : str
        "sheet" or "visit report".
    paths : iterable of Path
        The files written (a file named twice is said once).
    """
    files = ", ".join(dict.fromkeys(shown_path(path) for path in paths))
    print(f"placer: {what} written to {files}", file=sys.stderr)
    say_undrawn()


def say_undrawn() -> None:
    """Say once which text of a sheet just written had characters its font cannot draw."""
    from placer.views.sheet.glyphs import REPLACEMENT, take_undrawn

    texts = take_undrawn()
    if texts:
        others = f" (and {len(texts) - 1} other texts)" if len(texts) > 1 else ""
        print(f"placer: note: the sheet's font cannot draw some characters of "
              f"'{shown(texts[0])}'{others}; they are shown as '{REPLACEMENT}'", file=sys.stderr)


def say_rolled_back(db) -> None:
    """Tell the user when opening the history rolled back a save left unfinished.

    Parameters
    ----------
    db : placer.io.history.History
        The history just opened.
    """
    if db.rolled_back:
        print(f"placer: a save left unfinished in {shown_path(db.path)} was rolled back; the "
              "visits "
              "saved before it are as they were", file=sys.stderr)
