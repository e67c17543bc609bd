"""The batch summary and progress on the terminal."""

from __future__ import annotations

import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import TextIO

from placer.batch import BatchSummary
from placer.io.batchresults import BatchPaths, ProgressCallback

PLAIN_PROGRESS_EVERY_S = 10.0
"""Seconds between progress lines when stderr is not a terminal."""


def summary_line(summary: BatchSummary, paths: BatchPaths) -> str:
    """The summary as one logical line (:func:`render_summary` wraps it to 80 columns).

    Parameters
    ----------
    summary : BatchSummary
        The batch's counts.
    paths : BatchPaths
        Its output files.

    Returns
    -------
    str
        The line, without a newline.
    """
    share = "-" if summary.share_within is None else f"{summary.share_within:.1%}"
    parts = ", ".join(f"{p.item}×{p.count}" for p in summary.parts_used) or "none"
    if summary.drawers_left:
        parts += "; left in the drawers: " + ", ".join(
            f"{p.item}×{p.count}" for p in summary.drawers_left)
    if summary.short_from is not None:
        parts += f"; from {summary.short_from} on, planned without an empty drawer"
    return (f"placer batch: {summary.rows_read} rows, {summary.solved} solved "
            f"({summary.already_done} already done), {summary.errors} errors, "
            f"{share} within tolerance ({summary.outside} outside); parts used: {parts}; "
            f"{summary.elapsed_s:.1f} s with {summary.jobs} process(es); "
            f"results in {paths.results_csv}")


def render_summary(summary: BatchSummary, paths: BatchPaths, stream: TextIO) -> None:
    """Print the summary: a table on a terminal, else lines of at most 80 columns.

    Parameters
    ----------
    summary : BatchSummary
        The batch's counts.
    paths : BatchPaths
        Its output files.
    stream : text stream
        Where to print.
    """
    if not stream.isatty():
        import textwrap

        from placer.views.terminal.plain import PLAIN_WIDTH

        print("\n".join(textwrap.wrap(summary_line(summary, paths), PLAIN_WIDTH,
                                      subsequent_indent="  ", break_on_hyphens=False,
                                      break_long_words=False)), file=stream)
        return
    from rich.console import Console
    from rich.table import Table as RichTable

    console = Console(file=stream, highlight=False)
    share = "-" if summary.share_within is None else f"{summary.share_within:.1%}"
    lines = [("rows read", str(summary.rows_read)),
             ("solved", f"{summary.solved} ({summary.already_done} already done)"),
             ("errors", f"{summary.errors} (see {paths.errors_csv})" if summary.errors else "0"),
             ("within tolerance", f"{share} ({summary.within} in, {summary.outside} outside, "
                                  f"{summary.no_tolerance} without a tolerance)"),
             ("time", f"{summary.elapsed_s:.1f} s with {summary.jobs} process(es)"),
             *((("drawers short from", f"{summary.short_from} on (see full_drawer in the "
                 "results)"),) if summary.short_from is not None else ()),
             ("results", f"{paths.results_csv}, {paths.results_jsonl}")]
    for label, value in lines:
        console.print(f"{label:>17}: {value}")
    table = RichTable(title="Parts used (to reorder)", title_justify="left")
    for column in ("Catalogue", "Item", "Count"):
        table.add_column(column, justify="right" if column == "Count" else "left")
    left = {(p.catalog, p.item): p.count for p in summary.drawers_left}
    if left:
        table.add_column("Left", justify="right")
    for part in summary.parts_used:
        cells = [part.catalog, part.item, str(part.count)]
        if left:
            cells.append(str(left.get((part.catalog, part.item), "-")))
        table.add_row(*cells)
    console.print(table)


@contextmanager
def progress_display(stream: TextIO | None = None, terminal: bool | None = None,
                     every_s: float = PLAIN_PROGRESS_EVERY_S,
                     clock: Callable[[], float] = time.perf_counter
                     ) -> Iterator[ProgressCallback]:
    """A progress callback: a rich bar with rate and time left on a terminal, else plain lines.

    The rate counts from the first call (0 rotors solved: the tables are
    built, see :data:`ProgressCallback`), so building them does not lower it.

    Parameters
    ----------
    stream : text stream, optional
        Where to draw (default stderr).
    terminal : bool, optional
        Draw the bar (True) or plain lines (False); default: whether
        ``stream`` is a terminal.  True forces the bar's terminal codes.
    every_s : float
        Seconds between plain lines [s].
    clock : callable
        Seconds since some fixed time [s] (tests pass their own).
    """
    stream = sys.stderr if stream is None else stream
    terminal = stream.isatty() if terminal is None else terminal
    state: dict[str, float | None] = {"start": None, "last": None}

    def rate_of(done: int, now: float) -> float | None:
        if state["start"] is None:
            state["start"] = now
        elapsed = now - state["start"]
        return done / elapsed if elapsed > 0 and done > 0 else None

    if terminal:
        from rich.console import Console
        from rich.progress import (
            BarColumn,
            MofNCompleteColumn,
            Progress,
            TextColumn,
            TimeRemainingColumn,
        )

        bar = Progress(TextColumn("rotors"), BarColumn(), MofNCompleteColumn(),
                       TextColumn("{task.fields[rate]} rotors/s"), TimeRemainingColumn(),
                       console=Console(file=stream, force_terminal=True), transient=False,
                       get_time=clock)
        task = bar.add_task("batch", total=None, rate="-", start=False)

        def update(done: int, total: int) -> None:
            now = clock()
            if state["start"] is None:
                bar.start_task(task)
            rate = rate_of(done, now)
            if state["last"] is not None and now - state["last"] < 0.1 and done < total:
                return
            state["last"] = now
            bar.update(task, completed=done, total=total,
                       rate="-" if rate is None else f"{rate:.0f}")

        with bar:
            yield update
        return

    def plain(done: int, total: int) -> None:
        now = clock()
        rate = rate_of(done, now)
        if state["last"] is None:
            state["last"] = now
        if now - state["last"] < every_s or rate is None:
            return
        state["last"] = now
        left = (total - done) / rate
        print(f"placer batch: {done}/{total} rotors, {rate:.0f} rotors/s, about {left:.0f} s "
              "left", file=stream, flush=True)

    yield plain
