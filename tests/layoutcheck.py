"""Layout checks shared by the printed sheet's and the visit report's tests.

Measured on matplotlib's own extent of every text drawn
(``Text.get_window_extent`` with the figure's renderer).
"""

from __future__ import annotations

CLEAR_PX = 2.0
"""Least gap between two texts' boxes [px]: texts that merely touch read as one
("pump-impeller-rework.toml2026-12-02")."""


def overlapping(texts, clear_px: float = CLEAR_PX) -> list[tuple[str, str]]:
    """Pairs of texts whose boxes overlap or come closer than ``clear_px``."""
    pairs = []
    for i, (a, box_a) in enumerate(texts):
        for b, box_b in texts[i + 1:]:
            across = min(box_a.x1, box_b.x1) - max(box_a.x0, box_b.x0)
            down = min(box_a.y1, box_b.y1) - max(box_a.y0, box_b.y0)
            if across > -clear_px and down > -clear_px:
                pairs.append((a, b))
    return pairs
