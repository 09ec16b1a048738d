"""Measured horizon points that carry a distance, turned into obstacles
(skylines) so that they move with the mount (DEVELOPERS.md, "Spot search")."""

from __future__ import annotations

import math

from ..horizon import HorizonPoint
from .model import XY, Skyline

LONE_POINT_HALF_WIDTH_DEG = 0.5  # a lone measured point with a distance: see measured_obstacles
SKYLINE_STEP_DEG = 2.0  # arc between two measured points drawn as chords at most this far apart


def measured_obstacles(points, mount_height_m: float) -> tuple[tuple[Skyline, ...], tuple[HorizonPoint, ...]]:
    """Measured horizon points as obstacles: (near skylines, far points).

    ``points`` are HorizonPoints in *true* azimuths (rotate compass bearings first,
    e.g. with ``HorizonProfile.to_true``), measured at the site point from the
    antenna height ``mount_height_m``.  A point with a (horizontal) distance d is
    an obstacle top at that bearing and distance, ``mount_height_m + d tan(el)``
    above ground.  Between two such points that are neighbours in azimuth order
    (wrapping through north) the skyline is continuous: distance and top height
    vary linearly with azimuth, drawn as vertical panels at most
    SKYLINE_STEP_DEG apart, so the obstruction between them is kept when the
    mount moves.  A lone point with a distance (both neighbours without one)
    becomes a panel across its line of sight, LONE_POINT_HALF_WIDTH_DEG either
    side.  Points without a distance are far away: they are returned as they
    are, for a mask that applies unchanged at every candidate point.
    """
    pts = sorted(points, key=lambda p: p.azimuth_deg % 360.0)
    near = [p.distance_m is not None for p in pts]
    far = tuple(p for p in pts if p.distance_m is None)

    def top(p) -> float:
        el = min(max(p.elevation_deg, 0.0), 89.9)  # a vertical sight line has no finite top
        return mount_height_m + p.distance_m * math.tan(math.radians(el))

    def xy(az_deg: float, d: float) -> XY:
        a = math.radians(az_deg)
        return d * math.sin(a), d * math.cos(a)

    out: list[Skyline] = []
    n = len(pts)
    for i, p in enumerate(pts):
        if not near[i]:
            continue
        prev_near = n > 1 and near[(i - 1) % n]
        nxt = (i + 1) % n
        if n > 1 and near[nxt]:
            q = pts[nxt]
            a0, a1 = p.azimuth_deg % 360.0, q.azimuth_deg % 360.0
            gap = (a1 - a0) % 360.0
            steps = max(1, math.ceil(gap / SKYLINE_STEP_DEG))
            h0, h1, d0, d1 = top(p), top(q), p.distance_m, q.distance_m
            label = p.label or q.label
            for s in range(steps):
                f0, f1 = s / steps, (s + 1) / steps
                out.append(Skyline(label or "measured skyline",
                                   xy(a0 + gap * f0, d0 + (d1 - d0) * f0),
                                   xy(a0 + gap * f1, d0 + (d1 - d0) * f1),
                                   h0 + (h1 - h0) * f0, h0 + (h1 - h0) * f1))
        elif not prev_near:
            a = math.radians(p.azimuth_deg)
            w = p.distance_m * math.tan(math.radians(LONE_POINT_HALF_WIDTH_DEG))
            cx, cy = xy(p.azimuth_deg, p.distance_m)
            px, py = math.cos(a), -math.sin(a)  # unit vector across the line of sight
            h = top(p)
            out.append(Skyline(p.label or "measured point", (cx - w * px, cy - w * py),
                               (cx + w * px, cy + w * py), h, h))
    return tuple(out), far
