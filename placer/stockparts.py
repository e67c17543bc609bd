"""Stock balancing parts whose mass follows from their dimensions.

Plain steel washers stacked on a bolt circle are the one stock part here
whose mass is derived rather than weighed: the washer is a flat annulus, so
its mass is the annulus volume times the density of steel. The bundled
catalogue ``washers-steel.toml`` holds masses computed by
:func:`washer_mass_g` from :data:`ISO_7089_NORMAL`.

This module is pure: no file access, no printing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from numbers import Real

from placer.errors import InputError

__all__ = [
    "STEEL_DENSITY_G_CM3",
    "WasherSize",
    "ISO_7089_NORMAL",
    "washer_mass_g",
    "ALUMINIUM_DENSITY_G_CM3",
    "DRILL_POINT_ANGLE_DEG",
    "drilled_hole_mass_g",
]

STEEL_DENSITY_G_CM3: float = 7.85
"""Density of steel for washer masses [g/cm³].

7.85 g/cm³ is the value [ISO7089] in REFERENCES.md uses for steel washers;
the washer masses printed there (M8 about 1.83 g, M10 about 3.57 g, M12
about 6.27 g) follow from it. It is also the
usual handbook figure for carbon steel (from memory).
"""

MM3_PER_CM3: float = 1000.0
"""Cubic millimetres in one cubic centimetre [mm³/cm³] (exact, SI)."""


@dataclass(frozen=True)
class WasherSize:
    """Nominal dimensions of one plain washer.

    Parameters
    ----------
    inner_diameter_mm : float
        Bore (hole) diameter d1 [mm].
    outer_diameter_mm : float
        Outside diameter d2 [mm].
    thickness_mm : float
        Thickness h [mm].
    """

    inner_diameter_mm: float
    outer_diameter_mm: float
    thickness_mm: float


ISO_7089_NORMAL: dict[str, WasherSize] = {
    "M5": WasherSize(inner_diameter_mm=5.3, outer_diameter_mm=10.0, thickness_mm=1.0),
    "M6": WasherSize(inner_diameter_mm=6.4, outer_diameter_mm=12.0, thickness_mm=1.6),
    "M8": WasherSize(inner_diameter_mm=8.4, outer_diameter_mm=16.0, thickness_mm=1.6),
    "M10": WasherSize(inner_diameter_mm=10.5, outer_diameter_mm=20.0, thickness_mm=2.0),
    "M12": WasherSize(inner_diameter_mm=13.0, outer_diameter_mm=24.0, thickness_mm=2.5),
    "M16": WasherSize(inner_diameter_mm=17.0, outer_diameter_mm=30.0, thickness_mm=3.0),
    "M20": WasherSize(inner_diameter_mm=21.0, outer_diameter_mm=37.0, thickness_mm=3.0),
}
"""Plain washers, normal series, product grade A: nominal sizes [mm].

Table: ISO 7089 (plain washers, normal series, product grade A), nominal
inner diameter d1, outer diameter d2 and thickness h, keyed by the thread
size of the bolt.

Where each row comes from:

- M8 (8.4 / 16 / 1.6 mm), M10 (10.5 / 20 / 2 mm) and M12 (13 / 24 / 2.5 mm)
  are as given in [ISO7089] (REFERENCES.md).
- M5 (5.3 / 10 / 1.0 mm), M6 (6.4 / 12 / 1.6 mm), M16 (17 / 30 / 3 mm) and
  M20 (21 / 37 / 3 mm) are from memory: the usual nominal values of the
  ISO 7089 table, not checked against the standard's text.

