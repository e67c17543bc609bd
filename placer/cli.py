"""The ``placer`` command line: subcommands, exit codes, error lines.

Exit codes: 0 every plane within tolerance (or none given); 1 a plane is
outside its tolerance (the least-residual plan is still printed); 2 bad
input, with one line on stderr naming the file, the key and what was
expected; 3 stopped at the time or memory limit (--time-limit, --memory-limit; every
command has both); 4 (``placer field``) a plan made from
data that fails the checks (a weak trial run, poorly separated planes, an
amplitude-only construction whose circles do not meet): the plan is printed,
marked as such.
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

from placer.budget import command_budget, doing, memory_stop, paused
from placer.errors import InputError, LimitReached, PlacerError, fill_options
from placer.io.tables import json_text
from placer.limits import (
    DEFAULT_BATCH_TIME_LIMIT_S,
    DEFAULT_EFFORT,
    DEFAULT_MEMORY_LIMIT_MB,
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
    DEFAULT_TIME_LIMIT_S,
    MAX_EFFORT,
    MAX_MAGNITUDE,
    MAX_MEMORY_LIMIT_MB,
    MAX_PARTS_LIMIT,
    MAX_SAMPLES,
    MAX_TIME_LIMIT_S,
    MAX_WIDTH,
    MIN_MAGNITUDE,
    MIN_MEMORY_LIMIT_MB,
    MIN_SAMPLES,
    MIN_WIDTH,
)

EXIT_OK, EXIT_OUTSIDE, EXIT_BAD_INPUT, EXIT_LIMIT = 0, 1, 2, 3
EXIT_UNTRUSTED = 4
"""placer field: the plan comes from data that fails the checks (before exit code 1)."""

FLAGS = {
    "time_limit_s": "--time-limit", "effort": "--effort", "aim_share": "--aim-share",
    "parts": "--parts", "width": "--width", "min_chance": "--min-chance",
    "samples": "--samples", "seed": "--seed", "max_parts": "--max-parts", "sheet": "--sheet",
    "force": "--force", "out": "--out", "resume": "--resume", "jobs": "--jobs", "db": "--db",
    "save": "--save", "mass_kg": "--mass-kg", "rpm": "--rpm", "radius_mm": "--radius-mm",
    "distances_mm": "--distances-mm", "grade": "--grade", "visit": "--visit",
    "mass_lb": "--mass-lb", "radius_in": "--radius-in", "distances_in": "--distances-in",
    "units": "--units", "positions": "--positions", "planes": "--planes", "catalog": "--catalog",
    "name": "--name", "radius": "--radius-mm or --radius-in", "file": "FILE",
    "example": "NAME", "folder": "--folder", "kind": "KIND",
    "memory_limit_mb": "--memory-limit",
}
"""How the command line shows an argument the library names (see placer.errors)."""
FLAGS["remove"] = "--remove"


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage mistake in one line and exits with 2."""

    def error(self, message: str) -> None:  # noqa: D102 - argparse hook
        where = "" if self.prog == "placer" else f"{self.prog.removeprefix('placer ')}: "
        self.exit(EXIT_BAD_INPUT, f"placer: error: {where}{message} "
                                  f"(expected the arguments of '{self.prog} --help')\n")


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="placer",
        description="Turn a rotor's required correction into stock parts on its fixed "
                    "positions (bolt holes, blades, rim slots): the proven least residual "
                    "for each number of parts, checked against ISO 21940-11 tolerances.",
        epilog="Exit codes: 0 within tolerance, 1 a plane outside tolerance, 2 bad input, 3 "
               "stopped at the time or memory limit (every command takes --time-limit and "
               "--memory-limit), 4 (placer field) a plan from data that fails the "
               "checks; each command's --help says what they mean for it.")
    from placer import __version__

    parser.add_argument("--version", action="version", version=f"placer {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    solve = sub.add_parser("solve", help="plan the parts for a job file and print the sheet",
                           description="Read a job file (TOML), find for every part count the "
                                       "proven least residual, choose the plan and print the "
                                       "fitting sheet.")
    solve.add_argument("job", metavar="JOB", help="job file (TOML), see examples/")
    solve.add_argument("--json", action="store_true",
                       help="print one JSON object instead of the sheet")
    _engine_options(solve, DEFAULT_TIME_LIMIT_S)
    solve.add_argument("--aim-share", type=float, default=None, metavar="S",
                       help="share of each plane's tolerance the plan aims at, e.g. 0.7 "
                            "(default: the job's aim_share, else 0.7)")
    solve.add_argument("--parts", type=int, default=None, metavar="N",
                       help="print and draw the plan of N parts on every plane instead of "
                            "the one chosen")
    solve.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                       help="width of the sheet in columns (default: the terminal's, "
                            "80 when not a terminal)")
    solve.add_argument("--min-chance", type=float, default=None, metavar="P",
                       help="choose the fewest parts whose chance of staying within tolerance "
                            "once fitted (mass tolerances, rotor.placement_error_deg) is at "
                            "least P, e.g. 0.9")
    solve.add_argument("--samples", type=int, default=DEFAULT_SAMPLES, metavar="N",
                       help=f"Monte Carlo draws per plan for that chance (default {DEFAULT_SAMPLES})")
    solve.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="S",
                       help=f"seed of the Monte Carlo draws, so runs repeat (default {DEFAULT_SEED})")
    solve.add_argument("--sheet", metavar="FILE",
                       help="also write a printable fitting sheet: .pdf (a page per plane), "
                            ".png or .svg (NAME-1.png... per plane when there are several); "
                            "needs matplotlib")
    solve.add_argument("--force", action="store_true",
                       help="let --sheet overwrite files that exist")

    cats = sub.add_parser("catalogs", help="list the bundled catalogues, or show one",
                          description="Without NAME, list the bundled catalogues; with NAME "
                                      "(a bundled name or a catalogue file), show its items.")
    cats.add_argument("name", metavar="NAME", nargs="?", help="bundled name or file path")
    cats.add_argument("--json", action="store_true", help="print JSON instead of a table")
    _units_option(cats)
    _budget_options(cats)

    tol = sub.add_parser("tolerance", help="permissible residual unbalance from a grade",
                         description="U_per = 1000·G·m/ω per ISO 21940-11, and its share per "
                                     "correction plane.")
    tol.add_argument("--grade", required=True, help="balance quality grade, e.g. G2.5")
    _rotor_mass_options(tol)
    tol.add_argument("--rpm", required=True, type=float, help="maximum service speed [r/min]")
    tol.add_argument("--planes", type=int, default=2, choices=(1, 2),
                     help="correction planes to share U_per between (default 2)")
    distances = tol.add_mutually_exclusive_group()
    distances.add_argument("--distances-mm", type=float, nargs=2, metavar=("L_A", "L_B"),
                           help="distances from the centre of mass to plane A and plane B "
                                "[mm] (lever rule; default equal shares)")
    distances.add_argument("--distances-in", type=float, nargs=2, metavar=("L_A", "L_B"),
                           help="the same in inches")
    _radius_options(tol, required=False,
                    text="radius of the correction positions: each share also as the mass "
                         "at it")
    _units_option(tol)
    tol.add_argument("--json", action="store_true", help="print JSON instead of text")
    _budget_options(tol)
    field = sub.add_parser("field", help="plan from vibration readings of trial runs",
                           description="Read a session file (reference run, trial runs, "
                                       "optional check run), work out the influence "
                                       "coefficients and the correction, and plan the parts "
                                       "for all planes together by least predicted vibration.",
                           epilog="Exit codes: 0 plan printed (predicted at or below "
                                  "[solve] vibration_limit, or no limit given), 1 the "
                                  "chosen plan is still predicted above vibration_limit "
                                  "(the least vibration plan is printed), 2 bad input or "
                                  "database (one line on stderr; nothing saved), 3 stopped "
                                  "at --time-limit (nothing printed or saved), 4 the plan "
                                  "comes from data that fails the checks (a weak trial run, "
                                  "poorly separated planes, amplitude-only runs that do not "
                                  "agree): it is printed and marked, with what to do; 4 is "
                                  "given before 1.")
    field.add_argument("session", metavar="SESSION", help="session file (TOML), see examples/")
    field.add_argument("--json", action="store_true", help="print one JSON object")
    _engine_options(field, DEFAULT_TIME_LIMIT_S)
    field.add_argument("--norm", choices=("max", "rms"),
                       help="least largest reading (max) or least root-sum-square over "
                            "sensors (rms); overrides the session's [solve] norm")
    field.add_argument("--max-parts", type=int, metavar="N",
                       help="most parts in all planes together (overrides [solve] max_parts)")
    field.add_argument("--save", action="store_true",
                       help="store the visit (runs, readings, coefficients, plan) in the "
                            "machine history database, after everything else succeeded; "
                            "runs stored already are not stored again")
    field.add_argument("--db", metavar="FILE",
                       help="history database (default: $PLACER_DB, else placer/history.sqlite "
                            "in the user's data folder)")
    field.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                       help=f"width of the sheet in columns (at least {MIN_WIDTH})")
    field.add_argument("--sheet", metavar="FILE",
                       help="also write the printable visit report: .pdf (every page), .png "
                            "or .svg (NAME-1.png... a file per page); needs matplotlib")
    field.add_argument("--force", action="store_true",
                       help="let --sheet overwrite files that exist")

    machines = sub.add_parser("machines", help="list the machines in the history database",
                              description="List the machines stored in the history database, "
                                          "with their number of visits and the last one "
                                          "(times in UTC).")
    machines.add_argument("--db", metavar="FILE", help="history database (see 'placer field')")
    machines.add_argument("--json", action="store_true", help="print JSON")
    machines.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                          help="width of the table in columns (default: the terminal's, 80 "
                               "when not a terminal)")
    _budget_options(machines)
    history = sub.add_parser("history", help="show one machine's visits, or one visit",
                             description="Show a machine's stored visits: date (UTC), "
                                         "coefficients, what is on the rotor after each and "
                                         "the largest reading before and after; with "
                                         "--visit N, one visit's runs, readings, "
                                         "coefficients and plan (--sheet: its report); "
                                         "--remove N --force removes one.")
    history.add_argument("machine", metavar="MACHINE", help="machine id, as in [machine] id")
    which = history.add_mutually_exclusive_group()
    which.add_argument("--visit", type=int, metavar="N",
                       help="show visit N of this machine in full")
    which.add_argument("--remove", type=int, metavar="N",
                       help="remove visit N of this machine from the database, with --force "
                            "(without it, says what would be removed and removes nothing)")
    history.add_argument("--db", metavar="FILE", help="history database (see 'placer field')")
    history.add_argument("--json", action="store_true", help="print JSON")
    history.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                         help="width of the tables in columns (default: the terminal's, 80 "
                              "when not a terminal)")
    history.add_argument("--sheet", metavar="FILE",
                         help="with --visit N: print that visit's report again (.pdf, .png "
                              "or .svg, as 'placer field --sheet')")
    history.add_argument("--force", action="store_true",
                         help="let --sheet overwrite files that exist; confirm --remove")
    _budget_options(history)

    trial = sub.add_parser("trial", help="suggest a trial mass before the first trial run",
                           description="Trial mass whose centrifugal force is 10 % of the "
                                       "rotor's weight (common practice).")
    _rotor_mass_options(trial)
    trial.add_argument("--rpm", required=True, type=float, help="speed of the trial run [r/min]")
    _radius_options(trial, required=True, text="radius the trial weight goes on")
    _units_option(trial)
    _budget_options(trial)

    batch = sub.add_parser("batch", help="plan rotor after rotor of one type from a readings file",
                           description="Solve every rotor of a readings file (CSV or JSON lines: "
                                       "serial and each plane's correction) against a template "
                                       "job file; results are written as they are found to "
                                       "PREFIX.csv and PREFIX.jsonl, bad rows to "
                                       "PREFIX.errors.csv, the summary to PREFIX.summary.json.",
                           epilog="Exit codes: 0 every rotor solved and within tolerance, 1 a "
                                  "rotor outside tolerance or a bad row, 2 bad template or "
                                  "readings file, or outputs that exist.")
    batch.add_argument("template", metavar="TEMPLATE",
                       help="job file (TOML) of the rotor type; planes need no correction")
    batch.add_argument("readings", metavar="READINGS", help="readings file, .csv or .jsonl")
    batch.add_argument("--out", metavar="PREFIX",
                       help="output prefix (default: READINGS with its suffix replaced by "
                            "'.results')")
    batch.add_argument("--jobs", type=int, default=None, metavar="N",
                       help="worker processes (default: one per core this process may use; "
                            "more are capped at that, with a note)")
    again = batch.add_mutually_exclusive_group()
    again.add_argument("--resume", action="store_true",
                       help="keep the rotors already in PREFIX.jsonl and solve the rest "
                            "(refused when a kept rotor's readings changed since)")
    again.add_argument("--force", action="store_true", help="overwrite existing outputs")
    _engine_options(batch, DEFAULT_BATCH_TIME_LIMIT_S)
    _new_parser(sub)
    blades = sub.add_parser("blades", help="arrange blades on a disc, proven, then trim",
                            description="Read a blade file (TOML, or a CSV list of blades), "
                                        "find which blade goes in which slot for the least "
                                        "static unbalance (proven, or with a proven lower "
                                        "bound), check it against the tolerance and plan "
                                        "stock parts for what is left ([trim]).",
                            epilog="Exit codes: 0 within tolerance (after the trim, when the "
                                   "file has one) or no tolerance given, 1 outside, 2 bad "
                                   "input, 3 stopped at --time-limit (nothing printed).")
    blades.add_argument("file", metavar="FILE",
                        help="blade file, .toml or .csv (see examples/fan-reblade.toml)")
    blades.add_argument("--move", choices=("new", "fewest", "all"), default=None,
                        help="new: only blades without a slot go into the empty slots; "
                             "fewest: the fewest swaps into the tolerance; all: every blade "
                             "not marked to stay may move (default: the file's [arrange] "
                             "move, else all)")
    blades.add_argument("--json", action="store_true",
                        help="print one JSON object instead of the tables")
    _engine_options(blades, DEFAULT_TIME_LIMIT_S)
    blades.add_argument("--aim-share", type=float, default=None, metavar="S",
                        help="share of the tolerance the trim aims at (default: [trim] "
                             "aim_share, else [rotor] aim_share, else 0.7)")
    blades.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                        help="columns of the terminal output (default: the terminal's, 80 "
                             "when not a terminal)")
    blades.add_argument("--sheet", metavar="FILE",
                        help="also write the sheet to work from: the disc with every slot's "
                             "blade, the table to tick off and the trim page; .pdf, or "
                             ".png/.svg (NAME-1.png... per page); needs matplotlib")
    blades.add_argument("--force", action="store_true",
                        help="let --sheet replace files that exist")
    return parser


