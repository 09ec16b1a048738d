"""Site report: the written record an installer leaves with every job.

One content model (:func:`report_model`) feeds three formats, so the PDF, the
HTML and the JSON always say the same thing:

- PDF (fpdf2, core fonts: real, searchable text), A4 or US Letter;
- HTML, one self-contained file with the figures embedded, readable on a phone;
- JSON, the full assessment plus every input, so the report can be made again
  (``leosite report old-report.json --out new.pdf``).

:func:`write_report` is what the command line and the text UI call.  Files are
written atomically.
"""

from __future__ import annotations

import base64
import hashlib
import html
import json
import re
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from . import __version__
from .assess import Assessment, Sector
from .evaluate import Evaluator
from .errors import InputError
from .fileio import atomic_write_bytes, read_text
from .pipeline import FleetChoice, SiteRun, mount_dict, mount_text, result_dict
from .plan import plan_tables
from .safety import notes_for
from .site import Site, site_from_dict
from .words import NBSP, azimuth, azimuth_span, coordinates, duration, elevation, length, pct, utc, window

FORMATS = ("pdf", "html", "json")
PAPERS = ("a4", "letter")
REPORT_KIND = "leosite-site-report"
REPORT_VERSION = 1
RECOMMEND_MIN_SHARE = 0.05  # sectors causing less than this share of blocked time get no advice line
MAX_RECOMMENDATIONS = 3
MAX_OUTAGE_ROWS = 10


# ---------------------------------------------------------------------------
# What-if: a sector cleared
# ---------------------------------------------------------------------------
def _sector_name(sec: Sector) -> str:
    labels = ", ".join(sec.labels)
    span = azimuth_span(sec.from_deg, sec.to_deg)
    return f"the {labels} at {span}" if labels else f"the obstruction at {span}"


def what_if_cleared(run: SiteRun, sector: Sector) -> Assessment:
    """``run`` re-assessed with ``sector``'s mask set to zero (the tracks and the
    scheduling assignment are reused: evaluate.Evaluator)."""
    mask = run.mask.with_sector_cleared(sector.from_deg, sector.to_deg)
    evaluator = run.evaluator or Evaluator(run.tracks, run.site.criteria, run.site.schedule)
    return evaluator.assess(mask)


def recommendations(run: SiteRun) -> list[dict]:
    """Plain-words advice from re-assessing with each costly sector cleared."""
    a = run.assessment
    out = []
    if not a.blocked_samples:
        return out
    for sec in a.sectors[:MAX_RECOMMENDATIONS]:
        if sec.blocked_share < RECOMMEND_MIN_SHARE:
            continue
        b = what_if_cleared(run, sec)
        verb = "Trimming or removing" if _looks_like_vegetation(sec.labels) else "Clearing or mounting above"
        text = (f"{verb} {_sector_name(sec)} (peak {elevation(sec.peak_elevation_deg)}) would cut blocked time "
                f"from {pct(a.blocked_fraction)} to {pct(b.blocked_fraction)}")
        if pct(a.interruption) != pct(b.interruption):
            text += f" and interruption from {pct(a.interruption)} to {pct(b.interruption)}"
        text += f"; the verdict would be {b.verdict}."
        out.append({
            "from_deg": round(float(sec.from_deg), 2), "to_deg": round(float(sec.to_deg), 2),
            "labels": list(sec.labels), "blocked_share": sec.blocked_share,
            "blocked_fraction": b.blocked_fraction, "availability": b.availability,
            "interruption": b.interruption, "verdict": b.verdict, "text": text,
        })
    return out


_VEGETATION = {"tree", "alder", "oak", "pine", "spruce", "fir", "birch", "maple", "willow", "poplar",
               "hedge", "bush", "shrub", "wood", "woods", "forest", "canopy", "scrub", "eucalyptus", "gum",
               "hedgerow", "conifer", "cedar", "ash", "beech", "elm", "palm"}


