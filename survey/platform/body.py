"""A platform's figures: the sky tracks turned into the body frame per time step,
the body-frame mask (with a roadside canyon), and the same metric definitions as
a fixed site (README, "What the figures mean"), through ``evaluate.Evaluator``.

Heading per time step: a fixed heading; a route's course; or, for all headings
equally likely or a histogram, a heading drawn for each scheduling slot from a
golden-ratio (Weyl) sequence through the distribution, so one run samples the
distribution evenly (the blocked fraction and availability are then the
heading-averaged ones; outage counts depend on how fast a real heading changes,
which a distribution does not say).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from ..assess import Assessment, availability_of, reassignment_instants
from ..evaluate import Evaluator
from ..horizon import HorizonMask
from ..site import Site
from ..tracks import SkyTracks, sample_time
from ..window import WindowSpec
from .frames import attitude_series, canyon_elevation_deg, in_cone, to_body
from .model import SEA_STATES, Attitude
from .route import segment_lengths_m

SECTORS = 36  # by-heading figures: 10-degree sectors, each assessed at its centre
GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
CANYON_GRID_DEG = 0.25  # the canyon enters the mask as knots this far apart


@dataclass(frozen=True)
class HeadingRow:
    heading_deg: float
    blocked_fraction: float | None
    availability: float

    def as_dict(self) -> dict:
        half = 180.0 / SECTORS
        return {"heading_deg": self.heading_deg, "from_deg": (self.heading_deg - half) % 360.0,
                "to_deg": (self.heading_deg + half) % 360.0, "blocked_fraction": self.blocked_fraction,
                "availability": self.availability}


@dataclass(frozen=True)
class SeaRow:
    name: str
    blocked_fraction: float | None
    availability: float
    interruption: float


@dataclass
class PlatformRun:
    """What a moving install adds to a site run."""

    site: Site
    headings_deg: np.ndarray  # per sample time
    pitch_deg: np.ndarray | None
    roll_deg: np.ndarray | None
    by_heading: list[HeadingRow] = field(default_factory=list)  # not for a route
    sea_states: list[SeaRow] = field(default_factory=list)  # a vessel only
    latitude_deg: np.ndarray | None = None  # route: position per sample time
    longitude_deg: np.ndarray | None = None
    tracks_method: str = "at the site point"
    warnings: list[str] = field(default_factory=list)

    @property
    def platform(self):
        return self.site.platform


def headings_series(site: Site, window: WindowSpec) -> np.ndarray:
    """Heading (degrees from true north) at each sample time."""
    p, n = site.platform, window.count
    if p.heading_mode == "fixed":
        return np.full(n, p.heading_deg)
    if p.heading_mode == "route":
        from .moving import route_positions

        return route_positions(site, window)[3]
    slot = np.cumsum(reassignment_instants(n, window.step_s, site.schedule.reassign_s)) - 1
    u = (0.5 + slot * GOLDEN) % 1.0
    if p.heading_mode == "uniform":
        return 360.0 * u
    w = np.asarray(p.histogram)
    width = 360.0 / w.size
    cdf = np.cumsum(w)
    j = np.minimum(np.searchsorted(cdf, u, side="right"), w.size - 1)
    while np.any(w[j] == 0):  # rounding at a bin edge: move on to the next bin with weight
        j = np.where(w[j] == 0, np.minimum(j + 1, w.size - 1), j)
    inside = (u - (cdf[j] - w[j])) / np.where(w[j] > 0, w[j], 1.0)
    return (j * width - width / 2.0 + np.clip(inside, 0.0, 1.0) * width) % 360.0


def body_mask(site: Site, measured: HorizonMask) -> HorizonMask:
    """The body-frame mask: the measured points (azimuths from the bow), raised to
    the roadside canyon where it is higher."""
    canyon = site.platform.canyon
    if canyon is None or canyon.height_m <= site.mount.height_m:
        return measured
    grid = np.arange(0.0, 360.0, CANYON_GRID_DEG)
    el = canyon_elevation_deg(grid, canyon, site.mount.height_m)
    own = measured.elevation_at(grid)
    labels = tuple("" if o >= c else f"{canyon.name} canyon" for o, c in zip(own, el))
    if measured.labels and not measured.is_clear:  # keep the measured labels where the points set the mask
        near = np.searchsorted(np.append(measured.az_deg, 360.0), grid) % max(measured.az_deg.size, 1)
        labels = tuple(lbl or measured.labels[k] for lbl, k in zip(labels, near))
    return HorizonMask(grid, np.maximum(el, own), labels)


def in_body(tracks: SkyTracks, site: Site, headings: np.ndarray, pitch, roll) -> SkyTracks:
    """The tracks seen from the body frame (azimuth from the bow, elevation above
    the deck), keeping the samples inside a deck-fixed field-of-view cone."""
    k = tracks.time_index
    az_b, el_b = to_body(tracks.az_deg.astype(np.float64), tracks.el_deg.astype(np.float64), headings[k],
                         None if pitch is None else pitch[k], None if roll is None else roll[k])
    term = site.terminal
    keep = slice(None)
    if term.scan_half_angle_deg is not None:
        keep = in_cone(az_b, el_b, term.tilt_deg, term.tilt_azimuth_deg, term.scan_half_angle_deg)
    if pitch is None and roll is None:
        el_b = tracks.el_deg  # a level platform: the true elevation, bit for bit
    return replace(tracks, sat=tracks.sat[keep], time_index=tracks.time_index[keep],
                   az_deg=np.asarray(az_b, dtype=np.float32)[keep], el_deg=np.asarray(el_b, dtype=np.float32)[keep],
                   range_km=tracks.range_km[keep], terminal=site.terminal)


def by_heading(tracks: SkyTracks, site: Site, mask: HorizonMask, pitch, roll) -> list[HeadingRow]:
    """Blocked fraction and availability with the platform held at the centre of
    each of the 36 heading sectors."""
    rows = []
    level = pitch is None and roll is None and site.terminal.scan_half_angle_deg is None
    if level:  # the same arithmetic as in_body, on samples sorted by azimuth (np.interp runs far faster)
        order = np.argsort(tracks.az_deg, kind="stable")
        az, el, t = tracks.az_deg[order].astype(np.float64), tracks.el_deg[order], tracks.time_index[order]
    for j in range(SECTORS):
        h = (j + 0.5) * 360.0 / SECTORS
        if level:
            az_b = (az - h) % 360.0
            blocked = el < mask.elevation_at(az_b) if not mask.is_clear else np.zeros(az.size, bool)
            avail = float((np.bincount(t[~blocked], minlength=tracks.count) > 0).mean()) if tracks.count else 0.0
            bf = float(blocked.mean()) if az.size else None
        else:
            body = in_body(tracks, site, np.full(tracks.count, h), pitch, roll)
            blocked = body.el_deg < mask.elevation_at(body.az_deg) if not mask.is_clear else np.zeros(len(body), bool)
            bf = float(blocked.mean()) if len(body) else None
            avail = availability_of(body, blocked)
        rows.append(HeadingRow(h, bf, avail))
    return rows


def assess_platform(site: Site, window: WindowSpec, tracks: SkyTracks, measured: HorizonMask):
    """(body tracks, body mask, evaluator, assessment, PlatformRun) for a moving install."""
    headings = headings_series(site, window)
    t_s = np.arange(window.count) * window.step_s
    pitch, roll = attitude_series(site.platform.attitude, t_s)
    mask = body_mask(site, measured)
    body = in_body(tracks, site, headings, pitch, roll)
    evaluator = Evaluator(body, site.criteria, site.schedule)
    result = evaluator.assess(mask)
    run = PlatformRun(site, headings, pitch, roll)
    p = site.platform
    if p.route is None:
        run.by_heading = by_heading(tracks, site, mask, pitch, roll)
    else:
        from .moving import CHUNK_RADIUS_KM, route_positions, route_warnings

        lat, lon, _, _ = route_positions(site, window)
        run.warnings.extend(route_warnings(site, window))
        run.latitude_deg, run.longitude_deg = lat, lon
        run.tracks_method = (f"computed for the moving observer (SGP4 once per {CHUNK_RADIUS_KM:g} km of route, "
                             "exact geometry at every sample)")
    if site.mount.kind == "marine":
        for name, preset in SEA_STATES.items():
            att = replace(preset, heel_deg=p.attitude.heel_deg)
            if att == p.attitude:  # the site's own sea state: the run above
                a = result
            else:
                sp, sr = attitude_series(att, t_s)
                a = Evaluator(in_body(tracks, site, headings, sp, sr), site.criteria, site.schedule).assess(mask)
            run.sea_states.append(SeaRow(name, a.blocked_fraction, a.availability, a.interruption))
    return body, mask, evaluator, result, run


def route_down(run: PlatformRun, result: Assessment, window: WindowSpec) -> dict:
    """Down time along a route: the total, and each outage with where it began."""
    lat, lon = run.latitude_deg, run.longitude_deg
    along = np.concatenate([[0.0], np.cumsum(segment_lengths_m(lat, lon))]) / 1000.0
    events = []
    for o in result.outages:
        k = o.start_index
        events.append({"start": sample_time(window, k).strftime("%Y-%m-%dT%H:%M:%SZ"),
                       "duration_s": o.samples * window.step_s, "latitude": round(float(lat[k]), 6),
                       "longitude": round(float(lon[k]), 6), "along_km": round(float(along[k]), 3)})
    down_s = float(result.down.sum()) * window.step_s
    return {"down_minutes": down_s / 60.0, "down_share": float(result.down.mean()) if result.down.size else 0.0,
            "distance_km": float(along[-1]), "events": events}


def attitude_dict(att: Attitude) -> dict:
    return {"heel_deg": att.heel_deg, "roll_deg": att.roll_deg, "roll_period_s": att.roll_period_s,
            "pitch_deg": att.pitch_deg, "pitch_period_s": att.pitch_period_s, "sea": att.sea,
            "sea_state": att.name or None}


def platform_dict(run: PlatformRun, result: Assessment, window: WindowSpec) -> dict:
    """The ``platform`` object of ``assess --json`` (README, "JSON output")."""
    p, s = run.platform, run.site
    out = {
        "kind": s.mount.kind, "heading_mode": p.heading_mode,
        "heading_deg": p.heading_deg if p.heading_mode == "fixed" else None,
        "headings": list(p.histogram) if p.heading_mode == "histogram" else None,
        "attitude": attitude_dict(p.attitude),
        "canyon": None if p.canyon is None else {"name": p.canyon.name, "height_m": p.canyon.height_m,
                                                 "width_m": p.canyon.width_m},
        "horizon_frame": p.frame, "tracks": run.tracks_method,
    }
    if p.route is not None:
        r = p.route
        out["route"] = {"file": r.source, "points": len(r.times_s), **route_down(run, result, window)}
    else:
        out["by_heading"] = [row.as_dict() for row in run.by_heading]
    if run.sea_states:
        out["sea_states"] = [{"sea_state": r.name, "blocked_fraction": r.blocked_fraction,
                              "availability": r.availability, "interruption": r.interruption}
                             for r in run.sea_states]
    return out