def _rotor_mass_options(command: argparse.ArgumentParser) -> None:
    """--mass-kg or --mass-lb, one of them required."""
    mass = command.add_mutually_exclusive_group(required=True)
    mass.add_argument("--mass-kg", type=float, help="rotor mass [kg]")
    mass.add_argument("--mass-lb", type=float, help="rotor mass [lb]")


def _radius_options(command: argparse.ArgumentParser, required: bool, text: str) -> None:
    """--radius-mm or --radius-in."""
    radius = command.add_mutually_exclusive_group(required=required)
    radius.add_argument("--radius-mm", type=float, metavar="R", help=f"{text} [mm]")
    radius.add_argument("--radius-in", type=float, metavar="R", help=f"{text} [in]")


def _units_option(command: argparse.ArgumentParser) -> None:
    """--units: what the output is shown in."""
    from placer.units import UNIT_SYSTEMS

    command.add_argument("--units", choices=UNIT_SYSTEMS,
                         help="show g, mm and g·mm (metric) or oz, in and oz·in (imperial); "
                              "default: imperial when a quantity is given in lb or in")


def _new_parser(sub) -> None:
    """``placer new``: a commented job, session or template, or a copy of an example."""
    new = sub.add_parser("new", help="start a job, session or batch template file, or copy an "
                                     "example",
                         description="Write a commented job (for 'placer solve'), field "
                                     "session ('placer field') or batch template ('placer "
                                     "batch') for a rotor, from the options or, on a terminal, "
                                     "from questions; or copy bundled examples into a folder.",
                         epilog="Examples: placer new job fan.toml --positions 12 --radius-mm "
                                "210 --catalog washers-steel --planes 2;  placer new example "
                                "supply-fan;  placer new example (lists them).")
    kinds = new.add_subparsers(dest="kind", metavar="KIND", parser_class=_Parser)
    for kind, text in (("job", "a job file for 'placer solve'"),
                       ("session", "a field-balancing session for 'placer field'"),
                       ("template", "a batch template for 'placer batch'")):
        one = kinds.add_parser(kind, help=text, description=f"Write {text}.")
        one.add_argument("file", metavar="FILE", help="the file to write (TOML)")
        one.add_argument("--name", help="the rotor's name")
        one.add_argument("--positions", type=int, metavar="N",
                         help="equally spaced positions per plane")
        _radius_options(one, required=False, text="radius of the positions")
        one.add_argument("--catalog", metavar="NAME",
                         help="bundled catalogue or catalogue file (default washers-steel, "
                              "wheel-clips-oz for imperial)")
        one.add_argument("--planes", type=int, choices=(1, 2), help="correction planes")
        _units_option(one)
        one.add_argument("--force", action="store_true", help="replace FILE if it exists")
        _budget_options(one)
    example = kinds.add_parser("example", help="copy bundled examples into a folder",
                               description="Copy bundled example files (jobs, sessions, a "
                                           "batch template and its readings) into a folder; "
                                           "without NAME, list them.")
    example.add_argument("names", metavar="NAME", nargs="*",
                         help="example names (supply-fan or supply-fan.toml), or all")
    example.add_argument("--folder", default=".", help="where to copy them (default: here)")
    example.add_argument("--force", action="store_true", help="replace files that exist")
    _budget_options(example)


