"""Which files a sheet is written to, and whether it may be.

A ``.pdf`` holds every plane, one page each.  A ``.png`` or ``.svg`` holds one page: a
one-plane job writes the path given, a job with several planes writes ``NAME-1.png``,
``NAME-2.png``... beside it, one per plane.  Every file is written through
:mod:`placer.io.outputs`: whole or not at all, never over a file without ``force``.
matplotlib is imported only when a sheet is written, never when placer starts.
"""

from __future__ import annotations

from pathlib import Path

from placer.errors import InputError
from placer.io.outputs import check_target

SUFFIXES = (".pdf", ".png", ".svg")
"""File types the sheet is written as."""


PNG_DPI = 150
"""Resolution of a PNG sheet [dots per inch]: A4 at 1240 × 1754 pixels."""


MATPLOTLIB_MISSING = ("{opt:sheet} needs matplotlib, which placer installs with it; it is "
                      "missing here")


def require_matplotlib() -> None:
    """Raise InputError when matplotlib is not installed (without importing it)."""
    import importlib.util

    if importlib.util.find_spec("matplotlib") is None:
        raise InputError(MATPLOTLIB_MISSING,
                         expected="matplotlib installed: pip install matplotlib")


def sheet_paths(path: Path, n_planes: int, *, force: bool = False) -> list[Path]:
    """The files ``write_sheet`` writes for a job with ``n_planes`` planes.

    Parameters
    ----------
    path : Path
        The sheet file asked for (``.pdf``, ``.png`` or ``.svg``).
    n_planes : int
        Planes of the job.
    force : bool
        Allow files that exist to be overwritten.

    Returns
    -------
    list of Path
        ``path`` for a PDF or one plane; else ``NAME-1.png``, ``NAME-2.png``, ...

    Raises
    ------
    InputError
        Unknown suffix; or (OutputError) a target placer cannot or may not write
        (:func:`placer.io.outputs.check_target`).
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in SUFFIXES:
        raise InputError(f"'{path.name}' has no known suffix", option="sheet",
                         expected=".pdf, .png or .svg")
    if suffix == ".pdf" or n_planes == 1:
        paths = [path]
    else:
        paths = [path.with_name(f"{path.stem}-{i}{path.suffix}") for i in range(1, n_planes + 1)]
    for p in paths:
        check_target(p, "sheet", force=force)
    return paths
