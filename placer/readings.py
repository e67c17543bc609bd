"""Vibration readings: amplitude units, amplitude measures and phase conventions.

A once-per-revolution reading is a phasor A·e^{iφ}.  Inside placer every
reading is held as a complex number in the session's amplitude unit and
measure (peak, peak-to-peak or rms, as the technician read it), with its
phase counted in the rotor's angle sense, so that weights (in the same
sense) and readings combine linearly: V = V0 + Σ α·W.  For a sinusoid the
measures differ by a constant factor only, so the model holds in any of
them; vibration is shown and compared with a limit in the measure read.

Phase lag is counted from the reference pulse to the vibration peak.  A
heavy spot placed further from the reference mark *against* rotation passes
the sensor later, so phase lag grows with angles counted against rotation,
and phase lead with angles counted with rotation.

References
----------
Influence-coefficient balancing with complex phasors; the rule that weight
angles must be counted in the same sense as the phase lag for W = -V0/α to
hold ([InfluenceCoefficients] in REFERENCES.md).  Peak, peak-to-peak
and rms of a sinusoid: peak-to-peak = 2·peak, rms = peak/√2 (sinusoid
identities).  1 mil = 0.001 in = 25.4 µm; 1 in/s = 25.4 mm/s ([NISTHB44]: the inch is
25.4 mm exactly).
"""

from __future__ import annotations

import math

from placer.units import MM_PER_IN

AMPLITUDE_UNITS = {"um": ("displacement", 1.0), "mils": ("displacement", MM_PER_IN),
                   "mm/s": ("velocity", 1.0), "in/s": ("velocity", MM_PER_IN)}
"""Amplitude units: quantity and factor to the base unit (µm or mm/s)."""

UNIT_ALIASES = {"µm": "um", "micron": "um", "microns": "um", "mil": "mils",
                "ips": "in/s", "mm/sec": "mm/s"}

MEASURES = {"peak": 1.0, "peak-to-peak": 0.5, "rms": math.sqrt(2.0)}
"""Factor from each amplitude measure to peak, for a sinusoid."""

PHASE_SENSES = ("lag", "lead")
"""Phase lag counts against rotation, phase lead with rotation."""


ROTOR_SENSES = ("against rotation", "with rotation")
"""Angle senses independent of the sense of rotation."""


def canonical_unit(unit: str) -> str | None:
    """The unit's canonical spelling, or None if placer does not know it.

    Parameters
    ----------
    unit : str
        An amplitude unit as written ("µm", "mils", "ips", ...); surrounding
        spaces are ignored.

    Returns
    -------
    str or None
        A key of :data:`AMPLITUDE_UNITS` ("um", "mils", "mm/s", "in/s").
    """
    unit = unit.strip()
    unit = UNIT_ALIASES.get(unit, unit)
    return unit if unit in AMPLITUDE_UNITS else None


def convert_amplitude(value: float, unit: str, measure: str, to_unit: str,
                      to_measure: str = "peak", speed_rpm: float | None = None) -> float:
    """An amplitude in another unit and measure.

    Displacement and velocity convert only with the speed of a 1× sinusoid:
    velocity = ω·displacement (ω in rad/s).

    Parameters
    ----------
    value : float
        The amplitude [``unit``, ``measure``].
    unit, to_unit : str
        Canonical amplitude units (keys of :data:`AMPLITUDE_UNITS`), from and to.
    measure, to_measure : str
        Amplitude measures ("peak", "peak-to-peak", "rms"), from and to.
    speed_rpm : float or None
        Speed of the once-per-revolution sinusoid [r/min]; needed only between
        displacement and velocity.

    Returns
    -------
    float
        The amplitude [``to_unit``, ``to_measure``].

    Raises
    ------
    ValueError
        Displacement to velocity (or back) without a speed.

    References
    ----------
    Sinusoid identities and the inch [NISTHB44] (module docstring).
    """
    quantity, factor = AMPLITUDE_UNITS[unit]
    to_quantity, to_factor = AMPLITUDE_UNITS[to_unit]
    base = value * factor * MEASURES[measure]
    if quantity != to_quantity:
        if speed_rpm is None:
            raise ValueError("displacement and velocity convert only at a known speed")
        omega = 2.0 * math.pi * speed_rpm / 60.0
        # µm·(rad/s) = 1e-3 mm/s
        base = base * omega * 1e-3 if quantity == "displacement" else base / (omega * 1e-3)
    return base / to_factor / MEASURES[to_measure]