def _engine_options(command: argparse.ArgumentParser, time_limit_s: float) -> None:
    """--effort (what is proven; counted, so every run gives the same answer), and the
    command's budget (:func:`_budget_options`)."""
    command.add_argument("--effort", type=float, default=DEFAULT_EFFORT, metavar="X",
                         help="how hard the exact search works before it leaves a part count "
                              "unproven, as a multiple of the default (work is counted, not "
                              f"timed: the same input gives the same answer; default "
                              f"{DEFAULT_EFFORT:g})")
    _budget_options(command, time_limit_s)


def _budget_options(command: argparse.ArgumentParser,
                    time_limit_s: float = DEFAULT_TIME_LIMIT_S) -> None:
    """--time-limit and --memory-limit: when the whole command stops (every command)."""
    command.add_argument("--time-limit", type=float, default=time_limit_s, metavar="SECONDS",
                         help="stop the whole command after this long, with a message and "
                              "exit code 3, printing nothing as final; it never changes a "
                              f"result (default {time_limit_s:g} s)")
    command.add_argument("--memory-limit", type=float, default=DEFAULT_MEMORY_LIMIT_MB,
                         metavar="MB", dest="memory_limit",
                         help="stop the command, with a message and exit code 3, when it "
                              "would take more memory than this (each worker process of a "
                              f"batch has its own; default {DEFAULT_MEMORY_LIMIT_MB:g} MB)")


