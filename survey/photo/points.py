"""A horizon photo's skyline turned into measured points (README, "Horizon
from a photo"): what the text UI's "photo to points" command does before the
photo is detached from the site, so the installer can edit the skyline point
by point.

The mask the site has now is max(measured points, photo skyline)
(``survey/mask.py``).  Its knots, as one line of (true azimuth, elevation)
closed through north, are thinned with shapely's Douglas-Peucker ``simplify``
(tolerance 0.5° by default); points are then put back wherever the thinned
line strays more than the tolerance in elevation from the mask at a knot
(``simplify`` bounds the distance across the line, which on a steep edge is
less than the distance in elevation).  The measured points standing at or
above the skyline are kept as typed, as fixed vertices of the line; those
under it no longer shaped the mask and are left out (their count is returned).
New points say ``photo`` and are in the site's bearing reference: a true
azimuth less the declination when the bearings are compass bearings."""

from __future__ import annotations

import numpy as np

from ..horizon import HorizonPoint, HorizonProfile
from ..mask import PHOTO_LABEL, combined_mask, measured_mask

__all__ = ["photo_points"]


def _thin(az: np.ndarray, el: np.ndarray, fixed: np.ndarray, tol: float) -> np.ndarray:
    """Indices of the closed line's knots to keep (``az`` increasing over one
    turn from the first, which is fixed, to the same knot 360° on; ``fixed``:
    indices that must stay)."""
    from shapely.geometry import LineString

    keep = set(fixed.tolist()) | {0, az.size - 1}
    cuts = sorted(keep)
    for a, b in zip(cuts[:-1], cuts[1:]):
        if b - a < 2:
            continue
        line = LineString(np.column_stack([az[a:b + 1], el[a:b + 1]]))
        kept = {tuple(c) for c in np.asarray(line.simplify(tol, preserve_topology=False).coords)}
        keep.update(i for i in range(a, b + 1) if (az[i], el[i]) in kept)
    while True:  # the elevation error bounded too, not only the distance across
        idx = np.array(sorted(keep))
        err = np.abs(np.interp(az, az[idx], np.round(el[idx], 2)) - el)
        worst = int(np.argmax(err))
        if err[worst] <= tol * 0.98:
            return idx
        keep.add(worst)


def photo_points(profile: HorizonProfile, skyline_az_deg, skyline_el_deg, declination_deg: float | None,
                 tolerance_deg: float = 0.5) -> tuple[tuple[HorizonPoint, ...], int]:
    """(points, dropped): measured points, in ``profile``'s reference, whose
    mask follows max(``profile``'s mask, the skyline) within ``tolerance_deg``
    of elevation; ``dropped`` is how many of ``profile``'s points lay under the
    skyline and were left out.  ``skyline_*``: true azimuths and elevations
    (``PhotoSkyline.az_deg`` / ``el_deg``); ``declination_deg`` turns compass
    bearings to true and back (None: not known, taken as 0, as the mask does)."""
    dec = (declination_deg or 0.0) if profile.reference == "magnetic" else 0.0
    s_az = np.mod(np.asarray(skyline_az_deg, dtype=np.float64), 360.0)
    s_el = np.asarray(skyline_el_deg, dtype=np.float64)
    trues = profile.to_true(dec).points
    sky_at = np.interp([p.azimuth_deg % 360.0 for p in trues], s_az, s_el, period=360.0) if trues else []
    kept = [(p, t) for p, t, s in zip(profile.points, trues, sky_at) if t.elevation_deg >= s - 1e-9]
    mask = combined_mask(measured_mask(profile, dec), s_az, s_el)
    az, el = mask.az_deg, np.round(mask.el_deg, 2)
    fixed_az = {round(t.azimuth_deg % 360.0, 9): p for p, t in kept}
    start = int(np.argmax(el)) if not fixed_az else int(np.argmin(np.abs(az - min(fixed_az))))
    order = np.r_[np.arange(start, az.size), np.arange(0, start + 1)]
    u_az = az[order] + np.where(np.arange(order.size) >= az.size - start, 360.0, 0.0)
    u_az[-1] = az[start] + 360.0
    u_el = el[order]
    fixed = np.array([i for i, a in enumerate(az[order][:-1]) if round(a, 9) in fixed_az], dtype=np.int64)
    points = []
    for i in _thin(u_az, u_el, fixed, tolerance_deg)[:-1]:
        a = round(float(u_az[i]) % 360.0, 9)
        if a in fixed_az:
            points.append(fixed_az.pop(a))
        else:
            bearing = round((float(u_az[i]) - dec) % 360.0, 4) % 360.0
            points.append(HorizonPoint(bearing, round(float(u_el[i]), 2), None, PHOTO_LABEL))
    return tuple(points), len(profile.points) - len(kept)
