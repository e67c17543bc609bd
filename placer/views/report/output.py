"""Which files a visit report is written to, written whole or not at all.

A ``.pdf`` holds every page.  A ``.png`` or ``.svg`` holds one page: a
report of one page writes the path given, a longer one ``NAME-1.png``,
``NAME-2.png``... beside it.  Every file is written through
:mod:`placer.io.outputs`: beside its target, then renamed over it, so that a
reader never sees half a report; files that exist are refused unless ``force``.
"""

from __future__ import annotations

from datetime import date
from pathlib import Path

from placer.io.outputs import replacing
from placer.views.report.pages import ReportPage, report_pages
from placer.views.sheet.files import PNG_DPI, require_matplotlib, sheet_paths
from placer.visitreport import VisitReport


def check_report_path(path: Path, *, force: bool = False) -> None:
    """Refuse a report file placer cannot write: unknown suffix, missing folder, a file
    that exists (without ``force``).

    Parameters
    ----------
    path : Path
        The report file asked for.
    force : bool
        Allow files that exist to be overwritten.

    Raises
    ------
    InputError
        matplotlib missing, or the path as above (option "sheet").
    """
    require_matplotlib()
    sheet_paths(Path(path), 1, force=force)


def write_report(report: VisitReport, path: Path, *, when: date | None = None,
                 force: bool = False) -> list[Path]:
    """Write the visit report; returns the files written.

    Parameters
    ----------
    report : VisitReport
        The visit.
    path : Path
        ``.pdf`` (every page in one file), ``.png`` or ``.svg`` (a file per
        page, ``NAME-1.png``... when there are several).
    when : date or None
        Date printed in the footer; None for today.
    force : bool
        Overwrite files that exist.

    Returns
    -------
    list of Path
        The files, in page order (one for a PDF).

    Raises
    ------
    InputError
        matplotlib missing, unknown suffix, missing folder, or a file that
        exists without ``force`` (nothing is written then).
    """
    check_report_path(Path(path), force=force)
    pages = report_pages(report, when)
    return write_pages(pages, Path(path), report.record.machine_name, force=force)


def write_pages(pages: list[ReportPage], path: Path, title: str, *,
                force: bool = False) -> list[Path]:
    """Write pages already drawn to ``path`` (see :func:`write_report`).

    Parameters
    ----------
    pages : list of ReportPage
        The pages.
    path : Path
        The file asked for.
    title : str
        The PDF's title.
    force : bool
        Overwrite files that exist.

    Returns
    -------
    list of Path
        The files written.
    """
    from matplotlib.backends.backend_pdf import PdfPages

    targets = sheet_paths(path, len(pages), force=force)
    suffix = path.suffix.lower()
    if suffix == ".pdf":
        def write_pdf(stream) -> None:
            with PdfPages(stream, metadata={"Title": f"Visit report: {title}",
                                            "Creator": "placer"}) as pdf:
                for page in pages:
                    pdf.savefig(page.figure)

        with replacing(targets[0], "sheet", force=force, what="visit report") as stream:
            write_pdf(stream)
        return [targets[0]]
    for page, target in zip(pages, targets):
        with replacing(target, "sheet", force=force, what="visit report") as stream:
            page.figure.savefig(stream, format=suffix[1:], dpi=PNG_DPI)
    return targets
