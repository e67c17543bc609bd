"""A field-balancing visit: machine, sensors, correction planes and the runs taken."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from placer.catalog import Catalog
from placer.geometry import PlaneGeometry, gmm_vector
from placer.job import Rotor

RUN_KINDS = ("reference", "trial", "check")
FIELD_NORMS = {"max": "max", "rms": "euclidean"}
"""Session norm names -> search norms: the largest sensor reading, or the root
of the sum of squares over sensors."""


@dataclass(frozen=True)
class Channel:
    """One sensor (or one sensor at one speed), with its weight in the fit."""

    name: str
    weight: float = 1.0


@dataclass(frozen=True)
class FieldPlane:
    """A correction plane of the machine: its positions and its catalogue."""

    geometry: PlaneGeometry
    catalog: Catalog


@dataclass(frozen=True)
class PlacedMass:
    """A mass on a plane, as fitted: trial weight or part of a plan.

    ``position`` is the position number when it was fitted on one.
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
        return gmm_vector(self.count * self.mass_g * self.radius_mm, self.angle_deg)


@dataclass(frozen=True)
class Run:
    """One run of the machine.

    ``readings`` are complex, one per channel, in the session's unit as
    peak values with phases in the rotor's angle sense.  ``added`` are the
    masses fitted for this run; ``removed_after`` says whether they came off
    before the next run.
    """

    name: str
    kind: str
    readings: np.ndarray
    raw: tuple[tuple[float, float], ...]
    added: tuple[PlacedMass, ...] = ()
    removed_after: bool = True


@dataclass(frozen=True)
class Session:
    """Everything one ``placer field`` run works on."""

    machine_id: str
    machine_name: str
    rotor: Rotor
    rotation: str | None
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

    def weights_in(self) -> tuple[np.ndarray, np.ndarray]:
        """Masses on the rotor during each run, and after the last [g·mm per plane].

        Masses added for a run stay on unless the run says they were removed
        after it (trial weights usually are; a check run's fitted parts stay).
        """
        state = np.zeros(len(self.planes), dtype=complex)
        during = []
        for run in self.runs:
            now = state.copy()
            for mass in run.added:
                now[mass.plane] += mass.gmm
            during.append(now)
            if not run.removed_after:
                state = now
        return np.array(during).reshape(len(self.runs), len(self.planes)), state
