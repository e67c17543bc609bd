"""The size of a job checked before any work: counts in a file against placer's limits.

Every reader counts what a file lists (planes, sensors, runs, catalogue
items, rows of a readings file) and calls :func:`check_count` before it
builds anything from the entries, so that a file far beyond shop work is
refused in one line naming the file and the key, instead of running into
the command's time or memory limit (:mod:`placer.budget`).  The limits
themselves live in :mod:`placer.limits` and are listed in README, "Limits".
"""

from __future__ import annotations

from placer.errors import InputError


def check_count(count: int, limit: int, noun: str, *, file: str, key: str,
                error: type[InputError] = InputError) -> None:
    """Refuse ``count`` of ``noun`` when it is above ``limit``.

    Parameters
    ----------
    count : int
        How many the file lists.
    limit : int
        The most placer takes (:mod:`placer.limits`).
    noun : str
        What is counted, plural ("planes", "catalogue items").
    file : str
        The file, for the message.
    key : str
        The key (or line) the entries are under, for the message.
    error : type of InputError
        The reader's error class.

    Raises
    ------
    InputError
        Of class ``error``: "FILE: KEY: has N NOUN (expected at most LIMIT NOUN,
        placer's limit)".

    Examples
    --------
    >>> check_count(3, 8, "planes", file="job.toml", key="planes")
    >>> try:
    ...     check_count(9, 8, "planes", file="job.toml", key="planes")
    ... except InputError as exc:
    ...     print(exc)
    job.toml: planes: has 9 planes (expected at most 8 planes, placer's limit)
    """
    if count > limit:
        raise error(f"has {_grouped(count)} {noun}", file=file, key=key,
                    expected=f"at most {_grouped(limit)} {noun}, placer's limit")


def _grouped(count: int) -> str:
    """A count with its thousands set apart by spaces (100 000)."""
    return f"{count:,}".replace(",", " ")
