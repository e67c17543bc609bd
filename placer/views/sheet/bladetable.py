"""The blade sheet's slot table: its columns, the type size and the parts it is cut into
to fit a page, every slot's row, and the table drawn to tick off."""

from __future__ import annotations

from placer.arrange import BladeJob, BladeResult
from placer.views.bladewording import (
    BLADE_STEP,
    FROM_TEXT,
    row_status,
)
from placer.views.sheet.disc import (
    LEVEL_UP_TO,
)
from placer.views.sheet.facts import fmt_gmm
from placer.views.sheet.typeset import (
    Page,
    text_width_in,
)

TABLE_GAP_IN = 0.15
"""Space between the parts of a slot table set side by side [in]."""


def slot_columns(job: BladeJob) -> list[tuple[str, str, list[str]]]:
    """The slot table's columns: (heading, alignment, every text a cell of it may hold).

    From the job alone, so that the table's layout (and the page count) is known
    before the blades are arranged.

    Parameters
    ----------
    job : BladeJob
        The blades and the disc.
    """
    blades, n = job.blades, job.disc.slot_count
    columns = [("Slot", "r", [str(n)])]
    if n <= LEVEL_UP_TO:
        columns.append(("Angle °", "r", ["359.9"]))
    columns += [("Blade", "l", [b.blade_id for b in blades]),
                ("Moment g·mm", "r", [fmt_gmm(b.moment_gmm) for b in blades])]
    if any(b.frequency_hz is not None for b in blades):
        columns.append(("Hz", "r", [f"{b.frequency_hz:.1f}" for b in blades
                                    if b.frequency_hz is not None]))
    if any(b.axial_moment_gmm2 is not None for b in blades):
        columns.append(("Axial g·mm²", "r", [fmt_gmm(b.axial_moment_gmm2) for b in blades
                                             if b.axial_moment_gmm2 is not None]))
    if any(s is not None for s in job.slots_now) or job.disc.pinned:
        columns.append(("From", "l", ["stays", "here", "new", str(n)]
                        + ([f"{n}, swap {n}"] if job.move == "fewest" else [])))
    return columns


def table_size_pt(columns: list[tuple[str, str, list[str]]], width_in: float) -> float | None:
    """The largest type size at which the table fits ``width_in`` [pt]; None when none does
    (measured as :meth:`Page.table` measures, every cell in bold).

    Parameters
    ----------
    columns : list of (str, str, list of str)
        The columns, as :func:`slot_columns` gives them.
    width_in : float
        The width the table may take [in].
    """
    for size in (8.0, 7.5, 7.0, 6.5):
        need = 0.28 + sum(max([text_width_in(head, size - 1, True)]
                              + [text_width_in(c, size, True) for c in cells if c]) + 0.10
                          for head, _, cells in columns)
        if need <= width_in:
            return size
    return None


def table_plan(job: BladeJob, width_in: float, height_in: float | None) -> tuple[int, int,
                                                                                 float]:
    """(parts side by side, rows per part, type size [pt]) of the slot table.

    On the disc page (``height_in`` None) two parts when the slots are more than
    six and two fit the width, else one; on a page of its own, the most parts
    that fit the width, as many rows as the height holds.

    Parameters
    ----------
    job : BladeJob
        The blades and the disc.
    width_in : float
        The width the table may take [in].
    height_in : float or None
        The height it may take [in]; None on the disc page.
    """
    columns = slot_columns(job)
    n = job.disc.slot_count
    counts = ([2, 1] if n > 6 else [1]) if height_in is None else [3, 2, 1]
    for count in counts:
        size = table_size_pt(columns, (width_in - TABLE_GAP_IN * (count - 1)) / count)
        if size is not None or count == counts[-1]:
            size = size or 6.5
            if height_in is None:
                return count, -(-n // count), size
            return count, max(1, int(height_in / (size * 1.75 / 72)) - 1), size
    raise AssertionError("unreachable")


def slot_rows(result: BladeResult) -> tuple[list[list[str]], set[int]]:
    """Every slot's cells (as :func:`slot_columns` lists the columns), and the rows of
    blades that come to their slot (set in bold).

    Parameters
    ----------
    result : BladeResult
        The arrangement.
    """
    job = result.job
    fitted = any(s is not None for s in job.slots_now)
    heads = [head for head, _, _ in slot_columns(job)]
    steps = result.swap_steps()
    rows, bold = [], set()
    for i, row in enumerate(result.rows()):
        b = row.blade
        cell = {"Slot": str(row.slot), "Angle °": f"{row.angle_deg:.1f}", "Blade": b.blade_id,
                "Moment g·mm": fmt_gmm(b.moment_gmm),
                "Hz": "-" if b.frequency_hz is None else f"{b.frequency_hz:.1f}",
                "Axial g·mm²": "-" if b.axial_moment_gmm2 is None
                else fmt_gmm(b.axial_moment_gmm2)}
        here = [str(k) for k, (p, q, _, _) in enumerate(steps, start=1) if row.slot in (p, q)]
        cell["From"] = row_status(row, fitted, short=True) + (
            f", swap {', '.join(here)}" if here else "")
        rows.append([cell[h] for h in heads])
        if row.moves or (fitted and row.from_slot is None and not row.stays):
            bold.add(i)
    return rows, bold


def draw_slot_tables(page: Page, x: float, y: float, w: float, result: BladeResult,
            first: int, plan: tuple[int, int, float]) -> float:
    """The slot table to tick off from row ``first``, ``plan`` parts side by side; the y
    below.

    Parameters
    ----------
    page : Page
        The page (or a dry run).
    x, y : float
        Top-left corner [in].
    w : float
        Width available [in].
    result : BladeResult
        The arrangement.
    first : int
        The first row drawn (0-based).
    plan : (int, int, float)
        Parts side by side, rows per part, type size [pt] (:func:`table_plan`).
    """
    count, per, size = plan
    columns = [(head, align) for head, align, _ in slot_columns(result.job)]
    page.text(x, y, "BLADES, SLOT BY SLOT", 8.5, weight="bold")
    words = BLADE_STEP + (" " + FROM_TEXT if columns[-1][0] == "From" else "")
    y = page.paragraph(x, y + 0.2, words, w, 7)
    rows, bold = slot_rows(result)
    each = (w - TABLE_GAP_IN * (count - 1)) / count
    ends = [y]
    for c in range(count):
        start = first + c * per
        chunk = rows[start:start + per]
        if chunk:
            ends.append(page.table(x + c * (each + TABLE_GAP_IN), y + 0.04, columns, chunk,
                                   each, bold={i - start for i in bold
                                               if start <= i < start + per},
                                   ticks=True, size=size))
    return max(ends) + 0.06
