"""The one definition of the residual, and of the field objective, used by everything.

A plane's residual is the required correction less what the parts correct,
``correction − Σ ±count·mass_g·radius_mm·e^{i·angle}`` [g·mm]; the engine's
array form is ``target + Σ count·effect`` with ``effect = −mass·radius·e^{iθ}``
(:func:`residual_of`).  In field balancing the residual is the vibration
predicted at every sensor, and the objective its largest or root-sum-square
value (:func:`objective_of`).
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np

from placer.geometry import polar
from placer.plan import FittedPart


def part_gmm(part: FittedPart) -> complex:
    """What ``part`` corrects: ±count·mass_g·radius_mm·e^{i·angle} [g·mm].

    A part removed counts with a minus sign (it takes its correction away).

    Parameters
    ----------
    part : FittedPart
        The parts (count of one item on one position).

    Returns
    -------
    complex
        Their correction [g·mm], at the angle where mass is added.

    References
    ----------
    Unbalance of a part U = m·e [BlochGeitner]; unbalances add as vectors
    [StaticCouple].
    """
    return polar(part.signed_count * part.mass_g * part.radius_mm, part.angle_deg)


def fitted_gmm(parts: Iterable[FittedPart]) -> complex:
    """Sum of what the parts correct [g·mm] (see :func:`part_gmm`).

    Parameters
    ----------
    parts : iterable of FittedPart
        The parts fitted (and removed).

    Returns
    -------
    complex
        The summed correction [g·mm].

    References
    ----------
    Unbalances in one plane add as vectors [StaticCouple].
    """
    return sum([part_gmm(part) for part in parts], 0j)


def residual_vector_gmm(correction_gmm: complex, parts: Iterable[FittedPart]) -> complex:
    """Required correction minus what the parts correct [g·mm], complex.

    Its magnitude is the residual unbalance left after fitting; its angle is
    where a further part would have to go (the heavy spot of the residual
    unbalance is opposite it).

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm], at the angle where mass must be added.
    parts : iterable of FittedPart
        The parts fitted (and removed).

    References
    ----------
    Residual unbalance as the vector left after correction [ISO21940-11].
    """
    return correction_gmm - fitted_gmm(parts)


def residual_of(target: np.ndarray, effects: np.ndarray,
                parts: Iterable[tuple[int, int, int]]) -> np.ndarray:
    """Residual ``target + Σ count·effects[row, column]`` of a part list, in array form.

    Parameters
    ----------
    target : complex array (n_channels,)
        The residual with no parts [g·mm, or the reading's unit per channel].
    effects : complex array (n_rows, n_columns, n_channels)
        What one part of a column on a row changes [as ``target``].
    parts : iterable of (row, column, count)
        The parts.

    Returns
    -------
    complex array (n_channels,)
        The residual [as ``target``].
    """
    if len(target) == 1 and np.ndim(effects) == 3:
        # One channel (a correction plane): the same products and sums in Python complex,
        # without numpy's overhead on one-element arrays.  A whole count c times a + bi is
        # (c·a - 0·b) + (c·b + 0·a)i in both (numpy turns c into c + 0i; Python 3.11
        # multiplies int by complex the same way), and the sums are per component, so
        # the bits are the same (tests/test_residual.py checks it against the array form).
        one = complex(target[0])
        for row, column, count in parts:
            one = one + count * complex(effects[row, column, 0])
        return np.array([one])
    total = np.array(target, dtype=complex, copy=True)
    for row, column, count in parts:
        total = total + count * effects[row, column]
    return total


def objective_of(values: np.ndarray, weights: np.ndarray, norm: str) -> float:
    """The field objective of a vibration vector: weighted largest or root-sum-square.

    Parameters
    ----------
    values : complex array (n_channels,)
        Vibration at each sensor [session unit and measure].
    weights : float array (n_channels,)
        Each sensor's weight; the amplitudes are scaled by its square root.
    norm : {"max", "rms"}
        Largest weighted amplitude, or root of the sum of their squares.

    Returns
    -------
    float
        The objective [session unit and measure, weighted].
    """
    scaled = np.sqrt(weights) * np.abs(values)
    return float(scaled.max() if norm == "max" else np.linalg.norm(scaled))
