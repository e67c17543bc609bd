"""Every conversion between the units placer reads and shows, and how a value is shown.

Inside placer every quantity is metric (g, mm, g·mm, kg).  Readers convert
inch-pound inputs (``mass_oz``, ``radius_in``, ``mass_lb``, ``..._oz_in``)
here, at the edge; views show a value in the job's unit system
(:class:`UnitSystem`) here too.  Nothing else converts.

References
----------
[NISTHB44] in REFERENCES.md: 1 in = 25.4 mm, 1 lb = 0.45359237 kg,
1 oz = 1/16 lb = 28.349523125 g, all exact by definition.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from placer.errors import InputError

G_PER_KG = 1000.0
"""Grams in one kilogram (SI prefix, exact)."""

MM_PER_IN = 25.4
"""Millimetres in one inch [mm/in], exact by definition [NISTHB44]."""

KG_PER_LB = 0.45359237
"""Kilograms in one avoirdupois pound [kg/lb], exact by definition [NISTHB44]."""

G_PER_OZ = KG_PER_LB * G_PER_KG / 16.0
"""Grams in one avoirdupois ounce, 1/16 lb = 28.349523125 g [g/oz], exact [NISTHB44]."""

GMM_PER_OZ_IN = G_PER_OZ * MM_PER_IN
"""Gram-millimetres in one ounce-inch, 720.077887375 g·mm [g·mm/(oz·in)], exact
(the product of two exact definitions) [NISTHB44]."""

MASS_UNITS = {"g": 1.0, "oz": G_PER_OZ}
"""Unit suffixes of a part's mass in a file, and the factor to grams."""

LENGTH_UNITS = {"mm": 1.0, "in": MM_PER_IN}
"""Unit suffixes of a radius or distance in a file, and the factor to millimetres."""

UNBALANCE_UNITS = {"gmm": 1.0, "oz_in": GMM_PER_OZ_IN}
"""Unit suffixes of an unbalance in a file, and the factor to g·mm."""

ROTOR_MASS_UNITS = {"kg": 1.0, "lb": KG_PER_LB}
"""Unit suffixes of a rotor's mass in a file, and the factor to kilograms."""

UNIT_SYSTEMS = ("metric", "imperial")
"""The unit systems a job's output can be shown in: g, mm, g·mm, kg; or oz, in, oz·in, lb."""


def kg_mm2_from_gmm2(moment_gmm2: float) -> float:
    """A couple moment in kg·mm² from g·mm² (1 kg = 1000 g).

    Parameters
    ----------
    moment_gmm2 : float
        Couple moment [g·mm²].

    Returns
    -------
    float
        The same moment [kg·mm²].
    """
    return moment_gmm2 / G_PER_KG


def mm_from_in(length_in: float) -> float:
    """A length in millimetres from inches.

    Parameters
    ----------
    length_in : float
        Length [in].

    Returns
    -------
    float
        The same length [mm].

    References
    ----------
    [NISTHB44] 1 in = 25.4 mm exactly.
    """
    return length_in * MM_PER_IN


def in_from_mm(length_mm: float) -> float:
    """A length in inches from millimetres.

    Parameters
    ----------
    length_mm : float
        Length [mm].

    Returns
    -------
    float
        The same length [in].

    References
    ----------
    [NISTHB44] 1 in = 25.4 mm exactly.
    """
    return length_mm / MM_PER_IN


def g_from_oz(mass_oz: float) -> float:
    """A mass in grams from avoirdupois ounces.

    Parameters
    ----------
    mass_oz : float
        Mass [oz].

    Returns
    -------
    float
        The same mass [g].

    References
    ----------
    [NISTHB44] 1 oz = 28.349523125 g exactly.
    """
    return mass_oz * G_PER_OZ


def oz_from_g(mass_g: float) -> float:
    """A mass in avoirdupois ounces from grams.

    Parameters
    ----------
    mass_g : float
        Mass [g].

    Returns
    -------
    float
        The same mass [oz].

    References
    ----------
    [NISTHB44] 1 oz = 28.349523125 g exactly.
    """
    return mass_g / G_PER_OZ


def kg_from_lb(mass_lb: float) -> float:
    """A mass in kilograms from avoirdupois pounds.

    Parameters
    ----------
    mass_lb : float
        Mass [lb].

    Returns
    -------
    float
        The same mass [kg].

    References
    ----------
    [NISTHB44] 1 lb = 0.45359237 kg exactly.
    """
    return mass_lb * KG_PER_LB


def lb_from_kg(mass_kg: float) -> float:
    """A mass in avoirdupois pounds from kilograms.

    Parameters
    ----------
    mass_kg : float
        Mass [kg].

    Returns
    -------
    float
        The same mass [lb].

    References
    ----------
    [NISTHB44] 1 lb = 0.45359237 kg exactly.
    """
    return mass_kg / KG_PER_LB


def gmm_from_oz_in(unbalance_oz_in: float) -> float:
    """An unbalance in g·mm from oz·in.

    Parameters
    ----------
    unbalance_oz_in : float
        Unbalance, mass times radius [oz·in].

    Returns
    -------
    float
        The same unbalance [g·mm].

    References
    ----------
    [NISTHB44] 1 oz·in = 28.349523125 g × 25.4 mm exactly.
    """
    return unbalance_oz_in * GMM_PER_OZ_IN


def oz_in_from_gmm(unbalance_gmm: float) -> float:
    """An unbalance in oz·in from g·mm.

    Parameters
    ----------
    unbalance_gmm : float
        Unbalance, mass times radius [g·mm].

    Returns
    -------
    float
        The same unbalance [oz·in].

    References
    ----------
    [NISTHB44] 1 oz·in = 28.349523125 g × 25.4 mm exactly.
    """
    return unbalance_gmm / GMM_PER_OZ_IN


