"""Influence coefficients from trial runs, and the continuous correction.

Model (linear, once per revolution): the readings of run r at every channel
(a sensor, or a sensor at one speed) are ``V_r = V_0 + A·w_r``, where
``w_r`` holds the trial weights present in run r, one complex g·mm value per
correction plane, and ``A`` (channels × planes, reading unit per g·mm) is
the matrix of influence coefficients.

References
----------
Single plane: α = (V1 - V0)/T, W = -V0/α; two planes: the 2×2 complex
system α·W = -V0; more channels than planes: least squares
W = -(Aᴴ A)⁻¹ Aᴴ V0 (Goodman, T. P., "A least-squares method for computing
balance corrections", ASME J. Eng. Ind. 86 (1964) 273-279; from memory, not
read).  All as collected in ../shared/REFERENCES.md, "Influence
coefficients".
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

TRUST_AMPLITUDE_CHANGE = 0.30
"""A trial run is trusted when it changes an amplitude by at least 30 % ...

(common practice; 20-25 % is also used; ../shared/REFERENCES.md)."""
TRUST_PHASE_CHANGE_DEG = 30.0
"""... or a phase by at least 30° (common practice, as above)."""
ILL_CONDITIONED = 10.0
"""Condition number of the coefficient matrix above which placer warns.

placer's own threshold: beyond it the planes separate poorly and the
correction magnifies reading errors roughly by that factor (condition-number
error bound of linear least squares; numerical analysis, e.g. Golub and Van
Loan, Matrix Computations, ch. 5; from memory)."""
TRIAL_FORCE_SHARE = 0.10
"""Trial weight sized so its centrifugal force is 10 % of the rotor weight.

