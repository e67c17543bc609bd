"""``placer tolerance`` and ``placer trial`` on the terminal: a few plain lines."""

from __future__ import annotations

import math
from collections.abc import Sequence

from placer.influence import trial_mass_g
from placer.tolerance import PlaneShare


def tolerance_lines(grade_mm_s: float, mass_kg: float, service_rpm: float, u_per_gmm: float,
                    shares: Sequence[PlaneShare], lever_rule: bool) -> list[str]:
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
    """
    lines = [f"Grade G{grade_mm_s:g}, rotor {mass_kg:g} kg, {service_rpm:g} r/min",
             f"U_per = 1000·G·m/ω = {u_per_gmm:.1f} g·mm  (ISO 21940-11)",
             f"  = {u_per_gmm / mass_kg:.2f} g·mm/kg permissible specific unbalance"]
    rule = ("one plane takes the full value" if len(shares) == 1 else
            "lever rule from the distances, each share held to 30-70 % (limits from memory)"
            if lever_rule else "equal shares, as for a symmetric rotor")
    lines.append(f"Per plane, {rule}:")
    lines += [f"  plane {s.name}: {s.share:.0%} = {s.permissible_gmm:.1f} g·mm" for s in shares]
    return lines


def trial_lines(mass_kg: float, rpm: float, radius_mm: float) -> list[str]:
    """A trial mass by the 10 % force rule, and how to fit it (``placer trial``).

    Parameters
    ----------
    mass_kg : float
        Rotor mass [kg].
    rpm : float
        Speed of the trial run [r/min].
    radius_mm : float
        Radius the trial weight goes on [mm].
    """
    grams = trial_mass_g(mass_kg, rpm, radius_mm)
    force_n = grams / 1000 * radius_mm / 1000 * (2 * math.pi * rpm / 60) ** 2
    return [f"Trial mass about {grams:.1f} g at r {radius_mm:g} mm: its centrifugal force "
            f"{force_n:.0f} N is 10 % of the rotor's weight (rule of thumb, from memory).",
            "Fit it as firmly as a final weight; lock out before fitting; keep clear of the "
            "plane of rotation on the run."]
