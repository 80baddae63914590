"""Pictures and the HTML report of a finished run.

Examples
--------
>>> import bemcheck, tempfile
>>> from bemcheck.report import report_run
>>> run = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tempfile.mkdtemp(), model="free")
>>> report_run(run.folder).name
'report.html'
"""

from bemcheck.report.figures import make_figures
from bemcheck.report.html import FIGURES_DIR, REPORT_FILE, render_report, report_run, write_report
from bemcheck.report.layout import layout_figure
from bemcheck.report.tables import records_rows

__all__ = [
    "FIGURES_DIR",
    "REPORT_FILE",
    "layout_figure",
    "make_figures",
    "records_rows",
    "render_report",
    "report_run",
    "write_report",
]
