"""The printable fitting sheet (PDF, PNG or SVG), drawn with matplotlib.

One A4 portrait page per correction plane, to print in black and white.
The modules, from the page down:

- :mod:`~placer.views.sheet.compose`: a page per plane, and the file;
- :mod:`~placer.views.sheet.blocks`: header, plane band, key, result, tables;
- :mod:`~placer.views.sheet.face`: the rotor face as the technician sees it;
- :mod:`~placer.views.sheet.symbols`: the symbols drawn on it;
- :mod:`~placer.views.sheet.labels`: putting text where it is free;
- :mod:`~placer.views.sheet.typeset`: text and tables on the page;
- :mod:`~placer.views.sheet.facts`: what a page shows, read from the result;
- :mod:`~placer.views.sheet.convention`: the drawing convention as numbers;
- :mod:`~placer.views.sheet.files`: which files are written.

matplotlib is imported inside the functions, never when placer starts.
"""

from placer.views.sheet.compose import plane_page, write_sheet
from placer.views.sheet.convention import (
                                           angles_counterclockwise,
                                           page_angle_deg,
                                           rotation_clockwise,
)
from placer.views.sheet.face import draw_plane
from placer.views.sheet.facts import (
                                           PlaneDrawing,
                                           PlaneFace,
                                           SheetPage,
                                           fmt_gmm,
                                           plane_face,
)
from placer.views.sheet.files import (
                                           MATPLOTLIB_MISSING,
                                           PNG_DPI,
                                           SUFFIXES,
                                           require_matplotlib,
                                           sheet_paths,
)
from placer.views.sheet.labels import spread_deg

__all__ = ["MATPLOTLIB_MISSING", "PNG_DPI", "SUFFIXES", "PlaneDrawing", "PlaneFace", "SheetPage",
           "angles_counterclockwise", "draw_plane", "fmt_gmm", "page_angle_deg",
           "plane_face", "plane_page", "require_matplotlib", "rotation_clockwise", "sheet_paths",
           "spread_deg", "write_sheet"]