def _looks_like_vegetation(labels) -> bool:
    """Whether a sector's labels name plants (whole words, plurals too: 'alders',
    'hedges'), so the advice says trim rather than clear ('woodshed' is not wood)."""
    words = re.findall(r"[a-z]+", " ".join(labels).lower())
    return any(w in _VEGETATION or w.rstrip("s") in _VEGETATION or w.removesuffix("es") in _VEGETATION
               for w in words)


# ---------------------------------------------------------------------------
# Mounting spots (when the site file has a plan with candidates)
# ---------------------------------------------------------------------------
GROWTH_YEARS = (5.0, 10.0)  # the best spot re-checked this far ahead when trees grow
MAX_SPOT_JSON = 50  # candidates listed in the JSON (best first); the count says how many there were


def spot_ranking(run: SiteRun):
    """The site plan's candidates ranked (spots.rank_spots), or None without any."""
    plan = run.site.plan
    if plan is None or not plan.has_candidates:
        return None
    from .spots import rank_spots

    return rank_spots(run)


def pole_text(p) -> str:
    """One sentence on a pole's lowest adequate height (spots.PoleHeight)."""
    if p.lowest is None:
        return (f"{p.pole} ({length(p.min_height_m)} to {length(p.max_height_m)}): no height in its range reaches "
                f"{pct(p.target_blocked)} blocked.")
    return (f"{p.pole}: {length(p.lowest.candidate.height_m)} is the lowest height with blocked at most "
            f"{pct(p.target_blocked)} ({pct(p.lowest.blocked_fraction)}).")


def spots_section(run: SiteRun, ranking) -> dict:
    """The report's mounting-spot section: the best position of each candidate,
    pole heights, how the best spot holds up as trees grow, one line of advice."""
    from .assess import verdict_for

    a, crit = run.assessment, run.site.criteria
    best = ranking.best
    rows = []
    for r in ranking.best_of_each():
        c = r.candidate
        rows.append({"spot": c.name, "kind": c.kind, "position": f"{length(c.east_m)} E, {length(c.north_m)} N",
                     "height": length(c.height_m), "blocked": pct(r.blocked_fraction, 2),
                     "interruption": pct(r.interruption, 2)})
    poles = [pole_text(p) for p in ranking.poles]
    growth = []
    plan = run.site.plan
    if any(t.growth_m_per_year > 0 for t in plan.trees):
        for y in GROWTH_YEARS:
            r = ranking.evaluator.evaluate([best.candidate], y)[0]
            growth.append(f"in {y:g} years: blocked {pct(r.blocked_fraction)}, "
                          f"interruption {pct(r.interruption)}")
    verdict, _ = verdict_for(best.blocked_fraction, best.interruption, best.availability, crit)
    c = best.candidate
    if best.blocked_fraction is not None and a.blocked_fraction is not None \
            and best.blocked_fraction < a.blocked_fraction:
        advice = (f"Best spot: {c.name} at {length(c.height_m)} ({length(c.east_m)} east, {length(c.north_m)} north of "
                  f"the survey point). It would cut blocked time from {pct(a.blocked_fraction)} to "
                  f"{pct(best.blocked_fraction)}; the verdict there would be {verdict}.")
    else:
        advice = "No candidate spot in the plan beats the survey point."
    as_json = ranking.as_dict()
    as_json["candidates_total"] = len(as_json["candidates"])
    as_json["candidates"] = as_json["candidates"][:MAX_SPOT_JSON]
    return {"count": len(ranking.results), "rows": rows, "poles": poles, "growth": growth, "advice": advice,
            "best_verdict": verdict, "warnings": list(ranking.warnings), "json": as_json}


# ---------------------------------------------------------------------------
# Formatting shared by every format (the formats themselves: words.py)
# ---------------------------------------------------------------------------
def _survey_day(text: str) -> str:
    """The survey date as given: a date alone (midnight) prints without a time."""
    when = datetime.fromisoformat(text.replace("Z", "+00:00"))
    return when.strftime("%Y-%m-%d") if when.strftime("%H:%M:%S") == "00:00:00" else utc(when)


