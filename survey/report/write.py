"""Writing a report: the format from the file name, the figures at print
resolution, the bytes of each format, and the atomic write."""

from __future__ import annotations

import json
from datetime import datetime
from pathlib import Path

from ..errors import InputError
from ..fileio import atomic_write_bytes
from ..pipeline import SiteRun
from .html import render_html
from .model import FIGURE_CAPTIONS, report_model
from .spots_section import spot_ranking

FORMATS = ("pdf", "html", "json")
PAPERS = ("a4", "letter")

def report_figures(run: SiteRun, ranking=None) -> dict:
    """The report's figures as PIL images, at print resolution."""
    from .. import figures as fig  # Pillow drawing only when a figure is wanted

    figures = {
        "sky": fig.sky_plot_for_run(run, size_px=1400),
        "panorama": fig.horizon_panorama_for_run(run),
        "timeline": fig.outage_timeline_for_run(run),
    }
    if ranking is not None:
        figures["plan"] = fig.spots_plan_figure(run, ranking)
    if run.site.photo is not None:
        from ..figures.photo import photo_panorama_for_run

        figures["photo"] = photo_panorama_for_run(run)
    if run.platform is not None:  # a vehicle or vessel (survey/platform/)
        if run.platform.platform.route is None:
            figures["heading"] = fig.heading_chart_for_run(run, size_px=1200)
        else:
            figures["route"] = fig.route_map_for_run(run)
    return figures






def format_for(path: str | Path) -> str:
    """The report format from the file name's extension (pdf, html/htm, json)."""
    ext = Path(path).suffix.lower().lstrip(".")
    ext = {"htm": "html"}.get(ext, ext)
    if ext not in FORMATS:
        raise InputError(f"{path}: expected a .pdf, .html or .json file name")
    return ext


def render_report(run: SiteRun, fmt: str, paper: str = "a4",
                  generated: datetime | None = None, ranking=None) -> bytes:
    """The report as file contents in ``fmt`` (pdf | html | json).  ``ranking``
    (spots.rank_spots of this run, such as the text UI's Spots tab holds) is used
    as it is; without one the plan's candidates are ranked here."""
    if ranking is None or getattr(ranking.evaluator, "run", None) is not run:
        ranking = spot_ranking(run)
    model = report_model(run, generated, ranking)
    if fmt == "json":
        return (json.dumps(_json_model(model), indent=2, ensure_ascii=False) + "\n").encode("utf-8")
    figures = report_figures(run, ranking)
    if fmt == "html":
        return render_html(model, figures).encode("utf-8")
    if fmt == "pdf":
        from .pdf import render_pdf  # fpdf2 only for PDF

        return render_pdf(model, figures, paper, FIGURE_CAPTIONS)
    raise ValueError(f"unknown report format {fmt!r}")


def _json_model(model: dict) -> dict:
    """The JSON file: the report's identity, the full assessment, what it advises, and the inputs."""
    return {
        "report": model["report"],
        "result": model["result"],
        "recommendations": model["recommendations"],
        "spots": model["spots"]["json"] if model["spots"] else None,
        "method": model["method"],
        "not_modelled": model["not_modelled"],
        "safety": model["safety"],
        "inputs": model["inputs"],
    }


def write_report(run: SiteRun, out: str | Path, paper: str = "a4",
                 generated: datetime | None = None, ranking=None) -> Path:
    """Write the report to ``out`` (format from its extension), atomically;
    ``ranking`` as for render_report."""
    out = Path(out)
    fmt = format_for(out)
    if paper not in PAPERS:
        raise InputError(f"--paper: {paper!r} is not one of: {', '.join(PAPERS)}")
    atomic_write_bytes(out, render_report(run, fmt, paper, generated, ranking))
    return out
