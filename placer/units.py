"""Conversions between the units placer reads and shows.

References
----------
[NISTHB44] in REFERENCES.md: 1 in = 25.4 mm, 1 lb = 0.45359237 kg,
1 oz = 1/16 lb = 28.349523125 g, all exact by definition.
"""

from __future__ import annotations

G_PER_KG = 1000.0
"""Grams in one kilogram (SI prefix, exact)."""


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