def report_id(inputs: dict, generated: datetime) -> str:
    """A short id for the record: date plus a digest of the inputs and the time made."""
    digest = hashlib.sha256((json.dumps(inputs, sort_keys=True) + generated.isoformat()).encode()).hexdigest()
    return f"LS-{generated:%Y%m%d}-{digest[:6].upper()}"


# ---------------------------------------------------------------------------
# Inputs: everything needed to run the report again
# ---------------------------------------------------------------------------
def site_document(site: Site) -> dict:
    """The site as a site.toml document (tables of plain values), with the
    horizon points inline so no other file is needed."""
    doc = {
        "site": {"name": site.name, "latitude": site.latitude_deg, "longitude": site.longitude_deg,
                 "elevation_m": site.elevation_m},
        "mount": mount_dict(site),
        "terminal": {"min_elevation_deg": site.terminal.min_elevation_deg, "tilt_deg": site.terminal.tilt_deg,
                     "tilt_azimuth_deg": site.terminal.tilt_azimuth_deg},
        "horizon": {"reference": site.horizon.reference, "points": [
            [p.azimuth_deg, p.elevation_deg] + ([p.distance_m] if p.distance_m is not None else [])
            + ([p.label] if p.label else []) for p in site.horizon.points]},
        "criteria": {k: getattr(site.criteria, k) for k in site.criteria.__dataclass_fields__},
        "schedule": {"reassign_s": site.schedule.reassign_s},
    }
    if site.terminal.scan_half_angle_deg is not None:
        doc["terminal"]["scan_half_angle_deg"] = site.terminal.scan_half_angle_deg
    if site.mount.at is not None and site.measured_height_m is not None:
        doc["horizon"]["measured_height_m"] = site.measured_height_m
    if site.survey:
        doc["survey"] = dict(site.survey)
    if site.plan is not None:
        doc["plan"] = plan_tables(site.plan)
    return doc


def report_inputs(run: SiteRun) -> dict:
    """Every input of the run, for the report JSON: the site with its horizon
    inline, the window, and the fleet file's text as the run read it."""
    kind, name, text = run.fleet_source
    w = run.window
    site_doc = site_document(run.site)
    site_doc["window"] = {"start": w.start.strftime("%Y-%m-%dT%H:%M:%SZ"), "hours": w.hours, "step_s": w.step_s}
    return {"site": site_doc, "fleet": {"kind": kind, "name": name, "text": text}}


@dataclass(frozen=True)
class SavedReport:
    """A report JSON read back: the site and fleet to run it again."""

    site: Site
    fleet_choice: FleetChoice


def load_report_inputs(path: str | Path) -> SavedReport:
    """Read a report JSON's inputs (to make the report again)."""
    path = Path(path)
    try:
        doc = json.loads(read_text(path, "report file"))
    except json.JSONDecodeError as exc:
        raise InputError(f"{path}: line {exc.lineno}: not valid JSON: {exc.msg}") from None
    if not isinstance(doc, dict) or doc.get("report", {}).get("kind") != REPORT_KIND:
        raise InputError(f"{path}: report.kind: not a leosite site report (expected {REPORT_KIND!r})")
    inputs = doc.get("inputs")
    if not isinstance(inputs, dict) or not isinstance(inputs.get("site"), dict):
        raise InputError(f"{path}: inputs.site: missing")
    fleet = inputs.get("fleet") or {}
    kind = fleet.get("kind", "default")
    if kind not in ("default", "shells", "elements"):
        raise InputError(f"{path}: inputs.fleet.kind: {kind!r} is not one of: default, shells, elements")
    if kind != "default" and not isinstance(fleet.get("text"), str):
        raise InputError(f"{path}: inputs.fleet.text: missing")
    choice = FleetChoice(embedded=(kind, f"{path} ({fleet.get('name', '')})", fleet["text"])) \
        if kind != "default" else FleetChoice()
    return SavedReport(site_from_dict(inputs["site"], path), choice)


