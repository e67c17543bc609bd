"""A field-balancing visit: machine, sensors, correction planes and the runs taken."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from placer import validate
from placer.catalog import Catalog
from placer.errors import InputError
from placer.geometry import PlaneGeometry, polar
from placer.job import Rotor
from placer.limits import MAX_PARTS_LIMIT
from placer.residualcheck import ResidualCheck

RUN_KINDS = ("reference", "trial", "check")
FIELD_NORMS = {"max": "max", "rms": "euclidean"}
"""Session norm names -> search norms: the largest sensor reading, or the root
of the sum of squares over sensors."""


@dataclass(frozen=True)
class Channel:
    """One sensor (or one sensor at one speed), with its weight in the fit.

    Parameters
    ----------
    name : str
        The sensor's name ("DE horizontal").
    weight : float
        Its weight in the least-squares fit and in the objective (amplitudes
        are scaled by its square root).
    """

    name: str
    weight: float = 1.0


@dataclass(frozen=True)
class FieldPlane:
    """A correction plane of the machine: its positions and its catalogue.

    Parameters
    ----------
    geometry : PlaneGeometry
        Its positions.
    catalog : Catalog
        The parts that may be fitted on it.
    """

    geometry: PlaneGeometry
    catalog: Catalog


@dataclass(frozen=True)
class PlacedMass:
    """A mass on a plane, as fitted: trial weight or part of a plan.

    ``position`` is the position number when it was fitted on one.

    Parameters
    ----------
    plane : int
        Index of the plane in the session (from 0).
    mass_g : float
        Mass of one part [g].
    angle_deg : float
        Where it was fitted [deg], in the rotor's angle sense.
    radius_mm : float
        Radius at which it acts [mm].
    position : int or None
        Position number (from 1); None for a trial weight placed by angle.
    item : str or None
        Catalogue item id of a part of a plan; None for a trial weight.
    count : int
        How many such parts.
    """

    plane: int
    mass_g: float
    angle_deg: float
    radius_mm: float
    position: int | None = None
    item: str | None = None
    count: int = 1

    @property
    def gmm(self) -> complex:
        return polar(self.count * self.mass_g * self.radius_mm, self.angle_deg)


@dataclass(frozen=True)
class Run:
    """One run of the machine.

    ``readings`` are complex, one per channel, in the session's unit and
    measure (as read: peak, peak-to-peak or rms) with phases in the rotor's
    angle sense.  ``added`` are the masses fitted for this run;
    ``removed_after`` says whether they came off before the next run.

    Parameters
    ----------
    name : str
        The run's name.
    kind : {"reference", "trial", "check"}
        What the run was for.
    readings : complex array (n_channels,)
        The readings [session unit and measure], phases in the rotor's angle sense.
    raw : tuple of (float, float)
        The readings as read: (amplitude [session unit and measure], phase
        [deg] in the instrument's sense), one pair per sensor.
    added : tuple of PlacedMass
        Trial weights (trial runs) or parts of a plan (check runs) fitted for it.
    removed_after : bool
        Whether ``added`` came off after the run.
    """

    name: str
    kind: str
    readings: np.ndarray
    raw: tuple[tuple[float, float], ...]
    added: tuple[PlacedMass, ...] = ()
    removed_after: bool = True


@dataclass(frozen=True)
class Session:
    """Everything one ``placer field`` run works on.

    Parameters
    ----------
    machine_id : str
        The machine's tag ("WM-0417"), the key of its history.
    machine_name : str
        Its name, free text.
    rotor : Rotor
        The rotor: angle sense, rotation, speed, tolerance inputs.
    plane_separation_mm : float or None
        Distance between the two correction planes [mm], for the couple moment.
    unit : str
        Amplitude unit of the readings (a key of
        :data:`placer.readings.AMPLITUDE_UNITS`).
    measure : str
        Amplitude measure: "peak", "peak-to-peak" or "rms".
    phase_sense : {"lag", "lead", "none"}
        How the instrument counted the phase; "none" for a meter without a
        phase reference (amplitudes only: the four-run method,
        :mod:`placer.fourrun`).
    channels : tuple of Channel
        The sensors, in the order of every run's readings.
    planes : tuple of FieldPlane
        The correction planes.
    runs : tuple of Run
        The runs, the reference run first.
    norm : {"max", "rms"}
        What the plan makes least: the largest weighted reading, or the root
        of the sum of their squares (:data:`FIELD_NORMS`).
    max_parts : int
        Longest plan.
    coefficients : {"runs", "stored"}
        Where the influence coefficients come from: this visit's trial runs,
        or the machine's history.
    source : str
        The session file.
    vibration_limit : float or None
        Vibration to reach [session unit and measure]: the fewest parts
        predicted at or below it are chosen; None for the least vibration.
    visit_date : str or None
        Date (or UTC date and time) of the visit, ISO 8601; None for when
        placer is run.
    residual_checks : tuple of ResidualCheck
        Residual-unbalance checks taken after balancing
        (:mod:`placer.residualcheck`).
    """

    machine_id: str
    machine_name: str
    rotor: Rotor
    plane_separation_mm: float | None
    unit: str
    measure: str
    phase_sense: str
    channels: tuple[Channel, ...]
    planes: tuple[FieldPlane, ...]
    runs: tuple[Run, ...]
    norm: str
    max_parts: int
    coefficients: str
    source: str
    vibration_limit: float | None = None
    visit_date: str | None = None
    residual_checks: tuple[ResidualCheck, ...] = ()

    def __post_init__(self) -> None:
        validate.one_of(self.norm, "solve.norm", FIELD_NORMS)
        validate.whole(self.max_parts, "solve.max_parts", 1, MAX_PARTS_LIMIT)
        validate.number(self.vibration_limit, "solve.vibration_limit", positive=True,
                        allow_none=True)
        validate.number(self.plane_separation_mm, "rotor.plane_separation_mm", positive=True,
                        allow_none=True)
        if not self.channels or not self.planes or not self.runs:
            raise InputError("needs sensors, planes and runs", key="session",
                             expected="at least one of each")
        for run in self.runs:
            if len(run.readings) != len(self.channels):
                raise InputError(f"run '{run.name}' has {len(run.readings)} readings for "
                                 f"{len(self.channels)} sensors", key="runs",
                                 expected="one reading per sensor")
        for check in self.residual_checks:
            validate.whole(check.plane, "residual_checks.plane", 0, len(self.planes) - 1)
            validate.whole(check.sensor, "residual_checks.sensor", 0, len(self.channels) - 1)

    @property
    def amplitude_only(self) -> bool:
        """True when the readings have no phase (the four-run method)."""
        return self.phase_sense == "none"

    def baselines(self) -> list[int]:
        """For each run, the index of the run whose weights it adds to (-1 for the first).

        See :func:`carried_baselines`.
        """
        during, _ = self.weights_in()
        return carried_baselines(during, [run.removed_after for run in self.runs])

    def fitted_parts(self) -> tuple[PlacedMass, ...]:
        """Parts fitted for the check runs and still on the rotor, one per (plane, position, item).

        Their counts are summed over the check runs; they take room on their
        positions and may be taken off by a trim plan.
        """
        groups: dict[tuple[int, int | None, str | None], PlacedMass] = {}
        for run in self.runs:
            if run.kind != "check":
                continue
            for mass in run.added:
                key = (mass.plane, mass.position, mass.item)
                if key in groups:
                    old = groups[key]
                    groups[key] = PlacedMass(old.plane, old.mass_g, old.angle_deg, old.radius_mm,
                                             old.position, old.item, old.count + mass.count)
                else:
                    groups[key] = mass
        return tuple(groups.values())

    def weights_in(self) -> tuple[np.ndarray, np.ndarray]:
        """Masses on the rotor during each run, and after the last [g·mm per plane].

        Masses added for a run stay on unless the run says they were removed
        after it (trial weights usually are; a check run's fitted parts stay).
        """
        added = []
        for run in self.runs:
            gmm = np.zeros(len(self.planes), dtype=complex)
            for mass in run.added:
                gmm[mass.plane] += mass.gmm
            added.append(gmm)
        return carried_masses(added, [run.removed_after for run in self.runs], len(self.planes))


def carried_masses(added_gmm: list[np.ndarray], removed_after: list[bool],
                   n_planes: int) -> tuple[np.ndarray, np.ndarray]:
    """Masses on the rotor during each run, and after the last [g·mm per plane].

    Parameters
    ----------
    added_gmm : list of complex array (n_planes,)
        Masses added for each run [g·mm per plane].
    removed_after : list of bool
        Per run, whether they came off after it.
    n_planes : int
        Planes of the rotor.

    Returns
    -------
    (complex array (n_runs, n_planes), complex array (n_planes,))
        During each run, and after the last [g·mm].
    """
    state = np.zeros(n_planes, dtype=complex)
    during = []
    for added, removed in zip(added_gmm, removed_after):
        now = state + added
        during.append(now)
        if not removed:
            state = now
    return np.array(during, dtype=complex).reshape(len(during), n_planes), state


def carried_baselines(during_gmm: np.ndarray, removed_after: list[bool]) -> list[int]:
    """For each run, the index of the run whose weights it adds to (-1 for the first).

    A trial run adds its weights to what was on the rotor before it: the
    reference run's state, or an earlier run's whose weights were left on.
    That run is the latest one before it with the same masses on the rotor
    as were carried into it.

    Parameters
    ----------
    during_gmm : complex array (n_runs, n_planes)
        Masses on the rotor during each run [g·mm per plane].
    removed_after : list of bool
        Per run, whether its added masses came off after it.

    Returns
    -------
    list of int
        The index of each run's baseline run, -1 when there is none.
    """
    state = np.zeros(during_gmm.shape[1], dtype=complex)
    out = []
    for i, removed in enumerate(removed_after):
        match = [k for k in range(i) if np.allclose(during_gmm[k], state, rtol=0, atol=1e-9)]
        out.append(match[-1] if match else -1)
        if not removed:
            state = during_gmm[i]
    return out