The values are nominal; the standard's tolerances on each dimension are not
represented.
"""


def _check_positive(value: float, name: str) -> float:
    """Return ``value`` as a float if it is a finite number above zero."""
    if isinstance(value, bool) or not isinstance(value, Real):
        raise InputError(f"{name} must be a number, got {value!r}", key=name,
                         expected="a finite number > 0")
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        raise InputError(f"{name} must be a finite number above zero, got {value!r}",
                         key=name, expected="a finite number > 0")
    return number


def washer_mass_g(inner_diameter_mm: float, outer_diameter_mm: float, thickness_mm: float,
                  density_g_cm3: float = STEEL_DENSITY_G_CM3) -> float:
    """Mass of a flat washer (an annulus) [g].

    .. math::

        V = \\frac{\\pi}{4} (D^2 - d^2)\\, h, \\qquad
        m = \\rho \\, \\frac{V}{1000}

    with ``V`` in mm³, divided by 1000 mm³/cm³ to give cm³, and ``ρ`` in
    g/cm³, so that ``m`` is in grams.

    Parameters
    ----------
    inner_diameter_mm : float
        Bore diameter d [mm], above zero.
    outer_diameter_mm : float
        Outside diameter D [mm], greater than ``inner_diameter_mm``.
    thickness_mm : float
        Thickness h [mm], above zero.
    density_g_cm3 : float, optional
        Density of the material ρ [g/cm³], above zero. Default
        :data:`STEEL_DENSITY_G_CM3` (7.85 g/cm³).

    Returns
    -------
    float
        Mass of the washer [g]. Chamfers and edge rounding are ignored.

    Raises
    ------
    placer.errors.InputError
        (a ``ValueError``) if a dimension or the density is not a finite
        number above zero, or if the outer diameter is not greater than the
        inner diameter.

    References
    ----------
    Volume of a hollow cylinder (annulus of thickness h), elementary
    geometry. Dimensions: ISO 7089 (plain washers, normal series, product
    grade A), see :data:`ISO_7089_NORMAL`. Density and check masses:
    [ISO7089] in REFERENCES.md.

    Examples
    --------
    ISO 7089 M8 washer in steel; [ISO7089] gives about 1.83 g:

    >>> round(washer_mass_g(8.4, 16.0, 1.6), 2)
    1.83
    """
    d = _check_positive(inner_diameter_mm, "inner_diameter_mm")
    big_d = _check_positive(outer_diameter_mm, "outer_diameter_mm")
    h = _check_positive(thickness_mm, "thickness_mm")
    rho = _check_positive(density_g_cm3, "density_g_cm3")
    if big_d <= d:
        raise InputError(
            f"outer_diameter_mm ({big_d:g} mm) must be greater than "
            f"inner_diameter_mm ({d:g} mm)",
            key="outer_diameter_mm", expected="outer_diameter_mm > inner_diameter_mm")
    volume_mm3 = math.pi / 4.0 * (big_d * big_d - d * d) * h
    return rho * volume_mm3 / MM3_PER_CM3


ALUMINIUM_DENSITY_G_CM3: float = 2.70
"""Density of aluminium (and its common casting alloys, within about 3 %) [g/cm³].

2.70 g/cm³ for pure aluminium at 20 °C, the usual handbook figure (CRC
Handbook of Chemistry and Physics, physical constants of the elements; from
memory)."""

DRILL_POINT_ANGLE_DEG: float = 118.0
"""Included point angle of a standard twist drill [deg] (common practice, no source)."""


def drilled_hole_mass_g(diameter_mm: float, depth_mm: float, density_g_cm3: float,
                        point_angle_deg: float = DRILL_POINT_ANGLE_DEG) -> float:
    """Mass a drilled hole takes out [g], returned as a positive number.

    .. math::

        V = \\frac{\\pi}{4} d^2 h + \\frac{\\pi d^3}{24 \\tan(\\alpha/2)}, \\qquad
        m = \\rho \\, \\frac{V}{1000}

    a cylinder of full diameter d to depth h (measured to where the drill's
    point begins) plus the cone of the drill point, of height
    (d/2)/tan(α/2) for the included point angle α.

    Parameters
    ----------
    diameter_mm : float
        Drill diameter d [mm].
    depth_mm : float
        Depth of the full-diameter part h [mm].
    density_g_cm3 : float
        Density of the rotor material ρ [g/cm³].
    point_angle_deg : float, optional
        Included point angle α [deg], default 118°.

    References
    ----------
    Volume of a cylinder and of a right circular cone (V = π r² h / 3),
    elementary geometry.
    """
    d = _check_positive(diameter_mm, "diameter_mm")
    h = _check_positive(depth_mm, "depth_mm")
    rho = _check_positive(density_g_cm3, "density_g_cm3")
    alpha = _check_positive(point_angle_deg, "point_angle_deg")
    if alpha >= 180.0:
        raise InputError(f"point_angle_deg must be below 180, got {alpha!r}",
                         key="point_angle_deg", expected="an angle between 0 and 180")
    cylinder = math.pi / 4.0 * d * d * h
    cone = math.pi * d ** 3 / (24.0 * math.tan(math.radians(alpha) / 2.0))
    return rho * (cylinder + cone) / MM3_PER_CM3