def _check(args: argparse.Namespace) -> None:
    """The options commands share, checked once, before any file is read."""
    time_limit = getattr(args, "time_limit", None)
    if time_limit is not None and not (math.isfinite(time_limit)
                                       and 0 < time_limit <= MAX_TIME_LIMIT_S):
        raise InputError(f"is {time_limit:g}", option="time_limit_s",
                         expected=f"a number of seconds above zero and at most "
                                  f"{MAX_TIME_LIMIT_S:g}")
    memory = getattr(args, "memory_limit", None)
    if memory is not None and not (math.isfinite(memory)
                                   and MIN_MEMORY_LIMIT_MB <= memory <= MAX_MEMORY_LIMIT_MB):
        raise InputError(f"is {memory:g}", option="memory_limit_mb",
                         expected=f"megabytes from {MIN_MEMORY_LIMIT_MB:g} to "
                                  f"{MAX_MEMORY_LIMIT_MB:g}")
    effort = getattr(args, "effort", None)
    if effort is not None and not (math.isfinite(effort) and 0 < effort <= MAX_EFFORT):
        raise InputError(f"is {effort:g}", option="effort",
                         expected=f"a multiple above 0 and at most {MAX_EFFORT:g}")
    share = getattr(args, "aim_share", None)
    if share is not None and not (math.isfinite(share) and 0 < share <= 1):
        raise InputError(f"is {share:g}", option="aim_share",
                         expected="a share of the tolerance above 0 and at most 1")
    parts = getattr(args, "parts", None)
    if parts is not None and not 0 <= parts <= MAX_PARTS_LIMIT:
        raise InputError(f"is {parts}", option="parts", expected=f"0 to {MAX_PARTS_LIMIT}")
    width = getattr(args, "width", None)
    if width is not None and not MIN_WIDTH <= width <= MAX_WIDTH:
        raise InputError(f"is {width}", option="width",
                         expected=f"{MIN_WIDTH} to {MAX_WIDTH} columns")
    chance = getattr(args, "min_chance", None)
    if chance is not None and not 0.0 <= chance <= 1.0:
        raise InputError(f"is {chance:g}", option="min_chance",
                         expected="a chance between 0 and 1")
    samples = getattr(args, "samples", None)
    if samples is not None and not MIN_SAMPLES <= samples <= MAX_SAMPLES:
        raise InputError(f"is {samples}", option="samples",
                         expected=f"{MIN_SAMPLES} to {MAX_SAMPLES} draws")
    max_parts = getattr(args, "max_parts", None)
    if max_parts is not None and not 1 <= max_parts <= MAX_PARTS_LIMIT:
        raise InputError(f"is {max_parts}", option="max_parts",
                         expected=f"1 to {MAX_PARTS_LIMIT}")


