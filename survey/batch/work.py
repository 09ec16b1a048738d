"""One site of a batch, assessed where the work runs (this process, a local
worker process or a cluster worker): the row's site through ``pipeline.run_site``
with the shared sky as its track source, reduced to what the results CSV, the
register and the report need.  Nothing here writes a file: the coordinating
process does (results, register, reports), so a worker on another machine needs
no shared disk.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime

from ..errors import InputError
from ..pipeline import FleetChoice, result_dict, run_site
from ..window import WindowSpec
from .inputs import BatchRow
from .sky import SharedSky, SharedTracks


@dataclass(frozen=True)
class Settings:
    """What every site of the batch shares: the fleet file as read once, the
    command line's window and minimum-elevation overrides, the clock the default
    window is taken from, and the report format (None: no reports)."""

    fleet_source: tuple[str, str, str]
    start: datetime | None = None
    hours: float | None = None
    step_s: float | None = None
    min_elevation_deg: float | None = None
    now: datetime | None = None
    report_format: str | None = None
    paper: str = "a4"


@dataclass
class Context:
    """Settings plus the shared skies: sent to each worker once."""

    settings: Settings
    skies: dict[WindowSpec, SharedSky]


@dataclass
class SiteResult:
    """What one row gave: the CSV's figures, or its error, and for the register
    the inputs and the full result; ``report`` holds the report's bytes when asked."""

    index: int
    line: int
    id: str
    verdict: str = ""
    blocked_fraction: float | None = None
    availability: float | None = None
    interruption: float | None = None
    outages_per_day: float | None = None
    longest_outage_s: float | None = None
    warnings: list[str] = field(default_factory=list)
    error: str = ""
    inputs: dict = field(default_factory=dict)
    result: dict = field(default_factory=dict)
    report: bytes | None = None

    @property
    def failed(self) -> bool:
        return bool(self.error)


def failed_row(row: BatchRow) -> SiteResult:
    return SiteResult(row.index, row.line, row.id, error="; ".join(row.problems), inputs={"row": row.source})


def assess_rows(context: Context, rows: list[BatchRow]) -> list[SiteResult]:
    """Each row assessed (a task: a few rows, so the per-task overhead is small)."""
    cache = SharedTracks(context.skies, context.settings.fleet_source)
    return [assess_row(context.settings, cache, row) for row in rows]


def assess_row(settings: Settings, cache: SharedTracks, row: BatchRow) -> SiteResult:
    if row.site is None:
        return failed_row(row)
    from ..report import render_report, report_inputs

    s = settings
    try:
        run = run_site(row.site, FleetChoice(embedded=s.fleet_source), s.start, s.hours, s.step_s,
                       s.min_elevation_deg, now=s.now, cache=cache)
    except InputError as exc:
        return SiteResult(row.index, row.line, row.id, error="; ".join(exc.problems), inputs={"row": row.source})
    d = result_dict(run)
    out = SiteResult(row.index, row.line, row.id, d["verdict"], d["blocked_fraction"], d["availability"],
                     d["interruption"], d["outages"]["count_per_day"], d["outages"]["longest_s"], list(run.warnings))
    inputs = report_inputs(run)
    inputs["fleet"].pop("text")  # the register keeps the fleet's text once per batch, not once per site
    inputs["row"] = row.source
    out.inputs, out.result = inputs, d
    if s.report_format is not None:
        try:
            out.report = render_report(run, s.report_format, s.paper, s.now)
        except InputError as exc:
            out.error = "report: " + "; ".join(exc.problems)
    return out
