"""Plans in domain terms, and choosing one from the trade-off front."""

from __future__ import annotations

from dataclasses import dataclass

from placer.engine.search import Selection


@dataclass(frozen=True)
class FittedPart:
    """Parts of one item on one position.

    ``position`` is the number on the rotor (1 = first position).  ``action``
    is "fit" for a part to add, "remove" for a part already on the rotor to
    take off (its ``mass_g`` is the part's own mass, positive for an added
    weight, negative for a drilled hole).
    """

    position: int
    angle_deg: float
    radius_mm: float
    item: str
    mass_g: float
    count: int
    action: str = "fit"

    @property
    def verb(self) -> str:
        """What the technician does: "remove" a part on the rotor, "drill" a hole
        (a removal item, negative mass), or "fit" an added part."""
        if self.action == "remove":
            return "remove"
        return "drill" if self.mass_g < 0 else "fit"

    @property
    def signed_count(self) -> int:
        """+count for parts fitted, -count for parts removed."""
        return self.count if self.action == "fit" else -self.count


@dataclass(frozen=True)
class PlanOption:
    """One plan: the parts, and the residual they leave.

    ``residual_gmm`` is |required correction - sum of fitted parts| [g·mm];
    ``residual_angle_deg`` is the angle of that vector, where a further
    part would have to go.  ``lower_bound_gmm`` is the proven least
    residual with at most ``part_count`` parts.
    """

    part_count: int
    parts: tuple[FittedPart, ...]
    residual_gmm: float
    residual_angle_deg: float
    lower_bound_gmm: float
    proven: bool
    chance_within: float | None = None
    residual_p95_gmm: float | None = None

    @property
    def used_parts(self) -> int:
        """Operations: parts fitted plus parts removed."""
        return sum(p.count for p in self.parts)


def improving(entries: list[Selection]) -> list[Selection]:
    """The entries k >= 1 that improve on k - 1 (the trade-off front as shown)."""
    out = []
    for previous, entry in zip(entries, entries[1:]):
        if entry.used_parts > previous.used_parts and entry.residual_norm < previous.residual_norm:
            out.append(entry)
    return out


def choose(entries: list[Selection], tolerance_gmm: float | None) -> Selection:
    """The plan to fit from the front ``entries`` (index k = at most k parts).

    With a tolerance: the fewest parts within it (the least residual among
    those, since entry k is the least with at most k parts; zero parts when
    the rotor is already within tolerance).  Without one, or when no entry
    is within it: the least residual with at most max_parts parts.
    """
    if tolerance_gmm is not None:
        for entry in entries:
            if entry.residual_norm <= tolerance_gmm:
                return entry
    return entries[-1]
