"""placer: exact placement of stock balancing parts on a rotor's fixed positions.

The public pieces, by name (see DEVELOPERS.md for the package map)::

    read_job, solve_job          job file -> solved job
    PlacementSearch              the exact engine, reusable for many targets
    permissible_residual_gmm     ISO 21940-11 tolerance
"""

from placer.engine.search import PlacementSearch
from placer.errors import (
    CatalogError,
    InputError,
    JobError,
    PlacerError,
    ToleranceError,
)
from placer.io.jobfile import read_job
from placer.solve import solve_job
from placer.tolerance import allocate_to_planes, permissible_residual_gmm

__all__ = [
    "CatalogError", "InputError", "JobError", "PlacerError", "ToleranceError",
    "read_job", "PlacementSearch", "solve_job", "allocate_to_planes",
    "permissible_residual_gmm",
]
__version__ = "0.1.0"