def phase_in_rotor_sense(phase_deg: float, phase_sense: str, rotor_sense: str,
                         rotation: str | None = None) -> float:
    """A reading's phase as an angle counted in the rotor's angle sense [deg].

    Parameters
    ----------
    phase_deg : float
        The phase as read [deg].
    phase_sense : {"lag", "lead"}
        How the instrument counts the phase: lag counts against rotation,
        lead with rotation.
    rotor_sense : str
        The job's angle sense: "against rotation", "with rotation",
        "clockwise" or "counterclockwise" (seen from the working side).
    rotation : {"clockwise", "counterclockwise"} or None
        Sense of rotation seen from the same side; needed only when the
        rotor's angles are clockwise or counterclockwise.

    Returns
    -------
    float
        The phase as an angle in the rotor's sense [deg], in [0, 360).

    Raises
    ------
    ValueError
        Angles counted clockwise or counterclockwise without a ``rotation``.

    References
    ----------
    Weight angles and phase counted in one sense [InfluenceCoefficients].
    """
    against = phase_deg if phase_sense == "lag" else -phase_deg
    sense = sense_against_rotation(rotor_sense, rotation)
    if sense is None:
        raise ValueError("the rotation sense is needed when angles are clockwise or "
                         "counterclockwise")
    value = against if sense == "against rotation" else -against
    return value % 360.0


def quantity_of(unit: str) -> str:
    """"displacement" or "velocity": what a (canonical) amplitude unit measures.

    Parameters
    ----------
    unit : str
        A canonical amplitude unit (a key of :data:`AMPLITUDE_UNITS`).

    Returns
    -------
    str
        "displacement" or "velocity".
    """
    return AMPLITUDE_UNITS[unit][0]


def amplitude_scale(unit: str, measure: str, to_unit: str, to_measure: str) -> float:
    """Factor that turns an amplitude (or a coefficient) in one unit and measure into another.

    Both units must measure the same quantity (displacement or velocity).

    Parameters
    ----------
    unit, to_unit : str
        Canonical amplitude units, from and to.
    measure, to_measure : str
        Amplitude measures ("peak", "peak-to-peak", "rms"), from and to.

    Returns
    -------
    float
        The factor [``to_unit`` per ``unit``].

    Raises
    ------
    ValueError
        A displacement unit against a velocity unit.

    References
    ----------
    Sinusoid identities and the inch (module docstring).
    """
    if quantity_of(unit) != quantity_of(to_unit):
        raise ValueError(f"{unit} and {to_unit} measure different quantities")
    return convert_amplitude(1.0, unit, measure, to_unit, to_measure)


def sense_against_rotation(angle_sense: str, rotation: str | None) -> str | None:
    """The angle sense as "against rotation" or "with rotation" (None if it cannot be told).

    Parameters
    ----------
    angle_sense : str
        "against rotation", "with rotation", "clockwise" or "counterclockwise".
    rotation : {"clockwise", "counterclockwise"} or None
        Sense of rotation seen from the same side as the angles.

    Returns
    -------
    str or None
        "against rotation" or "with rotation"; None for clockwise or
        counterclockwise angles without a rotation.
    """
    if angle_sense in ROTOR_SENSES:
        return angle_sense
    if rotation is None:
        return None
    return "with rotation" if angle_sense == rotation else "against rotation"
