"""Every public function and method of placer documents its parameters.

The rules, checked on each module of the ``placer`` package (``__main__``
left out):

* every public function defined in the module (name not starting with
  ``_``), every public method, static method and class method of every
  public class defined there, and every public class's constructor;
* the docstring has a numpydoc ``Parameters`` section naming each parameter
  (``self``, ``cls``, ``*args`` and ``**kwargs`` excepted) on an entry line
  ``name : type`` followed by an indented description;
* a class's constructor parameters are documented in the class docstring:
  ``__init__``'s under ``Parameters``, a dataclass's fields under
  ``Parameters`` or ``Attributes``;
* a ``Parameters`` section names no parameter the callable does not take;
* a parameter whose name ends in a unit suffix (``UNIT_SUFFIXES``) gives
  that unit in square brackets in its description (``mass_g : float`` /
  ``Mass of one part [g].``).

All offenders are reported at once, by qualified name.
"""

from __future__ import annotations

import dataclasses
import importlib
import inspect
import pkgutil
import re
from collections.abc import Callable, Iterator

import placer

UNIT_SUFFIXES: dict[str, str] = {
    "_kg_mm2": "kg·mm²",
    "_g_cm3": "g/cm³",
    "_gmm2": "g·mm²",
    "_oz_in": "oz·in",
    "_mm_s": "mm/s",
    "_gmm": "g·mm",
    "_rpm": "r/min",
    "_deg": "deg",
    "_rad": "rad",
    "_hz": "Hz",
    "_kg": "kg",
    "_mm": "mm",
    "_um": "µm",
    "_in": "in",
    "_oz": "oz",
    "_lb": "lb",
    "_pt": "pt",
    "_ms": "ms",
    "_g": "g",
    "_s": "s",
    "_n": "N",
}
"""Name suffix -> the unit its description must give in brackets (longest suffix wins)."""

UNIT_SPELLINGS: dict[str, tuple[str, ...]] = {
    "deg": ("deg", "°"),
    "r/min": ("r/min", "rpm"),
    "µm": ("µm", "um"),
}
"""Other accepted spellings of a unit; ``*`` is read as ``·`` and ``^2`` as ``²``."""

SKIPPED_PARAMETERS = ("self", "cls")
DOCUMENTED_SECTIONS = ("Parameters", "Other Parameters")
FIELD_SECTIONS = ("Parameters", "Other Parameters", "Attributes")


def unit_of(name: str) -> str | None:
    """The unit a parameter's name asks for, or None."""
    for suffix in sorted(UNIT_SUFFIXES, key=len, reverse=True):
        if name.endswith(suffix) and len(name) > len(suffix):
            return UNIT_SUFFIXES[suffix]
    return None


def has_unit(description: str, unit: str) -> bool:
    """Whether ``description`` gives ``unit`` in square brackets (``[g]``, ``[g·mm, complex]``)."""
    text = re.sub(r"\s*\*\s*", "·", description).replace("^2", "²").replace("^3", "³")
    for spelling in UNIT_SPELLINGS.get(unit, (unit,)):
        if re.search(r"\[\s*" + re.escape(spelling) + r"\s*(?:\]|[,;:]|\s)", text):
            return True
    return False


def sections(doc: str) -> dict[str, list[str]]:
    """The numpydoc sections of a docstring: title -> its lines (underline excluded)."""
    lines = inspect.cleandoc(doc).splitlines()
    found: dict[str, list[str]] = {}
    current: list[str] | None = None
    i = 0
    while i < len(lines):
        underline = lines[i + 1].strip() if i + 1 < len(lines) else ""
        if lines[i].strip() and len(underline) >= 3 and set(underline) == {"-"}:
            current = found.setdefault(lines[i].strip(), [])
            i += 2
            continue
        if current is not None:
            current.append(lines[i])
        i += 1
    return found


