"""Site report: the written record an installer leaves with every job.

One content model (``model.report_model``) feeds three formats, so the PDF, the
HTML and the JSON always say the same thing:

- PDF (fpdf2, core fonts: real, searchable text), A4 or US Letter;
- HTML, one self-contained file with the figures embedded, readable on a phone;
- JSON, the full assessment plus every input, so the report can be made again
  (``leosite report old-report.json --out new.pdf``).

``write.write_report`` is what the command line and the text UI call.  Files
are written atomically.  One concept a module: ``advice`` (what clearing each
sector would do), ``spots_section``, ``inputs`` (what makes a report again),
``model``, ``html``, ``pdf``, ``write``.
"""


from .advice import recommendations, what_if_cleared
from .inputs import REPORT_KIND, REPORT_VERSION, SavedReport, load_report_inputs, report_inputs, site_document
from .model import method_text, report_model
from .spots_section import pole_text, spot_ranking, spots_section
from .write import FIGURE_CAPTIONS, FORMATS, PAPERS, format_for, render_report, report_figures, write_report

__all__ = [
    "FIGURE_CAPTIONS", "FORMATS", "PAPERS", "REPORT_KIND", "REPORT_VERSION", "SavedReport", "format_for",
    "load_report_inputs", "method_text", "pole_text", "recommendations", "render_report", "report_figures",
    "report_inputs", "report_model", "site_document", "spot_ranking", "spots_section", "what_if_cleared",
    "write_report",
]
