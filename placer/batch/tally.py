"""The counts of a batch: rotors within tolerance, parts used (what to reorder), drawers left."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from placer.batch.solver import RotorOutcome
from placer.job import Job


@dataclass(frozen=True)
class PartsUsed:
    """How many parts of one catalogue item the batch fitted.

    Parameters
    ----------
    catalog : str
        The item's catalogue (its own, where a plane merges several).
    item : str
        The item's id.
    count : int
        Parts fitted over the batch.
    """

    catalog: str
    item: str
    count: int


@dataclass(frozen=True)
class BatchSummary:
    """Counts of a batch.

    ``solved`` counts the rotors with a result in the output (including
    ``already_done``, those a resumed batch found there and skipped);
    ``share_within`` is ``within / (within + outside)``, None when no rotor
    has a tolerance.  ``parts_used`` is summed over every solved rotor
    (parts fitted; parts a plan takes off are not counted).

    Parameters
    ----------
    rows_read : int
        Rows of the readings file read.
    solved : int
        Rotors with a result in the output.
    already_done : int
        Rotors a resumed batch found done and skipped.
    errors : int
        Rows in error.
    within : int
        Rotors within tolerance in every plane that has one.
    outside : int
        Rotors outside tolerance in some plane, or short of stock.
    no_tolerance : int
        Rotors with no tolerance in any plane.
    share_within : float or None
        ``within / (within + outside)`` [1].
    parts_used : tuple of PartsUsed
        Parts fitted per item, in catalogue order.
    elapsed_s : float
        Wall-clock time of the batch [s].
    jobs : int
        Processes used.
    drawers_left : tuple of PartsUsed
        Parts left in each drawer of limited stock after the last rotor.
    short_from : str or None
        The serial of the first rotor whose plans an emptied drawer changed
        (None: every rotor got the plans a full drawer gives).
    """

    rows_read: int
    solved: int
    already_done: int
    errors: int
    within: int
    outside: int
    no_tolerance: int
    share_within: float | None
    parts_used: tuple[PartsUsed, ...]
    elapsed_s: float
    jobs: int
    drawers_left: tuple[PartsUsed, ...] = ()
    short_from: str | None = None

    @property
    def all_within(self) -> bool:
        """True when no rotor is outside its tolerance and no row was in error."""
        return self.outside == 0 and self.errors == 0


class BatchTally:
    """Adds up the outcomes of a batch as they come.

    ``template``, when given, lists the parts used in catalogue order
    (others follow by name).

    Parameters
    ----------
    template : Job or None
        The batch's template, for the order of the items and for the drawer
        each plane's item draws on.
    """

    def __init__(self, template: Job | None = None) -> None:
        self._order: dict[tuple[str, str], int] = {}
        # (plane's catalogue name, item id) -> (the item's own catalogue, item id): a plane
        # that merges catalogues draws on the same drawers as one that names them alone.
        self._drawer: dict[tuple[str, str], tuple[str, str]] = {}
        for plane in template.planes if template is not None else ():
            for item in plane.catalog.items:
                own = (item.catalog or plane.catalog.name, item.id)
                self._drawer[(plane.catalog.name, item.id)] = own
                self._order.setdefault(own, len(self._order))
        self.solved = 0
        self.within = 0
        self.outside = 0
        self.no_tolerance = 0
        self.parts: dict[tuple[str, str], int] = {}
        self.drawer_left: tuple[tuple[str, str, int], ...] = ()
        self.short_from: str | None = None

    def add(self, within_tolerance: bool | None,
            parts: Iterable[tuple[str, str, int]], serial: str = "",
            drawer_left: Iterable[tuple[str, str, int]] = (), short: bool = False) -> None:
        """Count one rotor: its overall flag and its (catalogue, item, count) parts.

        Parameters
        ----------
        within_tolerance : bool or None
            The rotor's flag (:attr:`RotorOutcome.within_tolerance`).
        parts : iterable of (str, str, int)
            (plane's catalogue name, item id, count) of every part fitted.
        serial : str
            The rotor's serial.
        drawer_left : iterable of (str, str, int)
            (catalogue, item, parts left) of each limited drawer after it.
        short : bool
            Whether an emptied drawer changed its plans.
        """
        self.drawer_left = tuple(drawer_left) or self.drawer_left
        if short and self.short_from is None:
            self.short_from = serial
        self.solved += 1
        if within_tolerance is None:
            self.no_tolerance += 1
        elif within_tolerance:
            self.within += 1
        else:
            self.outside += 1
        for catalog, item, count in parts:
            key = self._drawer.get((catalog, item), (catalog, item))
            self.parts[key] = self.parts.get(key, 0) + int(count)

    def add_outcome(self, outcome: RotorOutcome) -> None:
        """Count one solved rotor.

        Parameters
        ----------
        outcome : RotorOutcome
            The rotor's plans; parts taken off are not counted.
        """
        self.add(outcome.within_tolerance,
                 [(p.catalog, part.item, part.count) for p in outcome.planes
                  for part in p.option.parts if part.action == "fit"],
                 outcome.serial, outcome.drawer_left, outcome.full_drawer is not None)

    def summary(self, rows_read: int, already_done: int, errors: int, elapsed_s: float,
                jobs: int) -> BatchSummary:
        """The summary of everything counted so far.

        Parameters
        ----------
        rows_read : int
            Rows of the readings file read.
        already_done : int
            Rotors a resumed batch found done.
        errors : int
            Rows in error.
        elapsed_s : float
            Wall-clock time of the batch [s].
        jobs : int
            Processes used.

        Returns
        -------
        BatchSummary
            The counts and the parts used.
        """
        judged = self.within + self.outside
        last = len(self._order)
        keys = sorted(self.parts, key=lambda key: (self._order.get(key, last), key))
        used = tuple(PartsUsed(c, i, self.parts[(c, i)]) for c, i in keys)
        return BatchSummary(rows_read=rows_read, solved=self.solved, already_done=already_done,
                            errors=errors, within=self.within, outside=self.outside,
                            no_tolerance=self.no_tolerance,
                            share_within=self.within / judged if judged else None,
                            parts_used=used, elapsed_s=float(elapsed_s), jobs=int(jobs),
                            drawers_left=tuple(PartsUsed(c, i, n) for c, i, n in self.drawer_left),
                            short_from=self.short_from)