def _positive(*pairs: tuple[str, float]) -> None:
    """Command-line quantities must be positive and in the range every file is held to."""
    for name, value in pairs:
        if not (math.isfinite(value) and MIN_MAGNITUDE <= value <= MAX_MAGNITUDE):
            raise InputError(f"is {value:g}", option=name,
                             expected="a number above zero, between 1e-12 and 1e12")


def _console(width: int | None = None):
    from rich.console import Console

    if width is None and not sys.stdout.isatty():
        width = 80
    return Console(width=width, highlight=False)


def _db(args: argparse.Namespace) -> Path:
    from placer.io.history import default_db_path

    return Path(args.db) if args.db else default_db_path()


def _plain_console(width: int | None = None):
    from placer.views.terminal.plain import console

    return console(width)


def _metric(args: argparse.Namespace) -> tuple[float, float | None, "object"]:
    """Rotor mass [kg], radius [mm] (None when not given) and the units to show, from
    whichever of --mass-kg/--mass-lb and --radius-mm/--radius-in was given."""
    from placer.units import IMPERIAL, METRIC, UnitSystem, kg_from_lb, mm_from_in

    given = [(name, getattr(args, name)) for name in ("mass_kg", "mass_lb", "radius_mm",
                                                      "radius_in")
             if getattr(args, name, None) is not None]
    _positive(*given)
    values = dict(given)
    mass_kg = values["mass_kg"] if "mass_kg" in values else kg_from_lb(values["mass_lb"])
    radius_mm = (values["radius_mm"] if "radius_mm" in values else
                 mm_from_in(values["radius_in"]) if "radius_in" in values else None)
    imperial = "mass_lb" in values or "radius_in" in values or getattr(
        args, "distances_in", None) is not None
    units = UnitSystem(args.units) if args.units else IMPERIAL if imperial else METRIC
    return mass_kg, radius_mm, units


def _solve(args: argparse.Namespace) -> int:
    from placer.io.jobfile import read_job
    from placer.solve import FittingErrors, solve_job

    job = read_job(Path(args.job))
    if args.sheet is not None:
        from placer.views.sheet import require_matplotlib, sheet_paths

        require_matplotlib()
        sheet_paths(Path(args.sheet), len(job.planes), force=args.force)
    errors = FittingErrors(samples=args.samples, seed=args.seed, min_chance=args.min_chance)
    result = solve_job(job, effort=args.effort, errors=errors, aim_share=args.aim_share,
                       parts=args.parts)
    doing("while printing the plans")
    if args.json:
        from placer.io.jsonout import job_dict

        print(json_text(job_dict(result), indent=2))
    else:
        from placer.views.terminal.job import render_job
        from placer.views.terminal.plain import finish

        console = _plain_console(args.width)
        render_job(result, console)
        finish(console)
    if args.sheet is not None:
        from placer.views.sheet import write_sheet

        doing("while drawing the sheet; the plans printed are final, the sheet is not "
              "written")

        pages = write_sheet(result, Path(args.sheet), force=args.force)
        files = ", ".join(dict.fromkeys(str(page.path) for page in pages))
        print(f"placer: sheet written to {files}", file=sys.stderr)
    return EXIT_OK if result.all_within else EXIT_OUTSIDE


def _catalogs(args: argparse.Namespace) -> int:
    from placer.io.catalogfile import bundled_names, read_catalog, resolve_catalog
    from placer.io.jsonout import catalog_dict, catalogs_list
    from placer.units import METRIC, UnitSystem
    from placer.views.terminal.catalog import render_catalog, render_catalog_list
    from placer.views.terminal.plain import finish

    units = UnitSystem(args.units) if args.units else METRIC
    console = _plain_console()
    if args.name is None:
        names = bundled_names()
        catalogs = [read_catalog(resolve_catalog(n, Path.cwd(), "placer catalogs", "NAME"))
                    for n in names]
        if args.json:
            print(json_text(catalogs_list(names, catalogs), indent=1))
        else:
            render_catalog_list(names, catalogs, console, units)
            finish(console)
        return EXIT_OK
    catalog = read_catalog(resolve_catalog(args.name, Path.cwd(), "placer catalogs", "NAME"))
    if args.json:
        print(json_text(catalog_dict(catalog), indent=1))
    else:
        render_catalog(catalog, console, units)
        finish(console)
    return EXIT_OK


