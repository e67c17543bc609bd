"""Balance-quality grades, permissible residual unbalance, allocation to planes.

The tolerance side of placer: how much residual unbalance a rotor may keep,
from its balance quality grade, mass and maximum service speed (ISO 21940-11),
how that total is shared between correction planes, and the per-plane limit
of the turbomachinery specifications (API 617 / API 610 style).

Everything here is pure arithmetic on numbers (stdlib :mod:`math` only); bad
values raise :class:`placer.errors.ToleranceError` with ``key`` and
``expected`` set.

References
----------
ISO 21940-11:2016, Mechanical vibration -- Rotor balancing -- Part 11:
Procedures and tolerances for rotors with rigid behaviour (formerly
ISO 1940-1:2003).
"""

from __future__ import annotations

import difflib
import math
import numbers
from collections.abc import Sequence
from dataclasses import dataclass

from placer.errors import ToleranceError, shown
from placer.job import Job
from placer.limits import MAX_ECHO_CHARS

__all__ = [
    "BALANCE_QUALITY_GRADES_MM_S",
    "SHARE_LIMITS",
    "PlaneShare",
    "PlaneTolerance",
    "JobTolerances",
    "job_tolerances",
    "parse_grade",
    "permissible_residual_gmm",
    "permissible_eccentricity_um",
    "allocate_to_planes",
    "api_617_limit_gmm",
]

BALANCE_QUALITY_GRADES_MM_S: tuple[float, ...] = (
    4000.0, 1600.0, 630.0, 250.0, 100.0, 40.0, 16.0, 6.3, 2.5, 1.0, 0.4,
)
"""Balance quality grades G of ISO 21940-11:2016, Table 1 [mm/s].

G = e_per * omega, the permissible specific unbalance times the angular speed;
successive grades differ by a factor of about 2.5.  Typical rotor types
(paraphrased from the standard's Table 1, short):

* G 40: car wheels and rims, drive shafts;
* G 16: agricultural machinery, crushers, cardan shafts;
* G 6.3: fans, pumps and pump impellers, general machinery, electric
  motors other than the large fast ones of G 2.5, machine tools, paper
  machines, turbochargers, water turbines, centrifuges, gears;
* G 2.5: compressors, gas and steam turbines, large motors above 950 r/min,
  machine-tool drives, textile machines;
* G 1: grinding-machine drives, drives of sound and picture equipment;
* G 0.4: gyroscopes, high-precision spindles.

The coarse grades G 4000 to G 100 cover crankshaft drives of engines (from
memory; not in the project's reference notes).

References
----------
ISO 21940-11:2016 (formerly ISO 1940-1:2003), Table 1.
"""

SHARE_LIMITS: tuple[float, float] = (0.3, 0.7)
"""Least and greatest share of U_per one of two planes may be given [1].

When the lever rule gives a plane less than 0.3 * U_per or more than
0.7 * U_per, the share is clamped to these limits.  The values 0.3 and 0.7
are FROM MEMORY of the allocation rule for two reference planes in
ISO 21940-11; they have not been checked against the standard's text.
"""

@dataclass(frozen=True)
class PlaneShare:
    """The part of the permissible residual unbalance given to one plane.

    Attributes
    ----------
    name : str
        Name of the correction (or reference) plane.
    share : float
        Fraction of the rotor's total U_per given to this plane [1].
    permissible_gmm : float
        Permissible residual unbalance in this plane, ``share * U_per``
        [g*mm].
    """

    name: str
    share: float
    permissible_gmm: float


def _grade_label(grade_mm_s: float) -> str:
    """Write a grade the way the standard does: ``G6.3``, ``G1``, ``G4000``."""
    return f"G{grade_mm_s:g}"


_GRADE_LABELS: tuple[str, ...] = tuple(_grade_label(g) for g in BALANCE_QUALITY_GRADES_MM_S)
_VALID_GRADES_TEXT = ", ".join(_GRADE_LABELS)