# ---------------------------------------------------------------------------
# The content model
# ---------------------------------------------------------------------------
def report_model(run: SiteRun, fleet_choice: FleetChoice = FleetChoice(),
                 generated: datetime | None = None, ranking=None) -> dict:
    """Everything the report says, as plain values and ready-made text.  The JSON
    format is this model; the PDF and HTML lay it out."""
    generated = (generated or datetime.now(timezone.utc)).astimezone(timezone.utc).replace(microsecond=0)
    s, a, w = run.site, run.assessment, run.window
    result = result_dict(run)
    inputs = report_inputs(run)
    rid = report_id(inputs, generated)
    sv = s.survey

    header = [("Site", s.name), ("Coordinates", coordinates(s.latitude_deg, s.longitude_deg)),
              ("Ground elevation", f"{length(s.elevation_m)} above sea level"),
              ("Mount", mount_text(s)),
              ("Surveyed by", sv.get("surveyor", "") or "-"),
              ("Organisation", sv.get("organisation", "") or "-"),
              ("Customer", sv.get("customer", "") or "-"),
              ("Surveyed on", _survey_day(sv["date"]) if sv.get("date") else "- (no [survey] date in the site file)"),
              ("Report made", utc(generated))]

    o = result["outages"]
    figures = [
        ("Blocked fraction", pct(a.blocked_fraction, 2), "of usable sky samples fall behind obstructions"),
        ("Availability", pct(a.availability, 2), "of the time at least one unblocked satellite is in view"),
        ("Interruption", pct(a.interruption, 2),
         f"of the time the link is down (scheduling period {s.schedule.reassign_s:g}{NBSP}s)"),
        ("Outages a day", f"{o['count_per_day']:.1f}", "drop-outs per day under the scheduling model"),
        ("Down time a day", f"{o['minutes_per_day']:.1f}{NBSP}min", "link down, in minutes per day"),
        ("Longest outage", duration(o["longest_s"]), "single longest drop-out in the window"),
    ]

    epochs = run.fleet.epochs_utc()
    if run.fleet.illustrative:
        epoch_text = f"generated at the window start, {utc(w.start)} (illustrative, not a real constellation)"
    elif epochs:
        lo, hi = min(epochs), max(epochs)
        epoch_text = utc(lo) if (hi - lo).total_seconds() < 60 else f"{utc(lo)} to {utc(hi)}"
    else:
        epoch_text = "-"
    groups = ", ".join(f"{k} ({v})" for k, v in run.fleet.groups.items())
    fov = "none set: all sky above the minimum elevation"
    if s.terminal.scan_half_angle_deg is not None:
        fov = (f"cone of {elevation(s.terminal.scan_half_angle_deg)} half-angle around a boresight tilted "
               f"{elevation(s.terminal.tilt_deg)} toward {azimuth(s.terminal.tilt_azimuth_deg)} (true)")
    setup = [
        ("Satellites", f"{len(run.fleet):,} from {run.fleet.source}"),
        ("Shells or groups", groups or "-"),
        ("Element epoch", epoch_text),
        ("Window", f"{window(w.start, w.hours, w.step_s)} ({w.count:,} sample times)"),
        ("Minimum elevation", elevation(s.terminal.min_elevation_deg)),
        ("Field of view", fov),
        ("Usable sky samples", f"{a.usable_samples:,} satellite positions, {a.blocked_samples:,} of them blocked"),
    ]

    sectors = [{
        "span": azimuth_span(sec.from_deg, sec.to_deg), "peak": elevation(sec.peak_elevation_deg),
        "labels": ", ".join(sec.labels) or "(unlabelled)", "share": pct(sec.blocked_share),
        "if_cleared": pct(sec.blocked_fraction_if_cleared, 2),
    } for sec in a.sectors]

    events = sorted(o["events"], key=lambda e: -e["duration_s"])[:MAX_OUTAGE_ROWS]
    outage_rows = [{"start": e["start"].replace("T", " ").replace("Z", " UTC"),
                    "duration": duration(e["duration_s"])} for e in sorted(events, key=lambda e: e["start"])]

    dec = run.declination.declination_deg
    true_points = s.horizon.to_true(dec).points
    horizon_rows = [{
        "measured": azimuth(p.azimuth_deg), "true": azimuth(q.azimuth_deg), "elevation": elevation(p.elevation_deg),
        "distance": "-" if p.distance_m is None else length(p.distance_m), "label": p.label or "",
    } for p, q in zip(s.horizon.points, true_points)]
    if s.horizon.reference == "magnetic":
        bearing_note = (f"Bearings were taken with a compass (magnetic). Declination {dec:+.2f}° "
                        f"(WMM2025 at the site on {w.start:%Y-%m-%d}) was applied: true = magnetic + declination.")
    else:
        bearing_note = (f"Bearings are true (referred to true north); no declination applied. "
                        f"For reference, the WMM2025 declination here is {dec:+.2f}°.")
    if not s.horizon.points:
        bearing_note = "No horizon points were measured: the sky is taken as clear to the horizon."

    return {
        "report": {"kind": REPORT_KIND, "version": REPORT_VERSION, "id": rid,
                   "generated": generated.strftime("%Y-%m-%dT%H:%M:%SZ"), "leosite_version": __version__},
        "title": "Sky survey and obstruction report",
        "header": header,
        "verdict": a.verdict, "verdict_reason": a.verdict_reason[:1].upper() + a.verdict_reason[1:],
        "figures": figures,
        "setup": setup,
        "sectors": sectors,
        "recommendations": recommendations(run),
        "spots": spots_section(run, ranking) if ranking is not None else None,
        "outages": {"count": len(a.outages), "rows": outage_rows, "longest_first": len(o["events"]) > len(events)},
        "horizon": {"note": bearing_note, "rows": horizon_rows},
        "notes": sv.get("notes", ""),
        "warnings": list(run.warnings),
        "method": method_text(run),
        "not_modelled": NOT_MODELLED,
        "safety": list(notes_for(s.mount.kind)),
        "result": result,
        "inputs": inputs,
    }


