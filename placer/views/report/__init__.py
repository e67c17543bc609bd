"""The printed visit report of a field visit (PDF, PNG or SVG), drawn with matplotlib.

The modules, from the file down:

- :mod:`~placer.views.report.output`: which files are written, atomically;
- :mod:`~placer.views.report.pages`: the blocks flowed onto A4 pages;
- :mod:`~placer.views.report.blocks`: the text and table blocks;
- :mod:`~placer.views.report.figures`: the blocks with drawings (readings,
  the four-run construction, a plane's rotor face, a residual check);
- :mod:`~placer.views.report.polar`: the polar plots;
- :mod:`~placer.views.report.layout`: heading, sections, footer, sign-off.

What it shows comes from :func:`placer.visitreport.visit_report`; the rotor
face is the fitting sheet's (:func:`placer.views.sheet.face.draw_plane`).
matplotlib is imported inside the functions, never when placer starts.
"""

from placer.views.report.output import check_report_path, write_report

__all__ = ["check_report_path", "write_report"]