def entries(lines: list[str]) -> dict[str, tuple[str, str]]:
    """Entries of a Parameters-like section: name -> (type, description)."""
    out: dict[str, tuple[str, str]] = {}
    names: list[str] = []
    for line in lines:
        if not line.strip():
            continue
        if not line[0].isspace():
            head, colon, kind = line.partition(":")
            names = [n.strip().lstrip("*") for n in head.split(",") if n.strip()]
            for name in names:
                out[name] = (kind.strip() if colon else "", "")
        else:
            for name in names:
                kind, text = out[name]
                out[name] = (kind, (text + " " + line.strip()).strip())
    return out


def documented(doc: str | None, titles: tuple[str, ...]) -> dict[str, tuple[str, str]] | None:
    """The entries of the docstring's sections among ``titles``, None when it has none."""
    found = sections(doc or "")
    if not any(title in found for title in titles):
        return None
    out: dict[str, tuple[str, str]] = {}
    for title in titles:
        out.update(entries(found.get(title, [])))
    return out


def check(names: list[str], doc: str | None, titles: tuple[str, ...],
          also_taken: tuple[str, ...] = ()) -> list[str]:
    """Problems with how ``doc`` documents the parameters ``names``.

    ``also_taken`` are parameters that may be documented but need not be
    (``self``, ``*args``, ``**kwargs``).
    """
    if not names:
        return []
    if not (doc or "").strip():
        return ["no docstring"]
    table = documented(doc, titles)
    if table is None:
        return [f"no {' or '.join(t for t in titles if t != 'Other Parameters')} section"]
    problems = []
    for name in names:
        if name not in table:
            problems.append(f"{name} not documented")
            continue
        kind, text = table[name]
        if not kind:
            problems.append(f"{name} has no type (`{name} : type`)")
        if not text:
            problems.append(f"{name} has no description")
        unit = unit_of(name)
        if unit is not None and not has_unit(text, unit):
            problems.append(f"{name} does not give its unit [{unit}]")
    taken = set(names) | set(also_taken)
    for name in documented(doc, DOCUMENTED_SECTIONS) or {}:
        if name not in taken:
            problems.append(f"documents {name}, which it does not take")
    return problems


def parameters(func: Callable) -> tuple[list[str], tuple[str, ...]]:
    """The parameters of ``func`` that must be documented, and all it takes."""
    signature = inspect.signature(func)
    needed = [name for name, p in signature.parameters.items()
              if name not in SKIPPED_PARAMETERS
              and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)]
    return needed, tuple(signature.parameters)


def function_problems(func: Callable) -> list[str]:
    """Problems with a function's or method's docstring."""
    needed, taken = parameters(func)
    return check(needed, inspect.getdoc(func), DOCUMENTED_SECTIONS, taken)


def class_problems(cls: type) -> list[str]:
    """Problems with how a class's docstring documents its constructor."""
    doc = cls.__doc__
    if dataclasses.is_dataclass(cls):
        names = [f.name for f in dataclasses.fields(cls) if f.init]
        return check(names, doc, FIELD_SECTIONS)
    init = vars(cls).get("__init__")
    if init is None or not inspect.isfunction(init):
        return []
    needed, taken = parameters(init)
    return check(needed, doc, DOCUMENTED_SECTIONS, taken)


def _function(obj: object) -> Callable | None:
    """The function behind a module or class attribute (decorators undone), or None."""
    if isinstance(obj, (staticmethod, classmethod)):
        obj = obj.__func__
    if callable(obj) and inspect.isfunction(inspect.unwrap(obj)):
        return obj  # type: ignore[return-value]
    return None


