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

import os
import sys

from placer.budget import command_budget, memory_stop
from placer.cli.common import (
    EXIT_BAD_INPUT,
    EXIT_LIMIT,
    EXIT_OK,
    EXIT_OUTSIDE,
    EXIT_UNTRUSTED,
)
from placer.cli.fieldcommands import COMMANDS as FIELD_COMMANDS
from placer.cli.options import FLAGS, build_parser, check_options
from placer.cli.shopcommands import COMMANDS as SHOP_COMMANDS
from placer.errors import LimitReached, PlacerError
from placer.limits import DEFAULT_MEMORY_LIMIT_MB, DEFAULT_TIME_LIMIT_S

HANDLERS = {name: {**SHOP_COMMANDS, **FIELD_COMMANDS}[name]
            for name in ("solve", "catalogs", "tolerance", "field", "machines", "history",
                         "trial", "batch", "new", "blades")}
"""The function that runs each command."""

FIRST = {"solve": "before the plans were final; nothing is printed",
         "field": "before the plan was final; nothing is printed or saved",
         "blades": "before the arrangement was final; nothing is printed"}
"""What a command does first, for the message when it stops at a limit."""

__all__ = ["EXIT_BAD_INPUT", "EXIT_LIMIT", "EXIT_OK", "EXIT_OUTSIDE", "EXIT_UNTRUSTED", "FLAGS",
           "HANDLERS", "main"]


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
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help (0) or a usage mistake (2, already reported)
        return int(exc.code or 0)
    if args.command is None:
        parser.print_help()
        print(f"placer: error: no command given (expected one of: {', '.join(HANDLERS)})",
              file=sys.stderr)
        return EXIT_BAD_INPUT
    try:
        check_options(args)
        glyphs = sys.modules.get("placer.views.sheet.glyphs")  # loaded only by a sheet
        if glyphs is not None:
            glyphs.take_undrawn()  # nothing left from an earlier run in this process
        with command_budget(getattr(args, "time_limit", DEFAULT_TIME_LIMIT_S),
                            getattr(args, "memory_limit", DEFAULT_MEMORY_LIMIT_MB),
                            FIRST.get(args.command, "before it was done; nothing is printed"),
                            remedy="a smaller {opt:effort}" if hasattr(args, "effort")
                            else "a smaller job"):
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
    except OSError as exc:  # a path the system refuses, wherever it was opened
        from placer.errors import shown_path

        where = f"{shown_path(os.fsdecode(exc.filename))}: " if exc.filename else ""
        print(f"placer: error: {where}{exc.strerror or type(exc).__name__} (expected a path "
              "placer may read or write)", file=sys.stderr)
        return EXIT_BAD_INPUT
