"""Starting files for ``placer new``: a commented job, field session or batch template,
and copies of the bundled examples.

Every file is written through :mod:`placer.io.outputs` (beside its final name, then
renamed), so that a file is either whole or not there; an existing file is never
replaced without ``force``.
The files written are read back by the readers in tests, so that what ``placer new``
writes is what ``placer solve``, ``field`` and ``batch`` take.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from placer.errors import InputError
from placer.io.catalogfile import bundled_names, package_data_dir
from placer.io.outputs import check_folder, check_target, write_text
from placer.limits import MAX_POSITIONS
from placer.units import UNIT_SYSTEMS

KINDS = ("job", "session", "template")
"""What ``placer new`` writes: a job for ``solve``, a session for ``field``, a template
for ``batch``."""

EXAMPLE_SUFFIXES = (".toml", ".csv", ".jsonl")
"""Files of the examples folder that are examples."""


@dataclass(frozen=True)
class Starter:
    """What a new file describes: a rotor's planes, all alike.

    Parameters
    ----------
    kind : {"job", "session", "template"}
        The file to write.
    name : str
        The rotor's name.
    positions : int
        Equally spaced positions per plane.
    radius : float
        Their radius, in the unit of ``units`` [mm or in].
    catalog : str
        A bundled catalogue's name or a catalogue file.
    planes : int
        Correction planes, 1 or 2.
    units : {"metric", "imperial"}
        The units the file is written in.

    Raises
    ------
    InputError
        A value out of range, naming the option.
    """

    kind: str
    name: str
    positions: int
    radius: float
    catalog: str
    planes: int = 1
    units: str = "metric"

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise InputError(f"is '{self.kind}'", option="kind", expected="job, session or "
                             "template")
        if not 1 <= self.positions <= MAX_POSITIONS:
            raise InputError(f"is {self.positions}", option="positions",
                             expected=f"1 to {MAX_POSITIONS} positions")
        if not (self.radius > 0 and self.radius < 1e12):
            raise InputError(f"is {self.radius:g}", option="radius",
                             expected="a radius above zero")
        if self.planes not in (1, 2):
            raise InputError(f"is {self.planes}", option="planes", expected="1 or 2")
        if self.units not in UNIT_SYSTEMS:
            raise InputError(f"is '{self.units}'", option="units", expected="metric or imperial")
        if not self.name.strip() or any(ch in self.name for ch in '"\\\n'):
            raise InputError("is empty or holds quotes or new lines", option="name",
                             expected="a rotor name such as \"Supply fan SF-3\"")
        if not self.catalog.strip() or any(ch in self.catalog for ch in '"\\\n'):
            raise InputError(f"is '{self.catalog}'", option="catalog",
                             expected="a bundled catalogue name or a file path")


def _quantity_keys(units: str) -> dict[str, str]:
    imperial = units == "imperial"
    return {"radius": "radius_in" if imperial else "radius_mm",
            "mass": "mass_oz" if imperial else "mass_g",
            "tolerance": "tolerance_oz" if imperial else "tolerance_g",
            "rotor_mass": "mass_lb" if imperial else "mass_kg",
            "mass_unit": "oz" if imperial else "g",
            "length_unit": "in" if imperial else "mm",
            "rotor_unit": "lb" if imperial else "kg"}


def _rotor(start: Starter, keys: dict[str, str], session: bool) -> list[str]:
    lines = [
        "[rotor]",
        f'name = "{start.name}"',
        f"# {keys['rotor_mass']} = 0        # FILL IN: rotor mass [{keys['rotor_unit']}]; "
        "with service_rpm and grade it gives the tolerance",
        "# service_rpm = 0       # FILL IN: maximum service speed [r/min]",
        '# grade = "G6.3"        # ISO 21940-11 balance quality grade (G6.3: fans, pumps)',
        'angle_sense = "against rotation"   # how angles are counted from the reference mark',
        '# rotation = "clockwise"   # how it turns, seen from the front end',
    ]
    if not session:
        lines += [
            '# reference_mark = "keyway"   # what marks 0° on the rotor, for the sheet',
            '# front = "drive end"         # what the shop calls the front end',
            '# back = "free end"           # and the other end',
        ]
    else:
        lines.append(f"# plane_separation_{keys['length_unit']} = 0   # distance between "
                     "the planes, for the static and couple parts")
    return lines


def _plane(start: Starter, keys: dict[str, str], number: int) -> list[str]:
    name = "plane 1" if start.planes == 1 else ("front plane", "back plane")[number - 1]
    lines = [
        "",
        "[[planes]]",
        f'name = "{name}"',
        f"{keys['radius']} = {start.radius:g}   # radius of the positions "
        f"[{keys['length_unit']}]",
        f"positions = {start.positions}   # equally spaced, position 1 at the reference mark",
        "# blocked = []          # positions that take no part",
        "capacity = 1            # most parts stacked on one position",
        f'catalog = "{start.catalog}"',
    ]
    if start.kind == "session":
        return lines
    if start.kind == "job":
        lines.append(f"# correction = {{ {keys['mass']} = 0.0, angle_deg = 0.0 }}   # FILL IN "
                     "from the balancing machine: where mass must be added")
    if number == 2 and start.kind == "job":
        lines.append('# worked_from = "back"   # worked from the other end: drawn as seen '
                     "from there")
    lines += [f"# {keys['tolerance']} = 0   # optional: the plane's tolerance as a mass at "
              "this radius (else the grade's share)",
              "max_parts = 4           # longest plan considered"]
    return lines


def starter_text(start: Starter) -> str:
    """The commented TOML of a new job, session or template.

    Parameters
    ----------
    start : Starter
        What to write.

    Returns
    -------
    str
        The file's text.
    """
    keys = _quantity_keys(start.units)
    what = {"job": "Job file for 'placer solve FILE'",
            "session": "Field-balancing session for 'placer field FILE'",
            "template": "Batch template for 'placer batch FILE READINGS.csv'"}[start.kind]
    lines = [f"# {what}, written by 'placer new'.",
             "# Lines marked FILL IN need your values; remove the # in front of a line to use it.",
             ""]
    if start.kind != "session":
        lines += ["[job]",
                  '# customer = ""         # customer or site, printed on the sheet',
                  '# work_order = ""',
                  '# technician = ""',
                  "# date = 2026-01-31     # default: the day the sheet is printed",
                  f'units = "{start.units}"      # what the output is shown in: metric '
                  "(g, mm) or imperial (oz, in)",
                  ""]
    else:
        lines += ["[machine]",
                  'id = "MACHINE-1"        # FILL IN: the machine\'s tag, the key of its '
                  "history",
                  f'name = "{start.name}"',
                  ""]
    lines += _rotor(start, keys, start.kind == "session")
    if start.kind == "session":
        lines += ["", "[readings]",
                  'unit = "mm/s"          # um, mils, mm/s or in/s',
                  'measure = "peak"       # peak, peak-to-peak or rms',
                  'phase = "lag"          # lag or lead, from the reference pulse; none without one',
                  "", "[[sensors]]", 'name = "drive end horizontal"',
                  "", "[[sensors]]", 'name = "free end horizontal"']
    for number in range(1, start.planes + 1):
        lines += _plane(start, keys, number)
    if start.kind == "session":
        lines += ["", "# FILL IN the runs: [amplitude, phase_deg] per sensor, in sensor order.",
                  "# [[runs]]", '# name = "as found"', '# kind = "reference"',
                  "# readings = [[0.0, 0], [0.0, 0]]"]
        for number in range(1, start.planes + 1):
            lines += ["", "# [[runs]]", f'# name = "trial plane {number}"', '# kind = "trial"',
                      f"# trial = [{{ plane = {number}, {keys['mass']} = 0.0, position = 1 }}]",
                      "# removed = true", "# readings = [[0.0, 0], [0.0, 0]]"]
        lines += ["", "[solve]", 'norm = "max"           # least largest reading, or "rms"',
                  "max_parts = 4", "# vibration_limit = 1.0  # in the readings' unit and "
                  "measure: the fewest parts predicted at or below it"]
    return "\n".join(lines) + "\n"


def write_new(path: Path, text: str, force: bool = False, option: str = "file") -> Path:
    """Write ``text`` to ``path`` atomically (beside it, then renamed).

    Parameters
    ----------
    path : Path
        The file.
    text : str
        Its text.
    force : bool
        Replace a file that exists.
    option : str
        The argument the path came from, for a message.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    OutputError
        The file exists without ``force``, its folder does not, or it cannot be
        written (:func:`placer.io.outputs.check_target`); nothing is changed then.
    """
    path = check_target(Path(path), option, force=force)
    return write_text(path, text, option, force=force)


def example_names() -> list[str]:
    """The bundled examples' file names (``supply-fan.toml``, ``fan-line-readings.csv``).

    Returns
    -------
    list of str
        Sorted.
    """
    folder = package_data_dir("examples")
    return sorted(p.name for p in folder.iterdir() if p.suffix in EXAMPLE_SUFFIXES)


def copy_examples(names: list[str], folder: Path, force: bool = False) -> list[Path]:
    """Copy bundled examples into ``folder``; a name may leave out its ``.toml``.

    Nothing is written unless every name is known and, without ``force``,
    no copy would replace a file.

    Parameters
    ----------
    names : list of str
        Example names; "all" for every one.
    folder : Path
        Where the copies go.
    force : bool
        Replace files that exist.

    Returns
    -------
    list of Path
        The files written.

    Raises
    ------
    InputError
        An unknown name (with the list); OutputError a file that exists without
        ``force`` or a folder placer cannot write in.
    """
    known = example_names()
    chosen = []
    for name in names:
        if name == "all":
            chosen += known
            continue
        match = name if name in known else f"{name}.toml" if f"{name}.toml" in known else None
        if match is None:
            raise InputError(f"no bundled example '{name}'", option="example",
                             expected="one of " + ", ".join(known) + ", or all")
        chosen.append(match)
    chosen = list(dict.fromkeys(chosen))
    folder = Path(folder)
    check_folder(folder, "folder")
    targets = [check_target(folder / name, "folder", force=force) for name in chosen]
    source = package_data_dir("examples")
    return [write_new(target, (source / target.name).read_text(encoding="utf-8"), force=force,
                      option="folder") for target in targets]


def catalog_names() -> list[str]:
    """The bundled catalogues a new file may name.

    Returns
    -------
    list of str
        Their names.
    """
    return bundled_names()