def _tolerance(args: argparse.Namespace) -> int:
    from placer.io.jsonout import tolerance_dict
    from placer.tolerance import (
        allocate_to_planes,
        parse_grade,
        permissible_residual_gmm,
    )
    from placer.units import mm_from_in
    from placer.views.terminal.tolerance import tolerance_lines

    mass_kg, radius_mm, units = _metric(args)
    distance_option = "distances_mm" if args.distances_mm else "distances_in"
    raw = args.distances_mm or args.distances_in
    _positive(("rpm", args.rpm), *(((distance_option, d) for d in raw) if raw else ()))
    distances = None if raw is None else (
        raw if args.distances_mm else [mm_from_in(d) for d in raw])
    grade = parse_grade(args.grade)
    u_per = permissible_residual_gmm(grade, mass_kg, args.rpm)
    names = ["A"] if args.planes == 1 else ["A", "B"]
    if distances is not None and args.planes != 2:
        raise InputError("needs two planes", option=distance_option, expected="--planes 2")
    shares = allocate_to_planes(u_per, names, distances)
    if args.json:
        print(json_text(tolerance_dict(grade, mass_kg, args.rpm, u_per, shares, radius_mm),
                        indent=1))
        return EXIT_OK
    print("\n".join(tolerance_lines(grade, mass_kg, args.rpm, u_per, shares,
                                   lever_rule=distances is not None, units=units,
                                   radius_mm=radius_mm)))
    return EXIT_OK


def _field(args: argparse.Namespace) -> int:
    from dataclasses import replace

    from placer.io.fieldvisit import open_for_saving, solve_visit
    from placer.io.sessionfile import read_session

    # Everything that can be bad input is checked before anything is written.
    console = _console(args.width)
    session = read_session(Path(args.session))
    if args.norm:
        session = replace(session, norm=args.norm)
    if args.max_parts is not None:
        session = replace(session, max_parts=args.max_parts)
    if args.sheet is not None:
        from placer.views.report import check_report_path

        check_report_path(Path(args.sheet), force=args.force)
    path = _db(args)
    result = solve_visit(session, path, effort=args.effort)
    db = record = None
    if args.save:
        # Opened before anything is printed: a file that is not a history is refused here.
        db, record = open_for_saving(result, path)
    try:
        pages = _report_pages(result, record) if args.sheet is not None else None
        doing("while printing the plan; nothing is saved")
        if args.json:
            from placer.io.jsonout import field_dict

            text = json_text(field_dict(result), indent=2) + "\n"
        else:
            from placer.views.terminal.field import render_field

            with console.capture() as captured:
                render_field(result, console)
            text = captured.get()
            if not sys.stdout.isatty():
                text = "\n".join(line.rstrip(" ") for line in text.split("\n"))
        try:
            sys.stdout.write(text)
            sys.stdout.flush()
        except BrokenPipeError:
            # The reader went away (| head): the visit is still saved below.
            import os

            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        if pages is not None:
            from placer.views.report.output import write_pages

            doing("while writing the visit report; the plan printed is final, the report is "
                  "not written and nothing is saved")
            files = write_pages(pages, Path(args.sheet), session.machine_name, force=args.force)
            print(f"placer: visit report written to {', '.join(map(str, files))}",
                  file=sys.stderr)
        if db is not None:
            doing("while saving the visit; the plan printed is final, the visit is not saved")
            _save_once(db, record, session.machine_id, path)
    finally:
        if db is not None:
            db.close()
    if not result.data_ok:
        return EXIT_UNTRUSTED
    return EXIT_OUTSIDE if result.within_limit is False else EXIT_OK


def _report_pages(result, record):
    """The visit report's pages, drawn before anything is printed (from the record saved)."""
    from placer.records import visit_record
    from placer.views.report.pages import report_pages
    from placer.visitreport import visit_report

    return report_pages(visit_report(record if record is not None else visit_record(result)))


def _save_once(db, record, machine_id: str, path: Path) -> None:
    """Save the visit unless its runs are stored already (the same session saved twice)."""
    same = db.same_visit(record)
    if same is not None:
        print(f"placer: visit {same} of {machine_id} already holds these runs (the same "
              f"readings and masses): not saved again; to store this plan instead, remove it "
              f"first ('placer history {machine_id} --remove {same} --force')", file=sys.stderr)
        return
    visit_id = db.save_visit(record)
    print(f"placer: visit {visit_id} of {machine_id} saved in {path}", file=sys.stderr)


def _machines(args: argparse.Namespace) -> int:
    from placer.io.history import History
    from placer.io.jsonout import machines_list
    from placer.views.terminal.history import render_machines

    path = _db(args)
    if not path.exists():
        print(f"No history database yet at {path}; 'placer field SESSION --save' starts one.")
        return EXIT_OK
    with History(path, read_only=True) as db:
        _say_rolled_back(db)
        rows, last = db.machines(), db.last_saved()
    if args.json:
        print(json_text(machines_list(rows), indent=2))
    else:
        _print_plain(render_machines, args.width, rows, str(path), last)
    return EXIT_OK


def _say_rolled_back(db) -> None:
    """Tell the user when opening the history rolled back a save left unfinished."""
    if db.rolled_back:
        print(f"placer: a save left unfinished in {db.path} was rolled back; the visits "
              "saved before it are as they were", file=sys.stderr)


