"""One site, end to end: site file -> window -> fleet -> declination -> mask ->
tracks -> assessment.  The command line, the report and the text UI all run a
site through here, so they show the same numbers."""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING

from .assess import Assessment
from .constellation import Fleet, default_fleet, parse_elements, shells_fleet
from .errors import InputError
from .evaluate import Evaluator
from .fileio import read_text
from .horizon import HorizonMask
from .magnetic import Declination
from .mask import photo_notes, site_mask
from .site import Site
from .tracks import Observer, SkyTracks, compute_tracks
from .window import WindowSpec, resolve_window
from .words import length

if TYPE_CHECKING:
    from .platform import PlatformRun

MAX_SAMPLE_SATELLITES = 250_000_000  # sample times x satellites in one run (README, "Limits"): bounds time and memory


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
    evaluator: Evaluator | None = None  # figures for other masks over these tracks (evaluate.py)
    fleet_source: tuple[str, str, str] = ("default", "", "")  # FleetChoice.as_embedded(), read once
    platform: PlatformRun | None = None  # a moving install's headings, attitude and tables (survey/platform/)


def site_observer(site: Site) -> Observer:
    """Where the sky tracks are computed: the survey point, where the horizon was
    measured.  A mount placed elsewhere on the plan (``mount.at``) reuses them, as
    the spot ranking does (survey/spots.py: an offset of d metres turns a
    satellite's direction by at most d / range), so its figures equal the
    ranking's for that spot."""
    return Observer(site.latitude_deg, site.longitude_deg, site.elevation_m + site.horizon_height_m)


COARSE_STEP_S = 60.0  # common practice: drop-outs of a minute or less matter to a video call
HORIZON_GAP_DEG = 60.0  # more than this between measured points is sky nobody looked at


def window_warnings(window: WindowSpec, fleet: Fleet) -> list[str]:
    """What a run says about a window that cannot show everything: a step too
    coarse for short drop-outs, or a window shorter than one orbit."""
    out = []
    if window.step_s > COARSE_STEP_S:
        out.append(f"sample step {window.step_s:g} s is coarser than {COARSE_STEP_S:g} s: drop-outs shorter than "
                   "a step are not seen; use --step 15 for the drop-out figures")
    motions = [sat.no_kozai for sat in fleet.satrecs if sat.no_kozai > 0]
    if motions:
        orbit_min = 2.0 * math.pi / min(motions)  # the slowest satellite's period, minutes
        if window.hours * 60.0 < orbit_min:
            out.append(f"window of {window.hours * 60:g} min is shorter than one orbit ({orbit_min:.0f} min): "
                       "the figures depend on where the satellites happen to be; assess 24 h")
    return out


def horizon_warnings(site: Site) -> list[str]:
    """Gaps of more than HORIZON_GAP_DEG between measured points (through north
    too): sky nobody measured, taken as clear or as the straight line between."""
    az = sorted(p.azimuth_deg % 360.0 for p in site.horizon.points)
    if len(az) < 2:
        return []
    gaps = [(a, b, (b - a) % 360.0) for a, b in zip(az, az[1:] + az[:1])]
    wide = [(a, b, g) for a, b, g in gaps if g > HORIZON_GAP_DEG]
    if not wide:
        return []
    spans = ", ".join(f"{a:.0f}°–{b:.0f}° ({g:.0f}°)" for a, b, g in wide[:4])
    return [f"no horizon point measured across {spans}: the mask there is a straight line between readings; "
            "measure in those directions"]


def terrain_notes(site: Site, mask: HorizonMask) -> list[str]:
    """What a run says about its terrain horizon: the elevation model's gaps and
    voids, and a ground height far from the model's (survey/terrain/)."""
    if site.terrain is None:
        return []
    from .terrain import ground_warning, site_terrain, terrain_of

    th = terrain_of(mask) or site_terrain(site)
    return list(th.warnings) + ground_warning(site, th)


