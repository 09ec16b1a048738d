"""Where the site-plan figure puts things: the map frame at one scale east
and north (north up), the scale bar's round length and free corner, and the
top of the blocked-fraction colour scale."""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..geometry import nice_ceil, nice_floor
from .canvas import check_size
from .plan_shapes import marked_spots, obstacle_shapes, plan_cells, plan_extent_points, shape_points


class PlanFrame(NamedTuple):
    """The plan's map in the final image, pixels.  (ox, oy): the site point
    (east 0, north 0); px_per_m: the same scale east and north (equal aspect);
    left/top/right/bottom: the map box."""

    ox: float
    oy: float
    px_per_m: float
    left: float
    top: float
    right: float
    bottom: float


class PlanLayout(NamedTuple):
    """Everything :func:`plan_figure` places from the data: the map frame, the
    scale bar (a round length in metres, its left end and centre line and its
    length in pixels, final image) and the top of the colour scale (a blocked
    fraction, 0..1)."""

    frame: PlanFrame
    scale_m: float
    scale_x: float
    scale_y: float
    scale_px: float
    blocked_max: float


def plan_xy(east_m, north_m, frame: PlanFrame):
    """Pixel (x, y) of a point east/north of the site point, metres (north up)."""
    e = np.asarray(east_m, dtype=np.float64)
    n = np.asarray(north_m, dtype=np.float64)
    return frame.ox + e * frame.px_per_m, frame.oy - n * frame.px_per_m


def plan_unit(w: int, h: int) -> float:
    """The plan's layout unit: 1/1000 of the shorter side, px."""
    return min(w, h) / 1000.0


def layout(obs, cells, markers, best, w: int, h: int) -> PlanLayout:
    """:class:`PlanLayout` of checked shapes (``plan_shapes``) at w x h px."""
    u = plan_unit(w, h)
    left, right = 84 * u, w - 130 * u
    top, bottom = 118 * u, h - 200 * u
    pts = plan_extent_points(obs, cells, markers, best)
    e0, n0 = pts.min(axis=0)
    e1, n1 = pts.max(axis=0)
    span = max(e1 - e0, n1 - n0, 10.0)
    pad = max(0.06 * span, 2.0)
    # At least 10 m across, so a bare plan still shows a sensible scale.
    ec, nc = (e0 + e1) / 2.0, (n0 + n1) / 2.0
    half_e, half_n = max((e1 - e0) / 2.0, 5.0) + pad, max((n1 - n0) / 2.0, 5.0) + pad
    e0, e1, n0, n1 = ec - half_e, ec + half_e, nc - half_n, nc + half_n
    bw, bh = right - left, bottom - top
    k = min(bw / (e1 - e0), bh / (n1 - n0))
    # Fill the box: widen the shorter extent about its centre.
    e0 = ec - bw / k / 2.0
    n1 = nc + bh / k / 2.0
    frame = PlanFrame(*(float(v) for v in (left - e0 * k, top + n1 * k, k, left, top, right,
                                           bottom)))
    width_m = bw / k
    scale_m = nice_floor(0.22 * width_m)
    scale_px = float(scale_m * k)
    # The scale bar takes the free corner (the north arrow has the top right):
    # the one whose card covers the least of the drawn things' boxes.
    boxes = _boxes(obs, cells, markers, best, frame)
    corners = [(left + 22 * u, bottom - 22 * u), (right - 22 * u - scale_px, bottom - 22 * u),
               (left + 22 * u, top + 58 * u)]

    def covered(c):
        x0, y = c
        card = np.array([x0 - 12 * u, y - 36 * u, x0 + scale_px + 12 * u, y + 12 * u])
        if boxes.size == 0:
            return 0.0
        w_ = np.clip(np.minimum(boxes[:, 2], card[2]) - np.maximum(boxes[:, 0], card[0]), 0, None)
        h_ = np.clip(np.minimum(boxes[:, 3], card[3]) - np.maximum(boxes[:, 1], card[1]), 0, None)
        return float((w_ * h_).sum())

    cover = [covered(c) for c in corners]
    scale_x, scale_y = (float(v) for v in corners[int(np.argmin(cover))])
    fracs = [c for c in cells[:, 3] if np.isfinite(c)] if cells.size else []
    fracs += [float(mk["blocked_fraction"]) for mk in marked_spots(markers, best)
              if mk.get("blocked_fraction") is not None]
    top_f = max(fracs, default=0.0)
    blocked_max = min(1.0, max(0.05, nice_ceil(top_f) if top_f > 0 else 0.05))
    return PlanLayout(frame, scale_m, scale_x, scale_y, scale_px, blocked_max)


def _boxes(obs, cells, markers, best, frame: PlanFrame) -> np.ndarray:
    """Pixel boxes (x0, y0, x1, y1) of everything the map draws, (k, 4)."""
    out = []
    for o in obs:
        pts = shape_points(o)
        x, y = plan_xy(pts[:, 0], pts[:, 1], frame)
        out.append([x.min(), y.min(), x.max(), y.max()])
    if cells.size:
        h = cells[:, 2] / 2.0
        x0, y0 = plan_xy(cells[:, 0] - h, cells[:, 1] + h, frame)
        x1, y1 = plan_xy(cells[:, 0] + h, cells[:, 1] - h, frame)
        out.extend(np.stack([x0, y0, x1, y1], axis=1).tolist())
    r = 12.0  # a symbol and its label's near edge, px
    for mk in marked_spots(markers, best):
        x, y = plan_xy(float(mk["east_m"]), float(mk["north_m"]), frame)
        out.append([x - r, y - r, x + r, y + r])
    return np.array(out, dtype=np.float64).reshape(-1, 4)


def plan_layout(obstacles=(), cells=(), markers=(), best=None, size=(1600, 1600)) -> PlanLayout:
    """Where :func:`plan_figure` draws the map, scale bar and colour scale for
    these inputs (same arguments)."""
    w, h = check_size(size, 400, 400)
    return layout(obstacle_shapes(obstacles), plan_cells(cells), markers, best, w, h)
