"""The commands of field work: a visit from a session, the machines and their history."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from placer.budget import doing
from placer.cli.common import (
    EXIT_OK,
    EXIT_OUTSIDE,
    EXIT_UNTRUSTED,
    db_path,
    print_plain,
    rich_console,
    say_rolled_back,
    say_written,
)
from placer.errors import InputError, shown, shown_path
from placer.io.values import json_text


def _field(args: argparse.Namespace) -> int:
    from dataclasses import replace

    from placer.io.fieldvisit import open_for_saving, solve_visit
    from placer.io.sessionfile import read_session

    # Everything that can be bad input is checked before anything is written.
    console = rich_console(args.width)
    session = read_session(Path(args.session))
    if args.norm:
        session = replace(session, norm=args.norm)
    if args.max_parts is not None:
        session = replace(session, max_parts=args.max_parts)
    if args.sheet is not None:
        from placer.views.report import check_report_path

        check_report_path(Path(args.sheet), force=args.force)
    path = db_path(args)
    if args.save and args.db:
        from placer.io.outputs import check_target

        check_target(path, "db", force=True)     # the history is added to, never replaced
    result = solve_visit(session, path, effort=args.effort)
    db = record = None
    if args.save:
        # Opened before anything is printed: a file that is not a history is refused here.
        db, record = open_for_saving(result, path)
    try:
        pages = _report_pages(result, record) if args.sheet is not None else None
        if pages is not None:       # every page's file checked before anything is printed
            from placer.views.sheet.files import sheet_paths

            sheet_paths(Path(args.sheet), len(pages), force=args.force)
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
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        if pages is not None:
            from placer.views.report.output import write_pages

            doing("while writing the visit report; the plan printed is final, the report is "
                  "not written and nothing is saved")
            say_written("visit report", write_pages(pages, Path(args.sheet),
                                                    session.machine_name, force=args.force))
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
    print(f"placer: visit {visit_id} of {machine_id} saved in {shown_path(path)}",
          file=sys.stderr)


def _machines(args: argparse.Namespace) -> int:
    from placer.io.history import History
    from placer.io.jsonout import machines_list
    from placer.views.terminal.history import render_machines

    path = db_path(args)
    if not path.exists():
        print(f"No history database yet at {path}; 'placer field SESSION --save' starts one.")
        return EXIT_OK
    with History(path, read_only=True) as db:
        say_rolled_back(db)
        rows, last = db.machines(), db.last_saved()
    if args.json:
        print(json_text(machines_list(rows), indent=2))
    else:
        print_plain(render_machines, args.width, rows, str(path), last)
    return EXIT_OK


def _history(args: argparse.Namespace) -> int:
    from placer.io.history import History
    from placer.io.jsonout import visit_dict, visits_list
    from placer.views.terminal.history import render_visit, render_visits

    path = db_path(args)
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
        say_rolled_back(db)
        visits = db.visits(args.machine)
        machines = db.machines()
        known = [m.id for m in machines]
        last = db.last_saved()
        chosen = args.visit if args.visit is not None else args.remove
        if visits and chosen is not None:
            ids = [v.id for v in visits]
            if chosen not in ids:
                raise InputError(f"machine '{shown(args.machine)}' has no visit {chosen}",
                                 option="visit" if args.visit is not None else "remove",
                                 expected="one of its visits: " + ", ".join(map(str, ids)))
            if args.remove is not None:
                return _remove_visit(db, args, next(v for v in visits if v.id == chosen),
                                     path)
            record = db.visit(args.visit)
    if not visits:
        from placer.io.values import closest

        with_visits = [m.id for m in machines if m.visits]
        if args.machine in known:
            raise InputError(f"machine '{shown(args.machine)}' has no visit stored",
                             file=str(path),
                             key="MACHINE", expected="a machine with visits: "
                             + (", ".join(with_visits) or "none stored"))
        close = closest(args.machine, known)
        raise InputError(f"no machine '{shown(args.machine)}'"
                         + (f"; did you mean '{close}'?" if close else ""), file=str(path),
                         key="MACHINE", expected="one of: " + (", ".join(known) or "none stored"))
    if args.visit is not None:
        saved_at = next(v.saved_at for v in visits if v.id == args.visit)
        pages = _history_pages(record, Path(args.sheet), args.force) if args.sheet else None
        if args.json:
            print(json_text(visit_dict(args.visit, record, saved_at), indent=2))
        else:
            print_plain(render_visit, args.width, args.visit, record, saved_at)
        if pages is not None:
            from placer.views.report.output import write_pages

            say_written("visit report", write_pages(pages, Path(args.sheet),
                                                    record.machine_name, force=args.force))
        return EXIT_OK
    if args.json:
        print(json_text(visits_list(visits), indent=2))
    else:
        print_plain(render_visits, args.width, args.machine, visits, last)
    return EXIT_OK


def _history_pages(record, path: Path, force: bool):
    """A stored visit's report pages, drawn and their files checked before anything is
    printed."""
    from placer.views.report.pages import report_pages
    from placer.views.sheet.files import sheet_paths
    from placer.visitreport import visit_report

    pages = report_pages(visit_report(record))
    sheet_paths(path, len(pages), force=force)
    return pages


def _remove_visit(db, args: argparse.Namespace, visit, path: Path) -> int:
    """Remove one visit with --force; without it, say what would go and remove nothing."""
    from placer.records import utc_label

    what = (f"visit {visit.id} of {args.machine} ({utc_label(visit.started_at)}, "
            f"{visit.runs} runs)")
    if not args.force:
        raise InputError(f"{what} would be removed for good", option="remove",
                         expected="{opt:force} with it to remove it")
    db.remove_visit(visit.id)
    print(f"placer: {what} removed from {shown_path(path)}", file=sys.stderr)
    return EXIT_OK


COMMANDS = {"field": _field, "machines": _machines, "history": _history}
"""The function that runs each of these commands, by name."""
