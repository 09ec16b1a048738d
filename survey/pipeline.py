"""One site, end to end: site file -> window -> fleet -> declination -> mask ->
tracks -> assessment.  The command line, the report and the text UI all run a
site through here, so they show the same numbers."""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from datetime import datetime
from pathlib import Path

from .assess import Assessment, assess
from .constellation import Fleet, default_fleet, parse_elements, shells_fleet
from .fileio import read_text
from .horizon import HorizonMask
from .magnetic import Declination, declination
from .site import Site, WindowSpec, resolve_window
from .tracks import Observer, SkyTracks, compute_tracks


@dataclass(frozen=True)
class FleetChoice:
    """Which satellites to use: a shell file, an element-set file, or the default.

    ``embedded`` = (kind, name, text) carries a file's text instead of its path
    (kind "shells" or "elements"), so a report's JSON can be run again without
    the original file."""

    shells: Path | None = None
    elements: Path | None = None
    embedded: tuple[str, str, str] | None = None

    def load(self, epoch: datetime) -> Fleet:
        kind, name, text = self.as_embedded()
        if kind == "shells":
            return shells_fleet(text, name, epoch)
        if kind == "elements":
            return parse_elements(text, name)
        return default_fleet(epoch)

    def as_embedded(self) -> tuple[str, str, str]:
        """(kind, name, text); kind "default" has no file."""
        if self.embedded is not None:
            return self.embedded
        if self.shells is not None:
            return "shells", str(self.shells), read_text(self.shells, "shell file")
        if self.elements is not None:
            return "elements", str(self.elements), read_text(self.elements, "element-set file")
        return "default", "", ""


@dataclass
class SiteRun:
    site: Site
    window: WindowSpec
    fleet: Fleet
    declination: Declination
    mask: HorizonMask
    tracks: SkyTracks
    assessment: Assessment
    warnings: list[str] = field(default_factory=list)


def site_observer(site: Site) -> Observer:
    return Observer(site.latitude_deg, site.longitude_deg, site.antenna_height_m)


def true_mask(site: Site, dec: Declination) -> HorizonMask:
    """The site's horizon as a mask in true azimuths (compass bearings rotated)."""
    return site.horizon.to_true(dec.declination_deg).mask()


def run_site(site: Site, fleet_choice: FleetChoice = FleetChoice(), start=None, hours=None,
             step_s=None, min_elevation_deg=None, progress=None, now=None) -> SiteRun:
    """Assess ``site``; command-line style overrides win over the site file."""
    if min_elevation_deg is not None:
        site = replace(site, terminal=replace(site.terminal, min_elevation_deg=float(min_elevation_deg)))
    window = resolve_window(site, start, hours, step_s, now=now)
    fleet = fleet_choice.load(window.start)
    dec = declination(site.latitude_deg, site.longitude_deg, site.elevation_m, window.start)
    mask = true_mask(site, dec)
    tracks = compute_tracks(fleet, site_observer(site), window, site.terminal, progress=progress)
    result = assess(tracks, mask, site.criteria, site.schedule)
    notes = []
    if fleet.illustrative:
        notes.append("satellites are leosite's illustrative shells, not a real constellation: "
                     "pass --tle or --shells for real elements")
    notes.extend(fleet.age_warnings(window.start))
    if site.horizon.reference == "magnetic":  # the declination only matters for compass bearings
        notes.extend(dec.warnings)
    if site.mount.kind != "fixed":
        notes.append(f"mount kind '{site.mount.kind}': heading, roll and route are not modelled yet; "
                     "assessed as a fixed mount at the site point")
    if tracks.failed_sats:
        notes.append(f"SGP4 reported errors for {tracks.failed_sats} satellites (decayed or bad elements); "
                     "their failed samples are left out")
    notes.extend(result.warnings)
    return SiteRun(site, window, fleet, dec, mask, tracks, result, notes)


def result_dict(run: SiteRun) -> dict:
    """The JSON object of ``leosite assess --json`` (keys in DESIGN.md)."""
    s, a, w = run.site, run.assessment, run.window
    return {
        "site": {
            "name": s.name, "latitude": s.latitude_deg, "longitude": s.longitude_deg,
            "elevation_m": s.elevation_m, "mount": {"kind": s.mount.kind, "height_m": s.mount.height_m},
        },
        "window": {"start": w.start.strftime("%Y-%m-%dT%H:%M:%SZ"), "hours": w.hours, "step_s": w.step_s,
                   "samples": w.count},
        "satellites": len(run.fleet),
        "fleet": {"source": run.fleet.source, "illustrative": run.fleet.illustrative,
                  "groups": run.fleet.groups},
        "terminal": {
            "min_elevation_deg": s.terminal.min_elevation_deg,
            "scan_half_angle_deg": s.terminal.scan_half_angle_deg,
            "tilt_deg": s.terminal.tilt_deg, "tilt_azimuth_deg": s.terminal.tilt_azimuth_deg,
        },
        "declination_deg": round(run.declination.declination_deg, 3),
        "horizon_reference": s.horizon.reference,
        "usable_samples": a.usable_samples,
        "blocked_samples": a.blocked_samples,
        "blocked_fraction": a.blocked_fraction,
        "availability": a.availability,
        "interruption": a.interruption,
        "reassign_s": s.schedule.reassign_s,
        "outages": a.outage_summary(run.tracks),
        "sectors": [sec.as_dict() for sec in a.sectors],
        "verdict": a.verdict,
        "verdict_reason": a.verdict_reason,
        "warnings": list(run.warnings),
    }