def mount_warnings(site: Site) -> list[str]:
    """What a run says about a mount placed on the plan (``mount.at``)."""
    if site.mount.at is None:
        return []
    from .spots import FAR_WARNING_M

    east, north = site.mount.at
    out = [f"mount at {east:.1f} m E, {north:.1f} m N on the site plan: horizon derived from the plan, "
           "not measured there"]
    has_near = any(p.distance_m is not None for p in site.horizon.points)
    if not has_near and (site.plan is None or not site.plan.has_obstacles):
        out.append("mount placed on the plan, but the site has no plan obstacle and no horizon point with a "
                   "distance: the derived horizon is the far points only, the same anywhere")
    elif has_near and site.measured_height_m is None:
        out.append(f"horizon points with a distance are taken as measured {site.horizon_height_m:g} m above "
                   "ground at the site point (the mount height); set [horizon] measured_height_m if not")
    d = math.hypot(east, north)
    if d > FAR_WARNING_M:
        out.append(f"mount is {d:.0f} m from the site point, where the sky tracks are computed (more than "
                   f"{FAR_WARNING_M:.0f} m): move the site point to the mount")
    return out


class TrackCache:
    """The fleet and sky tracks of the last run, kept for the next one (the text
    UI re-assesses after every horizon edit).  Tracks depend only on the fleet
    file, the window, the observer point and the terminal's usable sky; when all
    four are unchanged they are reused, with their evaluator (the scheduling
    assignment), so a new mask costs milliseconds."""

    def __init__(self):
        self._key = None
        self._fleet: Fleet | None = None
        self._tracks: SkyTracks | None = None
        self.evaluator: Evaluator | None = None

    @staticmethod
    def key(fleet_source: tuple[str, str, str], window: WindowSpec, observer: Observer, terminal) -> tuple:
        kind, name, text = fleet_source
        return (kind, name, hash(text), window, observer, terminal)

    def get(self, key):
        return (self._fleet, self._tracks) if key == self._key else (None, None)

    def put(self, key, fleet: Fleet, tracks: SkyTracks) -> None:
        self._key, self._fleet, self._tracks, self.evaluator = key, fleet, tracks, None


