"""Derived horizons: ray casting over a compiled plan (scene.py) for the horizon
at any point, with the distance and the name of the obstacle that sets it.

The derived horizon at a point is, for each true azimuth 0, 1, ..., 359 degrees,
the highest elevation atan((h(s) - z)/s) of an obstacle top seen along that
ray, s being the horizontal distance and z the antenna height, clamped to
[0, 90] degrees.  Every obstacle is reduced to vertical *panels* (segments whose
top height is linear along them: footprint edges, ridges, walls, skylines) and
tree cylinders.  Inside a footprint the top height is linear between panel
crossings (a flat roof or one roof plane), and (h(s) - z)/s with h linear in s
is monotonic, so the crossings are the only places the maximum can be: the
result is exact, not sampled along the ray.  It is sampled in azimuth, though:
an obstacle narrower than a degree as seen from the point (a utility pole) can
fall between two whole degrees and be missed.
"""

from __future__ import annotations

import numpy as np

from ..horizon import HorizonPoint
from .model import Plan
from .scene import Scene, _under_roof, compile_plan

AZIMUTHS_DEG = np.arange(360.0)  # the derived horizon's true azimuths
_AZ_SIN = np.sin(np.radians(AZIMUTHS_DEG))
_AZ_COS = np.cos(np.radians(AZIMUTHS_DEG))
_SPAN_EPS_DEG = 1e-7  # rays exactly through a panel's end are counted (round-off margin)
_CHUNK = 512  # observers per kernel pass: bounds the temporaries


def _spans(start_deg, width_deg):
    """First whole azimuth and how many lie in [start, start + width] (degrees)."""
    k0 = np.ceil(start_deg - _SPAN_EPS_DEG).astype(np.int64)
    k1 = np.floor(start_deg + width_deg + _SPAN_EPS_DEG).astype(np.int64)
    return k0, np.maximum(k1 - k0 + 1, 0)


def _expand(k0, n):
    """(pair index, azimuth index 0..359) for every whole azimuth of every span."""
    total = int(n.sum())
    rep = np.repeat(np.arange(n.size), n)
    offs = np.arange(total) - np.repeat(np.cumsum(n) - n, n)
    return rep, (k0[rep] + offs) % 360


def _panel_hits(sc: Scene, ox, oy, oz):
    """Every (observer, azimuth) ray crossing a panel whose top rises above the
    observer: observer index, azimuth index, elevation (deg), distance (m); and
    the observers standing on a panel below its top (no sky)."""
    top = np.maximum(sc.hP, sc.hQ)
    I, J = np.nonzero(top[None, :] > oz[:, None])  # noqa: E741 (observer, panel indices)
    px, py = sc.P[J, 0] - ox[I], sc.P[J, 1] - oy[I]
    qx, qy = sc.Q[J, 0] - ox[I], sc.Q[J, 1] - oy[I]
    ex, ey = qx - px, qy - py
    hp, dh, z = sc.hP[J], sc.hQ[J] - sc.hP[J], oz[I]
    l2 = ex * ex + ey * ey
    f = np.clip(-(px * ex + py * ey) / l2, 0.0, 1.0)
    on = np.hypot(px + f * ex, py + f * ey) < 1e-6
    engulfed = I[on & (hp + f * dh > z + 1e-9)]
    ap = np.degrees(np.arctan2(px, py))
    aq = np.degrees(np.arctan2(qx, qy))
    delta = (aq - ap + 180.0) % 360.0 - 180.0
    k0, n = _spans(np.where(delta >= 0, ap, aq), np.abs(delta))
    n[on] = 0
    rep, k = _expand(k0, n)
    dx, dy = _AZ_SIN[k], _AZ_COS[k]
    px, py, ex, ey, hp, dh, z = px[rep], py[rep], ex[rep], ey[rep], hp[rep], dh[rep], z[rep]
    den = dx * ey - dy * ex  # ray direction x panel direction
    edge_on = np.abs(den) < 1e-12 * np.sqrt(l2[rep])
    safe = np.where(edge_on, 1.0, den)
    s = (px * ey - py * ex) / safe
    u = np.clip((px * dy - py * dx) / safe, 0.0, 1.0)
    el = np.degrees(np.arctan2(hp + u * dh - z, s))
    if edge_on.any():  # seen end-on: its two ends lie on the ray; the higher sight line wins
        sp, sq = np.hypot(px, py), np.hypot(px + ex, py + ey)
        ep = np.degrees(np.arctan2(hp - z, sp))
        eq = np.degrees(np.arctan2(hp + dh - z, sq))
        el = np.where(edge_on, np.maximum(ep, eq), el)
        s = np.where(edge_on, np.where(ep >= eq, sp, sq), s)
    return I[rep], k, el, s, engulfed, J[rep]


