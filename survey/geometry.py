"""Geometry both front ends draw with (the Pillow figures and the terminal
drawings): the outline of the terminal's field-of-view cone on the sky, which
points of a grid fall inside a polygon, and nice numbers for axes and scale
bars.  One owner each, so a figure and the text UI never draw them apart."""

from __future__ import annotations

import math

import numpy as np
import shapely


def cone_edge(az0_deg: float, el0_deg: float, half_deg: float, n: int = 721):
    """Az/el (deg) of points on a cone of half-angle ``half_deg`` about a boresight.

    Treats elevation as latitude and azimuth as longitude on the unit sphere
    and steps the spherical "destination point" formula round all bearings.
    """
    lat1 = math.radians(el0_deg)
    lon1 = math.radians(az0_deg)
    d = math.radians(half_deg)
    th = np.linspace(0.0, 2.0 * math.pi, n)
    sin_lat2 = np.sin(lat1) * np.cos(d) + np.cos(lat1) * np.sin(d) * np.cos(th)
    lat2 = np.arcsin(np.clip(sin_lat2, -1.0, 1.0))
    lon2 = lon1 + np.arctan2(np.sin(th) * np.sin(d) * np.cos(lat1),
                             np.cos(d) - np.sin(lat1) * sin_lat2)
    return np.degrees(lon2) % 360.0, np.degrees(lat2)


def points_in_polygon(polygon, x, y) -> np.ndarray:
    """Which points (x, y), arrays of one shape, lie inside ``polygon`` (a ring of
    (x, y) vertices), with shapely's vectorised ``contains_xy``."""
    return shapely.contains_xy(shapely.Polygon(np.asarray(polygon, dtype=float)), x, y)


def nice_step(span: float, target: int) -> float:
    """A 1, 2 or 5 x 10^k step giving about ``target`` intervals over ``span``."""
    if not span > 0:
        return 1.0
    raw = span / max(1, target)
    k = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * k >= raw * 0.999:
            return m * k
    return 10.0 * k


def nice_floor(v: float) -> float:
    """Largest 1, 2 or 5 x 10^k not above ``v`` (v > 0)."""
    k = 10.0 ** math.floor(math.log10(v))
    for m in (5.0, 2.0, 1.0):
        if m * k <= v * 1.0000001:
            return m * k
    return k


def nice_ceil(v: float) -> float:
    """Smallest 1, 2, 2.5, 5 x 10^k not below ``v`` (v > 0)."""
    k = 10.0 ** math.floor(math.log10(v))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * k >= v * 0.9999999:
            return m * k
    return 10.0 * k
