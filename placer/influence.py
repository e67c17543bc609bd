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
W = -(Aᴴ A)⁻¹ Aᴴ V0 ([Goodman1964]: Goodman, T. P., "A least-squares method
for computing balance corrections", ASME J. Eng. Ind. 86 (1964) 273-279; from
memory, not read).  [InfluenceCoefficients] in REFERENCES.md.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from placer.errors import CoefficientMismatch, InputError

TRIAL_FORCE_SHARE = 0.10
"""Trial weight sized so its centrifugal force is 10 % of the rotor weight.

[TrialMassRule]: from memory, widely quoted."""
STANDARD_GRAVITY_M_S2 = 9.80665
"""Standard acceleration of gravity [m/s²] (CGPM 1901, by definition)."""


SPEED_TOLERANCE = 0.02
"""Largest relative difference between the speed of stored coefficients and
this visit's speed for them to be reused (placer's own rule: about the
change of an induction motor's slip between no load and full load, so that
the same machine at its service speed passes and another speed does not)."""


@dataclass(frozen=True)
class Coefficients:
    """Influence coefficients and how far they can be trusted.

    ``matrix`` is channels × planes [reading unit and measure per g·mm];
    ``condition`` is the 2-norm condition number of the matrix with each row
    scaled by the square root of its channel's weight and each column then
    scaled to unit length (:func:`condition_number`); ``warnings`` are notes
    for the user (a speed that could not be checked).  Whether the data can
    be trusted is judged in :mod:`placer.trialruns`.

    Parameters
    ----------
    matrix : complex array (n_channels, n_planes)
        The influence coefficients A [reading unit and measure per g·mm].
    condition : float
        Condition number of the weighted matrix, columns scaled to unit length
        [1]; infinite for an empty one.
    warnings : tuple of str
        Notes for the user.
    """

    matrix: np.ndarray
    condition: float
    warnings: tuple[str, ...]


def condition_number(matrix: np.ndarray, channel_weights: np.ndarray | None = None) -> float:
    """2-norm condition number of D^½·A·S: rows weighted, columns scaled to unit length.

    D holds the channel weights (1 when None) and S scales each column of
    D^½·A to unit length.  Scaling a plane's column by any factor (its
    radius, when coefficients are stated per gram at the plane's radius
    rather than per g·mm; a unit) leaves the number unchanged, so it
    measures how well the planes separate, not how the planes happen to be
    dimensioned.  Column scaling is within a factor √n of the best diagonal
    scaling of the columns.

    Parameters
    ----------
    matrix : complex array (n_channels, n_planes)
        The influence coefficients A.
    channel_weights : float array (n_channels,) or None
        The channels' weights; None for 1 each.

    Returns
    -------
    float
        The condition number [1]; 1 for a single plane that moves a reading;
        infinite for an empty matrix or a plane that moves no reading.

    References
    ----------
    Condition number of a least-squares problem [GolubVanLoan]; column
    equilibration [vanderSluis1969]; computed by numpy.linalg.cond.
    """
    if matrix.size == 0:
        return math.inf
    if channel_weights is None:
        channel_weights = np.ones(matrix.shape[0])
    root = np.sqrt(np.asarray(channel_weights, dtype=float))
    weighted = root[:, None] * np.asarray(matrix, dtype=complex)
    norms = np.linalg.norm(weighted, axis=0)
    if not np.all(norms > 0):
        return math.inf
    return float(np.linalg.cond(weighted / norms[None, :]))


def checked_coefficients(matrix: np.ndarray, channel_weights: np.ndarray | None = None,
                         warnings: tuple[str, ...] | list[str] = ()) -> Coefficients:
    """Coefficients with their condition number (:func:`condition_number`) and notes.

    Used for coefficients from this visit's trial runs and for stored ones alike.

    Parameters
    ----------
    matrix : complex array (n_channels, n_planes)
        The influence coefficients A [reading unit and measure per g·mm].
    channel_weights : float array (n_channels,) or None
        The channels' weights; None for 1 each.
    warnings : tuple or list of str
        Notes found so far.

    Returns
    -------
    Coefficients
        The matrix, its condition number and the notes.
    """
    return Coefficients(matrix, condition_number(matrix, channel_weights), tuple(warnings))


