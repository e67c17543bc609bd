"""Every default and every limit of placer, in one place.

Readers, pipelines and the command line take these from here; none of them
writes a number of its own.

Numbers at the edges (Notes)
----------------------------
Every number a file or an option gives is zero or between
:data:`MIN_MAGNITUDE` and :data:`MAX_MAGNITUDE` in size (whole numbers: at
most :data:`MAX_WHOLE`).  The ceiling keeps every product placer forms
(mass_g · radius_mm · count, 1000 · G · m / ω, sums over thousands of parts)
far from the float64 overflow at 1.8e308, so that no result is infinite; the
floor keeps the quotients (the permissible residual 1000 · G · m / ω) from
underflowing to zero.  Both are far outside anything a balancing shop
measures (1e12 g is a million tonnes, 1e-12 mm a hundredth of an atom).

References
----------
[IEEE754] binary64 range (largest finite 1.8e308, smallest normal 2.2e-308);
[PythonDocs] ``sys.int_info.str_digits_check_threshold`` (4300 digits).  The
limits themselves are placer's own choice (common practice, no source).
"""

from __future__ import annotations

DEFAULT_MAX_PARTS = 4
"""Longest plan considered when the job or session does not say."""
MAX_PARTS_LIMIT = 8
"""Longest plan a job, session or option may ask for."""
MAX_POSITIONS = 3600
"""Most positions on one correction plane."""
MAX_CAPACITY = 12
"""Most parts stacked on one position."""

DEFAULT_TIME_LIMIT_S = 10.0
"""Time the engine may spend on one plane (or the coupled field search) before it
leaves part counts unproven [s]."""

DEFAULT_SAMPLES = 4000
"""Monte Carlo draws per plan when fitting errors are rated."""
MIN_SAMPLES, MAX_SAMPLES = 10, 1_000_000
"""Range of the Monte Carlo draws an option may ask for."""
DEFAULT_SEED = 2026
"""Seed of the Monte Carlo draws, so that runs repeat."""

MAX_MAGNITUDE = 1e12
"""Largest size of any number in a placer input (see the module notes)."""
MIN_MAGNITUDE = 1e-12
"""Smallest size of a number other than zero in a placer input."""
MAX_WHOLE = 10**12
"""Largest size of a whole number in a placer input."""
RANGE_EXPECTED = "zero or a number between 1e-12 and 1e12 in size"
"""What a number out of range is told it should be."""

MIN_WIDTH = 40
"""Narrowest terminal sheet [columns]."""
