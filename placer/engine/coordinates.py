"""The real coordinates the exact search works in, and the norms it measures with.

Effects and targets are complex, one value per channel.  The compiled search
takes real numbers: a complex vector becomes its real parts, then its
imaginary parts.  For several channels it works in an orthonormal basis of
the span of the effects (for a field visit, of the planes' influence
columns, whatever the number of sensors): a residual splits into a part in
the span and a part orthogonal to it that no plan changes, so only 2 × rank
coordinates are searched and the squared norm of the rest is added back.

References
----------
[GolubVanLoan] the singular value decomposition gives the orthonormal basis;
the split |r|² = |r_span|² + |r_⊥|² is Pythagoras in C^n.
"""

from __future__ import annotations

import math

import numpy as np

NORMS = ("euclidean", "max")
"""Norms the search can minimise over the channels of the residual."""

_COMPLEX = np.dtype(complex)


def as_real(values: np.ndarray) -> np.ndarray:
    """Complex rows to real rows: real parts, then imaginary parts.

    Parameters
    ----------
    values : complex array (rows, channels)
        Effects or residuals [g·mm for a plane; the readings' unit for a visit].

    Returns
    -------
    float array (rows, 2 * channels)
    """
    return np.concatenate([values.real, values.imag], axis=1)


def target_arrays(target: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A query's target as a complex array and as real numbers (see :func:`as_real`).

    Parameters
    ----------
    target : complex array-like (n_channels,)
        The residual with no parts [as the effects].

    Returns
    -------
    (complex array (n_channels,), float array (2 * n_channels,))
    """
    if not (type(target) is np.ndarray and target.ndim == 1 and target.dtype == _COMPLEX):
        target = np.atleast_1d(np.asarray(target, dtype=complex))
    if len(target) == 1:
        one = complex(target[0])
        return target, np.array([one.real, one.imag])
    return target, as_real(target[None, :])[0]


def span_of(effects: np.ndarray) -> tuple[np.ndarray | None, np.ndarray]:
    """An orthonormal basis of the span of the effects, and each effect's coordinates in it.

    Parameters
    ----------
    effects : complex array (n_placements, n_channels)
        One row per placement [as the target].

    Returns
    -------
    (complex array (rank, n_channels) or None, float array (n_placements, 2 * rank))
        The basis (None for one channel, whose coordinates are the real and
        imaginary parts themselves), and the real and imaginary part of each
        basis coordinate of each effect.
    """
    n, channels = effects.shape
    if channels == 1 or n == 0:
        return None, np.ascontiguousarray(as_real(effects) if n else np.zeros((0, 2)))
    _, singular, vh = np.linalg.svd(effects, full_matrices=False)
    rank = max(1, int(np.sum(singular > 1e-13 * singular[0])))
    basis = vh[:rank]
    inside = effects @ basis.conj().T
    coords = np.stack([inside.real, inside.imag], axis=2).reshape(n, 2 * rank)
    return basis, np.ascontiguousarray(coords)


def in_span(basis: np.ndarray | None, t_real: np.ndarray) -> tuple[np.ndarray, float]:
    """A target in the span's coordinates, and the squared norm of the part outside it.

    Parameters
    ----------
    basis : complex array (rank, n_channels) or None
        From :func:`span_of` (None: one channel).
    t_real : float array (2 * n_channels,)
        The target as real numbers [as the effects].

    Returns
    -------
    (float array (2 * rank,), float)
        The coordinates, and the squared norm left outside the span [unit²].
    """
    if basis is None:
        return np.ascontiguousarray(t_real, dtype=float), 0.0
    channels = len(t_real) // 2
    target = t_real[:channels] + 1j * t_real[channels:]
    inside = target @ basis.conj().T
    rest = target - inside @ basis
    coords = np.stack([inside.real, inside.imag], axis=1).reshape(-1)
    return np.ascontiguousarray(coords), float(np.vdot(rest, rest).real)


def norms(kind: str, real_rows: np.ndarray) -> np.ndarray:
    """The chosen norm of each row of real vectors (real parts, then imaginary).

    Parameters
    ----------
    kind : {"euclidean", "max"}
        Root of the sum of squared channel magnitudes, or the largest magnitude.
    real_rows : float array (rows, 2 * channels)
        Residuals as real numbers [as the effects].

    Returns
    -------
    float array (rows,)
        The norms [as the effects].
    """
    if kind == "euclidean":
        if real_rows.shape[1] == 2:
            # One channel: the same sum of squares np.linalg.norm forms, without its
            # overhead (the bits are the same: one addition, one square root).
            x, y = real_rows[:, 0], real_rows[:, 1]
            return np.sqrt(x * x + y * y)
        return np.linalg.norm(real_rows, axis=1)
    c = real_rows.shape[1] // 2
    return np.sqrt((real_rows[:, :c] ** 2 + real_rows[:, c:] ** 2).max(axis=1))


def norm_of(kind: str, real) -> float:
    """The chosen norm of one real vector, as :func:`norms` gives it.

    Parameters
    ----------
    kind : {"euclidean", "max"}
        See :func:`norms`.
    real : float sequence (2 * channels,)
        One residual as real numbers [as the effects].

    Returns
    -------
    float
        The norm [as the effects].
    """
    if kind == "euclidean" and len(real) == 2:
        # The same products, sum and square root as norms(), in Python floats.
        x, y = float(real[0]), float(real[1])
        return math.sqrt(x * x + y * y)
    return float(norms(kind, np.asarray(real, dtype=float)[None, :])[0])
