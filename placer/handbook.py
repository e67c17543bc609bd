"""Splitting a correction onto two fixed positions, and the method done by hand.

A correction rarely falls on a bolt hole, blade or rim slot.  The method a
technician uses by hand is to split it onto the two usable positions either
side of it by the law of sines, then round each share to the nearest stock
part.  placer's exact search does better; this module is the reference it is
measured against, and the formula behind it.

Conventions: angles in degrees, counted in one sense all round the rotor
(the same sense as the positions' angles); a correction is a complex number
in g·mm, ``mass_g * radius_mm * exp(1j * angle)``.  With radius 1 the same
functions split any vector quantity (lb, oz, g) at one radius.

References
----------
US Bureau of Reclamation, FIST Volume 2-2, "Field Balancing Large Rotating
Machinery", example 4 (splitting 50 lb at 15° onto arms at 0° and 60°).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from placer.errors import InputError

PartTriple = tuple[int, int, int]
"""One part line: (position_index, item_index, count)."""

COLLINEAR_SIN_TOL = 1e-9
"""Below this ``|sin(angle_b - angle_a)|`` two positions count as collinear."""

ON_POSITION_TOL_DEG = 1e-9
"""A correction within this angle of a position sits on it [deg]."""


def split_between(correction_gmm: complex, angle_a_deg: float, angle_b_deg: float,
                  radius_a_mm: float = 1.0, radius_b_mm: float = 1.0) -> tuple[float, float]:
    """Split a correction onto two fixed positions by the law of sines.

    For a correction ``m∠θ`` and positions at ``θa`` and ``θb``::

        m_a = m · sin(θb − θ) / sin(θb − θa)
        m_b = m · sin(θ − θa) / sin(θb − θa)

    so that ``m_a∠θa + m_b∠θb = m∠θ``.  At different radii the g·mm vector is
    split and each share divided by its own radius.  A share is negative when
    the correction does not lie between the two positions (within the
    smaller angle between them); it is returned as computed.

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm], or any vector quantity when both radii
        are 1 (the shares are then in the same unit).
    angle_a_deg, angle_b_deg : float
        Angles of the two positions [deg].
    radius_a_mm, radius_b_mm : float, optional
        Radii of the two positions [mm], default 1.

    Returns
    -------
    mass_a_g, mass_b_g : float
        Share at position a and at position b [g] (or g·mm, or the
        correction's own unit, when the radius is 1).

    Raises
    ------
    InputError
        (a ``ValueError``) if the two positions are collinear with the
        centre (same or opposite angles), or a radius is not positive.

    References
    ----------
    US Bureau of Reclamation, FIST Volume 2-2, "Field Balancing Large
    Rotating Machinery", example 4: 50 lb at 15° onto arms at 0° and 60°,
    exactly 40.82 lb and 14.94 lb (the manual's drawing gives 42 lb and 15 lb).

    Examples
    --------
    >>> import cmath, math
    >>> a, b = split_between(cmath.rect(50.0, math.radians(15.0)), 0.0, 60.0)
    >>> round(a, 2), round(b, 2)
    (40.82, 14.94)
    """
    if not (radius_a_mm > 0.0 and radius_b_mm > 0.0):
        raise InputError(f"radii {radius_a_mm!r} mm and {radius_b_mm!r} mm",
                         key="radius_mm", expected="both radii > 0")
    pitch_sin = math.sin(math.radians(angle_b_deg - angle_a_deg))
    if abs(pitch_sin) < COLLINEAR_SIN_TOL:
        raise InputError(
            f"positions at {angle_a_deg!r}° and {angle_b_deg!r}° are collinear with the centre",
            key="angle_deg", expected="two positions not 0° or 180° apart")
    correction_gmm = complex(correction_gmm)
    magnitude = abs(correction_gmm)
    angle_rad = math.atan2(correction_gmm.imag, correction_gmm.real)
    share_a = magnitude * math.sin(math.radians(angle_b_deg) - angle_rad) / pitch_sin
    share_b = magnitude * math.sin(angle_rad - math.radians(angle_a_deg)) / pitch_sin
    return share_a / radius_a_mm, share_b / radius_b_mm


def bracketing_positions(angle_deg: float, position_angles_deg: Sequence[float],
                         usable_mask: Sequence[bool]) -> tuple[int, int]:
    """The two usable positions either side of an angle.

    All angles are taken modulo 360.  ``i`` is the nearest usable position
    met going back from ``angle_deg`` (towards smaller angles, through 0°
    if need be), ``j`` the nearest going forward; with angles counted
    counter-clockwise, ``i`` is the clockwise and ``j`` the counter-clockwise
    neighbour.  Ties between positions at the same angle go to the lower
    index.

    If the angle sits on a usable position (within ``ON_POSITION_TOL_DEG``),
    that position is returned twice, ``(i, i)``: the whole correction goes
    there.  If only one position is usable it is also returned twice.

    Parameters
    ----------
    angle_deg : float
        Angle of the correction [deg].
    position_angles_deg : sequence of float
        Angle of every position [deg].
    usable_mask : sequence of bool
        True for positions that may take a part.

    Returns
    -------
    i, j : int
        Indices of the neighbour behind and the neighbour ahead.

    Raises
    ------
    InputError
        If no position is usable or the two sequences differ in length.

    References
    ----------
    Common practice, no source: the correction is split onto the nearest
    holes either side of it (see :func:`split_between`).
    """
    angles = np.mod(np.asarray(position_angles_deg, dtype=float), 360.0)
    usable = np.asarray(usable_mask, dtype=bool)
    if angles.shape != usable.shape or angles.ndim != 1:
        raise InputError(f"{angles.size} angles and {usable.size} usable flags",
                         key="usable_mask", expected="one flag per position")
    candidates = np.flatnonzero(usable)
    if candidates.size == 0:
        raise InputError("no usable position", key="usable_mask",
                         expected="at least one usable position")
    angle = float(np.mod(angle_deg, 360.0))
    behind = np.mod(angle - angles[candidates], 360.0)   # 0 .. 360, 0 = on it
    on = np.minimum(behind, 360.0 - behind) <= ON_POSITION_TOL_DEG
    if on.any():
        i = int(candidates[np.argmax(on)])
        return i, i
    ahead = np.mod(angles[candidates] - angle, 360.0)
    i = int(candidates[np.argmin(behind)])   # argmin takes the first, lowest index
    j = int(candidates[np.argmin(ahead)])
    return i, j


def nearest_item(share_g: float, item_masses_g: Sequence[float]) -> int | None:
    """Index of the stock mass nearest a share, or None if zero is nearer.

    A share nearer to zero than to the smallest mass (negative shares
    included) gets no part.  Ties go to the heavier choice: a share exactly
    half the smallest mass gets that part.

    Parameters
    ----------
    share_g : float
        Mass wanted at one position [g].
    item_masses_g : sequence of float
        Mass of each stock item [g].

    Returns
    -------
    int or None
        Index into ``item_masses_g``.

    References
    ----------
    Common practice, no source: round to the nearest part on hand.
    """
    masses = np.asarray(item_masses_g, dtype=float)
    if masses.size == 0:
        return None
    gaps = np.abs(masses - share_g)
    best = float(gaps.min())
    if abs(share_g) < best:
        return None
    tied = np.flatnonzero(gaps == best)
    return int(tied[np.argmax(masses[tied])])


def handbook_plan(correction_gmm: complex, position_angles_deg: Sequence[float],
                  radii_mm: Sequence[float], usable_mask: Sequence[bool],
                  item_masses_g: Sequence[float]) -> list[PartTriple]:
    """The correction as a technician places it by hand.

    Split the correction onto the two usable positions bracketing it
    (:func:`bracketing_positions`, :func:`split_between`), then round each
    share to the nearest stock mass, one part per position
    (:func:`nearest_item`).  A share nearer to zero than to the smallest mass,
    or negative (the bracketing positions are 180° or more apart and the
    correction lies outside the smaller angle between them), gets no part.

    When the correction sits on a usable position, or only one position is
    usable, its component along that position, ``|c|·cos(θ − θi) / r_i``,
    is the share (the whole correction when it sits on it).  Capacity and
    stock are not checked: the method uses one part on each of at most two
    positions.

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm].
    position_angles_deg : sequence of float
        Angle of every position [deg].
    radii_mm : sequence of float
        Radius of every position [mm].
    usable_mask : sequence of bool
        True for positions that may take a part.
    item_masses_g : sequence of float
        Mass of each stock item [g].

    Returns
    -------
    list of (position_index, item_index, count)
        At most two parts, count 1 each, sorted by position.

    Raises
    ------
    InputError
        No usable position; mismatched lengths; bracketing positions exactly
        180° apart (the split is undefined).

    References
    ----------
    US Bureau of Reclamation, FIST Volume 2-2, "Field Balancing Large
    Rotating Machinery", example 4 (the split); rounding to the nearest part
    is common practice, no source.
    """
    angles = np.asarray(position_angles_deg, dtype=float)
    radii = np.asarray(radii_mm, dtype=float)
    if radii.shape != angles.shape:
        raise InputError(f"{angles.size} angles and {radii.size} radii", key="radii_mm",
                         expected="one radius per position")
    correction_gmm = complex(correction_gmm)
    if correction_gmm == 0:
        return []
    angle_deg = math.degrees(math.atan2(correction_gmm.imag, correction_gmm.real))
    i, j = bracketing_positions(angle_deg, angles, usable_mask)
    if i == j:
        along = abs(correction_gmm) * math.cos(math.radians(angle_deg - angles[i]))
        shares = [(i, along / radii[i])]
    else:
        share_i, share_j = split_between(correction_gmm, angles[i], angles[j],
                                         radii[i], radii[j])
        shares = [(i, share_i), (j, share_j)]
    parts = []
    for position, share_g in shares:
        item = nearest_item(share_g, item_masses_g)
        if item is not None:
            parts.append((int(position), item, 1))
    return sorted(parts)


def residual_gmm(correction_gmm: complex, parts: Sequence[PartTriple],
                 position_angles_deg: Sequence[float], radii_mm: Sequence[float],
                 item_masses_g: Sequence[float]) -> float:
    """Residual unbalance left after fitting parts for a correction [g·mm].

    ``|correction − Σ count · mass_g · radius_mm · exp(i·angle)|``, the same
    quantity as the exact search's residual with effect
    ``−mass_g · radius_mm · exp(i·angle)``.

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm].
    parts : sequence of (position_index, item_index, count)
        The parts fitted: position index (number - 1), item index, how many.
    position_angles_deg, radii_mm : sequence of float
        Angle [deg] and radius [mm] of every position.
    item_masses_g : sequence of float
        Mass of each stock item [g].

    Returns
    -------
    float
        Residual [g·mm].

    References
    ----------
    Unbalance of a part U = m·e (Bloch and Geitner, Machinery Component
    Maintenance and Repair); unbalances add as vectors (statics).
    """
    fitted = 0j
    for position, item, count in parts:
        fitted += (count * item_masses_g[item] * radii_mm[position]
                   * complex(np.exp(1j * np.radians(position_angles_deg[position]))))
    return abs(complex(correction_gmm) - fitted)
