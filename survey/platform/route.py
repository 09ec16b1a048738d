"""Routes: a GPX 1.1 track with times, read with gpxpy, and the position and
heading at every sample time (README, "Moving installs").

Between track points the position is interpolated linearly in latitude and
longitude (through the antimeridian too) and the heading is the great-circle
initial course from one point to the next (the forward azimuth on a sphere;
over track points metres to a few kilometres apart it differs from the WGS84
geodesic azimuth by well under a tenth of a degree).
"""

from __future__ import annotations

import math
import re
from datetime import timezone
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..fileio import read_text
from .model import Route

MAX_ROUTE_POINTS = 200_000  # a day at a point a second, twice over (README, "Limits")
GAP_WARNING_S = 600.0  # more than 10 minutes between points: the position between is a straight guess
FAST_M_S = 250.0  # faster than this between points is not a road vehicle or a vessel: a bad point
_DOCTYPE = re.compile(r"<!DOCTYPE|<!ENTITY", re.IGNORECASE)
EARTH_RADIUS_M = 6_371_008.8  # mean Earth radius (IUGG), for distances along the route


def read_route(path: Path) -> Route:
    """The timed points of every track segment in a GPX file, in file order.
    Refused, with one line naming the file: not GPX, no track, a point without a
    time, fewer than two points, coordinates outside the globe, times that do not
    increase.  Warned: gaps of more than 10 minutes, implausible speeds."""
    where = str(path)
    text = read_text(path, "route file")
    if _DOCTYPE.search(text):
        raise InputError(f"{where}: a GPX file with a DOCTYPE or entity declarations is refused (GPX needs neither)")
    import gpxpy
    import gpxpy.gpx

    try:
        gpx = gpxpy.parse(text)
    except (gpxpy.gpx.GPXException, ValueError, TypeError, AttributeError, IndexError, KeyError,
            OverflowError, RecursionError) as exc:
        first = str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__
        raise InputError(f"{where}: not a GPX file gpxpy can read ({first})") from None
    points = [pt for track in gpx.tracks for seg in track.segments for pt in seg.points]
    if not points:
        raise InputError(f"{where}: no track points (a route is a GPX track, <trk><trkseg><trkpt>, with times)")
    if len(points) > MAX_ROUTE_POINTS:
        raise InputError(f"{where}: {len(points):,} track points, more than the limit of {MAX_ROUTE_POINTS:,}")
    times, lat, lon, ele = [], [], [], []
    for i, pt in enumerate(points, start=1):
        la, lo = _number(pt.latitude), _number(pt.longitude)
        if la is None or not -90.0 <= la <= 90.0:
            raise InputError(f"{where}: track point {i}: latitude {pt.latitude!r} is outside -90 to 90")
        if lo is None or not -180.0 <= lo <= 180.0:
            raise InputError(f"{where}: track point {i}: longitude {pt.longitude!r} is outside -180 to 180")
        if pt.time is None:
            raise InputError(f"{where}: track point {i} has no <time>: a route needs a time at every point "
                             "(record the track with times)")
        when = pt.time if pt.time.tzinfo is not None else pt.time.replace(tzinfo=timezone.utc)
        try:
            t = when.astimezone(timezone.utc).timestamp()
        except (OverflowError, ValueError, OSError):
            raise InputError(f"{where}: track point {i}: time {pt.time!r} is not a usable time") from None
        times.append(t)
        lat.append(la)
        lon.append(lo)
        e = _number(pt.elevation)
        ele.append(e if e is not None and -500.0 <= e <= 9000.0 else None)
    return checked_route(where, times, lat, lon, ele)


def checked_route(where: str, times: list, lat: list, lon: list, ele: list) -> Route:
    """A Route from timed points already in range: at least two, times increasing;
    warnings for gaps and implausible speeds."""
    if len(times) < 2:
        raise InputError(f"{where}: a single track point: a route needs at least two timed points")
    t = np.array(times)
    dt = np.diff(t)
    bad = np.flatnonzero(dt <= 0)
    if bad.size:
        k = int(bad[0]) + 1
        raise InputError(f"{where}: track point {k + 1}: its time is not after point {k}'s: times must increase")
    warnings = []
    gaps = np.flatnonzero(dt > GAP_WARNING_S)
    if gaps.size:
        k = int(gaps[0])
        warnings.append(f"route {Path(where).name}: {gaps.size} gap(s) of more than {GAP_WARNING_S / 60:g} min between "
                        f"track points (the first {dt[k] / 60:.0f} min after point {k + 1}): the position there "
                        "is a straight line between the points")
    dist = segment_lengths_m(np.array(lat), np.array(lon))
    speed = dist / dt
    fast = np.flatnonzero(speed > FAST_M_S)
    if fast.size:
        k = int(fast[0])
        warnings.append(f"route {Path(where).name}: {speed[k] * 3.6:,.0f} km/h between track points {k + 1} and {k + 2}: "
                        "check the track for a bad point")
    if not np.any(dist > 0):
        warnings.append(f"route {Path(where).name}: the track never moves: the heading is taken as 0° (north); "
                        "give platform.heading_deg instead")
    return Route(where, tuple(times), tuple(lat), tuple(lon), tuple(ele), tuple(warnings))


