"""The terrain horizon: for each whole degree of true azimuth, the highest
elevation angle of the terrain within the distance limit, seen from the
antenna (README, "Terrain horizons", the method).

Along a ray at azimuth a, a point at ground distance d (along the sphere) with
height z, seen from an antenna at height z0, is at elevation

    atan((z - z0 - drop) / d),   drop = d^2 (1 - k) / (2 R)

where the drop is the Earth's curvature less standard atmospheric refraction
(k = REFRACTION_K, R = EARTH_RADIUS_M).  The heights are sampled bilinearly
(dem.Dem.sample) at every REFINE-th of a grid cell along all 360 rays at
once: one numpy array of azimuths x distances.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from .dem import METRES_PER_DEG, Dem

EARTH_RADIUS_M = 6_371_000.0  # mean Earth radius (sphere), as surveying curvature corrections take it
REFRACTION_K = 0.13  # coefficient of refraction: Gauss's value, the usual surveying one (from memory)
REFINE = 2  # samples per grid cell along a ray
MAX_SAMPLES_PER_RAY = 12_000  # 150 km at 12.5 m; bounds the (360, N) arrays to ~35 MB each
AZIMUTHS_DEG = np.arange(360, dtype=np.float64)


def curvature_drop_m(distance_m, k: float = REFRACTION_K, radius_m: float = EARTH_RADIUS_M):
    """How far a point ``distance_m`` away sits below the observer's level plane,
    less the lift that refraction gives the line of sight: d^2 (1 - k) / (2 R)."""
    d = np.asarray(distance_m, dtype=np.float64)
    return d * d * (1.0 - k) / (2.0 * radius_m)


def destination(lat_deg: float, lon_deg: float, azimuth_deg, distance_m):
    """(lat, lon) in degrees a great-circle distance along an azimuth from a
    point, on the sphere of EARTH_RADIUS_M (the direct problem on the sphere);
    broadcasts over azimuths and distances."""
    phi1, lam1 = math.radians(lat_deg), math.radians(lon_deg)
    theta = np.radians(azimuth_deg)
    delta = np.asarray(distance_m, dtype=np.float64) / EARTH_RADIUS_M
    sin_phi2 = np.sin(phi1) * np.cos(delta) + np.cos(phi1) * np.sin(delta) * np.cos(theta)
    phi2 = np.arcsin(np.clip(sin_phi2, -1.0, 1.0))
    lam2 = lam1 + np.arctan2(np.sin(theta) * np.sin(delta) * np.cos(phi1), np.cos(delta) - np.sin(phi1) * sin_phi2)
    return np.degrees(phi2), (np.degrees(lam2) + 180.0) % 360.0 - 180.0


@dataclass(frozen=True)
class TerrainHorizon:
    """The terrain horizon at one point: per whole degree of true azimuth
    (0..359) the elevation angle (degrees; negative where the terrain falls
    away) and the distance (metres) to the point that sets it.  ``ground_m`` is
    the DEM's height at the point, ``eye_m`` the antenna's (ground plus the
    antenna height).  ``cut_short`` marks azimuths whose ray left the DEM
    before ``max_distance_m`` (``reach_m`` how far it got); ``voids`` those
    that crossed no-data cells."""

    elevation_deg: np.ndarray
    distance_m: np.ndarray
    ground_m: float
    eye_m: float
    max_distance_m: float
    reach_m: np.ndarray
    cut_short: np.ndarray
    voids: np.ndarray
    source: str
    resolution: str
    files: tuple[str, ...] = ()
    warnings: tuple[str, ...] = field(default_factory=tuple)

    def as_dict(self) -> dict:
        """The JSON of ``leosite terrain --json`` (README, "Terrain horizons")."""
        return {
            "ground_m": round(self.ground_m, 2),
            "points": [[int(a), _rounded(e, 3), _rounded(d, 1)]
                       for a, e, d in zip(AZIMUTHS_DEG, self.elevation_deg, self.distance_m)],
            "source": self.source, "resolution": self.resolution,
            "max_distance_m": self.max_distance_m, "warnings": list(self.warnings),
        }


def _rounded(x, digits: int):
    """A finite number rounded, else None (JSON has no NaN: no terrain height along that ray)."""
    return round(float(x), digits) if math.isfinite(x) else None


def spans_text(flags: np.ndarray) -> str:
    """Runs of flagged whole degrees as text ("75°–110°, 200°"), through north too."""
    flags = np.asarray(flags, dtype=bool)
    if flags.all():
        return "all azimuths"
    start = int(np.flatnonzero(~flags)[0])  # begin at an unflagged degree, so no run straddles the walk's ends
    runs, run = [], None
    for i in range(1, 361):
        a = (start + i) % 360
        if flags[a] and run is None:
            run = [a, a]
        elif flags[a]:
            run[1] = a
        elif run is not None:
            runs.append(run)
            run = None
    return ", ".join(f"{a}°" if a == b else f"{a}°–{b}°" for a, b in runs)


def terrain_horizon(dem: Dem, lat_deg: float, lon_deg: float, antenna_height_m: float,
                    max_distance_m: float) -> TerrainHorizon:
    """The terrain horizon at (lat, lon), ``antenna_height_m`` above the DEM's
    ground there, out to ``max_distance_m`` (see the module docstring).  The
    rays start one grid cell out: nearer ground is the measured horizon's to
    give.  InputError when the DEM has no height at the point itself."""
    ground, outside = dem.sample(np.array([lat_deg]), np.array([lon_deg]))
    if outside[0]:
        raise InputError(f"{dem.name}: terrain.dem: does not cover the site at {lat_deg:.5f}, {lon_deg:.5f}")
    if not np.isfinite(ground[0]):
        raise InputError(f"{dem.name}: terrain.dem: no data (a void) at the site at {lat_deg:.5f}, {lon_deg:.5f}: "
                         "fill the void or use another elevation model")
    ground_m = float(ground[0])
    eye = ground_m + antenna_height_m
    # The grid's smaller side, but near a pole no finer than an eighth of the
    # north-south spacing (a degree of longitude shrinks to nothing there).
    lat_m = dem.dlat * METRES_PER_DEG
    cell_m = max(min(lat_m, dem.dlon * METRES_PER_DEG * math.cos(math.radians(lat_deg))), lat_m / 8)
    step = max(cell_m / REFINE, max_distance_m / MAX_SAMPLES_PER_RAY)
    count = max(int(math.floor((max_distance_m - cell_m) / step)) + 1, 1)
    dist = cell_m + step * np.arange(count)
    dist = dist[dist <= max_distance_m + 1e-6]
    lat, lon = destination(lat_deg, lon_deg, AZIMUTHS_DEG[:, None], dist[None, :])
    z, out = dem.sample(lat, lon)
    angle = np.degrees(np.arctan2(z - eye - curvature_drop_m(dist)[None, :], dist[None, :]))
    # A ray stops where it first leaves the DEM: nothing past a gap is trusted
    # to be all there is (a tile missing from a folder).
    left = np.cumsum(out, axis=1) > 0
    void = ~left & np.isnan(z)
    angle = np.where(left | void, -np.inf, angle)
    best = np.argmax(angle, axis=1)
    el = angle[np.arange(360), best]
    has = np.isfinite(el)
    el = np.where(has, el, np.nan)
    far = np.where(has, dist[best], np.nan)
    inside = ~left
    last = np.where(inside.any(axis=1), inside.shape[1] - 1 - np.argmax(inside[:, ::-1], axis=1), -1)
    reach = np.where(last >= 0, dist[np.maximum(last, 0)], 0.0)
    cut = left.any(axis=1)
    voids = void.any(axis=1)
    return TerrainHorizon(el, far, ground_m, eye, float(max_distance_m), reach, cut, voids, dem.name,
                          dem.resolution_text, dem.files, _warnings(dem.name, reach, cut, voids, max_distance_m, has))


def _warnings(name: str, reach, cut, voids, max_distance_m: float, has) -> tuple[str, ...]:
    out = []
    if cut.any():
        out.append(f"{name}: the elevation model reaches only {np.min(reach[cut]) / 1000:.1f} km of the "
                   f"{max_distance_m / 1000:g} km at azimuths {spans_text(cut)}: terrain beyond is not in the "
                   "horizon there (add the neighbouring tiles)")
    if voids.any():
        out.append(f"{name}: no-data cells (voids) along azimuths {spans_text(voids)}: the terrain horizon there "
                   "leaves them out and may be too low; fill the voids or use a void-filled model")
    if not has.all():
        out.append(f"{name}: no terrain height at all along azimuths {spans_text(~has)}: taken as 0° there")
    return tuple(out)
