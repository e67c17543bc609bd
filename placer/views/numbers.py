"""Numbers as field and history output shows them: significant digits, angles in [0, 360).

One helper for every reading, coefficient and prediction a field or history
view prints, so that a reading of 0.0034 in/s does not print as ``0.00`` and
an angle of -0.01° does not print as ``360°``.
"""

from __future__ import annotations

import math

from placer.geometry import angle_of_deg

DIGITS = 3
"""Significant digits of a computed amplitude, coefficient or prediction."""


def significant(value: float, digits: int = DIGITS) -> str:
    """A number with ``digits`` significant digits, in plain notation.

    Numbers with ``digits`` or more digits before the point are rounded to a
    whole number ("1234"); smaller ones keep their trailing zeros so that
    the digits shown are all significant ("0.850", "0.00340").

    Parameters
    ----------
    value : float
        The number [any unit].
    digits : int
        Significant digits, at least 1.

    Returns
    -------
    str
        The text; "0" for zero, "-" for a value that is not finite.
    """
    if not math.isfinite(value):
        return "-"
    if value == 0:
        return "0"
    if abs(value) >= 10 ** (digits - 1):
        return f"{value:.0f}"
    rounded = float(f"{value:.{digits}g}")
    if rounded == 0:
        return "0"
    magnitude = math.floor(math.log10(abs(rounded)))
    decimals = max(0, digits - 1 - magnitude)
    text = f"{rounded:.{decimals}f}"
    return "0" if float(text) == 0 else text


def angle_text(angle_deg: float, decimals: int = 0) -> str:
    """An angle rounded, then brought into [0, 360): never "360°", never "-0°".

    Parameters
    ----------
    angle_deg : float
        The angle [deg], any value.
    decimals : int
        Decimals shown.

    Returns
    -------
    str
        The angle with its degree sign, e.g. "47°" or "359.9°".
    """
    if not math.isfinite(angle_deg):
        return "-"
    value = round(angle_deg % 360.0, decimals) % 360.0 + 0.0
    return f"{value:.{decimals}f}°"


def phasor_text(value: complex, digits: int = DIGITS) -> str:
    """A reading, coefficient or prediction as amplitude∠angle.

    Parameters
    ----------
    value : complex
        The phasor [its unit]; the angle in the rotor's angle sense.
    digits : int
        Significant digits of the amplitude.

    Returns
    -------
    str
        E.g. "0.0849∠47°"; a zero phasor is "0".
    """
    if abs(value) == 0:
        return "0"
    return f"{significant(abs(value), digits)}∠{angle_text(angle_of_deg(complex(value)))}"


def as_read_text(amplitude: float, phase_deg: float | None) -> str:
    """A reading as the technician wrote it: amplitude as given, phase as given.

    Parameters
    ----------
    amplitude : float
        The amplitude as read [session unit and measure].
    phase_deg : float or None
        The phase as read [deg]; None for an amplitude-only reading.

    Returns
    -------
    str
        E.g. "11.68∠74°", or "4.1" without a phase.
    """
    if phase_deg is None:
        return f"{amplitude:g}"
    return f"{amplitude:g}∠{phase_deg:g}°"


def share_text(share: float) -> str:
    """A share as a percentage, whole percent from 10 % up, else one decimal.

    Parameters
    ----------
    share : float
        The share [1] (0.3 for 30 %).

    Returns
    -------
    str
        E.g. "30 %", "4.5 %"; "-" when not finite.
    """
    if not math.isfinite(share):
        return "-"
    percent = 100.0 * share
    return f"{percent:.0f} %" if abs(percent) >= 10 else f"{percent:.1f} %"
