"""The one definition of a plane's residual, used by the solver's output and by every test."""

from __future__ import annotations

import cmath
import math
from collections.abc import Iterable

from placer.plan import FittedPart


def fitted_gmm(parts: Iterable[FittedPart]) -> complex:
    """Sum of ±count·mass_g·radius_mm·e^{i·angle} over the parts [g·mm].

    A part removed counts with a minus sign (it takes its correction away).
    """
    total = 0j
    for part in parts:
        total += part.signed_count * part.mass_g * part.radius_mm * cmath.exp(1j * math.radians(part.angle_deg))
    return total


def residual_vector_gmm(correction_gmm: complex, parts: Iterable[FittedPart]) -> complex:
    """Required correction minus what the parts correct [g·mm], complex.

    Its magnitude is the residual unbalance left after fitting; its angle is
    where a further part would have to go (the heavy spot of the residual
    unbalance is opposite it).

    References
    ----------
    Vector addition of unbalances in one plane; ISO 21940-11:2016 (residual
    unbalance as the vector left after correction).
    """
    return correction_gmm - fitted_gmm(parts)
