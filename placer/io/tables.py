"""Reading typed values out of parsed TOML tables, with errors that name file and key.

Used by every reader (job, catalogue, session, batch template, blade file).
Each getter raises the reader's error class with the file, the key path and
what was expected. Every number is held to the one range rule of
:mod:`placer.io.values`; :func:`placer.io.inputs.read_toml` has already
checked the file's whole numbers as it parsed it.

References
----------
[PythonDocs] ``sys.int_info.str_digits_check_threshold`` (4300-digit limit on
int/str conversion).
"""

from __future__ import annotations

from typing import Any

from placer.errors import InputError, printable, shown
from placer.io.values import (
    LINE_EXPECTED,
    closest,
    odd_character,
    range_problem,
    whole_number_text,
)
from placer.limits import (
    MAX_WHOLE,
    RANGE_EXPECTED,
)


class Table:
    """A TOML table with the file it came from and its key path.

    Parameters
    ----------
    data : Any
        The parsed table; anything else is refused.
    file : str
        The file it came from.
    path : str
        Its key path in the file ("" for the root, ``planes[2]``).
    error : type of InputError
        The reader's error class, raised by every getter.

    Raises
    ------
    InputError
        Of class ``error``, when ``data`` is not a table.
    """

    def __init__(self, data: Any, file: str, path: str, error: type[InputError]) -> None:
        self.file = file
        self.path = path
        self.error = error
        if not isinstance(data, dict):
            raise self.fail(None, f"is {_kind(data)}", "a table")
        self.data = data

    def key(self, name: str | None) -> str:
        """The key path of ``name`` in this table.

        Parameters
        ----------
        name : str or None
            A key of the table; None for the table itself.

        Returns
        -------
        str
            ``path.name`` (just ``name`` at the root).
        """
        if name is None:
            return self.path
        return f"{self.path}.{name}" if self.path else name

    def fail(self, name: str | None, detail: str, expected: str | None = None) -> InputError:
        """The error for a bad value at ``name`` (to be raised by the caller).

        Parameters
        ----------
        name : str or None
            The key; None for the table itself.
        detail : str
            What is wrong ("is empty").
        expected : str or None
            What was expected.

        Returns
        -------
        InputError
            Of the reader's class, naming file and key path, every text made
            printable.
        """
        key = self.key(name)
        return self.error(printable(detail), file=self.file, key=printable(key) if key else None,
                          expected=None if expected is None else printable(expected))

    def allow_only(self, allowed: tuple[str, ...]) -> None:
        """Reject keys that are not in ``allowed``, suggesting the closest one.

        Parameters
        ----------
        allowed : tuple of str
            The keys the table may have.

        Raises
        ------
        InputError
            At the first unknown key.
        """
        for name in self.data:
            if name not in allowed:
                close = closest(name, allowed)
                hint = (f"one of {', '.join(allowed)}; did you mean '{close}'?" if close
                        else "one of " + ", ".join(allowed))
                raise self.fail(shown(name), "unknown key", hint)

    def has(self, name: str) -> bool:
        """Whether the table has the key ``name``.

        Parameters
        ----------
        name : str
            The key.

        Returns
        -------
        bool
            True when it is present.
        """
        return name in self.data

    def text(self, name: str, default: str | None = None, required: bool = False,
             multiline: bool = False) -> str | None:
        """The text at ``name``.

        Parameters
        ----------
        name : str
            The key.
        default : str or None
            What a missing key gives.
        required : bool
            Refuse a missing key.
        multiline : bool
            Allow new lines and tabs (a description); names, grades, ids and
            choices are text on one line.

        Returns
        -------
        str or None
            The text, or ``default``.

        Raises
        ------
        InputError
            A missing required key, a value that is not text, or text with a
            character :func:`odd_character` refuses.
        """
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a text value")
            return default
        return self.check_text(name, self.data[name], multiline)

    def check_text(self, name: str, value: Any, multiline: bool = False) -> str:
        """``value`` (found at ``name``) as text (see :meth:`text`).

        Parameters
        ----------
        name : str
            The key it was found at, for the message.
        value : Any
            The value.
        multiline : bool
            Allow new lines and tabs.

        Returns
        -------
        str
            The text.

        Raises
        ------
        InputError
            A value that is not text, or text with a character
            :func:`odd_character` refuses.
        """
        if not isinstance(value, str):
            raise self.fail(name, f"is {_kind(value)}", "a text value in quotes")
        odd = odd_character(value, multiline)
        if odd is not None:
            raise self.fail(name, f"holds the character {printable(odd)}",
                            "text without control characters (new lines and tabs allowed)"
                            if multiline else LINE_EXPECTED)
        return value

    def number(self, name: str, default: float | None = None, required: bool = False,
               positive: bool = False, non_negative: bool = False) -> float | None:
        """The number at ``name``, as a float.

        Parameters
        ----------
        name : str
            The key.
        default : float or None
            What a missing key gives.
        required : bool
            Refuse a missing key.
        positive, non_negative : bool
            Also refuse zero and below, or below zero.

        Returns
        -------
        float or None
            The number, or ``default``.

        Raises
        ------
        InputError
            A missing required key, or a value :meth:`check_number` refuses.
        """
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a number")
            return default
        return self.check_number(name, self.data[name], positive, non_negative)

    def check_number(self, name: str, value: Any, positive: bool = False,
                     non_negative: bool = False) -> float:
        """``value`` (found at ``name``) as a float in placer's range.

        Parameters
        ----------
        name : str
            The key it was found at, for the message.
        value : Any
            The value.
        positive, non_negative : bool
            Also refuse zero and below, or below zero.

        Returns
        -------
        float
            The number.

        Raises
        ------
        InputError
            A value that is not a number (a bool is not one), not finite, or
            outside the range of :mod:`placer.limits`, or that breaks
            ``positive`` or ``non_negative``.
        """
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(name, f"is {_kind(value)}", "a number")
        if isinstance(value, int) and abs(value) > MAX_WHOLE:
            raise self.fail(name, f"is {whole_number_text(value)}", RANGE_EXPECTED)
        value = float(value)
        problem = range_problem(value)
        if problem is not None:
            raise self.fail(name, f"is {problem[0]}", problem[1])
        if positive and value <= 0:
            raise self.fail(name, f"is {value:g}", "a number above zero")
        if non_negative and value < 0:
            raise self.fail(name, f"is {value:g}", "zero or more")
        return value

    def quantity(self, stem: str, units: dict[str, float], default: float | None = None,
                 required: bool = False, positive: bool = False,
                 non_negative: bool = False) -> tuple[float | None, str | None]:
        """The number at one of ``stem_<unit>`` keys, converted to the first unit.

        ``radius_mm`` or ``radius_in`` for ``quantity("radius", LENGTH_UNITS)``;
        an empty ``stem`` names the units alone (``gmm``, ``oz_in``).

        Parameters
        ----------
        stem : str
            What the number is ("radius"), or "" for keys that are the unit alone.
        units : dict of str to float
            Unit suffix -> factor to the first unit (:data:`placer.units.LENGTH_UNITS`).
        default : float or None
            What a missing quantity gives (in the first unit).
        required : bool
            Refuse it missing.
        positive, non_negative : bool
            Also refuse zero and below, or below zero.

        Returns
        -------
        value : float or None
            In the first unit of ``units``, or ``default``.
        key : str or None
            The key it was read from; None when missing.

        Raises
        ------
        InputError
            Two of the keys given together, a missing required one, or a bad
            number (:meth:`check_number`).

        References
        ----------
        [NISTHB44] the factors of :mod:`placer.units`.
        """
        key, factor = self._unit_key(stem, units)
        if key is None:
            if required:
                keys = [quantity_key(stem, unit) for unit in units]
                raise self.fail(keys[0], "missing", "a number, as " + " or ".join(keys))
            return default, None
        return self.check_number(key, self.data[key], positive, non_negative) * factor, key

    def _unit_key(self, stem: str, units: dict[str, float]) -> tuple[str | None, float]:
        """The one key of ``stem`` given, and its factor; two given together are refused."""
        keys = {quantity_key(stem, unit): factor for unit, factor in units.items()}
        given = [key for key in keys if key in self.data]
        if len(given) > 1:
            raise self.fail(given[1], f"given together with '{given[0]}'",
                            "one of " + " or ".join(keys))
        return (given[0], keys[given[0]]) if given else (None, 1.0)

    def quantities(self, stem: str, units: dict[str, float], positive: bool = False,
                   non_negative: bool = False) -> tuple[list[float] | None, str | None]:
        """The list of numbers at one of ``stem_<unit>`` keys, converted to the first unit.

        Parameters
        ----------
        stem : str
            What the numbers are ("radii").
        units : dict of str to float
            Unit suffix -> factor to the first unit.
        positive, non_negative : bool
            Also refuse zero and below, or below zero.

        Returns
        -------
        values : list of float or None
            In the first unit of ``units``; None when no key is given.
        key : str or None
            The key they were read from.

        Raises
        ------
        InputError
            Two of the keys given together, a value that is not a list, or a
            bad number (named ``key[i]``).

        References
        ----------
        [NISTHB44] the factors of :mod:`placer.units`.
        """
        key, factor = self._unit_key(stem, units)
        if key is None:
            return None, None
        return [self.check_number(f"{key}[{i + 1}]", v, positive, non_negative) * factor
                for i, v in enumerate(self.array(key))], key

    def integer(self, name: str, default: int | None = None, required: bool = False,
                minimum: int | None = None, maximum: int | None = None) -> int | None:
        """The whole number at ``name``.

        Parameters
        ----------
        name : str
            The key.
        default : int or None
            What a missing key gives.
        required : bool
            Refuse a missing key.
        minimum, maximum : int or None
            Least and greatest value allowed, both included; None for no bound.

        Returns
        -------
        int or None
            The number, or ``default``.

        Raises
        ------
        InputError
            A missing required key, or a value :meth:`check_integer` refuses.
        """
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a whole number")
            return default
        return self.check_integer(name, self.data[name], minimum, maximum)

    def check_integer(self, name: str, value: Any, minimum: int | None = None,
                      maximum: int | None = None) -> int:
        """``value`` (found at ``name``) as a whole number within bounds.

        Parameters
        ----------
        name : str
            The key it was found at, for the message.
        value : Any
            The value.
        minimum, maximum : int or None
            Least and greatest value allowed, both included; None for no bound.

        Returns
        -------
        int
            The number.

        Raises
        ------
        InputError
            A value that is not an ``int`` (a bool is not one), larger than
            :data:`placer.limits.MAX_WHOLE` in size, or outside the bounds.
        """
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.fail(name, f"is {_kind(value)}", "a whole number")
        if abs(value) > MAX_WHOLE:
            raise self.fail(name, f"is {whole_number_text(value)}",
                            f"a whole number of at most {MAX_WHOLE}")
        if minimum is not None and value < minimum:
            raise self.fail(name, f"is {value}", f"a whole number of at least {minimum}")
        if maximum is not None and value > maximum:
            raise self.fail(name, f"is {value}", f"a whole number of at most {maximum}")
        return value

    def sub(self, name: str, required: bool = False) -> Table | None:
        """The table at ``name``.

        Parameters
        ----------
        name : str
            The key.
        required : bool
            Refuse a missing key.

        Returns
        -------
        Table or None
            The sub-table, with its key path; None when missing.

        Raises
        ------
        InputError
            A missing required key, or a value that is not a table.
        """
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a table")
            return None
        return Table(self.data[name], self.file, self.key(name), self.error)

    def array(self, name: str, required: bool = False) -> list | None:
        """The list at ``name``.

        Parameters
        ----------
        name : str
            The key.
        required : bool
            Refuse a missing key.

        Returns
        -------
        list or None
            The list as parsed; None when missing.

        Raises
        ------
        InputError
            A missing required key, or a value that is not a list.
        """
        if name not in self.data:
            if required:
                raise self.fail(name, "missing", "a list [ ... ]")
            return None
        value = self.data[name]
        if not isinstance(value, list):
            raise self.fail(name, f"is {_kind(value)}", "a list [ ... ]")
        return value

    def tables(self, name: str, required: bool = False) -> list[Table]:
        """The array of tables at ``name`` (``[[name]]``).

        Parameters
        ----------
        name : str
            The key.
        required : bool
            Refuse a missing key or an empty list.

        Returns
        -------
        list of Table
            One per entry, key paths ``name[1]``, ``name[2]``, ...; empty when
            missing.

        Raises
        ------
        InputError
            A missing or empty required list, a value that is not a list, or
            an entry that is not a table.
        """
        values = self.array(name, required=required) or []
        if required and not values:
            raise self.fail(name, "is empty", f"at least one [[{name}]] table")
        return [Table(v, self.file, f"{self.key(name)}[{i + 1}]", self.error)
                for i, v in enumerate(values)]


def quantity_key(stem: str, unit: str) -> str:
    """The file key of a quantity in one unit: ``radius_in``, or ``oz_in`` without a stem.

    Parameters
    ----------
    stem : str
        What the number is ("radius"), or "".
    unit : str
        The unit suffix ("in").

    Returns
    -------
    str
        The key.
    """
    return f"{stem}_{unit}" if stem else unit


def _kind(value: Any) -> str:
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, int):
        return f"the number {whole_number_text(value)}"
    if isinstance(value, float):
        return f"the number {value}"
    if isinstance(value, str):
        return f"the text '{shown(value)}'"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a table"
    return type(value).__name__
