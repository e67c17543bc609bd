"""How plans survive fitting errors: Monte Carlo on mass and angle.

Nobody fits a part at exactly the right angle or with exactly the nominal
mass.  Each part fitted is drawn with its mass uniform within ± its item's
mass tolerance and its angle uniform within ± the job's placement error,
independently; parts taken off are taken off exactly (what is on the rotor
comes off).  The chance that the residual stays within tolerance is the
share of draws whose residual is within it; the 95th percentile of the
residual is reported beside it.  Seeded, so runs repeat exactly.

References
----------
Monte Carlo estimation of a probability: the share of independent draws,
with standard error sqrt(p(1 - p)/n) ([RubinsteinKroese], ch. 4; from memory).  The
uniform bands are placer's own assumption for "± g" and "± degrees".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from placer.limits import DEFAULT_SAMPLES, DEFAULT_SEED
from placer.plan import FittedPart


@dataclass(frozen=True)
class Robustness:
    """Chance within tolerance and the 95th percentile of the residual [g·mm].

    Parameters
    ----------
    chance_within : float
        Share of the draws whose residual is within tolerance [1].
    residual_p95_gmm : float
        95th percentile of the residual over the draws [g·mm].
    samples : int
        Number of draws.
    """

    chance_within: float
    residual_p95_gmm: float
    samples: int


def residual_samples_gmm(correction_gmm: complex, parts: tuple[FittedPart, ...],
                         mass_tolerance_g: dict[str, float], placement_error_deg: float,
                         samples: int = DEFAULT_SAMPLES,
                         seed: int = DEFAULT_SEED) -> np.ndarray:
    """Residual magnitude of ``samples`` fitted outcomes of one plan [g·mm].

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm].
    parts : tuple of FittedPart
        The plan; parts to take off come off exactly.
    mass_tolerance_g : dict of str to float
        Item id -> how far one part's mass may be from nominal [g], either
        side; items not in it are exact.
    placement_error_deg : float
        How far a part may be fitted from its angle [deg], either side.
    samples : int
        Number of draws.
    seed : int
        Seed of the random generator.

    Returns
    -------
    float array (samples,)
        The residual of each draw [g·mm].

    References
    ----------
    [RubinsteinKroese] (Monte Carlo, from memory); unbalances add as vectors
    [StaticCouple].
    """
    rng = np.random.default_rng(seed)
    total = np.full(samples, complex(correction_gmm))
    for part in parts:
        for _ in range(part.count):
            if part.action == "remove":
                total = total + part.mass_g * part.radius_mm * np.exp(
                    1j * np.radians(part.angle_deg))
                continue
            tol = mass_tolerance_g.get(part.item, 0.0)
            mass = part.mass_g + (rng.uniform(-tol, tol, samples) if tol > 0 else 0.0)
            angle = part.angle_deg + (rng.uniform(-placement_error_deg, placement_error_deg,
                                                  samples) if placement_error_deg > 0 else 0.0)
            total = total - mass * part.radius_mm * np.exp(1j * np.radians(angle))
    return np.abs(total)


def robustness(correction_gmm: complex, parts: tuple[FittedPart, ...], tolerance_gmm: float,
               mass_tolerance_g: dict[str, float], placement_error_deg: float,
               samples: int = DEFAULT_SAMPLES, seed: int = DEFAULT_SEED) -> Robustness:
    """The chance a plan stays within ``tolerance_gmm`` once fitted, and its p95 residual.

    Parameters
    ----------
    correction_gmm : complex
        Required correction [g·mm].
    parts : tuple of FittedPart
        The plan.
    tolerance_gmm : float
        Permissible residual of the plane [g·mm].
    mass_tolerance_g : dict of str to float
        Item id -> mass tolerance of one part [g], either side.
    placement_error_deg : float
        Angle error of fitting [deg], either side.
    samples : int
        Number of draws.
    seed : int
        Seed of the random generator.

    Returns
    -------
    Robustness
        Share of draws within tolerance, their 95th percentile, the draws.

    References
    ----------
    [RubinsteinKroese], ch. 4 (a probability as the share of draws; from memory).
    """
    values = residual_samples_gmm(correction_gmm, parts, mass_tolerance_g, placement_error_deg,
                                  samples, seed)
    return Robustness(float(np.mean(values <= tolerance_gmm)),
                      float(np.percentile(values, 95.0)), samples)
