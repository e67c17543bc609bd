"""``placer tolerance`` and ``placer trial`` on the terminal: a few plain lines, at most
80 columns, in the units asked for."""

from __future__ import annotations

import math
import textwrap
from collections.abc import Sequence

from placer.influence import trial_mass_g
from placer.tolerance import PlaneShare
from placer.units import METRIC, UnitSystem, mass_at_radius_g, significant
from placer.views.terminal.plain import PLAIN_WIDTH


def _wrapped(lines: list[str]) -> list[str]:
    """Each line wrapped to 80 columns, continuation lines indented two more."""
    out = []
    for line in lines:
        indent = " " * (len(line) - len(line.lstrip(" ")))
        out += textwrap.wrap(line, PLAIN_WIDTH, subsequent_indent=indent + "  ",
                             break_on_hyphens=False) or [""]
    return out


def tolerance_lines(grade_mm_s: float, mass_kg: float, service_rpm: float, u_per_gmm: float,
                    shares: Sequence[PlaneShare], lever_rule: bool,
                    units: UnitSystem = METRIC, radius_mm: float | None = None) -> list[str]:
    """U_per and each plane's share, as printed by ``placer tolerance``.

    Parameters
    ----------
    grade_mm_s : float
        Balance quality grade G [mm/s].
    mass_kg : float
        Rotor mass [kg].
    service_rpm : float
        Maximum service speed [r/min].
    u_per_gmm : float
        Permissible residual unbalance [g·mm].
    shares : sequence of PlaneShare
        Its allocation to the planes.
    lever_rule : bool
        Whether the shares come from the centre of mass's distances.
    units : UnitSystem
        The units shown.
    radius_mm : float or None
        A correction radius [mm]: each share is also shown as the mass at it.

    Returns
    -------
    list of str
        The lines, none longer than 80 columns.

    References
    ----------
    [ISO21940-11] U_per and its shares; U = m·r for the mass at the radius.
    """
    per_mass = units.unbalance(u_per_gmm) / units.rotor_mass(mass_kg)
    lines = [f"Grade G{grade_mm_s:g}, rotor {units.rotor_mass_text(mass_kg)}, "
             f"{service_rpm:g} r/min",
             f"U_per = 1000·G·m/ω = {units.unbalance_text(u_per_gmm)}  (ISO 21940-11)",
             f"  = {significant(per_mass, 4)} {units.unbalance_unit}/{units.rotor_mass_unit} "
             "permissible specific unbalance"]
    rule = ("one plane takes the full value" if len(shares) == 1 else
            "lever rule from the distances, each share held to 30-70 % (common practice)"
            if lever_rule else "equal shares, as for a symmetric rotor")
    lines.append(f"Per plane, {rule}:")
    for s in shares:
        line = f"  plane {s.name}: {s.share:.0%} = {units.unbalance_text(s.permissible_gmm)}"
        if radius_mm is not None:
            mass = units.mass_text(mass_at_radius_g(s.permissible_gmm, radius_mm))
            line += f" = {mass} at r {units.length_text(radius_mm)}"
        lines.append(line)
    return _wrapped(lines)


def trial_lines(mass_kg: float, rpm: float, radius_mm: float,
                units: UnitSystem = METRIC) -> list[str]:
    """A trial mass by the 10 % force rule, and how to fit it (``placer trial``).

    Parameters
    ----------
    mass_kg : float
        Rotor mass [kg].
    rpm : float
        Speed of the trial run [r/min].
    radius_mm : float
        Radius the trial weight goes on [mm].
    units : UnitSystem
        The units shown.

    Returns
    -------
    list of str
        The lines, none longer than 80 columns.

    References
    ----------
    [TrialMassRule] m_t·r·ω² ≈ 0.1·M·g (common practice).
    """
    grams = trial_mass_g(mass_kg, rpm, radius_mm)
    force_n = grams / 1000 * radius_mm / 1000 * (2 * math.pi * rpm / 60) ** 2
    return _wrapped([
        f"Trial mass about {units.mass_text(grams)} at r {units.length_text(radius_mm)}: its "
        f"centrifugal force, {force_n:.0f} N, is 10 % of the rotor's weight (common "
        "practice).",
        "Fit it as firmly as a final weight; lock out before fitting; keep clear of the "
        "plane of rotation on the run."])
