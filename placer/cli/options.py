"""The command line's options: the parser of every command and the checks the commands
share, made once before any file is read."""

from __future__ import annotations

import argparse
import math

from placer.cli.common import EXIT_BAD_INPUT
from placer.errors import InputError, printable
from placer.io.values import whole_number_text
from placer.limits import (
    DEFAULT_BATCH_TIME_LIMIT_S,
    DEFAULT_EFFORT,
    DEFAULT_MEMORY_LIMIT_MB,
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
    DEFAULT_TIME_LIMIT_S,
    MAX_EFFORT,
    MAX_MEMORY_LIMIT_MB,
    MAX_PARTS_LIMIT,
    MAX_SAMPLES,
    MAX_SEED,
    MAX_TIME_LIMIT_S,
    MAX_WIDTH,
    MIN_MEMORY_LIMIT_MB,
    MIN_SAMPLES,
    MIN_WIDTH,
)

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
FLAGS.update(job="JOB", session="SESSION", template="TEMPLATE", readings="READINGS")


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage mistake in one line and exits with 2."""

    def error(self, message: str) -> None:  # noqa: D102 - argparse hook
        where = "" if self.prog == "placer" else f"{self.prog.removeprefix('placer ')}: "
        self.exit(EXIT_BAD_INPUT, f"placer: error: {where}{message} "
                                  f"(expected the arguments of '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
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
    _width_option(solve, "sheet")
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
    _width_option(field, "sheet")
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
    _width_option(machines, "table")
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
    _width_option(history, "tables")
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
                                       "job file; each result goes to the log PREFIX.jsonl "
                                       "as it is found, the table PREFIX.csv is written "
                                       "whole at the end (or when stopped), bad rows to "
                                       "PREFIX.errors.csv, the summary to PREFIX.summary.json.",
                           epilog="Exit codes: 0 every rotor solved and within tolerance, 1 a "
                                  "rotor outside tolerance or a bad row, 2 bad template or "
                                  "readings file, or outputs that exist or cannot be "
                                  "written.")
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
                            "(refused when a kept rotor's readings changed since, or an "
                            "output is not this run's)")
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
    _width_option(blades, "tables")
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


def _width_option(command: argparse.ArgumentParser, what: str) -> None:
    """--width: the columns of the terminal output (checked in :func:`check_options`)."""
    command.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                         help=f"width of the {what} in columns, {MIN_WIDTH} to {MAX_WIDTH} "
                              "(default: the terminal's, 80 when not a terminal)")


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


PATH_ARGUMENTS = ("job", "session", "file", "template", "readings", "sheet", "out", "db",
                  "folder")
"""Arguments that name a file or a folder, checked for names no file system takes."""


def check_options(args: argparse.Namespace) -> None:
    """The options commands share, checked once, before any file is read.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line.
    """
    from placer.errors import shown_path
    from placer.io.inputs import NAME_EXPECTED, name_problem

    for name in PATH_ARGUMENTS:
        value = getattr(args, name, None)
        problem = None if value is None else name_problem(value)
        if problem is not None:
            raise InputError(f"the path {problem}", file=shown_path(str(value)),
                             option=name, expected=NAME_EXPECTED)
    if args.command == "new" and getattr(args, "name", None) is not None:
        from placer.io.values import LINE_EXPECTED, odd_character

        odd = odd_character(args.name)
        if odd is not None:
            raise InputError(f"holds the character {printable(odd)}", option="name",
                             expected=LINE_EXPECTED)
    time_limit = getattr(args, "time_limit", None)
    if time_limit is not None and not (math.isfinite(time_limit)
                                       and 0 < time_limit <= MAX_TIME_LIMIT_S):
        raise InputError(f"is {time_limit:g}", option="time_limit_s",
                         expected=f"a number of seconds above zero, at most {MAX_TIME_LIMIT_S:g}")
    memory = getattr(args, "memory_limit", None)
    if memory is not None and not (math.isfinite(memory)
                                   and MIN_MEMORY_LIMIT_MB <= memory <= MAX_MEMORY_LIMIT_MB):
        raise InputError(f"is {memory:g}", option="memory_limit_mb",
                         expected=f"megabytes from {MIN_MEMORY_LIMIT_MB:.0f} to "
                                  f"{MAX_MEMORY_LIMIT_MB:.0f}")
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
    seed = getattr(args, "seed", None)
    if seed is not None and not 0 <= seed <= MAX_SEED:
        raise InputError(f"is {whole_number_text(seed)}", option="seed",
                         expected=f"a whole number from 0 to {MAX_SEED}")
    max_parts = getattr(args, "max_parts", None)
    if max_parts is not None and not 1 <= max_parts <= MAX_PARTS_LIMIT:
        raise InputError(f"is {max_parts}", option="max_parts",
                         expected=f"1 to {MAX_PARTS_LIMIT}")
