"""Sky tracks for an observer that moves along a route (README, "Moving installs").

The route is cut into pieces in which the platform stays within
``CHUNK_RADIUS_KM`` of the piece's first position.  For each piece the fleet is
propagated once at that position (``tracks.compute_tracks``, every satellite,
SGP4) with the minimum elevation lowered by a margin that no satellite inside
the terminal's sky can leave across the piece: seen from points d apart, a
satellite at range r turns by at most d / r and the local vertical by d / R.
Each kept sample's satellite position is then rebuilt in the Earth-fixed frame
(from its azimuth, elevation and range) and its azimuth and elevation worked out
again, exactly, from the platform's own position at that time.  The result
agrees with skyfield for the moving point (tests/test_platform_route.py); using
the tracks of one fixed point instead is not exact enough once the route spans
more than a few kilometres (bench/bench_platform.py measures it).
"""

from __future__ import annotations

import math
from dataclasses import replace
from datetime import datetime, timedelta, timezone

import numpy as np

from ..constellation import MU_KM3_S2, Fleet
from ..site import Site, Terminal
from ..tracks import Observer, SkyTracks, compute_tracks
from ..window import WindowSpec
from .route import EARTH_RADIUS_M, route_at

CHUNK_RADIUS_KM = 25.0
MARGIN_EXTRA_DEG = 0.2  # ellipsoid vs sphere and float32 storage, with room to spare


def sky_terminal(site: Site) -> Terminal:
    """The terminal's sky before the platform is applied: the minimum elevation
    only (a property of the sky); the field-of-view cone turns and tilts with the
    platform and is applied in the body frame (survey/platform/body.py)."""
    return Terminal(site.terminal.min_elevation_deg)


def route_positions(site: Site, window: WindowSpec):
    """(latitude, longitude, height above the ellipsoid, heading) per sample time."""
    t0 = window.start.timestamp()
    times = t0 + np.arange(window.count) * window.step_s
    lat, lon, ele, heading = route_at(site.platform.route, times)
    height = np.where(np.isfinite(ele), ele, site.elevation_m) + site.mount.height_m
    return lat, lon, height, heading


def platform_tracks(fleet: Fleet, site: Site, window: WindowSpec, progress=None) -> SkyTracks:
    """Usable-sky samples (minimum elevation only) for the platform: at the site
    point, or, with a route, for the moving observer."""
    observer = Observer(site.latitude_deg, site.longitude_deg, site.elevation_m + site.horizon_height_m)
    terminal = sky_terminal(site)
    if site.platform.route is None:
        return compute_tracks(fleet, observer, window, terminal, progress=progress)
    lat, lon, height, _ = route_positions(site, window)
    return route_tracks(fleet, window, terminal, lat, lon, height, observer, progress)


def margin_deg(fleet: Fleet, radius_km: float) -> float:
    """How far a satellite's elevation can move between two points radius_km apart."""
    n = np.array([s.no_kozai for s in fleet.satrecs]) / 60.0
    e = np.clip(np.array([s.ecco for s in fleet.satrecs]), 0.0, 0.99)
    a = (MU_KM3_S2 / np.maximum(n, 1e-9) ** 2) ** (1.0 / 3.0)
    nearest_km = max(float(np.min(a * (1 - e))) - 6378.137, 150.0) if n.size else 150.0
    return math.degrees(radius_km / nearest_km + radius_km * 1000.0 / EARTH_RADIUS_M) + MARGIN_EXTRA_DEG


def _itrs_and_enu(lat_deg, lon_deg, height_m):
    from skyfield.toposlib import wgs84

    pos = np.asarray(wgs84.latlon(lat_deg, lon_deg, elevation_m=height_m).itrs_xyz.km, dtype=np.float64)
    la, lo = np.radians(lat_deg), np.radians(lon_deg)
    sl, cl, so, co = np.sin(la), np.cos(la), np.sin(lo), np.cos(lo)
    enu = np.stack([np.stack([-so, co, np.zeros_like(so)]), np.stack([-sl * co, -sl * so, cl]),
                    np.stack([cl * co, cl * so, sl])])  # (3 rows, 3 components, ...)
    return pos, enu