NOT_MODELLED = [
    "rain fade, snow or ice on the terminal, and atmospheric losses",
    "foliage growth and seasonal leaf cover, unless given in a site plan",
    "network capacity, congestion and the operator's own scheduling and beam planning",
    "terminal faults, power cuts and cabling problems",
    "motion of vehicles and vessels (heading, roll, pitch): assessed as a fixed mount",
]


def method_text(run: SiteRun) -> list[str]:
    s = run.site
    return [
        "Orbits: every satellite is propagated with SGP4 (Vallado et al. 2006, 'Revisiting Spacetrack "
        "Report #3', through the sgp4 package) and turned into azimuth and elevation at the antenna: "
        "TEME to Earth-fixed by GMST 1982, observer on the WGS84 ellipsoid at ground elevation plus mount height.",
        "Walker shells: T = planes x per-plane satellites, circular orbits with the window start as epoch "
        "(Walker 1984). Element sets from files are used as given; their epochs are listed above.",
        "Compass bearings are turned to true bearings with the World Magnetic Model WMM2025 (NOAA NCEI and BGS).",
        "Horizon mask: straight lines between measured points, wrapping through north. A satellite sample "
        f"counts as usable sky at or above {elevation(s.terminal.min_elevation_deg)} elevation (and inside the "
        "field-of-view cone when one is set); it is blocked when it lies below the mask at its azimuth.",
        f"Scheduling model (scheduling period {s.schedule.reassign_s:g}{NBSP}s; leosite's default is 15{NBSP}s, set it to "
        "what your network uses): at each reassignment the highest usable satellite is assigned, not knowing "
        "the local obstructions; one that sets or leaves the field of view is handed over at once to the "
        "highest usable one; if the assigned satellite is blocked the link is down until the next assignment. "
        "Blocked fraction is the share of usable samples behind obstructions; availability is "
        "the share of time with at least one unblocked satellite (the best an obstruction-aware network could do).",
        f"Verdict thresholds: qualified up to {pct(s.criteria.qualified_max_blocked)} blocked and "
        f"{pct(s.criteria.qualified_max_interruption)} interruption, marginal up to "
        f"{pct(s.criteria.marginal_max_blocked)} and {pct(s.criteria.marginal_max_interruption)}; "
        f"not-qualified below {pct(s.criteria.min_availability)} availability.",
        "What-if figures re-assess the same satellite tracks with that sector's mask set to zero.",
    ]


