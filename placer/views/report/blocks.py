"""The report's text and table blocks: the verdict on the data, coefficients, correction,
predicted vibration, notes, and what is on the rotor when the technician leaves.

Each function returns a block: ``draw(page, y, drawn) -> y below`` (see
:mod:`placer.views.report.pages`); on a dry run (``page.ax`` None) it only
measures.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from placer.geometry import angle_of_deg
from placer.units import kg_mm2_from_gmm2
from placer.views.numbers import angle_text, phasor_text, significant
from placer.views.report.layout import (
    BODY_PT,
    WIDTH_IN,
    black_band,
    paragraphs,
    section,
)
from placer.views.sheet.typeset import MARGIN_IN, Page
from placer.visitreport import VisitReport

G_PER_KG = 1000.0
"""Coefficients are printed per kg·mm: 1 kg·mm = 1000 g·mm."""

FAILED_BAND = "PLAN FROM DATA THAT FAILS THE CHECKS: TAKE THE RUNS AGAIN BEFORE FITTING IT"
"""The band over a report whose data failed a check."""


def unit_of(report: VisitReport) -> str:
    """The unit and measure read: "mm/s peak".

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    str
        Unit and measure.
    """
    return f"{report.record.unit} {report.record.measure}"


def reading(report: VisitReport, value: complex) -> str:
    """A reading or prediction as printed: amplitude∠angle, the amplitude alone without phase.

    Parameters
    ----------
    report : VisitReport
        The visit.
    value : complex
        The phasor [unit read].

    Returns
    -------
    str
        With significant digits.
    """
    return significant(abs(value)) if report.amplitude_only else phasor_text(value)


def percent(share: float, signed: bool = False) -> str:
    """A share as a whole percentage ("178 %", "+12 %"); "-" when not finite.

    Parameters
    ----------
    share : float
        The share [1].
    signed : bool
        Show the sign.

    Returns
    -------
    str
        The text.
    """
    if not math.isfinite(share):
        return "-"
    return f"{100 * share:+.0f} %" if signed else f"{100 * share:.0f} %"


Block = Callable[[Page, float, object], float]


def checks_block(report: VisitReport) -> Block:
    """The verdict on the data, before anything else: trial runs, plane separation.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block.
    """
    def draw(page: Page, y: float, drawn: object) -> float:
        y = section(page, y, "The data, judged before the plan")
        if report.verdicts:
            columns = [("Trial run", "l"), ("Adds to", "l"), ("Sensor moved most", "l"),
                       ("Vector", "r"), ("Amplitude", "r"), ("Phase", "r"), ("Verdict", "l")]
            rows, bold = [], set()
            for i, v in enumerate(report.verdicts):
                c = v.strongest
                rows.append([v.run, v.against, c.sensor, percent(c.vector_share),
                             percent(c.amplitude_share, signed=True),
                             f"{c.phase_change_deg:+.0f}°", "trusted" if v.trusted
                             else "TOO WEAK"])
                if not v.trusted:
                    bold.add(i)
            y = page.table(MARGIN_IN, y, columns, rows, WIDTH_IN, bold=bold)
        texts = []
        for c in report.checks:
            if c.subject.startswith("trial run ") and report.verdicts and c.passed:
                continue
            word = "Passed" if c.passed else "FAILED"
            text = f"{word}: {c.subject}: {c.finding}."
            if c.action:
                text += f" What to do: {c.action}."
            texts.append(text)
        if not report.checks:
            texts.append("No check of the data could be made for this visit.")
        y = paragraphs(page, y, texts, BODY_PT)
        rules = list(dict.fromkeys(c.rule for c in report.checks))
        y = paragraphs(page, y, [f"Rule: {r}." for r in rules], 6.5, style="italic")
        if not report.data_ok:
            y = black_band(page, y + 0.04, FAILED_BAND)
        return y

    return draw


def coefficients_block(report: VisitReport) -> Block:
    """The influence coefficients per kg·mm and their condition, or the four-run figures.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block.
    """
    record = report.record
    unit = unit_of(report)

    def draw(page: Page, y: float, drawn: object) -> float:
        f = report.four_run
        if f is not None:
            y = section(page, y, "No phase reference: the four-run method")
            runs = ", ".join(f"{angle_text(a)}: {significant(x)}"
                             for a, x in zip(f.angles_deg, f.amplitudes))
            texts = [f"Reference run {significant(f.reference)} {unit}; the same trial "
                     f"({significant(f.trial_gmm, 4)} g·mm) at {runs} {unit}.",
                     f"The circles meet at {significant(f.effect)} {unit} at "
                     f"{angle_text(angle_of_deg(f.meeting_point), 1)}: the trial's effect and "
                     "the angle of the correction. Coefficient "
                     f"{significant(f.coefficient * G_PER_KG)} {unit} per kg·mm (its phase is "
                     "not known without a phase reference)."]
            return paragraphs(page, y, texts)
        if record.coefficients is None:
            y = section(page, y, "Influence coefficients")
            return paragraphs(page, y, [f"None stored ({record.coefficient_source})."])
        y = section(page, y, f"Influence coefficients ({unit} per kg·mm, phase as an angle "
                             f"counted {record.angle_sense})")
        columns = [("Sensor", "l")]
        weighted = any(w != 1.0 for w in report.weights)
        if weighted:
            columns.append(("Weight", "r"))
        columns += [(name, "r") for name in record.plane_names]
        rows = []
        for c, name in enumerate(record.channel_names):
            row = [name] + ([f"{report.weights[c]:g}"] if weighted else [])
            rows.append(row + [phasor_text(v * G_PER_KG) for v in record.coefficients[c]])
        y = page.table(MARGIN_IN, y, columns, rows, WIDTH_IN)
        texts = [f"From {record.coefficient_source}."]
        if record.condition is not None and len(record.plane_names) > 1:
            texts[0] += (f" Condition number {significant(record.condition)} (each plane's "
                         "column scaled to unit length; 1 is ideal).")
        return paragraphs(page, y, texts)

    return draw


def correction_block(report: VisitReport) -> Block:
    """The continuous correction per plane, with its static and couple parts.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block.
    """
    def draw(page: Page, y: float, drawn: object) -> float:
        y = section(page, y, "Correction per plane (least squares, before rounding to stock)")
        rows = []
        for plane in report.planes:
            w = plane.correction_gmm
            radius = plane.geometry.radii_mm[0] if plane.geometry else None
            at = "-" if radius is None else f"{significant(abs(w) / radius)} g at r {radius:g} mm"
            rows.append([plane.name, significant(abs(w), 4), angle_text(angle_of_deg(w), 1), at])
        y = page.table(MARGIN_IN, y, [("Plane", "l"), ("g·mm", "r"), ("Angle", "r"),
                                      ("As one mass", "l")], rows, WIDTH_IN)
        sc = report.static_couple
        if sc is None:
            return y
        text = (f"Static part {significant(abs(sc.static_gmm), 4)} g·mm at "
                f"{angle_text(angle_of_deg(sc.static_gmm), 1)}; couple part "
                f"±{significant(abs(sc.couple_gmm), 4)} g·mm at "
                f"{angle_text(angle_of_deg(sc.couple_gmm), 1)} in plane 1 and opposite in "
                "plane 2")
        if sc.couple_moment_gmm2 is not None:
            text += f", a moment of {kg_mm2_from_gmm2(sc.couple_moment_gmm2):.1f} kg·mm²"
        if sc.couple_negligible:
            text += "; the couple part is negligible (placer's own rule): one plane would do"
        return paragraphs(page, y, [text + "."])

    return draw


def prediction_block(report: VisitReport) -> Block:
    """The vibration now and predicted after the plan, per sensor, against the limit.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block.
    """
    record = report.record
    unit = unit_of(report)

    def draw(page: Page, y: float, drawn: object) -> float:
        y = section(page, y, f"Vibration now and predicted after the plan ({unit})")
        if report.predicted is None:
            return paragraphs(page, y, ["No prediction: no coefficients were stored."])
        limit = report.limit
        rows = []
        for c, name in enumerate(record.channel_names):
            after = abs(report.predicted[c])
            verdict = "" if limit is None else ("below the limit" if after <= limit
                                                else "ABOVE THE LIMIT")
            rows.append([name, reading(report, report.now[c]),
                         reading(report, report.predicted[c]), verdict])
        y = page.table(MARGIN_IN, y, [("Sensor", "l"), ("Now", "r"), ("After the plan", "r"),
                                      ("", "l")], rows, WIDTH_IN)
        largest = float(np.max(np.abs(report.predicted)))
        if limit is None:
            words = f"LARGEST AFTER THE PLAN {significant(largest)} {unit}; NO LIMIT GIVEN"
        else:
            words = (f"LARGEST AFTER THE PLAN {significant(largest)} {unit}: "
                     + ("BELOW" if report.within_limit else "ABOVE")
                     + f" THE LIMIT OF {limit:g} {unit}")
        if not report.data_ok:
            words += ", PREDICTED FROM DATA THAT FAILS THE CHECKS"
        if report.within_limit is False or not report.data_ok:
            y = black_band(page, y, words)
        else:
            height = 0.36
            page.box(MARGIN_IN, y, WIDTH_IN, height, lw=2.2)
            page.text(MARGIN_IN + WIDTH_IN / 2, y + height / 2, words, 9.5, weight="bold",
                      ha="center", va="center")
            y += height + 0.06
        basis = record.result.get("basis")
        note = ("Amplitudes as read, every sensor unweighted. "
                + (f"Now: the {basis}. " if isinstance(basis, str) else "")
                + "After the plan: predicted from the coefficients, V = V0 + A·w.")
        if any(w != 1.0 for w in report.weights) or record.setup.get("norm") == "rms":
            objective = record.result.get("objective_after")
            if isinstance(objective, (int, float)):
                kind = "root-sum-square" if record.setup.get("norm") == "rms" else "largest"
                note += (f" The plan minimised the weighted {kind} reading: "
                         f"{significant(objective)} (a figure for comparing plans, not a "
                         "reading).")
        return paragraphs(page, y, [note], 6.5, style="italic")

    return draw


def notes_block(report: VisitReport) -> Block:
    """Warnings of the visit and what an older record cannot show.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block (nothing when there is nothing to say).
    """
    warnings = [str(w) for w in report.record.result.get("warnings", [])]

    def draw(page: Page, y: float, drawn: object) -> float:
        texts = [f"Note: {w}." for w in warnings] + list(report.missing)
        return paragraphs(page, y, texts, BODY_PT) if texts else y

    return draw


def leaving_block(report: VisitReport) -> Block:
    """What is on the rotor when the technician leaves: parts left on, new parts.

    Parameters
    ----------
    report : VisitReport
        The visit.

    Returns
    -------
    Block
        The block.
    """
    names = report.record.plane_names

    def draw(page: Page, y: float, drawn: object) -> float:
        y = section(page, y, "On the rotor when you leave")
        if not report.on_rotor:
            return paragraphs(page, y, ["Nothing: no part is fitted and none is left on."])
        rows = [[names[p.plane], "-" if p.position is None else str(p.position),
                 angle_text(p.angle_deg, 1), p.label, str(p.count),
                 f"{p.mass_g * p.count:g}", f"{p.radius_mm:g}", p.origin]
                for p in report.on_rotor]
        y = page.table(MARGIN_IN, y, [("Plane", "l"), ("Pos.", "r"), ("Angle", "r"),
                                      ("Part", "l"), ("Count", "r"), ("Mass g", "r"),
                                      ("r mm", "r"), ("", "l")], rows, WIDTH_IN, ticks=True)
        return paragraphs(page, y, ["Tick each line once it is checked on the rotor. Parts "
                                    "taken off by the plan are not listed."], 6.5,
                          style="italic")

    return draw
