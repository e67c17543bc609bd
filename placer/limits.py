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

DEFAULT_TIME_LIMIT_S = 300.0
"""Wall-clock time a placer command (every one but ``placer batch``) may take before it
stops with a message and prints nothing as final [s] (``--time-limit``).  It never
decides a result: what is proven is decided by the counted effort
(:data:`DEFAULT_EFFORT`)."""
DEFAULT_BATCH_TIME_LIMIT_S = 3600.0
"""Wall-clock time a whole ``placer batch`` may take [s]: an hour, far above a day's
readings of a production line; what is solved by then is kept, and ``--resume`` carries
on."""
MAX_TIME_LIMIT_S = 7 * 24 * 3600.0
"""Longest time limit an option may ask for [s] (a week; the system timer refuses values
past its ``time_t``)."""
DEFAULT_MEMORY_LIMIT_MB = 2048.0
"""Memory a placer command may take on top of what Python holds at its start [MB]
(``--memory-limit``; each worker process of a batch has its own).  The examples take
at most about 300 MB (a printed blade sheet); 2 GB leaves a margin of more than six
times and fits a shop's laptop."""
MIN_MEMORY_LIMIT_MB = 400.0
"""Smallest memory limit an option may ask for [MB]: every example runs in 250 MB (the
numerical libraries take about 150 MB to load), so that a command never stops while
they load (OpenBLAS does not fail cleanly there, see :mod:`placer.budget`)."""
MAX_MEMORY_LIMIT_MB = 1_048_576.0
"""Largest memory limit an option may ask for [MB] (a terabyte)."""
MAX_EFFORT = 1000.0
"""Largest effort an option may ask for."""

DEFAULT_WORK = 1_000_000_000
"""Work the exact search may do for one part count of one plane (head nodes, grid cells
and rows looked at; about 5 to 15 s of one core) before it declines the count; counted,
never timed, so that the same input gives the same answer on any machine and load."""

DEFAULT_MODEL_EFFORT = 5.0
"""Deterministic time the CP-SAT model may spend on one decision (its own unit, about a
second of one core; counted by the solver, not timed), at effort 1."""

DEFAULT_EFFORT = 1.0
"""How hard the engine works before it leaves a part count unproven: the work budget
and the model's deterministic time are this multiple of their defaults."""

DEFAULT_AIM_SHARE = 0.7
"""Share of a plane's tolerance its plan aims at, leaving the rest for the errors of
fitting and measuring (see DEVELOPERS.md, "The aim"; [ISO21940-14], the share from
memory)."""
NO_TOLERANCE_AIM_SHARE = 0.05
"""Without a tolerance, the aim: this share of the correction still needed (placer's
rule)."""
PAYOFF_SHARE = 0.05
"""Without a tolerance, one more part pays off while it removes at least this share of the
correction still needed (placer's rule)."""

DEFAULT_SAMPLES = 4000
"""Monte Carlo draws per plan when fitting errors are rated."""
MIN_SAMPLES, MAX_SAMPLES = 10, 1_000_000
"""Range of the Monte Carlo draws an option may ask for."""
DEFAULT_SEED = 2026
"""Seed of the Monte Carlo draws, so that runs repeat."""
MAX_SEED = 2**32 - 1
"""Largest seed an option may give (from 0; numpy's generators take any whole number of
zero or more, [NumPyRandom] SeedSequence: "All integer values must be non-negative"; the
32-bit ceiling is placer's choice)."""

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
MAX_WIDTH = 1000
"""Widest terminal sheet [columns]: the sheet is drawn whole in memory, so its width
is bounded (a wide monitor shows about 400)."""

MAX_PLANES = 8
"""Most correction planes in a job, batch template or field session.  Shop work uses
one or two, long rotors up to four or five (common practice, no source); eight is also
the most the coupled field search takes (its span has at most 2 x 8 real coordinates,
``placer/engine/_kernel.c``, MAXD)."""
MAX_SENSORS = 32
"""Most sensors (readings per run) in a field session; shop work uses one to four per
bearing (common practice, no source)."""
MAX_RUNS = 64
"""Most runs (reference, trial and check runs) in a field session."""
MAX_TRIAL_RUNS = 32
"""Most trial runs in a field session (one or two per plane in shop work)."""
MAX_FIELD_CELLS = 4_000_000
"""Largest coupled field search: positions of every plane x catalogue items (columns)
x sensors.  Its arrays take about 16 bytes a cell a copy, several copies, so that the
largest stays well inside the default memory limit."""
MAX_ITEMS = 100
"""Most items in one catalogue (shop catalogues list 5 to 30 sizes)."""
MAX_BATCH_ROWS = 100_000
"""Most rows (rotors) in one batch readings file: far above a day's production; a
longer series goes in several files."""

MAX_SLOTS = 120
"""Most slots (and blades) on one disc for ``placer blades``: the printed sheet names
every blade round the disc, which stays legible up to this count."""

MAX_FILE_BYTES = 1_000_000
"""Largest job, catalogue, session, batch template or blade file placer reads [bytes]
(1 MB: the largest example is a few kB; a plane of 3600 positions with an angle each is
about 30 kB).  Larger files, and anything that is not a regular file (a pipe, a device,
a folder), are refused before they are read (placer's rule, common practice, no source)."""
MAX_READINGS_BYTES = 64_000_000
"""Largest readings file of ``placer batch`` [bytes] (64 MB: about a million rotors)."""
MAX_NAME_BYTES = 255
"""Longest name of one file or folder placer opens or writes [bytes, encoded as the file
system encodes it]: NAME_MAX of Linux and of the common file systems (ext4, XFS, APFS;
NTFS counts 255 UTF-16 units), see REFERENCES.md [POSIX]; a longer name is refused with
one line."""
MAX_ECHO_CHARS = 40
"""Most characters of a value from a file an error line repeats, and the longest text a
closest-match hint looks at."""
