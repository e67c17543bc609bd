"""The residual-unbalance check after balancing: a known trial mass at six or more positions.

After the rotor is balanced, a known trial unbalance U_t = m_t·r is fitted
in turn at N ≥ 6 equally spaced angles of one plane, and the amplitude at a
sensor is read at each.  With the residual unbalance U_r in the linear model
the amplitude is |α|·|U_r + U_t·e^{iθ}|: largest where the trial adds to the
residual, smallest opposite.  Two estimates:

* from the largest and smallest reading: U_r = U_t·(max − min)/(max + min);
* from a least-squares circle through every reading plotted at its trial
  angle: the readings lie close to a circle of radius |α|·U_t whose centre
  is |α|·U_r from the origin, so U_r = U_t·|centre|/radius, the heavy spot
  at the angle of the centre.

The verdict takes the larger of the two, against the plane's limit: the
turbomachinery rule 6350·W/N g·mm (W the static journal load [kg], N the
speed [r/min]), else the plane's share of ISO 21940-11's U_per, else a limit
the session gives.

References
----------
[API617] (the procedure, the formula and the limit), [Kasa1976] (the circle
fit), [ISO21940-11] (U_per and its shares).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from placer import validate
from placer.errors import InputError

MIN_POSITIONS = 6
"""Fewest trial positions: six, 60° apart ([API617], annex B)."""

SPACING_TOLERANCE_DEG = 1.0
"""How far the trial angles may be from equal spacing [deg] (placer's own)."""

TRIAL_SHARE_RANGE = (1.0, 2.0)
"""The trial unbalance as a multiple of the limit the procedure asks for ([API617])."""


@dataclass(frozen=True)
class ResidualCheck:
    """One residual-unbalance check as entered.

    Parameters
    ----------
    plane : int
        Index of the plane the trial mass went on (from 0).
    sensor : int
        Index of the sensor read (from 0).
    mass_g : float
        The trial mass [g].
    radius_mm : float
        Its radius [mm].
    angles_deg : tuple of float
        Angles the trial mass was fitted at, in turn [deg, rotor's angle sense].
    amplitudes : tuple of float
        The reading at each [session unit and measure].
    journal_load_kg : float or None
        Static load on the journal nearest the plane [kg], for the
        turbomachinery limit; None when not given.
    limit_gmm : float or None
        A limit the session states [g·mm]; None when not given.
    """

    plane: int
    sensor: int
    mass_g: float
    radius_mm: float
    angles_deg: tuple[float, ...]
    amplitudes: tuple[float, ...]
    journal_load_kg: float | None = None
    limit_gmm: float | None = None

    def __post_init__(self) -> None:
        validate.number(self.mass_g, "mass_g", positive=True)
        validate.number(self.radius_mm, "radius_mm", positive=True)
        validate.numbers(self.angles_deg, "angles_deg")
        validate.numbers(self.amplitudes, "amplitudes", non_negative=True)
        validate.number(self.journal_load_kg, "journal_load_kg", positive=True, allow_none=True)
        validate.number(self.limit_gmm, "limit_gmm", positive=True, allow_none=True)
        n = len(self.angles_deg)
        if n < MIN_POSITIONS:
            raise InputError(f"has {n} positions", key="angles_deg",
                             expected=f"{MIN_POSITIONS} or more equally spaced positions")
        if len(self.amplitudes) != n:
            raise InputError(f"has {len(self.amplitudes)} readings for {n} positions",
                             key="amplitudes", expected="one reading per position, in order")
        ordered = sorted(a % 360.0 for a in self.angles_deg)
        gaps = [(b - a) for a, b in zip(ordered, ordered[1:] + [ordered[0] + 360.0])]
        if max(abs(g - 360.0 / n) for g in gaps) > SPACING_TOLERANCE_DEG:
            raise InputError("are not equally spaced", key="angles_deg",
                             expected=f"{n} angles {360.0 / n:g}° apart")
        if max(self.amplitudes) == 0:
            raise InputError("are all zero", key="amplitudes",
                             expected="the readings with the trial mass on")

    @property
    def trial_gmm(self) -> float:
        """The trial unbalance U_t = m_t·r [g·mm]."""
        return self.mass_g * self.radius_mm


@dataclass(frozen=True)
class CircleFit:
    """A least-squares circle through points.

    Parameters
    ----------
    centre : complex
        Its centre [the points' unit].
    radius : float
        Its radius [the points' unit].
    scatter : float
        Root-mean-square distance of the points from the circle, as a share
        of the radius [1].
    """

    centre: complex
    radius: float
    scatter: float


def fit_circle(points: Sequence[complex]) -> CircleFit:
    """The algebraic least-squares circle x² + y² + D·x + E·y + F = 0 through the points.

    Parameters
    ----------
    points : sequence of complex
        Three or more points, not all on one line [any unit].

    Returns
    -------
    CircleFit
        Centre (−D/2, −E/2), radius √(D²/4 + E²/4 − F), and the scatter.

    References
    ----------
    [Kasa1976]; solved by numpy.linalg.lstsq.
    """
    z = np.asarray(points, dtype=complex)
    rows = np.column_stack([z.real, z.imag, np.ones(z.size)])
    (d, e, f), *_ = np.linalg.lstsq(rows, -(np.abs(z) ** 2), rcond=None)
    centre = complex(-d / 2, -e / 2)
    radius = math.sqrt(max(d * d / 4 + e * e / 4 - f, 0.0))
    scatter = float(np.sqrt(np.mean((np.abs(z - centre) - radius) ** 2)) / radius) \
        if radius > 0 else math.inf
    return CircleFit(centre, radius, scatter)


@dataclass(frozen=True)
class ResidualCheckResult:
    """What a residual-unbalance check found.

    Parameters
    ----------
    check : ResidualCheck
        The check as entered.
    from_range_gmm : float
        U_t·(max − min)/(max + min) [g·mm].
    circle : CircleFit
        The circle through the readings plotted at their trial angles [session unit].
    limit_gmm : float or None
        The plane's limit [g·mm]; None when none can be worked out.
    limit_source : str
        Where the limit comes from, in words.
    """

    check: ResidualCheck
    from_range_gmm: float
    circle: CircleFit
    limit_gmm: float | None
    limit_source: str

    @property
    def from_circle_gmm(self) -> float:
        """U_t·|centre|/radius [g·mm]."""
        if self.circle.radius == 0:
            return math.inf
        return self.check.trial_gmm * abs(self.circle.centre) / self.circle.radius

    @property
    def residual_gmm(self) -> float:
        """The residual the verdict uses: the larger of the two estimates [g·mm]."""
        return max(self.from_range_gmm, self.from_circle_gmm)

    @property
    def heavy_spot_deg(self) -> float:
        """Angle of the residual heavy spot [deg, rotor's angle sense]: the circle centre's."""
        return math.degrees(math.atan2(self.circle.centre.imag, self.circle.centre.real)) % 360.0

    @property
    def within(self) -> bool | None:
        """Whether the residual is at or below the limit; None without a limit."""
        return None if self.limit_gmm is None else self.residual_gmm <= self.limit_gmm

    @property
    def notes(self) -> tuple[str, ...]:
        """What makes the check less sure: trial size, readings off the circle."""
        out = []
        if self.limit_gmm is not None:
            share = self.check.trial_gmm / self.limit_gmm
            low, high = TRIAL_SHARE_RANGE
            if not low <= share <= high:
                out.append(f"the trial unbalance is {share:.2g} times the limit; the procedure "
                           f"asks for {low:g} to {high:g} times [API617]")
        if self.residual_gmm >= self.check.trial_gmm:
            out.append("the residual is as large as the trial unbalance: use a larger trial "
                       "mass, as the readings cannot show the residual otherwise")
        if self.circle.scatter > 0.1:
            out.append(f"the readings lie {100 * self.circle.scatter:.0f} % off the circle on "
                       "average (placer flags more than 10 %): repeat the readings at a steady "
                       "speed")
        return tuple(out)


def residual_check(check: ResidualCheck, limit_gmm: float | None,
                   limit_source: str) -> ResidualCheckResult:
    """The residual unbalance from a check's readings, with the plane's limit.

    Parameters
    ----------
    check : ResidualCheck
        The check as entered.
    limit_gmm : float or None
        The plane's limit [g·mm] (see :func:`check_limit_gmm`); None for none.
    limit_source : str
        Where it comes from, in words.

    Returns
    -------
    ResidualCheckResult
        Both estimates, the circle and the limit.

    References
    ----------
    [API617] (max and min), [Kasa1976] (circle).
    """
    amplitudes = np.asarray(check.amplitudes, dtype=float)
    high, low = float(amplitudes.max()), float(amplitudes.min())
    from_range = check.trial_gmm * (high - low) / (high + low)
    points = amplitudes * np.exp(1j * np.radians(np.asarray(check.angles_deg, dtype=float)))
    return ResidualCheckResult(check, from_range, fit_circle(points), limit_gmm, limit_source)


def check_limit_gmm(check: ResidualCheck, plane_share: float | None, u_per_gmm: float | None,
                    service_rpm: float | None) -> tuple[float | None, str]:
    """The limit a check is judged against, and where it comes from.

    In this order: the limit the session states; the turbomachinery limit
    6350·W/N from the journal load W and the speed N; the plane's share of
    ISO 21940-11's U_per; none.

    Parameters
    ----------
    check : ResidualCheck
        The check (its ``limit_gmm`` and ``journal_load_kg``).
    plane_share : float or None
        The plane's share of U_per [1]; None when not known.
    u_per_gmm : float or None
        The rotor's permissible residual unbalance U_per [g·mm]; None when
        the rotor's grade, mass or speed is missing.
    service_rpm : float or None
        The speed N [r/min].

    Returns
    -------
    (float or None, str)
        The limit [g·mm] and its source in words.

    References
    ----------
    [API617], [ISO21940-11].
    """
    from placer.tolerance import api_617_limit_gmm

    if check.limit_gmm is not None:
        return check.limit_gmm, "as the session states"
    if check.journal_load_kg is not None and service_rpm is not None:
        return (api_617_limit_gmm(check.journal_load_kg, service_rpm),
                (f"6350·W/N with W = {check.journal_load_kg:g} kg, N = {service_rpm:g} r/min "
                 "(API 617)"))
    if u_per_gmm is not None and plane_share is not None:
        return (u_per_gmm * plane_share,
                f"{100 * plane_share:.0f} % of U_per = {u_per_gmm:.4g} g·mm (ISO 21940-11)")
    return None, "no limit: give journal_load_kg, or the rotor's grade, mass and speed"
