"""The commands of the shop: solve a job, list catalogues, tolerance, trial mass, a
batch of rotors, new files and blade arrangement."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from placer.budget import doing, paused
from placer.cli.common import (
    EXIT_OK,
    EXIT_OUTSIDE,
    check_positive,
    metric_options,
    plain_console,
    print_result,
    say_written,
)
from placer.cli.options import FLAGS
from placer.errors import InputError, fill_options, shown_path
from placer.io.values import json_text


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
    from placer.io.jsonout import job_dict
    from placer.views.terminal.job import render_job

    print_result(args, result, job_dict, render_job)
    if args.sheet is not None:
        from placer.views.sheet import write_sheet

        doing("while drawing the sheet; the plans printed are final, the sheet is not "
              "written")
        pages = write_sheet(result, Path(args.sheet), force=args.force)
        say_written("sheet", (page.path for page in pages))
    return EXIT_OK if result.all_within else EXIT_OUTSIDE


def _catalogs(args: argparse.Namespace) -> int:
    from placer.io.catalogfile import bundled_names, read_catalog, resolve_catalog
    from placer.io.jsonout import catalog_dict, catalogs_list
    from placer.units import METRIC, UnitSystem
    from placer.views.terminal.catalog import render_catalog, render_catalog_list
    from placer.views.terminal.plain import finish

    units = UnitSystem(args.units) if args.units else METRIC
    console = plain_console()
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
    from placer.errors import ToleranceError
    from placer.io.jsonout import tolerance_dict
    from placer.tolerance import (
        allocate_to_planes,
        parse_grade,
        permissible_residual_gmm,
    )
    from placer.units import mm_from_in
    from placer.views.terminal.tolerance import tolerance_lines

    mass_kg, radius_mm, units = metric_options(args)
    distance_option = "distances_mm" if args.distances_mm else "distances_in"
    raw = args.distances_mm or args.distances_in
    check_positive(("rpm", args.rpm), *(((distance_option, d) for d in raw) if raw else ()))
    distances = None if raw is None else (
        raw if args.distances_mm else [mm_from_in(d) for d in raw])
    try:
        grade = parse_grade(args.grade)
    except ToleranceError as exc:   # the grade came from --grade, not from a file's key
        raise ToleranceError(exc.detail, option="grade", expected=exc.expected) from None
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


def _trial(args: argparse.Namespace) -> int:
    from placer.views.terminal.tolerance import trial_lines

    check_positive(("rpm", args.rpm))
    mass_kg, radius_mm, units = metric_options(args)
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
            print(f"placer: wrote {shown_path(path)}", file=sys.stderr)
        return EXIT_OK
    from placer.io.outputs import check_target

    path = check_target(Path(args.file), "file", force=args.force)  # before any question
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
    print(f"placer: wrote {shown_path(path)}; fill in the lines marked FILL IN, then: placer "
          f"{command} {shown_path(path)}" + (" READINGS.csv" if args.kind == "template" else ""),
          file=sys.stderr)
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
    from placer.io.jsonout import blades_dict
    from placer.views.terminal.blades import render_blades

    print_result(args, result, blades_dict, render_blades)
    if args.sheet is not None:
        from placer.views.sheet.bladepage import write_blade_sheet

        doing("while drawing the sheet; the arrangement printed is final, the sheet is not "
              "written")
        say_written("sheet", write_blade_sheet(result, Path(args.sheet), force=args.force))
    return EXIT_OK if result.all_within else EXIT_OUTSIDE


COMMANDS = {"solve": _solve, "catalogs": _catalogs, "tolerance": _tolerance, "trial": _trial,
            "batch": _batch, "new": _new, "blades": _blades}
"""The function that runs each of these commands, by name."""