def route_from_json(where: str, doc) -> Route:
    """A route embedded in a report JSON (``report.inputs``): the same checks as a GPX file's."""
    if not isinstance(doc, dict):
        raise InputError(f"{where}: inputs.route: expected an object")
    cols = [doc.get(k) for k in ("times_s", "latitude_deg", "longitude_deg", "elevation_m")]
    if not all(isinstance(c, list) for c in cols) or len({len(c) for c in cols}) != 1:
        raise InputError(f"{where}: inputs.route: expected lists times_s, latitude_deg, longitude_deg, "
                         "elevation_m of one length")
    if len(cols[0]) > MAX_ROUTE_POINTS:
        raise InputError(f"{where}: inputs.route: more than the limit of {MAX_ROUTE_POINTS:,} points")
    times, lat, lon, ele = [], [], [], []
    for i, (t, la, lo, e) in enumerate(zip(*cols), start=1):
        t, la, lo = _number(t), _number(la), _number(lo)
        if t is None or la is None or lo is None or not (-90 <= la <= 90 and -180 <= lo <= 180 and abs(t) < 1e11):
            raise InputError(f"{where}: inputs.route: point {i}: expected a time and coordinates on the globe")
        e = _number(e)
        times.append(t)
        lat.append(la)
        lon.append(lo)
        ele.append(e if e is not None and -500.0 <= e <= 9000.0 else None)
    source = doc.get("source") if isinstance(doc.get("source"), str) else "route"
    route = checked_route(where, times, lat, lon, ele)
    return Route(source, route.times_s, route.latitude_deg, route.longitude_deg, route.elevation_m, route.warnings)


def route_json(route: Route) -> dict:
    """The route as report.inputs carries it (read back by route_from_json)."""
    return {"source": route.source, "times_s": list(route.times_s), "latitude_deg": list(route.latitude_deg),
            "longitude_deg": list(route.longitude_deg), "elevation_m": list(route.elevation_m)}


def _number(x) -> float | None:
    try:
        v = float(x)
    except (TypeError, ValueError, OverflowError):
        return None
    return v if math.isfinite(v) else None


def segment_lengths_m(lat_deg: np.ndarray, lon_deg: np.ndarray) -> np.ndarray:
    """Great-circle lengths (m) between consecutive points (haversine, spherical Earth)."""
    p, lo = np.radians(lat_deg), np.radians(lon_deg)
    dp, dl = np.diff(p), np.diff(lo)
    a = np.sin(dp / 2) ** 2 + np.cos(p[:-1]) * np.cos(p[1:]) * np.sin(dl / 2) ** 2
    return 2 * EARTH_RADIUS_M * np.arcsin(np.sqrt(np.clip(a, 0.0, 1.0)))


def courses_deg(lat_deg: np.ndarray, lon_deg: np.ndarray) -> np.ndarray:
    """Great-circle initial course (degrees clockwise from true north) from each
    point to the next; a leg of zero length takes the course of the leg before
    (or after, at the start; 0 if the track never moves)."""
    p, lo = np.radians(lat_deg), np.radians(lon_deg)
    dl = np.diff(lo)
    y = np.sin(dl) * np.cos(p[1:])
    x = np.cos(p[:-1]) * np.sin(p[1:]) - np.sin(p[:-1]) * np.cos(p[1:]) * np.cos(dl)
    c = np.degrees(np.arctan2(y, x)) % 360.0
    moving = segment_lengths_m(lat_deg, lon_deg) > 0
    if not moving.any():
        return np.zeros(c.size)
    idx = np.where(moving, np.arange(c.size), -1)
    idx = np.maximum.accumulate(idx)
    idx[idx < 0] = np.flatnonzero(moving)[0]
    return c[idx]


def route_at(route: Route, times_s: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(latitude, longitude, elevation or NaN, heading) at each time (UTC seconds);
    before the first point and after the last the platform is where the track
    starts or ends, with its first or last course."""
    t = np.asarray(route.times_s)
    lat, lon = np.asarray(route.latitude_deg), np.unwrap(np.asarray(route.longitude_deg), period=360.0)
    ele = np.array([np.nan if e is None else e for e in route.elevation_m])
    la = np.interp(times_s, t, lat)
    lo = (np.interp(times_s, t, lon) + 180.0) % 360.0 - 180.0
    good = np.isfinite(ele)
    el = np.interp(times_s, t[good], ele[good]) if good.any() else np.full(np.shape(times_s), np.nan)
    course = courses_deg(lat, np.asarray(route.longitude_deg))
    leg = np.clip(np.searchsorted(t, times_s, side="right") - 1, 0, course.size - 1)
    return la, lo, el, course[leg]