def _tree_hits(sc: Scene, ox, oy, oz, years: float):
    """As _panel_hits for the tree cylinders: the sight line grazes the crown's
    near side at s = t - sqrt(r^2 - p^2) (t along the ray to the centre's foot,
    p the centre's distance off the ray)."""
    h_all = sc.tree_h + sc.tree_g * years
    I, J = np.nonzero(h_all[None, :] > oz[:, None])  # noqa: E741 (observer, tree indices)
    cx, cy = sc.tree_xy[J, 0] - ox[I], sc.tree_xy[J, 1] - oy[I]
    d, r, h, z = np.hypot(cx, cy), sc.tree_r[J], h_all[J], oz[I]
    inside = d <= r
    engulfed = I[inside]
    beta = np.degrees(np.arctan2(cx, cy))
    half = np.degrees(np.arcsin(np.clip(r / np.where(inside, np.inf, d), 0.0, 1.0)))
    k0, n = _spans(beta - half, 2.0 * half)
    n[inside] = 0
    rep, k = _expand(k0, n)
    theta = np.radians(k - beta[rep])
    d, r = d[rep], r[rep]
    t, p = d * np.cos(theta), d * np.sin(theta)
    s = t - np.sqrt(np.clip(r * r - p * p, 0.0, None))
    return I[rep], k, np.degrees(np.arctan2(h[rep] - z[rep], s)), s, engulfed, J[rep]


def _points(east_m, north_m, height_m):
    e, n, z = (np.atleast_1d(np.asarray(v, dtype=np.float64)) for v in (east_m, north_m, height_m))
    e, n, z = np.broadcast_arrays(e, n, z)
    return e.ravel(), n.ravel(), z.ravel()


def derived_horizons(plan: Plan | Scene, east_m, north_m, height_m, years: float = 0.0,
                     with_distance: bool = False):
    """Derived horizons at many points at once: an (N, 360) array of elevations
    (degrees, 0..90) at true azimuths 0..359, for points ``east_m``, ``north_m``
    (metres from the site point) with the antenna ``height_m`` above ground, trees
    grown by ``years``.  Vectorised over points, obstacles and rays (numpy); only
    the whole azimuths an obstacle subtends are evaluated.  With
    ``with_distance`` also returns the (N, 360) horizontal distance (m) of the
    obstacle top that sets each elevation (NaN where the sky is clear, 0 where
    the point stands inside an obstacle)."""
    sc = compile_plan(plan)
    e, n, z = _points(east_m, north_m, height_m)
    out = np.zeros((e.size, 360))
    dist = np.full((e.size, 360), np.nan) if with_distance else None
    for lo in range(0, e.size, _CHUNK):
        sl = slice(lo, lo + _CHUNK)
        ox, oy, oz = e[sl], n[sl], z[sl]
        flat_out = np.zeros(ox.size * 360)
        hits = []
        if sc.hP.size:
            hits.append(_panel_hits(sc, ox, oy, oz))
        if sc.tree_r.size:
            hits.append(_tree_hits(sc, ox, oy, oz, years))
        engulfed = [h[4] for h in hits]
        if hits:
            idx = np.concatenate([h[0] * 360 + h[1] for h in hits])
            el = np.concatenate([h[2] for h in hits])
            np.maximum.at(flat_out, idx, el)
            if with_distance:
                s = np.concatenate([h[3] for h in hits])
                order = np.lexsort((el, idx))  # each ray's highest last
                fd = np.full(ox.size * 360, np.nan)
                chosen = order[np.concatenate([idx[order][1:] != idx[order][:-1], [True]])] \
                    if idx.size else order
                keep = el[chosen] > 0.0
                fd[idx[chosen][keep]] = s[chosen][keep]
                dist[sl] = fd.reshape(ox.size, 360)
        block = out[sl]
        block[:] = np.clip(flat_out.reshape(ox.size, 360), 0.0, 90.0)
        for (poly, roof) in sc.solids:
            engulfed.append(np.flatnonzero(_under_roof(poly, roof, ox, oy, oz)))
        if engulfed:
            rows = np.unique(np.concatenate(engulfed)).astype(np.int64)
            block[rows] = 90.0
            if with_distance:
                dist[sl][rows] = 0.0
    return (out, dist) if with_distance else out