From memory, widely quoted (../shared/REFERENCES.md)."""
STANDARD_GRAVITY_M_S2 = 9.80665
"""Standard acceleration of gravity [m/s²] (CGPM 1901, by definition)."""


@dataclass(frozen=True)
class Coefficients:
    """Influence coefficients and how far they can be trusted.

    ``matrix`` is channels × planes [reading unit per g·mm]; ``condition`` is
    its 2-norm condition number (with channel weights applied).
    """

    matrix: np.ndarray
    condition: float
    warnings: tuple[str, ...]


def coefficients_from_runs(reference: np.ndarray, readings: np.ndarray,
                           weights_gmm: np.ndarray, channel_names: list[str],
                           plane_names: list[str]) -> Coefficients:
    """Influence coefficients from a reference run and trial runs.

    Parameters
    ----------
    reference : complex (channels,)
        Readings of the reference run.
    readings : complex (runs, channels)
        Readings of each trial run.
    weights_gmm : complex (runs, planes)
        Trial weights present in each run [g·mm], counted in the rotor's
        angle sense (cumulative when a weight was left on).
    Returns A with ``readings - reference = weights @ A.T`` solved exactly
    when there are as many independent runs as planes, by least squares
    otherwise (numpy.linalg.lstsq).
    """
    delta = readings - reference[None, :]
    n_runs, n_planes = weights_gmm.shape
    rank = np.linalg.matrix_rank(weights_gmm) if n_runs else 0
    if rank < n_planes:
        raise ValueError(f"the trial runs move only {rank} of {n_planes} planes independently; "
                         "each plane needs a trial run of its own")
    solution, *_ = np.linalg.lstsq(weights_gmm, delta, rcond=None)
    matrix = solution.T
    warnings = trial_run_warnings(reference, readings, channel_names)
    condition = float(np.linalg.cond(matrix)) if matrix.size else math.inf
    if condition > ILL_CONDITIONED:
        warnings.append(f"the coefficients are ill-conditioned (condition number "
                        f"{condition:.1f} > {ILL_CONDITIONED:g}): the planes "
                        f"{' and '.join(plane_names)} separate poorly, so the correction is "
                        "sensitive to reading errors")
    return Coefficients(matrix, condition, tuple(warnings))


def trial_run_warnings(reference: np.ndarray, readings: np.ndarray,
                       channel_names: list[str]) -> list[str]:
    """A warning for each trial run that changed no channel enough to trust it."""
    warnings = []
    for r, run in enumerate(readings, start=1):
        trusted = False
        for v0, v1 in zip(reference, run):
            a0, a1 = abs(v0), abs(v1)
            amplitude = abs(a1 - a0) / a0 if a0 > 0 else math.inf
            phase = abs((math.degrees(np.angle(v1) - np.angle(v0)) + 180.0) % 360.0 - 180.0)
            if amplitude >= TRUST_AMPLITUDE_CHANGE or (phase >= TRUST_PHASE_CHANGE_DEG
                                                        and a0 > 0 and a1 > 0):
                trusted = True
        if not trusted:
            warnings.append(f"trial run {r} changed no reading by 30 % in amplitude or 30° in "
                            "phase (common practice): use a heavier trial weight or check the "
                            "readings")
    return warnings


def least_squares_correction(matrix: np.ndarray, vibration: np.ndarray,
                             channel_weights: np.ndarray | None = None) -> np.ndarray:
    """Continuous correction w [g·mm per plane] minimising |D^½ (V + A w)|₂.

    W = -(Aᴴ D A)⁻¹ Aᴴ D V (weighted least squares; Goodman 1964, from memory),
    computed stably by lstsq on the weighted rows.
    """
    if channel_weights is None:
        channel_weights = np.ones(matrix.shape[0])
    root = np.sqrt(np.asarray(channel_weights, dtype=float))
    solution, *_ = np.linalg.lstsq(root[:, None] * matrix, -root * vibration, rcond=None)
    return solution


def trial_mass_g(rotor_mass_kg: float, service_rpm: float, radius_mm: float,
                 force_share: float = TRIAL_FORCE_SHARE) -> float:
    """Trial mass whose centrifugal force is ``force_share`` of the rotor weight [g].

    m_t·r·ω² = share·M·g  ->  m_t = share·M·g/(r·ω²)   (from memory, widely quoted;
    ../shared/REFERENCES.md).
    """
    for name, value in (("mass_kg", rotor_mass_kg), ("service_rpm", service_rpm),
                        ("radius_mm", radius_mm)):
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise ValueError(f"{name} must be a finite number above zero, not {value!r}")
    omega = 2.0 * math.pi * service_rpm / 60.0
    return 1000.0 * force_share * rotor_mass_kg * STANDARD_GRAVITY_M_S2 / (
        radius_mm / 1000.0 * omega ** 2)


@dataclass(frozen=True)
class StaticCouple:
    """Static and couple parts of a two-plane correction.

    ``static_gmm`` = W1 + W2; ``couple_gmm`` = (W1 - W2)/2, fitted as +couple
    in plane 1 and -couple in plane 2; ``couple_moment_gmm2`` = |couple|·d.
    """

    static_gmm: complex
    couple_gmm: complex
    couple_moment_gmm2: float | None
    couple_negligible: bool


COUPLE_NEGLIGIBLE_SHARE = 0.10
"""placer's own rule: the couple part is negligible when the pair ±couple adds
less than 10 % of the static part's magnitude to either plane (2·|U_c| < 0.1·|U_s|)."""


def static_couple(w1_gmm: complex, w2_gmm: complex,
                  separation_mm: float | None = None) -> StaticCouple:
    """Static and couple parts: U_s = U1 + U2, U_c = (U1 - U2)/2 (statics).

    Back: U1 = U_s/2 + U_c, U2 = U_s/2 - U_c (../shared/REFERENCES.md,
    "Static, couple, dynamic").
    """
    static = w1_gmm + w2_gmm
    couple = (w1_gmm - w2_gmm) / 2.0
    moment = None if separation_mm is None else abs(couple) * separation_mm
    negligible = 2.0 * abs(couple) < COUPLE_NEGLIGIBLE_SHARE * abs(static)
    return StaticCouple(static, couple, moment, negligible)
