"""A field visit with the history database: stored coefficients in, the visit saved.

The field pipeline (:func:`placer.fieldplan.solve_session`) is pure; this is
the edge that opens the database for it.
"""

from __future__ import annotations

from pathlib import Path

from placer.errors import InputError
from placer.fieldplan import FieldResult, solve_session
from placer.io.history import History
from placer.io.historyfile import default_db_path
from placer.limits import DEFAULT_EFFORT
from placer.records import check_record, visit_record
from placer.session import Session


def solve_visit(session: Session, db: Path | None = None,
                effort: float = DEFAULT_EFFORT) -> FieldResult:
    """Solve a field visit, looking up stored coefficients when the session asks for them.

    Parameters
    ----------
    session : Session
        The visit, as :func:`placer.io.sessionfile.read_session` reads it.
    db : Path, optional
        The history database (default :func:`placer.io.historyfile.default_db_path`).
        Only read, and only when the session says ``coefficients = "stored"``:
        the newest visit of the machine with the same sensor and plane names.
    effort : float
        Multiple of the default work budget of the coupled search.

    Returns
    -------
    FieldResult

    Raises
    ------
    InputError
        No database, no stored coefficients for this machine, or
        coefficients that cannot serve this session (naming the session file).
    HistoryError
        A database that cannot be read.
    """
    stored = None
    if session.coefficients == "stored":
        path = default_db_path() if db is None else Path(db)
        if not path.exists():
            raise InputError(f"no history database at {path}", file=session.source,
                             key="solve.coefficients",
                             expected="a database with this machine's coefficients ({opt:db})")
        with History(path, read_only=True) as history:
            stored = history.latest_coefficients(session.machine_id,
                                                 [c.name for c in session.channels],
                                                 [p.geometry.name for p in session.planes])
        if stored is None:
            raise InputError(f"no stored coefficients for machine '{session.machine_id}' with "
                             "these sensors and planes (names in order)", file=session.source,
                             key="solve.coefficients", expected="coefficients = \"runs\" and "
                             "trial runs, or a visit saved with {opt:save}")
    return solve_session(session, stored, effort=effort)


def open_for_saving(result: FieldResult, db: Path | None = None) -> tuple[History, object]:
    """Check the visit's record and open the database, before anything is printed.

    Parameters
    ----------
    result : FieldResult
        The solved visit.
    db : Path or None
        The history database; None for :func:`placer.io.historyfile.default_db_path`.

    Returns
    -------
    (History, record)
        The open database (the caller closes it) and the record to save with
        :meth:`placer.io.history.History.save_visit`.

    Raises
    ------
    HistoryError
        A record that cannot be stored, or a file that is not a placer
        history database.
    """
    record = visit_record(result)
    check_record(record)
    return History(default_db_path() if db is None else Path(db)), record
