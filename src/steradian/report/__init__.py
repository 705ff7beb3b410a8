"""Design reports and figures of a design by kind (the face of ``steradian report`` and
``steradian figure``).

- :func:`design_figure`: any kind of :data:`FIGURE_KINDS` for a design.
- :func:`design_report`: one self-contained HTML page per design: the job and its
  requirements with PASS/FAIL and margin, the design file echoed back, the metrics table
  (EIRP with the RF-exposure caution), the figures inline as SVG, the assumptions and
  conventions and the references of the methods. Its numbers are the analysis summary's
  (:func:`steradian.workflows.analyze_design`, the ``analyze --json`` dictionary).
- :func:`print_pdf`: the same page as PDF, printed by a headless Chromium when one is
  installed (no PDF library is added: the browser that renders the page prints it).
"""

from ._figures import FIGURE_KINDS, design_figure
from ._report import BROWSER_FLAGS, REPORT_FIGURES, Report, design_report, print_pdf, write_report
from ._studies import (
    SWEEP_COLUMNS,
    TOLERANCE_COLUMNS,
    sweep_result_figure,
    tolerance_result_figure,
)

__all__ = ["FIGURE_KINDS", "design_figure", "REPORT_FIGURES", "Report", "design_report",
           "BROWSER_FLAGS",
           "write_report", "print_pdf", "sweep_result_figure", "tolerance_result_figure",
           "SWEEP_COLUMNS", "TOLERANCE_COLUMNS"]