def run_site(site: Site, fleet_choice: FleetChoice = FleetChoice(), start=None, hours=None,
             step_s=None, min_elevation_deg=None, progress=None, now=None,
             cache: TrackCache | None = None) -> SiteRun:
    """Assess ``site``; command-line style overrides win over the site file.
    With ``cache``, the sky tracks of an identical fleet, window, observer and
    terminal are reused instead of computed again."""
    if min_elevation_deg is not None:
        site = replace(site, terminal=replace(site.terminal, min_elevation_deg=float(min_elevation_deg)))
    moving = site.platform is not None
    if moving:
        from .platform import assess_platform, platform_tracks, route_window, sky_terminal

        start, hours = route_window(site, start, hours)
    window = resolve_window(site, start, hours, step_s, now=now)
    observer = site_observer(site)
    source = fleet_choice.as_embedded()  # the fleet file is read here, once
    # A platform's tracks depend on its minimum elevation and route only (heading, attitude and cone are
    # applied after), so a heel or heading edit in the text UI reuses them.
    sky = (sky_terminal(site), site.platform.route) if moving else site.terminal
    key = TrackCache.key(source, window, observer, sky) if cache is not None else None
    fleet, tracks = cache.get(key) if cache is not None else (None, None)
    if fleet is None:
        fleet = FleetChoice(embedded=source).load(window.start)
    dec, mask = site_mask(site, window.start)
    work = window.count * len(fleet)
    if tracks is None and work > MAX_SAMPLE_SATELLITES:
        raise InputError(f"window x fleet: {window.count:,} sample times x {len(fleet):,} satellites = {work:,}, more "
                         f"than the limit of {MAX_SAMPLE_SATELLITES:,}: use a coarser --step or a shorter --hours")
    if tracks is None:
        tracks = (platform_tracks(fleet, site, window, progress) if moving else
                  compute_tracks(fleet, observer, window, site.terminal, progress=progress))
        if cache is not None:
            cache.put(key, fleet, tracks)
    platform_run = None
    if moving:  # the tracks turned into the body frame; the figures by the same definitions
        tracks, mask, evaluator, result, platform_run = assess_platform(site, window, tracks, mask)
    else:
        evaluator = cache.evaluator if cache is not None else None
        if evaluator is None or evaluator.tracks is not tracks:
            evaluator = Evaluator(tracks, site.criteria, site.schedule)
        evaluator = evaluator.for_site(site.criteria, site.schedule)
        if cache is not None:
            cache.evaluator = evaluator
        result = evaluator.assess(mask)
    notes = []
    if fleet.illustrative:
        notes.append("satellites are leosite's illustrative shells, not a real constellation: "
                     "use real element sets (TLE or OMM: --tle, or Load satellites in the text UI)")
    if fleet.dropped:
        notes.append(f"{len(fleet.dropped)} element sets left out as impossible (not a satellite in orbit): "
                     + "; ".join(fleet.dropped[:5]) + ("; ..." if len(fleet.dropped) > 5 else ""))
    notes.extend(fleet.age_warnings(window.start))
    if site.horizon.reference == "magnetic":  # the declination only matters for compass bearings
        notes.extend(dec.warnings)
    notes.extend(mount_warnings(site))
    notes.extend(terrain_notes(site, mask))
    notes.extend(window_warnings(window, fleet))
    notes.extend(photo_notes(site, dec))
    if site.mount.at is None and site.plan is None and site.photo is None:
        notes.extend(horizon_warnings(site))
    if moving:
        notes.extend(platform_run.warnings)
    elif site.mount.kind != "fixed":
        notes.append(f"mount kind '{site.mount.kind}': heading, roll and route are not modelled yet; "
                     "assessed as a fixed mount" + (" at the site point" if site.mount.at is None else ""))
    if tracks.failed_sats:
        notes.append(f"SGP4 reported errors for {tracks.failed_sats} satellites (decayed or bad elements); "
                     "their failed samples are left out")
    notes.extend(result.warnings)
    return SiteRun(site, window, fleet, dec, mask, tracks, result, notes, evaluator, source, platform_run)


def mount_dict(site: Site) -> dict:
    """The mount as JSON: kind, height_m, and east_m/north_m when placed on the plan."""
    out = {"kind": site.mount.kind, "height_m": site.mount.height_m}
    if site.mount.at is not None:
        out.update(east_m=site.mount.at[0], north_m=site.mount.at[1])
    return out


def mount_text(site: Site) -> str:
    """The mount in words: kind, antenna height, and where on the plan if placed."""
    text = (f"{site.mount.kind}, antenna {length(site.mount.height_m)} above "
            + ("deck" if site.mount.kind == "marine" else "ground"))
    if site.mount.at is not None:
        text += (f", at {length(site.mount.at[0])} E, {length(site.mount.at[1])} N of the site point "
                 "(horizon derived from the plan)")
    return text


def result_dict(run: SiteRun) -> dict:
    """The JSON object of ``leosite assess --json`` (keys in README, "JSON output")."""
    s, a, w = run.site, run.assessment, run.window
    return {
        "site": {
            "name": s.name, "latitude": s.latitude_deg, "longitude": s.longitude_deg,
            "elevation_m": s.elevation_m, "mount": mount_dict(s),
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
        **({"platform": platform_json(run)} if run.platform is not None else {}),
        **terrain_json(run.mask),
    }


def platform_json(run: SiteRun) -> dict:
    from .platform import platform_dict

    return platform_dict(run.platform, run.assessment, run.window)


def terrain_json(mask: HorizonMask) -> dict:
    """``{"terrain": {...}}`` for a mask raised to a terrain horizon, else ``{}``."""
    from .terrain import terrain_of

    th = terrain_of(mask)
    if th is None:
        return {}
    return {"terrain": {"source": th.source, "resolution": th.resolution, "max_distance_m": th.max_distance_m,
                        "ground_m": round(th.ground_m, 2)}}