def public_callables(package=placer) -> Iterator[tuple[str, Callable]]:
    """(qualified name, function or class) for every public one defined in ``package``."""
    modules = [importlib.import_module(package.__name__)]
    for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
        if info.name.rsplit(".", 1)[-1] == "__main__":
            continue
        modules.append(importlib.import_module(info.name))
    for module in modules:
        for name, obj in sorted(vars(module).items()):
            if name.startswith("_") or getattr(obj, "__module__", None) != module.__name__:
                continue
            if inspect.isclass(obj):
                yield f"{module.__name__}.{name}", obj
                for attr, member in sorted(vars(obj).items()):
                    func = _function(member)
                    if not attr.startswith("_") and func is not None:
                        yield f"{module.__name__}.{name}.{attr}", func
            elif _function(obj) is not None:
                yield f"{module.__name__}.{name}", obj


def problems(obj: Callable) -> list[str]:
    """Problems with the docstring of a function, method or class."""
    return class_problems(obj) if inspect.isclass(obj) else function_problems(obj)


def offenders(package=placer) -> dict[str, list[str]]:
    """Qualified name -> problems, for every public callable of ``package`` that has any."""
    return {name: found for name, obj in public_callables(package)
            if (found := problems(obj))}


def test_every_public_callable_documents_its_parameters():
    bad = offenders()
    report = "\n".join(f"{name}: {'; '.join(found)}" for name, found in sorted(bad.items()))
    assert not bad, f"{len(bad)} public callables document their parameters badly:\n{report}"


def test_the_walk_reaches_every_layer():
    names = {name for name, _ in public_callables()}
    assert len(names) > 250
    for expected in ("placer.tolerance.permissible_residual_gmm",
                     "placer.engine.search.PlacementSearch",
                     "placer.engine.search.PlacementSearch.front",
                     "placer.io.history.History",
                     "placer.views.sheet.typeset.text_width_in",
                     "placer.cli.main"):
        assert expected in names, expected


# A deliberately bad docstring, run through the same checker.

def _badly_documented(mass_g, radius_mm, count, angle_deg, *parts, **options):
    """Return something.

    Parameters
    ----------
    mass_g : float
        Mass of one part.
    count
    angle_deg : float
        Angle [deg·s].
    stale_gmm : float
        A parameter it no longer takes [g·mm].

    Returns
    -------
    float
    """


def _well_documented(mass_g, radius_mm, *parts, tolerance_gmm=1.0, **options):
    """Return the mass times the radius.

    Parameters
    ----------
    mass_g : float
        Mass of one part [g].
    radius_mm : float
        Radius at which it acts [mm].
    *parts : float
        Not checked.
    tolerance_gmm : float, optional
        Permissible residual [g * mm], complex.
    """


@dataclasses.dataclass
class _BadRecord:
    """A record.

    Attributes
    ----------
    speed_rpm : float
        Speed.
    """

    speed_rpm: float
    grade_mm_s: float


class _BadInit:
    """A class whose constructor documents nothing."""

    def __init__(self, separation_mm):
        self.separation_mm = separation_mm


def test_the_checker_catches_a_bad_docstring():
    assert set(problems(_badly_documented)) == {
        "mass_g does not give its unit [g]",
        "radius_mm not documented",
        "count has no type (`count : type`)",
        "count has no description",
        "angle_deg does not give its unit [deg]",
        "documents stale_gmm, which it does not take",
    }
    assert problems(_well_documented) == []
    assert problems(_BadRecord) == ["speed_rpm does not give its unit [r/min]",
                                    "grade_mm_s not documented"]
    assert problems(_BadInit) == ["no Parameters section"]


def test_unit_suffixes():
    assert unit_of("grade_mm_s") == "mm/s"
    assert unit_of("couple_moment_gmm2") == "g·mm²"
    assert unit_of("density_g_cm3") == "g/cm³"
    assert unit_of("row_in") == "in"
    assert unit_of("count") is None and unit_of("_g") is None
    assert has_unit("Speed [r/min].", "r/min") and has_unit("Speed [rpm].", "r/min")
    assert not has_unit("Correction [g·mm].", "g")
    assert has_unit("Correction [g*mm^2].", "g·mm²")