def mass_at_radius_g(unbalance_gmm: float, radius_mm: float) -> float:
    """The mass that makes ``unbalance_gmm`` at ``radius_mm``: U / r.

    What a balancing machine shows per plane when it is set to the plane's
    radius, and what a wheel shop's tolerance is stated in.

    Parameters
    ----------
    unbalance_gmm : float
        Unbalance [g·mm].
    radius_mm : float
        Radius [mm], above zero.

    Returns
    -------
    float
        The mass [g].

    References
    ----------
    [ISO21940-11] unbalance U = m·r, mass times its distance from the axis.
    """
    return unbalance_gmm / radius_mm


@dataclass(frozen=True)
class UnitSystem:
    """The units a job's output is shown in: metric (g, mm, g·mm, kg) or imperial
    (oz, in, oz·in, lb).  Values stay metric inside placer; this only shows them.

    Parameters
    ----------
    name : str
        "metric" or "imperial" (:data:`UNIT_SYSTEMS`).

    Raises
    ------
    InputError
        For any other name.
    """

    name: str = "metric"

    def __post_init__(self) -> None:
        if self.name not in UNIT_SYSTEMS:
            raise InputError(f"is '{self.name}'", key="units", expected="metric or imperial")

    @property
    def imperial(self) -> bool:
        """True for ounces and inches."""
        return self.name == "imperial"

    @property
    def mass_unit(self) -> str:
        """"g" or "oz"."""
        return "oz" if self.imperial else "g"

    @property
    def length_unit(self) -> str:
        """"mm" or "in"."""
        return "in" if self.imperial else "mm"

    @property
    def unbalance_unit(self) -> str:
        """"g·mm" or "oz·in"."""
        return "oz·in" if self.imperial else "g·mm"

    @property
    def rotor_mass_unit(self) -> str:
        """"kg" or "lb"."""
        return "lb" if self.imperial else "kg"

    def mass(self, mass_g: float) -> float:
        """A part's mass in this system.

        Parameters
        ----------
        mass_g : float
            Mass [g].

        Returns
        -------
        float
            In g or oz.
        """
        return oz_from_g(mass_g) if self.imperial else mass_g

    def length(self, length_mm: float) -> float:
        """A radius or distance in this system.

        Parameters
        ----------
        length_mm : float
            Length [mm].

        Returns
        -------
        float
            In mm or in.
        """
        return in_from_mm(length_mm) if self.imperial else length_mm

    def unbalance(self, unbalance_gmm: float) -> float:
        """An unbalance in this system.

        Parameters
        ----------
        unbalance_gmm : float
            Unbalance [g·mm].

        Returns
        -------
        float
            In g·mm or oz·in.
        """
        return oz_in_from_gmm(unbalance_gmm) if self.imperial else unbalance_gmm

    def rotor_mass(self, mass_kg: float) -> float:
        """A rotor's mass in this system.

        Parameters
        ----------
        mass_kg : float
            Mass [kg].

        Returns
        -------
        float
            In kg or lb.
        """
        return lb_from_kg(mass_kg) if self.imperial else mass_kg

    def mass_text(self, mass_g: float, digits: int = 3) -> str:
        """A part's mass as text with its unit ("6.27 g", "0.221 oz").

        Parameters
        ----------
        mass_g : float
            Mass [g].
        digits : int
            Significant digits.

        Returns
        -------
        str
            The text.
        """
        return f"{significant(self.mass(mass_g), digits)} {self.mass_unit}"

    def length_text(self, length_mm: float, digits: int = 4) -> str:
        """A radius as text with its unit ("210 mm", "8.27 in").

        Parameters
        ----------
        length_mm : float
            Length [mm].
        digits : int
            Significant digits.

        Returns
        -------
        str
            The text.
        """
        return f"{significant(self.length(length_mm), digits)} {self.length_unit}"

    def unbalance_text(self, unbalance_gmm: float, digits: int = 4) -> str:
        """An unbalance as text with its unit ("3885 g·mm", "5.395 oz·in").

        Parameters
        ----------
        unbalance_gmm : float
            Unbalance [g·mm].
        digits : int
            Significant digits.

        Returns
        -------
        str
            The text.
        """
        return f"{significant(self.unbalance(unbalance_gmm), digits)} {self.unbalance_unit}"

    def rotor_mass_text(self, mass_kg: float) -> str:
        """A rotor's mass as text with its unit ("42 kg", "92.59 lb").

        Parameters
        ----------
        mass_kg : float
            Mass [kg].

        Returns
        -------
        str
            The text.
        """
        return f"{significant(self.rotor_mass(mass_kg), 4)} {self.rotor_mass_unit}"


METRIC = UnitSystem("metric")
"""g, mm, g·mm, kg."""

IMPERIAL = UnitSystem("imperial")
"""oz, in, oz·in, lb."""


def significant(value: float, digits: int = 3) -> str:
    """A number with ``digits`` significant digits, never in exponent form.

    Whole digits above the significant ones are kept (1639.84 with 3 gives
    "1640"); trailing zeros after the point are dropped ("2.50" -> "2.5");
    zero is "0".  So a reading of 0.0012 in/s is "0.0012", not "0.00".

    Parameters
    ----------
    value : float
        The number.
    digits : int
        Significant digits, at least 1.

    Returns
    -------
    str
        The text ("-" for a value that is not finite).
    """
    if not math.isfinite(value):
        return "-"
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    decimals = max(0, digits - 1 - exponent)
    text = f"{round(value, decimals):.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text
