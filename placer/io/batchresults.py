"""Results of ``placer batch``: logged row by row, resumed, written whole, summed up.

The I/O edge of :mod:`placer.batch` (which stays pure): it reads the
template and the readings (:mod:`placer.io.jobfile`,
:mod:`placer.io.batchreadings`), logs every result as it is found, and
writes the table and the summary at the end.

Template
--------
A normal job file (``[rotor]`` and ``[[planes]]``, see ``placer solve``).
A plane's ``correction`` / ``unbalance`` may be left out; if given it is
checked like any job file's and then not used.

Results (``PREFIX`` from ``--out``; default the readings file's name with
its suffix replaced by ``.results``)
--------------------------------------------------------------------------
* ``PREFIX.jsonl``: the run's log.  Line 1 names the run (``placer_batch``,
  ``run``, the template's and the readings' digests, placer's version; see
  :mod:`placer.io.batchresume`); then one object per solved rotor, written and
  flushed row by row (a line with a ``placer_batch`` key is the run's own, not a
  rotor)::

      {"serial": ..., "line": <line in the readings file>, "template": <digest>,
       "input": <digest of the row's corrections>,
       "within_tolerance": true | false | null, "solved_together": false,
       "stock_short": [ids of items no plan within the stock could spare],
       "planes": [{"plane": 1, "name": ..., "catalog": ...,
                   "correction_gmm": ..., "correction_angle_deg": ...,
                   "parts": "3:M10×2;7:M6×1",
                   "fitted": [{"position": 3, "angle_deg": ..., "item": "M10",
                               "mass_g": ..., "count": 2,
                               "action": "fit" | "drill" | "remove"}, ...],
                   "part_count": 3, "residual_gmm": ..., "residual_angle_deg": ...,
                   "tolerance_gmm": ... | null, "within_tolerance": ... | null}, ...]}

* ``PREFIX.csv``: ``serial``, then per plane ``<plane>_parts``,
  ``<plane>_residual_gmm``, ``<plane>_within_tolerance``, then
  ``within_tolerance`` (all planes); flags are ``true`` / ``false``, empty
  where no tolerance is given; ``parts`` is ``position:item×count`` joined
  by ``;`` (empty for no parts; a negative count for parts the plan takes
  off, action "remove").  Written whole when the batch ends or is stopped
  (time limit, Ctrl-C), from the rotors of ``PREFIX.jsonl``; after a kill it
  holds the rotors of the last time it was written, and a resumed batch writes
  it again with every rotor.
* ``PREFIX.errors.csv``: ``line,serial,message`` for each bad row.
* ``PREFIX.summary.json``: the :class:`placer.batch.BatchSummary` fields
  (rows_read, solved, already_done, errors, within, outside, no_tolerance,
  share_within, parts_used, elapsed_s, jobs) plus template, template_digest,
  readings, solved_now and outputs, written at the end.  ``jobs`` is the
  number of processes that solved (``--jobs`` capped at the usable cores
  and at the rotors to solve); ``run`` names the run it belongs to.

Every file but the log is written through :mod:`placer.io.outputs`: whole or
not at all.
All JSON written is strict JSON (RFC 8259): a number that is not finite
would be written as null (none is expected: the readers keep every input
in range).

Results come in input order.  Existing outputs are never overwritten
without ``resume`` (keep the rotors of ``PREFIX.jsonl``, drop a partial
last line, solve the rest) or ``force`` (start again); ``resume`` replaces
only outputs that are this run's (:func:`placer.io.batchresume.check_outputs`),
and refuses any other file, naming it.  Rows are flushed to
the operating system one by one, which survives an interrupted or killed
batch (not a power cut).

Resume checks that the readings are the ones the kept results were solved
from: every kept result's serial must still be in the readings file, with
the same corrections (the ``input`` digest, exact to the last bit of every
number).  Otherwise the batch stops with exit 2 before writing anything,
naming the results file, the line and the serial; ``--force`` starts
again, or another ``--out`` keeps both.  A row that was bad before and is
good now is simply solved.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any, TextIO

from placer import __version__
from placer.batch import (
    BatchSummary,
    BatchTally,
    RotorReading,
    default_jobs,
    processes_used,
    solve_readings,
    usable_cores,
)
from placer.errors import InputError, OutputError, shown_path
from placer.io.batchreadings import RowError, read_readings
from placer.io.batchrecords import csv_header, csv_row, outcome_record, record_parts
from placer.io.batchresume import (
    RunLog,
    check_outputs,
    check_unchanged,
    csv_line,
    cut_to,
    drawer_use,
    errors_line,
    file_digest,
    read_log,
    run_header,
    text_digest,
)
from placer.io.jobfile import read_job
from placer.io.outputs import check_target, reason, replacing, write_text
from placer.io.values import json_text
from placer.limits import DEFAULT_EFFORT


@dataclass(frozen=True)
class BatchPaths:
    """The four output files of a batch.

    Parameters
    ----------
    results_csv : Path
        ``PREFIX.csv``, one line per solved rotor.
    results_jsonl : Path
        ``PREFIX.jsonl``, one result record per solved rotor.
    errors_csv : Path
        ``PREFIX.errors.csv``, one line per bad row.
    summary_json : Path
        ``PREFIX.summary.json``, written at the end.
    """

    results_csv: Path
    results_jsonl: Path
    errors_csv: Path
    summary_json: Path

    @classmethod
    def from_prefix(cls, prefix: Path) -> BatchPaths:
        """The output files of a batch written under ``prefix``.

        Parameters
        ----------
        prefix : Path
            The output prefix; each file's suffix is appended to it.

        Returns
        -------
        BatchPaths
            ``PREFIX.csv``, ``PREFIX.jsonl``, ``PREFIX.errors.csv`` and
            ``PREFIX.summary.json``.
        """
        prefix = str(prefix)
        return cls(Path(prefix + ".csv"), Path(prefix + ".jsonl"), Path(prefix + ".errors.csv"),
                   Path(prefix + ".summary.json"))

    def all(self) -> tuple[Path, ...]:
        """The four paths, in field order."""
        return (self.results_csv, self.results_jsonl, self.errors_csv, self.summary_json)


def default_prefix(readings_path: Path) -> Path:
    """The readings file's name with its suffix replaced by ``.results``.

    Parameters
    ----------
    readings_path : Path
        The readings file.

    Returns
    -------
    Path
        The output prefix, in the readings file's folder.
    """
    readings_path = Path(readings_path)
    return readings_path.with_name(readings_path.stem + ".results")


def read_template(path: Path):
    """Read a template job file: a job file whose planes need no correction
    (:func:`placer.io.jobfile.read_job` with ``template=True``).

    Parameters
    ----------
    path : Path
        The template file.

    Returns
    -------
    Job
        The template; every plane's correction is zero ("batch template").

    Raises
    ------
    JobError
        For a missing, unreadable or bad template file.
    """
    return read_job(path, template=True)


def template_digest(path: Path) -> str:
    """First 12 hex digits of the SHA-256 of the template file's bytes.

    Parameters
    ----------
    path : Path
        The template file.

    Returns
    -------
    str
        12 lowercase hex digits.

    References
    ----------
    [FIPS180-4] (SHA-256).
    """
    return file_digest(path)


def _write_line(handle: TextIO, text: str) -> None:
    handle.write(text)
    handle.flush()


ProgressCallback = Callable[[int, int], None]
"""Called with (rotors solved in this run, rotors to solve in this run).