def _history(args: argparse.Namespace) -> int:
    from placer.io.history import History
    from placer.io.jsonout import visit_dict, visits_list
    from placer.views.terminal.history import render_visit, render_visits

    path = _db(args)
    if not path.exists():
        raise InputError(f"no history database at {path}", option="db",
                         expected="a database written by 'placer field --save'")
    if args.sheet is not None:
        if args.visit is None:
            raise InputError("needs the visit to print", option="sheet",
                             expected="{opt:visit} N with it")
        from placer.views.report import check_report_path

        check_report_path(Path(args.sheet), force=args.force)
    with History(path, read_only=args.remove is None) as db:
        _say_rolled_back(db)
        visits = db.visits(args.machine)
        machines = db.machines()
        known = [m.id for m in machines]
        last = db.last_saved()
        chosen = args.visit if args.visit is not None else args.remove
        if visits and chosen is not None:
            ids = [v.id for v in visits]
            if chosen not in ids:
                raise InputError(f"machine '{args.machine}' has no visit {chosen}",
                                 option="visit" if args.visit is not None else "remove",
                                 expected="one of its visits: " + ", ".join(map(str, ids)))
            if args.remove is not None:
                return _remove_visit(db, args, next(v for v in visits if v.id == chosen),
                                     path)
            record = db.visit(args.visit)
    if not visits:
        import difflib

        with_visits = [m.id for m in machines if m.visits]
        if args.machine in known:
            raise InputError(f"machine '{args.machine}' has no visit stored", file=str(path),
                             key="MACHINE", expected="a machine with visits: "
                             + (", ".join(with_visits) or "none stored"))
        close = difflib.get_close_matches(args.machine, known, n=1)
        raise InputError(f"no machine '{args.machine}'"
                         + (f"; did you mean '{close[0]}'?" if close else ""), file=str(path),
                         key="MACHINE", expected="one of: " + (", ".join(known) or "none stored"))
    if args.visit is not None:
        saved_at = next(v.saved_at for v in visits if v.id == args.visit)
        if args.json:
            print(json_text(visit_dict(args.visit, record, saved_at), indent=2))
        else:
            _print_plain(render_visit, args.width, args.visit, record, saved_at)
        if args.sheet is not None:
            from placer.views.report import write_report
            from placer.visitreport import visit_report

            files = write_report(visit_report(record), Path(args.sheet), force=args.force)
            print(f"placer: visit report written to {', '.join(map(str, files))}",
                  file=sys.stderr)
        return EXIT_OK
    if args.json:
        print(json_text(visits_list(visits), indent=2))
    else:
        _print_plain(render_visits, args.width, args.machine, visits, last)
    return EXIT_OK


def _print_plain(render, width: int | None, *values) -> None:
    """Print a history view: the terminal's width on a terminal, else 80 columns trimmed."""
    from placer.views.terminal.plain import finish

    console = _plain_console(width)
    render(*values, console)
    finish(console)


def _remove_visit(db, args: argparse.Namespace, visit, path: Path) -> int:
    """Remove one visit with --force; without it, say what would go and remove nothing."""
    from placer.records import utc_label

    what = (f"visit {visit.id} of {args.machine} ({utc_label(visit.started_at)}, "
            f"{visit.runs} runs)")
    if not args.force:
        raise InputError(f"{what} would be removed for good", option="remove",
                         expected="{opt:force} with it to remove it")
    db.remove_visit(visit.id)
    print(f"placer: {what} removed from {path}", file=sys.stderr)
    return EXIT_OK


def _trial(args: argparse.Namespace) -> int:
    from placer.views.terminal.tolerance import trial_lines

    _positive(("rpm", args.rpm))
    mass_kg, radius_mm, units = _metric(args)
    print("\n".join(trial_lines(mass_kg, args.rpm, radius_mm, units)))
    return EXIT_OK


def _batch(args: argparse.Namespace) -> int:
    from placer.io.batchresults import run_batch
    from placer.views.terminal.batch import progress_display, render_summary

    doing("; the rotors solved so far are in the results, and {opt:resume} carries on")
    with progress_display(sys.stderr) as progress:
        summary, paths = run_batch(Path(args.template), Path(args.readings),
                                   Path(args.out) if args.out else None, jobs=args.jobs,
                                   resume=args.resume, force=args.force,
                                   effort=args.effort, progress=progress,
                                   note=lambda text: print(fill_options(text, FLAGS),
                                                           file=sys.stderr))
    render_summary(summary, paths, sys.stdout)
    return EXIT_OK if summary.all_within else EXIT_OUTSIDE


