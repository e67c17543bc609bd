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
    """Chance within tolerance and the 95th percentile of the residual [g·mm]."""

    chance_within: float
    residual_p95_gmm: float
    samples: int


def residual_samples_gmm(correction_gmm: complex, parts: tuple[FittedPart, ...],
                         mass_tolerance_g: dict[str, float], placement_error_deg: float,
                         samples: int = DEFAULT_SAMPLES,
                         seed: int = DEFAULT_SEED) -> np.ndarray:
    """Residual magnitude of ``samples`` fitted outcomes of one plan [g·mm]."""
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
    """The chance a plan stays within ``tolerance_gmm`` once fitted, and its p95 residual."""
    values = residual_samples_gmm(correction_gmm, parts, mass_tolerance_g, placement_error_deg,
                                  samples, seed)
    return Robustness(float(np.mean(values <= tolerance_gmm)),
                      float(np.percentile(values, 95.0)), samples)