def _unknown_grade(text: str, value: float | None, hint: bool = True) -> ToleranceError:
    """Build the error for a grade that is not in the standard's list (``hint``: with the
    closest spelling and the nearest in value)."""
    if not hint:
        return ToleranceError(f"unknown balance quality grade '{text}'", key="grade",
                              expected=f"one of the ISO 21940-11 grades {_VALID_GRADES_TEXT}")
    normalised = "G" + text if text and text[0] not in "Gg" else text.upper()
    has_value = value is not None and math.isfinite(value) and value > 0.0

    def log_distance(grade: float) -> float:
        return round(abs(math.log(grade / value)), 9) if has_value else 0.0

    # Closest spelling by difflib similarity (at least 0.6).  Ties (G6.3 and
    # G630 for "G3") go to the grade nearer in value; grades still tied
    # (G250 and G2.5 for "G25") are all named.
    ratios = {label: round(difflib.SequenceMatcher(None, normalised, label).ratio(), 9)
              for label in _GRADE_LABELS}
    best_ratio = max(ratios.values())
    hints = []
    if best_ratio >= 0.6:
        tied = [(grade, label) for grade, label in zip(BALANCE_QUALITY_GRADES_MM_S, _GRADE_LABELS)
                if ratios[label] == best_ratio]
        least = min(log_distance(grade) for grade, _ in tied)
        closest = [label for grade, label in tied if log_distance(grade) == least]
        hints.append(f"closest spelling {' or '.join(closest)}")
    if has_value:
        nearest = min(BALANCE_QUALITY_GRADES_MM_S, key=log_distance)
        hints.append(f"nearest in value {_grade_label(nearest)}")
    hint = f"; {', '.join(hints)}" if hints else ""
    return ToleranceError(
        f"unknown balance quality grade {text!r}{hint}",
        key="grade",
        expected=f"one of the ISO 21940-11 grades {_VALID_GRADES_TEXT}",
    )


def parse_grade(text_or_number: str | float) -> float:
    """Read a balance quality grade and return it in mm/s.

    Parameters
    ----------
    text_or_number : str or float
        The grade as text (``"G6.3"``, ``"g 6.3"``, ``"G 2.5"``, ``"6.3"``)
        or as a number (``6.3``) [mm/s].  A leading ``G`` or ``g`` and blanks
        are allowed; case does not matter.

    Returns
    -------
    float
        The grade G [mm/s], exactly as listed in
        :data:`BALANCE_QUALITY_GRADES_MM_S`.

    Raises
    ------
    ToleranceError
        With ``key="grade"`` when the value is not one of the grades of
        ISO 21940-11; ``expected`` lists the valid grades and the message
        names the closest spelling (stdlib :mod:`difflib`, similarity at
        least 0.6; ties go to the grade nearer in value, remaining ties are
        all named) and, for a number, the nearest grade in value (log scale).

    References
    ----------
    ISO 21940-11:2016 (formerly ISO 1940-1:2003), Table 1.

    Examples
    --------
    >>> parse_grade("g 6.3")
    6.3
    >>> parse_grade(2.5)
    2.5
    """
    if isinstance(text_or_number, bool):
        raise _unknown_grade(repr(text_or_number), None)
    if isinstance(text_or_number, numbers.Real):
        value = float(text_or_number)
        text = f"{value:g}"
    elif isinstance(text_or_number, str):
        if len(text_or_number) > MAX_ECHO_CHARS or not text_or_number.replace(" ", "").isprintable():
            # Too long to be a grade, or holding a control or line-separator character:
            # named in a short printable form, compared with nothing.
            raise _unknown_grade(shown(text_or_number), None, hint=False)
        text = "".join(text_or_number.split())
        digits = text[1:] if text[:1] in ("G", "g") else text
        try:
            value = float(digits)
        except ValueError:
            raise _unknown_grade(text_or_number.strip(), None) from None
    else:
        raise _unknown_grade(repr(text_or_number), None)
    for grade in BALANCE_QUALITY_GRADES_MM_S:
        if math.isclose(value, grade, rel_tol=1e-9):
            return grade
    raise _unknown_grade(text, value)


