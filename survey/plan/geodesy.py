"""Local geodesy: WGS84 longitude/latitude to metres east and north on the
tangent plane at the site point (the exact geodetic -> ECEF -> ENU transformation)."""

from __future__ import annotations

import math

import numpy as np

WGS84_A_M = 6378137.0  # semi-major axis (NIMA TR8350.2)
WGS84_F = 1.0 / 298.257223563  # flattening
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)  # first eccentricity squared


def geodetic_to_ecef(lat_deg, lon_deg, height_m=0.0):
    """WGS84 geodetic latitude, longitude (degrees) and ellipsoidal height (m) to
    Earth-centred, Earth-fixed X, Y, Z (m): X = (N+h) cos(lat) cos(lon),
    Y = (N+h) cos(lat) sin(lon), Z = (N(1-e^2)+h) sin(lat), N = a/sqrt(1 - e^2 sin^2 lat)."""
    lat, lon = np.radians(lat_deg), np.radians(lon_deg)
    n = WGS84_A_M / np.sqrt(1.0 - WGS84_E2 * np.sin(lat) ** 2)
    return ((n + height_m) * np.cos(lat) * np.cos(lon), (n + height_m) * np.cos(lat) * np.sin(lon),
            (n * (1.0 - WGS84_E2) + height_m) * np.sin(lat))


def lonlat_to_local(lon_deg, lat_deg, origin_lat_deg: float, origin_lon_deg: float):
    """Longitude/latitude (degrees, WGS84) to metres (east, north) on the local
    tangent plane at the origin, both at ellipsoidal height 0: geodetic -> ECEF,
    then the ECEF difference rotated into east, north, up (the up part, the
    curvature drop, is dropped: flat ground)."""
    x, y, z = geodetic_to_ecef(lat_deg, lon_deg)
    x0, y0, z0 = geodetic_to_ecef(origin_lat_deg, origin_lon_deg)
    dx, dy, dz = x - x0, y - y0, z - z0
    lat0, lon0 = math.radians(origin_lat_deg), math.radians(origin_lon_deg)
    east = -math.sin(lon0) * dx + math.cos(lon0) * dy
    north = (-math.sin(lat0) * math.cos(lon0) * dx - math.sin(lat0) * math.sin(lon0) * dy
             + math.cos(lat0) * dz)
    return east, north
