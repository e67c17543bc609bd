"""The ``placer`` command line: subcommands, exit codes, error lines.

Exit codes: 0 every plane within tolerance (or none given); 1 a plane is
outside its tolerance (the least-residual plan is still printed); 2 bad
input, with one line on stderr naming the file, the key and what was
expected.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from placer.errors import InputError, PlacerError

EXIT_OK, EXIT_OUTSIDE, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage mistake in one line and exits with 2."""

    def error(self, message: str) -> None:  # noqa: D102 - argparse hook
        self.exit(EXIT_BAD_INPUT, f"placer: error: {message} (see 'placer --help')\n")


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="placer",
        description="Turn a rotor's required correction into stock parts on its fixed "
                    "positions (bolt holes, blades, rim slots): the proven least residual "
                    "for each number of parts, checked against ISO 21940-11 tolerances.",
        epilog="Exit codes: 0 within tolerance, 1 a plane outside tolerance, 2 bad input.")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    solve = sub.add_parser("solve", help="plan the parts for a job file and print the sheet",
                           description="Read a job file (TOML), find for every part count the "
                                       "proven least residual, choose the plan and print the "
                                       "fitting sheet.")
    solve.add_argument("job", metavar="JOB", help="job file (TOML), see examples/")
    solve.add_argument("--json", action="store_true",
                       help="print one JSON object instead of the sheet")
    solve.add_argument("--time-limit", type=float, default=10.0, metavar="SECONDS",
                       help="most time the CP-SAT model may take for one decision when the "
                            "exact search hands it over (default 10)")
    solve.add_argument("--width", type=int, default=None, metavar="COLUMNS",
                       help="width of the sheet in columns (default: the terminal's, "
                            "80 when not a terminal)")

    cats = sub.add_parser("catalogs", help="list the bundled catalogues, or show one",
                          description="Without NAME, list the bundled catalogues; with NAME "
                                      "(a bundled name or a catalogue file), show its items.")
    cats.add_argument("name", metavar="NAME", nargs="?", help="bundled name or file path")
    cats.add_argument("--json", action="store_true", help="print JSON instead of a table")

    tol = sub.add_parser("tolerance", help="permissible residual unbalance from a grade",
                         description="U_per = 1000·G·m/ω per ISO 21940-11, and its share per "
                                     "correction plane.")
    tol.add_argument("--grade", required=True, help="balance quality grade, e.g. G2.5")
    tol.add_argument("--mass-kg", required=True, type=float, help="rotor mass [kg]")
    tol.add_argument("--rpm", required=True, type=float, help="maximum service speed [r/min]")
    tol.add_argument("--planes", type=int, default=2, choices=(1, 2),
                     help="correction planes to share U_per between (default 2)")
    tol.add_argument("--distances-mm", type=float, nargs=2, metavar=("L_A", "L_B"),
                     help="distances from the centre of mass to plane A and plane B [mm] "
                          "(lever rule; default equal shares)")
    tol.add_argument("--json", action="store_true", help="print JSON instead of text")
    return parser


def _console(width: int | None = None):
    from rich.console import Console

    if width is None and not sys.stdout.isatty():
        width = 80
    return Console(width=width, highlight=False)


def _solve(args: argparse.Namespace) -> int:
    from placer.jobfile import read_job
    from placer.solve import solve_job

    if args.time_limit <= 0:
        raise InputError(f"is {args.time_limit:g}", key="--time-limit",
                         expected="a number of seconds above zero")
    job = read_job(Path(args.job))
    result = solve_job(job, time_limit_s=args.time_limit)
    if args.json:
        from placer.jsonout import job_dict

        print(json.dumps(job_dict(result), indent=2, ensure_ascii=False))
    else:
        from placer.report import render_job

        render_job(result, _console(args.width))
    return EXIT_OK if result.all_within else EXIT_OUTSIDE


def _catalogs(args: argparse.Namespace) -> int:
    from placer.catalog import bundled_names
    from placer.catalogfile import read_catalog, resolve_catalog

    if args.name is None:
        names = bundled_names()
        catalogs = [read_catalog(resolve_catalog(n, Path.cwd(), "placer catalogs", "NAME"))
                    for n in names]
        if args.json:
            print(json.dumps([{"name": n, "title": c.name, "items": len(c.items)}
                              for n, c in zip(names, catalogs)], indent=1))
        else:
            from placer.report import render_catalog_list

            render_catalog_list(names, catalogs, _console())
        return EXIT_OK
    catalog = read_catalog(resolve_catalog(args.name, Path.cwd(), "placer catalogs", "NAME"))
    if args.json:
        print(json.dumps({"name": catalog.name, "items": [
            {"id": i.id, "mass_g": i.mass_g, "stock": i.stock} for i in catalog.items]},
            indent=1))
    else:
        from placer.report import render_catalog

        render_catalog(catalog, _console())
    return EXIT_OK


def _tolerance(args: argparse.Namespace) -> int:
    from placer.tolerance import allocate_to_planes, parse_grade, permissible_residual_gmm

    grade = parse_grade(args.grade)
    u_per = permissible_residual_gmm(grade, args.mass_kg, args.rpm)
    names = ["A"] if args.planes == 1 else ["A", "B"]
    if args.distances_mm is not None and args.planes != 2:
        raise InputError("needs two planes", key="--distances-mm", expected="--planes 2")
    shares = allocate_to_planes(u_per, names, args.distances_mm)
    if args.json:
        print(json.dumps({"grade_mm_s": grade, "mass_kg": args.mass_kg, "service_rpm": args.rpm,
                          "permissible_gmm": u_per, "shares": [
                              {"plane": s.name, "share": s.share,
                               "permissible_gmm": s.permissible_gmm} for s in shares]},
                         indent=1))
        return EXIT_OK
    print(f"Grade G{grade:g}, rotor {args.mass_kg:g} kg, {args.rpm:g} r/min")
    print(f"U_per = 1000·G·m/ω = {u_per:.1f} g·mm  (ISO 21940-11)")
    print(f"  = {u_per / args.mass_kg:.2f} g·mm/kg permissible specific unbalance")
    rule = ("one plane takes the full value" if args.planes == 1 else
            "lever rule from the distances, each share held to 30-70 % (limits from memory)"
            if args.distances_mm else "equal shares (symmetric rotor)")
    print(f"Per plane ({rule}):")
    for s in shares:
        print(f"  plane {s.name}: {s.share:.0%} = {s.permissible_gmm:.1f} g·mm")
    return EXIT_OK


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_BAD_INPUT
    handlers = {"solve": _solve, "catalogs": _catalogs, "tolerance": _tolerance}
    try:
        return handlers[args.command](args)
    except InputError as exc:
        print(f"placer: error: {exc.one_line()}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except PlacerError as exc:
        print(f"placer: error: {exc.one_line()}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("placer: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