def _chunks(pos_km: np.ndarray, radius_km: float) -> list[tuple[int, int]]:
    """[start, end) sample ranges within radius_km of their first position."""
    out, i, n = [], 0, pos_km.shape[1]
    while i < n:
        d = np.linalg.norm(pos_km[:, i:] - pos_km[:, i:i + 1], axis=0)
        far = np.flatnonzero(d > radius_km)
        j = i + (int(far[0]) if far.size else n - i)
        out.append((i, j))
        i = j
    return out


def route_tracks(fleet: Fleet, window: WindowSpec, terminal: Terminal, lat, lon, height, observer: Observer,
                 progress=None, radius_km: float = CHUNK_RADIUS_KM) -> SkyTracks:
    """Tracks for the moving observer at (lat, lon, height) per sample time."""
    pos, enu = _itrs_and_enu(lat, lon, height)
    chunks = _chunks(pos, radius_km)
    low = Terminal(max(terminal.min_elevation_deg - margin_deg(fleet, radius_km), 0.0))
    parts, evaluations, failed = [], 0, 0
    for c, (i, j) in enumerate(chunks):
        sub = WindowSpec(window.start + timedelta(seconds=i * window.step_s), (j - i) * window.step_s / 3600.0,
                         window.step_s)
        ref = Observer(float(lat[i]), float(lon[i]), float(height[i]))
        tr = compute_tracks(fleet, ref, sub, low)
        evaluations += tr.propagated
        failed = max(failed, tr.failed_sats)
        k = tr.time_index.astype(np.int64) + i
        az, el, rng = (np.radians(tr.az_deg.astype(np.float64)), np.radians(tr.el_deg.astype(np.float64)),
                       tr.range_km.astype(np.float64))
        d_ref = np.stack([rng * np.cos(el) * np.sin(az), rng * np.cos(el) * np.cos(az), rng * np.sin(el)])
        sat = pos[:, i:i + 1] + enu[:, :, i].T @ d_ref  # Earth-fixed satellite positions, km
        d = sat - pos[:, k]
        e_, n_, u_ = (np.einsum("ij,ij->j", enu[r][:, k], d) for r in range(3))
        r_ = np.sqrt(e_ * e_ + n_ * n_ + u_ * u_)
        el2 = np.degrees(np.arcsin(np.clip(u_ / r_, -1.0, 1.0)))
        keep = el2 >= terminal.min_elevation_deg
        parts.append((tr.sat[keep], k[keep], np.degrees(np.arctan2(e_[keep], n_[keep])) % 360.0, el2[keep],
                      r_[keep]))
        if progress is not None:
            progress((c + 1) / len(chunks))
    sat_i, t_i, az_o, el_o, rng_o = (np.concatenate(x) for x in zip(*parts))
    return SkyTracks(sat_i.astype(np.int32), t_i.astype(np.int32), az_o.astype(np.float32), el_o.astype(np.float32),
                     rng_o.astype(np.float32), window, fleet, replace(observer), terminal, evaluations, failed)


def route_window(site: Site, start: datetime | None, hours: float | None):
    """(start, hours) for window.resolve_window: a route gives the window's default,
    its first to last time, where neither the command line nor the site's
    [window] gives one (README, "Moving installs")."""
    route = site.platform.route
    if route is None:
        return start, hours
    first = datetime.fromtimestamp(route.times_s[0], timezone.utc)
    if start is None and "start" not in site.window:
        start = first
    if hours is None and "hours" not in site.window:
        begin = start if start is not None else site.window["start"]
        left = (route.times_s[-1] - begin.timestamp()) / 3600.0
        hours = left if left > 0 else None
    return start, hours


def route_warnings(site: Site, window: WindowSpec) -> list[str]:
    """What a run says about a route: the reader's warnings, and a window that
    runs past the track's ends (the platform is taken as waiting there)."""
    route = site.platform.route
    out = list(route.warnings)
    t0 = window.start.timestamp()
    t1 = t0 + (window.count - 1) * window.step_s
    if t0 < route.times_s[0] - 1e-6 or t1 > route.times_s[-1] + 1e-6:
        out.append("the window runs outside the route's times: before its first point and after its last the "
                   "platform is taken as standing there")
    return out