def coefficients_from_runs(reference: np.ndarray, readings: np.ndarray,
                           weights_gmm: np.ndarray, channel_names: list[str],
                           plane_names: list[str],
                           channel_weights: np.ndarray | None = None) -> Coefficients:
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
    channel_names, plane_names : list of str
        The sensors and planes (kept for the messages of callers).
    channel_weights : float (channels,), optional
        Weights of the channels in the fit (for the condition number).

    Returns
    -------
    Coefficients
        A with ``readings - reference = weights @ A.T``, solved exactly when
        there are as many independent runs as planes, by least squares
        otherwise (numpy.linalg.lstsq).

    Raises
    ------
    InputError
        The trial runs do not move every plane independently (key "runs").

    References
    ----------
    α = (V1 - V0)/T per plane, generalised to V_r - V_0 = A·w_r
    [InfluenceCoefficients].
    """
    delta = readings - reference[None, :]
    n_runs, n_planes = weights_gmm.shape
    rank = np.linalg.matrix_rank(weights_gmm) if n_runs else 0
    if rank < n_planes:
        raise InputError(f"the trial runs move only {rank} of {n_planes} planes independently; "
                         "each plane needs a trial run of its own", key="runs",
                         expected="at least one trial run per plane, the trial weights of "
                                  "no run a combination of the others'")
    solution, *_ = np.linalg.lstsq(weights_gmm, delta, rcond=None)
    return checked_coefficients(solution.T, channel_weights)


def least_squares_correction(matrix: np.ndarray, vibration: np.ndarray,
                             channel_weights: np.ndarray | None = None) -> np.ndarray:
    """Continuous correction w [g·mm per plane] minimising |D^½ (V + A w)|₂.

    W = -(Aᴴ D A)⁻¹ Aᴴ D V (weighted least squares; Goodman 1964, from memory),
    computed stably by lstsq on the weighted rows.

    Parameters
    ----------
    matrix : complex array (n_channels, n_planes)
        The influence coefficients A [reading unit and measure per g·mm].
    vibration : complex array (n_channels,)
        The vibration V to cancel [reading unit and measure].
    channel_weights : float array (n_channels,) or None
        The channels' weights D; None for 1 each.

    Returns
    -------
    complex array (n_planes,)
        The correction w per plane [g·mm], at the angle where mass is added.

    References
    ----------
    [Goodman1964] (from memory); [InfluenceCoefficients].
    """
    if channel_weights is None:
        channel_weights = np.ones(matrix.shape[0])
    root = np.sqrt(np.asarray(channel_weights, dtype=float))
    solution, *_ = np.linalg.lstsq(root[:, None] * matrix, -root * vibration, rcond=None)
    return solution


def trial_mass_g(rotor_mass_kg: float, service_rpm: float, radius_mm: float,
                 force_share: float = TRIAL_FORCE_SHARE) -> float:
    """Trial mass whose centrifugal force is ``force_share`` of the rotor weight [g].

    m_t·r·ω² = share·M·g  ->  m_t = share·M·g/(r·ω²)   ([TrialMassRule]: from memory,
    widely quoted).

    Parameters
    ----------
    rotor_mass_kg : float
        Mass of the rotor M [kg].
    service_rpm : float
        Speed of the runs [r/min].
    radius_mm : float
        Radius at which the trial mass goes [mm].
    force_share : float
        The trial mass's centrifugal force as a share of the rotor's weight [1].

    Returns
    -------
    float
        The trial mass [g].

    Raises
    ------
    ValueError
        A mass, speed or radius that is not a finite number above zero (the
        message names the mass ``mass_kg``).

    References
    ----------
    [TrialMassRule] in REFERENCES.md.
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

    Parameters
    ----------
    static_gmm : complex
        Static part U_s [g·mm].
    couple_gmm : complex
        Couple part U_c [g·mm], +U_c in plane 1 and -U_c in plane 2.
    couple_moment_gmm2 : float or None
        Couple moment |U_c|·d [g·mm²]; None when the plane separation d is not known.
    couple_negligible : bool
        Whether 2·|U_c| < 0.1·|U_s| (:data:`COUPLE_NEGLIGIBLE_SHARE`).

    References
    ----------
    [StaticCouple] in REFERENCES.md.
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

    Back: U1 = U_s/2 + U_c, U2 = U_s/2 - U_c ([StaticCouple]).

    Parameters
    ----------
    w1_gmm, w2_gmm : complex
        Correction (or unbalance) in plane 1 and plane 2 [g·mm].
    separation_mm : float or None
        Distance between the planes [mm], for the couple moment; None if not known.

    Returns
    -------
    StaticCouple
        The static and couple parts, the moment and whether the couple is
        negligible.

    References
    ----------
    [StaticCouple] in REFERENCES.md.
    """
    static = w1_gmm + w2_gmm
    couple = (w1_gmm - w2_gmm) / 2.0
    moment = None if separation_mm is None else abs(couple) * separation_mm
    negligible = 2.0 * abs(couple) < COUPLE_NEGLIGIBLE_SHARE * abs(static)
    return StaticCouple(static, couple, moment, negligible)


@dataclass(frozen=True)
class StoredCoefficients:
    """Influence coefficients saved with an earlier visit, and how they were measured.

    ``matrix`` is channels × planes [``unit`` ``measure`` per g·mm], its
    phases in ``angle_sense`` (with ``rotation`` when that sense is
    clockwise or counterclockwise); ``service_rpm`` the speed of that
    visit's runs [r/min] (None when it was not stored); ``label`` says which
    visit they came from.

    Parameters
    ----------
    matrix : complex array (n_channels, n_planes)
        The coefficients [``unit`` ``measure`` per g·mm].
    unit : str
        Canonical amplitude unit they were measured in.
    measure : str
        Amplitude measure: "peak", "peak-to-peak" or "rms".
    angle_sense : str
        Sense the phases and weight angles were counted in.
    rotation : str or None
        Sense of rotation of that visit; None when not stored.
    service_rpm : float or None
        Speed of that visit's runs [r/min]; None when not stored.
    channel_names : tuple of str
        The sensors of that visit, in row order.
    plane_names : tuple of str
        The planes of that visit, in column order.
    label : str
        Which visit they came from, for messages.
    """

    matrix: np.ndarray
    unit: str
    measure: str
    angle_sense: str
    rotation: str | None
    service_rpm: float | None
    channel_names: tuple[str, ...]
    plane_names: tuple[str, ...]
    label: str


def adapt_stored(stored: StoredCoefficients, unit: str, measure: str, angle_sense: str,
                 rotation: str | None, service_rpm: float | None
                 ) -> tuple[np.ndarray, list[str]]:
    """Stored coefficients in this visit's unit, measure and angle sense.

    The amplitude is scaled (same quantity only: displacement and velocity
    coefficients differ by a speed-dependent factor and are refused); when
    the angle sense is the opposite of the stored one, every angle changes
    sign, weights and readings alike, so V = A·w becomes V̄ = Ā·w̄ and the
    matrix is conjugated.  A different speed (beyond :data:`SPEED_TOLERANCE`)
    is refused, as coefficients change with speed.

    Parameters
    ----------
    stored : StoredCoefficients
        The coefficients of the earlier visit.
    unit, measure : str
        This visit's amplitude unit and measure.
    angle_sense : str
        This visit's angle sense.
    rotation : str or None
        This visit's sense of rotation.
    service_rpm : float or None
        This visit's speed [r/min].

    Returns
    -------
    (ndarray, list of str)
        The matrix to use, and notes (a speed that could not be checked).

    Raises
    ------
    CoefficientMismatch
        Displacement against velocity, no speed for this visit, another
        speed, or an angle sense that cannot be related to the stored one.

    References
    ----------
    Unit and measure factors: :mod:`placer.readings`; angle senses:
    [InfluenceCoefficients] (angles counted in one sense for W = -V0/α to
    hold).
    """
    from placer.readings import amplitude_scale, quantity_of, sense_against_rotation

    if quantity_of(stored.unit) != quantity_of(unit):
        raise CoefficientMismatch(
            f"is in {unit} ({quantity_of(unit)}) but the stored coefficients of "
            f"{stored.label} are in {stored.unit} ({quantity_of(stored.unit)})", key="readings.unit",
            expected=f"a {quantity_of(stored.unit)} unit, or new trial runs with "
            "[solve] coefficients = \"runs\"")
    notes = []
    if service_rpm is None:
        raise CoefficientMismatch(
            "missing", key="rotor.service_rpm",
            expected=f"the speed of the runs [r/min], to check it against {stored.label}")
    if stored.service_rpm is None:
        notes.append(f"the speed of {stored.label} was not stored: check that its runs were at "
                     f"{service_rpm:g} r/min like this one, as coefficients change with speed")
    elif abs(service_rpm - stored.service_rpm) > SPEED_TOLERANCE * stored.service_rpm:
        raise CoefficientMismatch(
            f"is {service_rpm:g} r/min but the stored coefficients of {stored.label} are for "
            f"{stored.service_rpm:g} r/min", key="rotor.service_rpm",
            expected=f"within {SPEED_TOLERANCE:.0%} of {stored.service_rpm:g} r/min, or new trial runs "
            "with [solve] coefficients = \"runs\"")
    matrix = np.asarray(stored.matrix, dtype=complex) * amplitude_scale(
        stored.unit, stored.measure, unit, measure)
    mine = sense_against_rotation(angle_sense, rotation)
    theirs = sense_against_rotation(stored.angle_sense, stored.rotation)
    if theirs is None or mine is None:
        # One of the two senses cannot be told from rotation: only the same words will do.
        if stored.angle_sense != angle_sense and theirs is None:
            raise CoefficientMismatch(
                f"is '{angle_sense}' but {stored.label} counted angles {stored.angle_sense} "
                "and its sense of rotation was not stored", key="rotor.angle_sense",
                expected=f"'{stored.angle_sense}', as in that visit")
        if stored.angle_sense != angle_sense:
            raise CoefficientMismatch(
                f"is missing: angles are counted {angle_sense} here but {stored.label} counted "
                f"them {theirs}", key="rotor.rotation",
                expected="the sense of rotation (clockwise or counterclockwise), to relate the "
                "two, or angles counted as in that visit")
    elif mine != theirs:
        matrix = matrix.conj()
    return matrix, notes