# ---------------------------------------------------------------------------
# Figures
# ---------------------------------------------------------------------------
def report_figures(run: SiteRun, ranking=None) -> dict:
    """The report's figures as PIL images, at print resolution."""
    from . import figures as fig  # Pillow drawing only when a figure is wanted

    figures = {
        "sky": fig.sky_plot_for_run(run, size_px=1400),
        "panorama": fig.horizon_panorama_for_run(run),
        "timeline": fig.outage_timeline_for_run(run),
    }
    if ranking is not None:
        figures["plan"] = fig.spots_plan_figure(run, ranking)
    return figures


FIGURE_CAPTIONS = {
    "sky": "Sky plot, north up, zenith in the centre. Shading: time satellites spend in each part of the sky; "
           "hatched: the measured obstruction; dashed ring: the terminal's minimum elevation.",
    "panorama": "The horizon unrolled: azimuth along the bottom, elevation up the side, satellite track "
                "density behind the measured skyline. Marked points are the measurements.",
    "timeline": "When the drop-outs happen: one row per day (UTC), dark bars are time the link is down "
                "under the scheduling model.",
    "plan": "The site from above, north up: obstacles to scale with their heights, candidate spots coloured "
            "by blocked fraction, the best spot starred.",
}


# ---------------------------------------------------------------------------
# Writers
# ---------------------------------------------------------------------------
def format_for(path: str | Path) -> str:
    """The report format from the file name's extension (pdf, html/htm, json)."""
    ext = Path(path).suffix.lower().lstrip(".")
    ext = {"htm": "html"}.get(ext, ext)
    if ext not in FORMATS:
        raise InputError(f"{path}: expected a .pdf, .html or .json file name")
    return ext


def render_report(run: SiteRun, fmt: str, paper: str = "a4", fleet_choice: FleetChoice = FleetChoice(),
                  generated: datetime | None = None, ranking=None) -> bytes:
    """The report as file contents in ``fmt`` (pdf | html | json).  ``ranking``
    (spots.rank_spots of this run, such as the text UI's Spots tab holds) is used
    as it is; without one the plan's candidates are ranked here."""
    if ranking is None or getattr(ranking.evaluator, "run", None) is not run:
        ranking = spot_ranking(run)
    model = report_model(run, fleet_choice, generated, ranking)
    if fmt == "json":
        return (json.dumps(_json_model(model), indent=2, ensure_ascii=False) + "\n").encode("utf-8")
    figures = report_figures(run, ranking)
    if fmt == "html":
        return render_html(model, figures).encode("utf-8")
    if fmt == "pdf":
        from .report_pdf import render_pdf  # fpdf2 only for PDF

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


def write_report(run: SiteRun, out: str | Path, paper: str = "a4", fleet_choice: FleetChoice = FleetChoice(),
                 generated: datetime | None = None, ranking=None) -> Path:
    """Write the report to ``out`` (format from its extension), atomically;
    ``ranking`` as for render_report."""
    out = Path(out)
    fmt = format_for(out)
    if paper not in PAPERS:
        raise InputError(f"--paper: {paper!r} is not one of: {', '.join(PAPERS)}")
    atomic_write_bytes(out, render_report(run, fmt, paper, fleet_choice, generated, ranking))
    return out