def _new(args: argparse.Namespace) -> int:
    from placer.io.newfile import (
        Starter,
        copy_examples,
        example_names,
        starter_text,
        write_new,
    )

    if args.kind is None:
        raise InputError("says nothing to write", option="kind",
                         expected="job, session, template or example (placer new --help)")
    if args.kind == "example":
        if not args.names:
            print("Bundled examples (copy with: placer new example NAME, or all):")
            print("\n".join(f"  {name}" for name in example_names()))
            return EXIT_OK
        for path in copy_examples(args.names, Path(args.folder), force=args.force):
            print(f"placer: wrote {path}", file=sys.stderr)
        return EXIT_OK
    path = Path(args.file)
    if path.exists() and not args.force:
        raise InputError(f"'{path}' exists", option="file",
                         expected="a new file name, or {opt:force} to replace it")
    imperial = args.units == "imperial" or (args.units is None and args.radius_in is not None)
    answers = {"name": args.name, "positions": args.positions,
               "radius": args.radius_in if args.radius_in is not None else args.radius_mm,
               "catalog": args.catalog, "planes": args.planes}
    if sys.stdin.isatty() and None in answers.values():
        from placer.views.terminal.ask import ask, positive_number, whole_number

        unit = "in" if imperial else "mm"
        asked = {"name": ("Rotor name", str, "rotor"),
                 "positions": ("Positions per plane (holes, blades, slots)", whole_number, None),
                 "radius": (f"Their radius [{unit}]", positive_number, None),
                 "catalog": ("Catalogue", str, "wheel-clips-oz" if imperial else "washers-steel"),
                 "planes": ("Correction planes (1 or 2)", whole_number, 1)}
        with paused():  # waiting for a person's answers is not a runaway
            for key, (question, convert, default) in asked.items():
                if answers[key] is None:
                    answers[key] = ask(question, convert, default)
    for key, option in (("positions", "positions"), ("radius", "radius")):
        if answers[key] is None:
            raise InputError("missing", option=option,
                             expected=f"{{opt:{option}}} (or run on a terminal to be asked)")
    start = Starter(kind=args.kind, name=answers["name"] or "rotor",
                    positions=answers["positions"], radius=answers["radius"],
                    catalog=answers["catalog"] or ("wheel-clips-oz" if imperial
                                                   else "washers-steel"),
                    planes=answers["planes"] or 1, units="imperial" if imperial else "metric")
    write_new(path, starter_text(start), force=args.force)
    command = {"job": "solve", "session": "field", "template": "batch"}[args.kind]
    print(f"placer: wrote {path}; fill in the lines marked FILL IN, then: placer {command} "
          f"{path}" + (" READINGS.csv" if args.kind == "template" else ""), file=sys.stderr)
    return EXIT_OK


def _blades(args: argparse.Namespace) -> int:
    from placer.arrange import arrange_blades
    from placer.io.bladefile import read_blade_file

    job = read_blade_file(Path(args.file), move=args.move)
    if args.sheet is not None:
        from placer.views.sheet.bladepage import blade_page_count
        from placer.views.sheet.files import require_matplotlib, sheet_paths

        require_matplotlib()
        sheet_paths(Path(args.sheet), blade_page_count(job), force=args.force)
    result = arrange_blades(job, effort=args.effort, aim_share=args.aim_share)
    doing("while printing the arrangement")
    if args.json:
        from placer.io.jsonout import blades_dict

        print(json_text(blades_dict(result), indent=2))
    else:
        from placer.views.terminal.blades import render_blades
        from placer.views.terminal.plain import finish

        console = _plain_console(args.width)
        render_blades(result, console)
        finish(console)
    if args.sheet is not None:
        from placer.views.sheet.bladepage import write_blade_sheet

        doing("while drawing the sheet; the arrangement printed is final, the sheet is not "
              "written")
        paths = write_blade_sheet(result, Path(args.sheet), force=args.force)
        print(f"placer: sheet written to {', '.join(dict.fromkeys(map(str, paths)))}",
              file=sys.stderr)
    return EXIT_OK if result.all_within else EXIT_OUTSIDE


_FIRST = {"solve": "before the plans were final; nothing is printed",
          "field": "before the plan was final; nothing is printed or saved",
          "blades": "before the arrangement was final; nothing is printed"}
"""What a command does first, for the message when it stops at a limit."""

HANDLERS = {"solve": _solve, "catalogs": _catalogs, "tolerance": _tolerance, "field": _field,
            "machines": _machines, "history": _history, "trial": _trial, "batch": _batch,
            "new": _new, "blades": _blades}
"""The function that runs each command."""


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code.

    Parameters
    ----------
    argv : list of str or None
        The arguments after the program name; None for ``sys.argv[1:]``.

    Returns
    -------
    int
        0 within tolerance, 1 a plane (or rotor) outside it, 2 bad input or no
        command, 3 stopped at the time or memory limit (nothing printed as final), 4 a
        field plan from data that fails the checks, 130 interrupted.
    """
    from placer.views.terminal.plain import ascii_safe

    ascii_safe(sys.stdout, sys.stderr)
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help (0) or a usage mistake (2, already reported)
        return int(exc.code or 0)
    if args.command is None:
        parser.print_help()
        return EXIT_BAD_INPUT
    try:
        _check(args)
        with command_budget(getattr(args, "time_limit", DEFAULT_TIME_LIMIT_S),
                            getattr(args, "memory_limit", DEFAULT_MEMORY_LIMIT_MB), _FIRST.get(
                args.command, "before it was done; nothing is printed"),
                remedy="a smaller {opt:effort}" if hasattr(args, "effort") else "a smaller job"):
            return HANDLERS[args.command](args)
    except MemoryError:
        # The block has given its memory back (and the limit is lifted) by now.
        print(f"placer: stopped: {memory_stop().one_line(FLAGS)}", file=sys.stderr)
        return EXIT_LIMIT
    except LimitReached as exc:
        print(f"placer: stopped: {exc.one_line(FLAGS)}", file=sys.stderr)
        return EXIT_LIMIT
    except PlacerError as exc:
        print(f"placer: error: {exc.one_line(FLAGS)}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("placer: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