def derived_horizon(plan: Plan | Scene, east_m: float, north_m: float, height_m: float,
                    years: float = 0.0) -> np.ndarray:
    """The derived horizon at one point: 360 elevations (degrees, 0..90) at true
    azimuths 0..359 (see derived_horizons)."""
    return derived_horizons(plan, [east_m], [north_m], [height_m], years)[0]


def derived_horizon_labels(plan: Plan | Scene, east_m: float, north_m: float, height_m: float,
                           years: float = 0.0) -> tuple[str, ...]:
    """The name of the obstacle that sets the derived horizon at each whole
    azimuth 0..359 seen from one point ("" where the sky is clear): so the
    sectors of a derived horizon say which building or tree costs the most."""
    sc = compile_plan(plan)
    e, n, z = _points([east_m], [north_m], [height_m])
    names = np.array([""] * 360, dtype=object)
    best = np.zeros(360)
    if sc.hP.size:
        _, k, el, _, _, j = _panel_hits(sc, e, n, z)
        _take_highest(names, best, k, el, np.array(sc.panel_names + [""], dtype=object)[j])
    if sc.tree_r.size:
        _, k, el, _, _, j = _tree_hits(sc, e, n, z, years)
        _take_highest(names, best, k, el, np.array([t.name for t in sc.plan.trees] + [""], dtype=object)[j])
    inside = sc.inside(e, n, z, years)[0]
    if inside:
        names[:] = inside[0]
    return tuple(str(x) for x in names)


def _take_highest(names, best, k, el, who) -> None:
    """Per azimuth k, keep the name of the highest hit above ``best`` (in place)."""
    if not k.size:
        return
    order = np.lexsort((el, k))  # by azimuth, then elevation: each azimuth's highest hit last
    k, el, who = k[order], el[order], who[order]
    last = np.append(k[1:] != k[:-1], True)
    k, el, who = k[last], el[last], who[last]
    higher = el > best[k]
    names[k[higher]] = who[higher]
    best[k[higher]] = el[higher]


def derived_horizon_points(plan: Plan | Scene, east_m: float, north_m: float, height_m: float,
                           years: float = 0.0) -> tuple[HorizonPoint, ...]:
    """The derived horizon at one point as horizon points, one per whole degree of
    azimuth, each carrying the horizontal distance (m) of the obstacle top that
    sets it (no distance where the sky is clear), as a surveyor would type them
    when standing at that point."""
    el, dist = derived_horizons(plan, [east_m], [north_m], [height_m], years, with_distance=True)
    return tuple(HorizonPoint(float(a), float(e), None if not np.isfinite(d) or d <= 0 else float(d))
                 for a, e, d in zip(AZIMUTHS_DEG, el[0], dist[0]))
