"""Everything needed to make a report again: the site with its horizon inline,
the window, the fleet file's text as the run read it; and reading that back
from a report JSON."""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from ..errors import InputError
from ..fileio import parse_json, read_text
from ..pipeline import FleetChoice, SiteRun, mount_dict
from ..plan import plan_tables
from ..site import Site, site_from_dict

REPORT_KIND = "leosite-site-report"
REPORT_VERSION = 1

def report_id(inputs: dict, generated: datetime) -> str:
    """A short id for the record: date plus a digest of the inputs and the time made."""
    digest = hashlib.sha256((json.dumps(inputs, sort_keys=True) + generated.isoformat()).encode()).hexdigest()
    return f"LS-{generated:%Y%m%d}-{digest[:6].upper()}"




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
    if site.photo is not None:  # the photo by its absolute path: making the report again needs that file
        doc["horizon"]["photo"] = dict(site.photo.as_table(Path(".")), file=Path(site.photo.file).resolve().as_posix())
    if site.platform is not None:  # the route travels under inputs.route, inline (report_inputs)
        from ..platform.model import platform_table

        doc["platform"] = {k: v for k, v in platform_table(site.platform).items() if k != "route"}
        if site.platform.frame == "body":
            doc["horizon"]["frame"] = "body"
    if site.terrain is not None:  # by absolute path: the tiles are not embedded (README, "Terrain horizons")
        doc["terrain"] = {"dem": str(site.terrain.dem.resolve()), "max_distance_km": site.terrain.max_distance_km}
    return doc


def report_inputs(run: SiteRun) -> dict:
    """Every input of the run, for the report JSON: the site with its horizon
    inline, the window, and the fleet file's text as the run read it."""
    kind, name, text = run.fleet_source
    w = run.window
    site_doc = site_document(run.site)
    site_doc["window"] = {"start": w.start.strftime("%Y-%m-%dT%H:%M:%SZ"), "hours": w.hours, "step_s": w.step_s}
    out = {"site": site_doc, "fleet": {"kind": kind, "name": name, "text": text}}
    if run.site.platform is not None and run.site.platform.route is not None:
        from ..platform.route import route_json

        out["route"] = route_json(run.site.platform.route)
    return out


@dataclass(frozen=True)
class SavedReport:
    """A report JSON read back: the site and fleet to run it again."""

    site: Site
    fleet_choice: FleetChoice


def load_report_inputs(path: str | Path) -> SavedReport:
    """Read a report JSON's inputs (to make the report again)."""
    path = Path(path)
    doc = parse_json(read_text(path, "report file"), str(path))
    report = doc.get("report") if isinstance(doc, dict) else None
    if not isinstance(report, dict) or report.get("kind") != REPORT_KIND:
        raise InputError(f"{path}: report.kind: not a leosite site report (expected {REPORT_KIND!r})")
    inputs = doc.get("inputs")
    if not isinstance(inputs, dict) or not isinstance(inputs.get("site"), dict):
        raise InputError(f"{path}: inputs.site: missing")
    fleet = inputs.get("fleet") or {}
    if not isinstance(fleet, dict):
        raise InputError(f"{path}: inputs.fleet: expected an object")
    kind = fleet.get("kind", "default")
    if kind not in ("default", "shells", "elements"):
        raise InputError(f"{path}: inputs.fleet.kind: {kind!r} is not one of: default, shells, elements")
    if kind != "default" and not isinstance(fleet.get("text"), str):
        raise InputError(f"{path}: inputs.fleet.text: missing")
    choice = FleetChoice(embedded=(kind, f"{path} ({fleet.get('name', '')})", fleet["text"])) \
        if kind != "default" else FleetChoice()
    site = site_from_dict(inputs["site"], path)
    if "route" in inputs:  # a vehicle's or vessel's route, carried inline
        from dataclasses import replace

        from ..platform.route import route_from_json

        if site.platform is None:
            raise InputError(f"{path}: inputs.route: only with inputs.site.platform")
        route = route_from_json(str(path), inputs["route"])
        site = replace(site, platform=replace(site.platform, heading_mode="route", route=route))
    return SavedReport(site, choice)