Called once with 0 rotors solved when the tables are built and solving
starts (so that a rate counts from then), then after each rotor."""


def run_batch(template_path: Path, readings_path: Path, prefix: Path | None = None,
              jobs: int | None = None, resume: bool = False, force: bool = False,
              effort: float = DEFAULT_EFFORT,
              progress: ProgressCallback | None = None,
              start_method: str | None = None,
              note: Callable[[str], None] | None = None) -> tuple[BatchSummary, BatchPaths]:
    """Solve every rotor of a readings file against a template; write the outputs.

    Parameters
    ----------
    template_path : Path
        Template job file.
    readings_path : Path
        Readings, ``.csv`` or ``.jsonl``.
    prefix : Path, optional
        Output prefix (default :func:`default_prefix`).
    jobs : int, optional
        Worker processes (default one per usable core; 1 solves in this
        process); more than :func:`placer.batch.usable_cores` are capped at
        that, with a note.
    resume, force : bool
        Keep the rotors already in ``PREFIX.jsonl`` and solve the rest /
        overwrite existing outputs.  Without either, existing outputs are an
        error.
    effort : float
        Multiple of the engine's default work budget (deterministic).
    progress : callable, optional
        See :data:`ProgressCallback`.
    start_method : str, optional
        Start method of the worker processes (see :func:`placer.batch.solve_readings`).
    note : callable, optional
        Called with a one-line note for the user (``--jobs`` capped).

    Returns
    -------
    summary : BatchSummary
        The batch's counts, also written to ``PREFIX.summary.json``.
    paths : BatchPaths
        The output files.

    Raises
    ------
    InputError
        For a bad template or readings file, outputs that exist, or (with
        ``resume``) results that do not belong to these readings.
    """
    started = time.perf_counter()
    if resume and force:
        raise InputError("resume and force together", option="resume",
                         expected="one of {opt:resume} or {opt:force}")
    jobs = default_jobs() if jobs is None else int(jobs)
    if jobs < 1:
        raise InputError(f"is {jobs}", option="jobs", expected="a whole number of at least 1")
    cores = usable_cores()
    if jobs > cores:
        if note is not None:
            note(f"placer batch: {{opt:jobs}} {jobs} capped at {cores}, the cores this process "
                 "may use")
        jobs = cores
    template = read_template(Path(template_path))
    digest = template_digest(Path(template_path))
    rows = read_readings(Path(readings_path), template)
    paths = BatchPaths.from_prefix(prefix if prefix is not None
                                   else default_prefix(Path(readings_path)))
    for path in paths.all():
        check_target(path, "out", force=True)
    inputs = {Path(template_path).resolve(), Path(readings_path).resolve()}
    for path in paths.all():
        if path.resolve() in inputs:
            raise InputError("would be overwritten by an output", file=str(path), option="out",
                             expected="an output prefix apart from the input files")
    existing = [p for p in paths.all() if os.path.lexists(p)]
    if existing and not (resume or force):
        raise InputError("exists already", file=str(existing[0]), option="out",
                         expected="{opt:resume} to carry on with it, {opt:force} to overwrite, "
                                  "or another {opt:out}")
    n_planes = len(template.planes)
    errors = [row for row in rows if isinstance(row, RowError)]
    errors_text = "".join(csv_line(cells) for cells in [["line", "serial", "message"]] + [
        [str(row.line), row.serial or "", row.message] for row in errors])
    with _one_line(paths):
        log = None
        if resume:
            if os.path.lexists(paths.results_jsonl):
                log = read_log(paths.results_jsonl, digest, n_planes)
                check_unchanged(log.records, rows, paths.results_jsonl)
            check_outputs(paths, log, n_planes, errors_text)
        done: list[dict[str, Any]] = [] if log is None else log.records
        run = _start_log(paths.results_jsonl, log, digest, readings_path, errors_text, force)
        write_text(paths.errors_csv, errors_text, "out", force=True, what="errors file")
        paths.summary_json.unlink(missing_ok=True)
        tally = BatchTally(template)
        for record in done:
            left = [(d["catalog"], d["item"], d["count"]) for d in record.get("drawer_left", [])]
            tally.add(record["within_tolerance"], record_parts(record), record["serial"], left,
                      bool(record.get("full_drawer")))
        done_serials = {record["serial"] for record in done}
        todo = [row for row in rows
                if isinstance(row, RotorReading) and row.serial not in done_serials]
        already = sum(1 for row in rows if isinstance(row, RotorReading)
                      and row.serial in done_serials)
        kept = [csv_line(csv_header(n_planes))] + [csv_line(csv_row(record)) for record in done]
        write_text(paths.results_csv, "".join(kept), "out", force=True, what="results table")
        ready = None if progress is None else (lambda: progress(0, len(todo)))
        stopped: BaseException | None = None
        # The table is written whole at the end, or when the batch is stopped (time limit,
        # Ctrl-C); the log keeps every rotor as it is solved, for --resume after a kill.
        with paths.results_jsonl.open("a", encoding="utf-8", newline="\n") as jsonl, replacing(
                paths.results_csv, "out", force=True, text=True, what="results table") as table:
            table.writelines(kept)
            del kept
            try:
                outcomes = solve_readings(template, todo, jobs, effort, start_method=start_method,
                                          used=drawer_use(template, done), on_ready=ready)
                for count, outcome in enumerate(outcomes, start=1):
                    record = outcome_record(outcome, digest)
                    _write_line(jsonl, json_text(record) + "\n")
                    table.write(csv_line(csv_row(record)))
                    tally.add_outcome(outcome)
                    if progress is not None:
                        progress(count, len(todo))
            except BaseException as exc:        # noqa: BLE001 - the rotors so far are kept
                stopped = exc
            jsonl.flush()
            os.fsync(jsonl.fileno())     # the log is on the disk before the table that shows it
        if stopped is not None:
            raise stopped
        summary = tally.summary(rows_read=len(rows), already_done=already, errors=len(errors),
                                elapsed_s=time.perf_counter() - started,
                                jobs=processes_used(jobs, len(todo)))
        document = {"run": run, "template": str(template_path), "template_digest": digest,
                    "readings": str(readings_path), **asdict(summary),
                    "solved_now": len(todo),
                    "outputs": {k: str(v) for k, v in asdict(paths).items()}}
        write_text(paths.summary_json, json_text(document, indent=2) + "\n", "out", force=True,
                   what="summary")
    return summary, paths


@contextmanager
def _one_line(paths: BatchPaths) -> Iterator[None]:
    """An operating-system error while the outputs are read or written, as one line."""
    try:
        yield
    except OSError as exc:
        name = shown_path(exc.filename or paths.results_jsonl)
        raise OutputError(f"'{name}' could not be read or written ({reason(exc)}); the "
                          f"rotors solved so far are kept in '{paths.results_jsonl}'",
                          option="out", expected="room and write access in its folder, then "
                                                 "{opt:resume}") from None


def _start_log(path: Path, log: RunLog | None, digest: str, readings_path: Path,
               errors_text: str, force: bool) -> str:
    """Start the run's log (a new run) or note a new errors file in it; returns the run."""
    errors_digest = text_digest(errors_text)
    if log is None:
        header = run_header(digest, file_digest(readings_path), errors_digest, __version__)
        write_text(path, json_text(header) + "\n", "out", force=force, what="results log")
        return header["run"]
    cut_to(path, log.keep)
    if errors_digest not in log.errors_csv:
        with path.open("a", encoding="utf-8", newline="\n") as handle:
            handle.write(json_text(errors_line(log.run, errors_digest)) + "\n")
            handle.flush()
            os.fsync(handle.fileno())
    return log.run