def _positive_finite(value: float, key: str, unit: str) -> float:
    """Return ``value`` as a float, or raise ToleranceError naming ``key``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise ToleranceError(f"{value!r} is not a number", key=key,
                             expected=f"a positive finite number [{unit}]")
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        raise ToleranceError(f"{number!r} gives no tolerance", key=key,
                             expected=f"a positive finite number [{unit}]")
    return number


def _angular_speed_rad_s(service_rpm: float) -> float:
    """omega = 2*pi*n/60 [rad/s] from n [r/min]."""
    return 2.0 * math.pi * service_rpm / 60.0


def permissible_residual_gmm(grade_mm_s: float, mass_kg: float, service_rpm: float) -> float:
    """Permissible residual unbalance of a rigid rotor, total for the rotor.

    ``U_per = 1000 * G * m / omega`` with ``omega = 2 * pi * n / 60``, which
    in r/min is ``U_per = 9549.297 * G * m / n``.

    Parameters
    ----------
    grade_mm_s : float
        Balance quality grade G [mm/s], e.g. from :func:`parse_grade`.  Any
        positive finite value is accepted here; membership in the standard's
        list is checked by :func:`parse_grade`.
    mass_kg : float
        Rotor mass m [kg].
    service_rpm : float
        Maximum service speed n [r/min].

    Returns
    -------
    float
        U_per [g*mm], the total for the rotor at its maximum service speed;
        share it between planes with :func:`allocate_to_planes`.

    Raises
    ------
    ToleranceError
        With ``key`` ``"grade"``, ``"mass_kg"`` or ``"service_rpm"`` when
        that value is zero, negative, not finite or not a number.

    References
    ----------
    ISO 21940-11:2016 (formerly ISO 1940-1:2003), permissible residual
    unbalance from the balance quality grade.

    Examples
    --------
    >>> round(permissible_residual_gmm(6.3, 42.0, 1480.0), 2)
    1707.26
    """
    grade = _positive_finite(grade_mm_s, "grade", "mm/s")
    mass = _positive_finite(mass_kg, "mass_kg", "kg")
    speed = _positive_finite(service_rpm, "service_rpm", "r/min")
    return 1000.0 * grade * mass / _angular_speed_rad_s(speed)


def permissible_eccentricity_um(grade_mm_s: float, service_rpm: float) -> float:
    """Permissible specific unbalance (eccentricity of the centre of mass).

    ``e_per = G / omega`` [mm], returned in micrometres as
    ``1000 * G / omega``, ``omega = 2 * pi * n / 60``.  Numerically
    ``U_per [g*mm] = e_per [um] * m [kg]``.

    Parameters
    ----------
    grade_mm_s : float
        Balance quality grade G [mm/s].
    service_rpm : float
        Maximum service speed n [r/min].

    Returns
    -------
    float
        e_per [um].

    Raises
    ------
    ToleranceError
        With ``key`` ``"grade"`` or ``"service_rpm"`` for a zero, negative,
        non-finite or non-numeric value.

    References
    ----------
    ISO 21940-11:2016 (formerly ISO 1940-1:2003), definition G = e_per * omega.

    Examples
    --------
    >>> round(permissible_eccentricity_um(6.3, 1480.0), 3)
    40.649
    """
    grade = _positive_finite(grade_mm_s, "grade", "mm/s")
    speed = _positive_finite(service_rpm, "service_rpm", "r/min")
    return 1000.0 * grade / _angular_speed_rad_s(speed)


def _plane_names(plane_names: Sequence[str]) -> tuple[str, ...]:
    """Check the plane names: at least one, strings, no repeats."""
    if isinstance(plane_names, str):
        raise ToleranceError("plane names must be a list, not one string", key="planes",
                             expected="a list of distinct plane names")
    names = tuple(plane_names)
    if not names:
        raise ToleranceError("no planes to share the tolerance between", key="planes",
                             expected="at least one plane name")
    if not all(isinstance(name, str) for name in names):
        raise ToleranceError(f"plane names {names!r} are not all text", key="planes",
                             expected="a list of distinct plane names")
    if len(set(names)) != len(names):
        raise ToleranceError(f"plane names {list(names)!r} repeat", key="planes",
                             expected="a list of distinct plane names")
    return names


def _lever_shares(distances_mm: Sequence[float]) -> tuple[float, float]:
    """Shares (U_A/U, U_B/U) by the lever rule, clamped to SHARE_LIMITS."""
    values = tuple(distances_mm)
    expected = "two finite distances [mm] from the centre of mass to planes A and B"
    if len(values) != 2:
        raise ToleranceError(f"{len(values)} distances given for two planes",
                             key="distances_mm", expected=expected)
    for value in values:
        if isinstance(value, bool) or not isinstance(value, numbers.Real) \
                or not math.isfinite(float(value)):
            raise ToleranceError(f"distance {value!r} is not a finite number",
                                 key="distances_mm", expected=expected)
    to_a_mm, to_b_mm = (abs(float(v)) for v in values)
    span_mm = to_a_mm + to_b_mm
    if span_mm <= 0.0:
        raise ToleranceError("both distances are zero", key="distances_mm", expected=expected)
    low, high = SHARE_LIMITS
    share_a = min(max(to_b_mm / span_mm, low), high)
    share_b = min(max(to_a_mm / span_mm, low), high)
    return share_a, share_b


def allocate_to_planes(u_per_gmm: float, plane_names: Sequence[str],
                       distances_mm: Sequence[float] | None = None) -> tuple[PlaneShare, ...]:
    """Share a rotor's permissible residual unbalance between its planes.

    Rules, by the number of planes:

    * One plane (a disc corrected in one plane): the full U_per in that
      plane (older handbook rule, Bloch and Geitner).
    * Two planes, no distances: half each (symmetric rotor).
    * Two planes with distances ``(L_A, L_B)`` from the centre of mass to
      plane A and plane B: the lever rule ``U_A = U_per * L_B / L``,
      ``U_B = U_per * L_A / L`` with ``L = L_A + L_B``, then each share is
      clamped to ``[0.3, 0.7] * U_per`` (:data:`SHARE_LIMITS`; these limits
      are FROM MEMORY).  The clamp is symmetric, so the two shares still add
      up to U_per.
    * More than two planes: equal shares, ``U_per / k`` each.  This is a
      simple rule of this program, not taken from the standard, which states
      tolerances for two reference planes.

    Centre of mass outside the planes (overhung rotor): the distances are
    taken as absolute values and the lever rule and clamp are applied as
    above.  This is a simplification; ISO 21940-11 has a fuller treatment
    for overhung and narrow rotors, which this function does not reproduce.

    Parameters
    ----------
    u_per_gmm : float
        Permissible residual unbalance of the whole rotor [g*mm], e.g. from
        :func:`permissible_residual_gmm`.
    plane_names : sequence of str
        Distinct plane names, in order (plane A first for two planes).
    distances_mm : sequence of two float, optional
        ``(L_A, L_B)``, distances from the centre of mass to plane A and to
        plane B [mm].  Only allowed with exactly two planes.

    Returns
    -------
    tuple of PlaneShare
        One entry per plane, in the order of ``plane_names``.

    Raises
    ------
    ToleranceError
        ``key="u_per_gmm"`` for a zero, negative or non-finite total;
        ``key="planes"`` for no planes, non-text or repeated names;
        ``key="distances_mm"`` for distances with other than two planes, a
        count other than two, non-finite values or both zero.

    References
    ----------
    ISO 21940-11:2016 (formerly ISO 1940-1:2003), allocation of U_per to two
    reference planes (lever rule).  Bloch, H. P. and Geitner, F. K.,
    Machinery Component Maintenance and Repair (one-plane rule).

    Examples
    --------
    >>> [s.permissible_gmm for s in allocate_to_planes(1000.0, ["A", "B"], (200.0, 300.0))]
    [600.0, 400.0]
    """
    total_gmm = _positive_finite(u_per_gmm, "u_per_gmm", "g*mm")
    names = _plane_names(plane_names)
    if distances_mm is not None and len(names) != 2:
        raise ToleranceError(f"distances given for {len(names)} plane(s)", key="distances_mm",
                             expected="distances only with exactly two planes")
    if len(names) == 2 and distances_mm is not None:
        shares = _lever_shares(distances_mm)
    else:
        shares = tuple(1.0 / len(names) for _ in names)
    return tuple(PlaneShare(name=name, share=share, permissible_gmm=share * total_gmm)
                 for name, share in zip(names, shares))


def api_617_limit_gmm(journal_load_kg: float, max_continuous_rpm: float) -> float:
    """Per-plane residual unbalance limit of the turbomachinery specifications.

    ``U_max = 6350 * W / N`` [g*mm] with W the static journal load nearest
    the correction plane [kg] and N the maximum continuous speed [r/min].
    The inch form is ``U_max = 4 * W / N`` [oz*in] with W in lb.  On the
    journal load this is about grade G 0.665.

    Parameters
    ----------
    journal_load_kg : float
        Static load on the journal nearest the plane, W [kg].
    max_continuous_rpm : float
        Maximum continuous speed N [r/min].

    Returns
    -------
    float
        U_max for that plane [g*mm].

    Raises
    ------
    ToleranceError
        With ``key`` ``"journal_load_kg"`` or ``"max_continuous_rpm"`` for a
        zero, negative, non-finite or non-numeric value.

    References
    ----------
    API 617 (axial and centrifugal compressors) and API 610 (centrifugal
    pumps) style limit, as quoted in the Energy-Tech magazine article
    comparing API 617, MIL-STD-167 and ISO 1940-1.

    Examples
    --------
    >>> from placer.units import GMM_PER_OZ_IN, KG_PER_LB
    >>> round(api_617_limit_gmm(500 * KG_PER_LB, 15000.0) / GMM_PER_OZ_IN, 2)
    0.13
    """
    load_kg = _positive_finite(journal_load_kg, "journal_load_kg", "kg")
    speed = _positive_finite(max_continuous_rpm, "max_continuous_rpm", "r/min")
    return 6350.0 * load_kg / speed


@dataclass(frozen=True)
class PlaneTolerance:
    """One plane's tolerance and where it came from.

    Attributes
    ----------
    tolerance_gmm : float or None
        Permissible residual in the plane [g·mm]; None when none is given.
    source : str
        Where it came from, for the sheet ("job file (tolerance_gmm)", or the
        grade's share).
    """

    tolerance_gmm: float | None
    source: str


@dataclass(frozen=True)
class JobTolerances:
    """The tolerances of a job: U_per from the grade, its shares, and each plane's.

    Attributes
    ----------
    permissible_gmm : float or None
        U_per of the whole rotor [g·mm]; None without grade, mass and speed.
    shares : tuple of PlaneShare or None
        U_per allocated to the planes (None with ``permissible_gmm``).
    planes : tuple of PlaneTolerance
        Each plane's tolerance: its own ``tolerance_gmm``, else its share.
    notes : tuple of str
        Why no tolerance comes from the grade, when that is not plain.
    """

    permissible_gmm: float | None
    shares: tuple[PlaneShare, ...] | None
    planes: tuple[PlaneTolerance, ...]
    notes: tuple[str, ...]


def job_tolerances(job: Job) -> JobTolerances:
    """Each plane's tolerance: its own ``tolerance_gmm``, else its share of U_per.

    U_per comes from the rotor's grade, mass and maximum service speed and is
    shared between the planes by the lever rule (``com_distances_mm``) or
    equally.

    Parameters
    ----------
    job : Job
        The rotor and its planes (their corrections are not used).

    Returns
    -------
    JobTolerances

    References
    ----------
    [ISO21940-11] U_per and its allocation to the correction planes.
    """
    rotor = job.rotor
    given = [rotor.grade_mm_s is not None, rotor.mass_kg is not None,
             rotor.service_rpm is not None]
    u_per = shares = None
    notes: tuple[str, ...] = ()
    if all(given):
        u_per = permissible_residual_gmm(rotor.grade_mm_s, rotor.mass_kg, rotor.service_rpm)
        try:
            shares = tuple(allocate_to_planes(u_per, [p.geometry.name for p in job.planes],
                                              rotor.com_distances_mm))
        except ToleranceError as exc:  # the lever rule's, named as the job file has it
            raise ToleranceError(exc.detail, file=job.source, key="rotor.com_distances_mm",
                                 expected=exc.expected) from None
    elif any(given):
        notes = ("grade, the rotor's mass and service_rpm are all needed for a tolerance from "
                 "the balance quality grade; planes use their own tolerance only",)
    planes = []
    for index, plane in enumerate(job.planes):
        own = plane.tolerance_gmm
        if own is not None:
            given = plane.tolerance_given_as or "tolerance_gmm"
            planes.append(PlaneTolerance(own, f"job file ({given})"))
        elif shares is not None:
            planes.append(PlaneTolerance(shares[index].permissible_gmm,
                                         f"{shares[index].share:.0%} of U_per from the grade"))
        else:
            planes.append(PlaneTolerance(None, "none given"))
    return JobTolerances(u_per, shares, tuple(planes), notes)
