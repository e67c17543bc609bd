"""A production batch: one rotor type, a new required correction for every rotor.

Pure core of ``placer batch``: takes the template :class:`placer.job.Job`
and the rotors' readings as dataclasses, returns one
:class:`~placer.batch.solver.RotorOutcome` per rotor and a
:class:`~placer.batch.tally.BatchSummary`.  Reading and writing files is
:mod:`placer.io.batchreadings` and :mod:`placer.io.batchresults`.

- :mod:`~placer.batch.solver`: one rotor, the solver built once, the drawers;
- :mod:`~placer.batch.pool`: the rotors in worker processes, in input order;
- :mod:`~placer.batch.tally`: the counts and the reorder list.
"""

from placer.batch.pool import (
                               CHUNK_ROWS,
                               default_jobs,
                               processes_used,
                               solve_readings,
                               usable_cores,
)
from placer.batch.solver import (
                               BatchSolver,
                               Drawer,
                               PlaneOutcome,
                               RotorOutcome,
                               RotorReading,
                               draw_down,
                               reading_digest,
)
from placer.batch.tally import BatchSummary, BatchTally, PartsUsed

__all__ = ["CHUNK_ROWS", "BatchSolver", "BatchSummary", "BatchTally", "Drawer", "PartsUsed",
           "PlaneOutcome", "RotorOutcome", "RotorReading", "default_jobs", "draw_down",
           "processes_used", "reading_digest", "solve_readings", "usable_cores"]