# ---------------------------------------------------------------------------
# HTML
# ---------------------------------------------------------------------------
_CSS = """
:root { --ink: #1a1a1a; --soft: #555; --rule: #bbb; --band: #f2f2f2; }
* { box-sizing: border-box; }
body { font: 16px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: var(--ink);
       margin: 0 auto; padding: 1rem; max-width: 56rem; }
h1 { font-size: 1.5rem; margin: 0 0 .2rem; } h2 { font-size: 1.15rem; margin: 1.6rem 0 .5rem;
     border-bottom: 2px solid var(--ink); padding-bottom: .15rem; }
.id { color: var(--soft); font-size: .9rem; }
table { border-collapse: collapse; width: 100%; font-size: .95rem; }
th, td { text-align: left; padding: .3rem .5rem; border-bottom: 1px solid var(--rule); vertical-align: top; }
th { background: var(--band); }
.scroll { overflow-x: auto; }
.kv th { width: 11rem; background: none; font-weight: 600; }
.verdict { border: 3px solid var(--ink); padding: .6rem .8rem; margin: 1rem 0; }
.verdict b { font-size: 1.35rem; letter-spacing: .04em; }
.verdict.qualified { border-left: 14px solid #009E73; }
.verdict.marginal { border-left: 14px dashed #E69F00; }
.verdict.not-qualified { border-left: 14px double #D55E00; }
figure { margin: 1rem 0; } figure img { width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { color: var(--soft); font-size: .9rem; }
.num { text-align: right; white-space: nowrap; }
.safety { border: 2px solid var(--ink); padding: .4rem 1rem; background: var(--band); }
.sign { display: grid; grid-template-columns: 1fr 1fr; gap: 1.5rem; margin-top: 1rem; }
.sign div { border-top: 1px solid var(--ink); padding-top: .3rem; min-height: 4.5rem; }
@media (max-width: 36rem) { .sign { grid-template-columns: 1fr; } .kv th { width: auto; } body { font-size: 15px; } }
@media print { body { max-width: none; } h2 { break-after: avoid; } figure, table { break-inside: avoid; } }
"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _kv_table(rows) -> str:
    body = "".join(f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in rows)
    return f'<div class="scroll"><table class="kv">{body}</table></div>'


def _grid_table(head, rows, numeric=()) -> str:
    th = "".join(f'<th class="num">{_e(h)}</th>' if i in numeric else f"<th>{_e(h)}</th>"
                 for i, h in enumerate(head))
    trs = "".join("<tr>" + "".join(f'<td class="num">{_e(c)}</td>' if i in numeric else f"<td>{_e(c)}</td>"
                                   for i, c in enumerate(r)) + "</tr>" for r in rows)
    return f'<div class="scroll"><table><thead><tr>{th}</tr></thead><tbody>{trs}</tbody></table></div>'


def _figure_html(image, alt: str, caption: str) -> str:
    from .figures import encode_png

    data = base64.b64encode(encode_png(image)).decode("ascii")
    return (f'<figure><img src="data:image/png;base64,{data}" alt="{_e(alt)}">'
            f"<figcaption>{_e(caption)}</figcaption></figure>")


def render_html(model: dict, figures: dict) -> str:
    """One self-contained HTML page (figures as data URIs), readable on a phone."""
    r = model["report"]
    name = model["header"][0][1]
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_e(model['title'])}: {_e(name)}</title><style>{_CSS}</style></head><body>",
        f"<header><h1>{_e(model['title'])}</h1><div class=\"id\">Report {_e(r['id'])} &middot; "
        f"made {_e(r['generated'].replace('T', ' ').replace('Z', ' UTC'))} &middot; leosite {_e(r['leosite_version'])}"
        "</div></header>",
        _kv_table(model["header"]),
        f'<section class="verdict {_e(model["verdict"])}"><b>Verdict: {_e(model["verdict"].upper())}</b>'
        f"<br>{_e(model['verdict_reason'])}</section>",
        "<h2>Figures</h2>",
        _grid_table(("Figure", "Value", "Meaning"), model["figures"], numeric=(1,)),
        "<h2>What was assessed</h2>", _kv_table(model["setup"]),
    ]
    if model["notes"]:
        parts += ["<h2>Surveyor's notes</h2>", f"<p>{_e(model['notes'])}</p>"]
    if model["warnings"]:
        parts += ["<h2>Warnings</h2><ul>"] + [f"<li>{_e(w)}</li>" for w in model["warnings"]] + ["</ul>"]
    parts += ["<h2>Sky view</h2>",
              _figure_html(figures["sky"], "Sky plot of the site", FIGURE_CAPTIONS["sky"]),
              _figure_html(figures["panorama"], "Horizon panorama", FIGURE_CAPTIONS["panorama"])]
    parts.append("<h2>Obstructions, costliest first</h2>")
    if model["sectors"]:
        parts.append(_grid_table(("Azimuths (true)", "Peak", "Labels", "Share of blocked", "Blocked if cleared"),
                                 [(x["span"], x["peak"], x["labels"], x["share"], x["if_cleared"])
                                  for x in model["sectors"]], numeric=(1, 3, 4)))
    else:
        parts.append("<p>No obstruction rises above the minimum elevation.</p>")
    if model["recommendations"]:
        parts += ["<h3>What would help</h3><ul>"] + [f"<li>{_e(x['text'])}</li>"
                                                     for x in model["recommendations"]] + ["</ul>"]
    sp = model["spots"]
    if sp:
        parts += ["<h2>Mounting spots</h2>", f"<p>{_e(sp['advice'])}</p>",
                  _figure_html(figures["plan"], "Site plan with candidate spots", FIGURE_CAPTIONS["plan"]),
                  f"<h3>Best position of each candidate ({sp['count']:,} ranked)</h3>",
                  _grid_table(("Spot", "Kind", "Position (m)", "Height", "Blocked", "Interruption"),
                              [(x["spot"], x["kind"], x["position"], x["height"], x["blocked"], x["interruption"])
                               for x in sp["rows"]], numeric=(3, 4, 5))]
        extra = sp["poles"] + ([f"The best spot as the trees grow: {'; '.join(sp['growth'])}."]
                               if sp["growth"] else []) + sp["warnings"]
        if extra:
            parts += ["<ul>"] + [f"<li>{_e(x)}</li>" for x in extra] + ["</ul>"]
    parts += ["<h2>Drop-outs over the window</h2>",
              _figure_html(figures["timeline"], "Outage timeline", FIGURE_CAPTIONS["timeline"])]
    out = model["outages"]
    if out["rows"]:
        title = "Longest drop-outs" if out["longest_first"] else "All drop-outs"
        parts += [f"<h3>{title}</h3>", _grid_table(("Start", "Duration"),
                                                   [(x["start"], x["duration"]) for x in out["rows"]], numeric=(1,))]
    parts += ["<h2>Measured horizon</h2>", f"<p>{_e(model['horizon']['note'])}</p>"]
    if model["horizon"]["rows"]:
        parts.append(_grid_table(("Bearing as measured", "True azimuth", "Elevation", "Distance", "Label"),
                                 [(x["measured"], x["true"], x["elevation"], x["distance"], x["label"])
                                  for x in model["horizon"]["rows"]], numeric=(0, 1, 2, 3)))
    parts += ["<h2>Method and sources</h2>"] + [f"<p>{_e(p)}</p>" for p in model["method"]]
    parts += ["<p>Not modelled:</p><ul>"] + [f"<li>{_e(p)}</li>" for p in model["not_modelled"]] + ["</ul>"]
    parts += ['<h2>Safety</h2><div class="safety"><ul>'] + [f"<li>{_e(p)}</li>" for p in model["safety"]]
    parts += ["</ul></div>", "<h2>Sign-off</h2>", '<div class="sign">',
              "<div>Installer: name, signature, date</div>", "<div>Customer: name, signature, date</div>",
              "</div>", "</body></html>"]
    return "\n".join(parts)
