"""A solved rotor as a record: a line of ``PREFIX.jsonl`` and a row of ``PREFIX.csv``."""

from __future__ import annotations

from typing import Any

from placer.batch import (
    RotorOutcome,
    reading_digest,
)
from placer.geometry import angle_of_deg


def parts_text(fitted: list[dict]) -> str:
    """``position:item×count`` joined by ``;`` (empty for no parts); count < 0 to take off.

    Parameters
    ----------
    fitted : list of dict
        The plane's parts as in a result record (``position``, ``item``,
        ``count``, ``action``).

    Returns
    -------
    str
        The parts as text, e.g. ``3:M10×2;7:M6×1``.
    """
    return ";".join([f"{p['position']}:{p['item']}×{_signed(p)}" for p in fitted])


def _signed(part: dict) -> int:
    return -part["count"] if part.get("action") == "remove" else part["count"]


def outcome_record(outcome: RotorOutcome, digest: str) -> dict[str, Any]:
    """The JSON object of one solved rotor (a line of ``PREFIX.jsonl``).

    ``input`` is :func:`placer.batch.reading_digest` of the corrections the
    rotor was solved for; each plane repeats its correction as read.

    Parameters
    ----------
    outcome : RotorOutcome
        The rotor's plans.
    digest : str
        :func:`template_digest` of the template file.

    Returns
    -------
    dict
        The record, ready for :func:`placer.io.tables.json_text`.
    """
    record = {"serial": outcome.serial, "line": outcome.line, "template": digest,
              "input": reading_digest(p.correction_gmm for p in outcome.planes),
              "within_tolerance": outcome.within_tolerance,
              "solved_together": outcome.solved_together,
              "stock_short": list(outcome.stock_short),
              "planes": [_plane_record(p) for p in outcome.planes]}
    if outcome.drawer_left:
        record["drawer_left"] = [{"catalog": c, "item": i, "count": n}
                                 for c, i, n in outcome.drawer_left]
        record["full_drawer"] = (None if outcome.full_drawer is None
                                 else [_plane_record(p) for p in outcome.full_drawer])
    return record


def _plane_record(p) -> dict[str, Any]:
    """One plane's plan in a rotor's record."""
    fitted = [{"position": f.position, "angle_deg": f.angle_deg, "item": f.item,
               "mass_g": f.mass_g, "count": f.count, "action": f.verb} for f in p.option.parts]
    return {"plane": p.plane, "name": p.name, "catalog": p.catalog,
            "correction_gmm": abs(p.correction_gmm),
            "correction_angle_deg": angle_of_deg(p.correction_gmm),
            "parts": parts_text(fitted), "fitted": fitted,
            "part_count": p.option.used_parts, "mass_g": p.option.mass_g,
            "residual_gmm": p.option.residual_gmm,
            "residual_angle_deg": p.option.residual_angle_deg,
            "tolerance_gmm": p.tolerance_gmm, "within_tolerance": p.within_tolerance}


def csv_header(n_planes: int) -> list[str]:
    """Columns of ``PREFIX.csv``.

    Parameters
    ----------
    n_planes : int
        Planes of the template.

    Returns
    -------
    list of str
        ``serial``, three columns per plane (numbered from 1), then
        ``within_tolerance``.
    """
    names = ["serial"]
    for number in range(1, n_planes + 1):
        names += [f"{number}_parts", f"{number}_residual_gmm", f"{number}_within_tolerance"]
    return names + ["within_tolerance"]


def _flag(value: bool | None) -> str:
    return "" if value is None else ("true" if value else "false")


def csv_row(record: dict[str, Any]) -> list[str]:
    """One line of ``PREFIX.csv`` from a result record (a residual of null left empty).

    Parameters
    ----------
    record : dict
        A result record (:func:`outcome_record`, or read back from ``PREFIX.jsonl``).

    Returns
    -------
    list of str
        The cells, in the order of :func:`csv_header`.
    """
    row = [record["serial"]]
    for plane in record["planes"]:
        residual = plane["residual_gmm"]
        row += [plane["parts"], "" if residual is None else repr(float(residual)),
                _flag(plane["within_tolerance"])]
    return row + [_flag(record["within_tolerance"])]


def record_parts(record: dict[str, Any]) -> list[tuple[str, str, int]]:
    """(plane's catalogue, item, count) of every part a kept record fits.

    Parameters
    ----------
    record : dict
        A rotor's record (a line of ``PREFIX.jsonl``).
    """
    return [(plane["catalog"], part["item"], part["count"])
            for plane in record["planes"] for part in plane["fitted"]
            if part.get("action") != "remove"]
