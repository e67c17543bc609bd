"""Stock parts: items and catalogues."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

from placer import validate
from placer.errors import InputError


@dataclass(frozen=True)
class Item:
    """One stock size.

    Parameters
    ----------
    id : str
        The label on the drawer or bin.
    mass_g : float
        Mass of one part [g]; negative for a correction by removal (a drilled
        hole takes that much mass off).
    stock : int or None
        Parts on hand; None means as many as needed.
    description : str
        Free text.
    mass_tolerance_g : float
        How far one part's real mass may be from ``mass_g`` [g], either side.
    source : str
        The catalogue file the item comes from: items of one file share its
        stock across the planes of a job, even where a plane merges several
        catalogues.
    catalog : str
        The name of that catalogue (its drawer, for the stores).
    fixing : str
        How a part is fastened (screw, torque, adhesive, clip), printed beside
        every part of the plan; "" when the catalogue does not say.
    """

    id: str
    mass_g: float
    stock: int | None = None
    description: str = ""
    mass_tolerance_g: float = 0.0
    source: str = ""
    catalog: str = ""
    fixing: str = ""

    def __post_init__(self) -> None:
        if not isinstance(self.id, str) or not self.id.strip():
            raise InputError(f"is {self.id!r}", key="id", expected="a label such as 'M8'")
        validate.number(self.mass_g, "mass_g")
        if self.mass_g == 0:
            raise InputError("is 0", key="mass_g",
                             expected="a mass above zero, or below zero for a removal")
        if self.stock is not None:
            validate.whole(self.stock, "stock", 0)
        validate.number(self.mass_tolerance_g, "mass_tolerance_g", non_negative=True)

    @property
    def stock_key(self) -> str:
        """What identifies this item's drawer: its catalogue file and its id."""
        return f"{self.source}#{self.id}"

    @property
    def removes(self) -> bool:
        """True for a removal item (negative mass, e.g. a drilled hole)."""
        return self.mass_g < 0


@dataclass(frozen=True)
class Catalog:
    """A drawer of stock parts.

    ``source`` identifies the catalogue file (or the files of a merged
    catalogue); stock is shared per item (:attr:`Item.stock_key`).

    Parameters
    ----------
    name : str
        The catalogue's name.
    items : tuple of Item
        Its stock sizes, at least one, each id once; an item's index in this
        tuple is how plans and existing parts refer to it.
    source : str
        The catalogue file (or files) it was read from.
    description : str
        Free text.
    """

    name: str
    items: tuple[Item, ...]
    source: str
    description: str = ""

    def __post_init__(self) -> None:
        if not self.items:
            raise InputError("has no items", key="items", expected="at least one item")
        ids = [item.id for item in self.items]
        if len(set(ids)) != len(ids):
            raise InputError("has an item id twice", key="items", expected="each id once")

    @cached_property
    def stock_keys(self) -> tuple[str, ...]:
        """:attr:`Item.stock_key` of each item, in order (worked out once)."""
        return tuple(item.stock_key for item in self.items)

    def item_index(self, item_id: str) -> int:
        """Index in :attr:`items` of the item labelled ``item_id``.

        Parameters
        ----------
        item_id : str
            The item's label (:attr:`Item.id`).

        Returns
        -------
        int
            Its index, from 0.

        Raises
        ------
        KeyError
            When no item has that label.
        """
        for index, item in enumerate(self.items):
            if item.id == item_id:
                return index
        raise KeyError(item_id)
