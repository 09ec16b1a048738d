"""The site plan's inputs as shapes: the plain obstacle dicts and candidate
cells a plan figure takes, checked and turned into arrays of metres east and
north of the site point, with the extent they cover.  The plan figure and the
text UI's plan chart read the same shapes."""

from __future__ import annotations

from typing import NamedTuple

import numpy as np


class ObstacleShape(NamedTuple):
    """One obstacle on the plan, metres east/north of the site point.

    kind: building, prism, tree or wall; xy: polygon or polyline vertices
    (k, 2), or the tree's centre (1, 2); radius_m: a tree's crown radius;
    ridge, ridge_height_m: a pitched roof's ridge line and height."""

    kind: str
    name: str
    height_m: float | None
    xy: np.ndarray
    radius_m: float
    ridge: np.ndarray | None
    ridge_height_m: float | None


def _xy_array(v, what: str, min_len: int) -> np.ndarray:
    try:
        a = np.asarray(v, dtype=np.float64)
    except (TypeError, ValueError):
        raise ValueError(f"{what}: expected [[east_m, north_m], ...]") from None
    if a.ndim != 2 or a.shape[1] != 2 or a.shape[0] < min_len or not np.isfinite(a).all():
        raise ValueError(f"{what}: expected at least {min_len} [east_m, north_m] pairs")
    return a


def obstacle_shapes(obstacles) -> list[ObstacleShape]:
    """The obstacle dicts of ``plan_figure`` as shapes; ValueError naming the
    entry and field for anything else."""
    out = []
    for i, ob in enumerate(obstacles or ()):
        kind = ob.get("kind")
        where = f"obstacles[{i}]"
        name = str(ob.get("name") or "")
        h = ob.get("height_m")
        h = None if h is None else float(h)
        if kind in ("building", "prism"):
            poly = _xy_array(ob.get("polygon", ob.get("footprint")), f"{where}.polygon", 3)
            ridge = ob.get("ridge")
            ridge = None if ridge is None else _xy_array(ridge, f"{where}.ridge", 2)
            rh = ob.get("ridge_height_m")
            out.append(ObstacleShape(kind, name, h, poly, 0.0, ridge, None if rh is None else float(rh)))
        elif kind == "tree":
            at = _xy_array([ob.get("at")], f"{where}.at", 1)
            r = ob.get("radius_m", ob.get("crown_radius_m"))
            if r is None or not float(r) > 0:
                raise ValueError(f"{where}.radius_m: expected a positive crown radius in metres")
            out.append(ObstacleShape(kind, name, h, at, float(r), None, None))
        elif kind == "wall":
            line = _xy_array(ob.get("line"), f"{where}.line", 2)
            out.append(ObstacleShape(kind, name, h, line, 0.0, None, None))
        else:
            raise ValueError(f"{where}.kind: expected building, tree, wall or prism, got {kind!r}")
    return out


def plan_cells(cells) -> np.ndarray:
    """Candidate cells as an (n, 4) array of (east_m, north_m, size_m,
    blocked_fraction) rows."""
    a = np.asarray(list(cells or ()), dtype=np.float64)
    if a.size == 0:
        return np.zeros((0, 4))
    if a.ndim != 2 or a.shape[1] != 4:
        raise ValueError("cells: expected (east_m, north_m, size_m, blocked_fraction) rows")
    return a


def check_markers(markers) -> list[dict]:
    """The marker dicts as a list; ValueError for a kind other than pole or point."""
    markers = list(markers or ())
    for i, mk in enumerate(markers):
        if mk.get("kind", "point") not in ("pole", "point"):
            raise ValueError(f"markers[{i}].kind: expected pole or point, got {mk.get('kind')!r}")
    return markers


def shape_points(o: ObstacleShape) -> np.ndarray:
    """The points that bound an obstacle, (k, 2) metres (a tree: its crown's
    corners)."""
    if o.kind == "tree":
        c = o.xy[0]
        return np.array([c - o.radius_m, c + o.radius_m])
    return o.xy


def marked_spots(markers, best) -> list[dict]:
    """The markers and the best spot (when given), for what treats them alike."""
    return list(markers or ()) + ([best] if best else [])


def plan_extent_points(obs, cells, markers, best) -> np.ndarray:
    """Every extreme point of the data, (k, 2) metres, the site point included."""
    pts = [np.zeros((1, 2))] + [shape_points(o) for o in obs]
    if cells.size:
        hs = cells[:, 2:3] / 2.0
        pts += [cells[:, :2] - hs, cells[:, :2] + hs]
    for mk in marked_spots(markers, best):
        pts.append(np.array([[float(mk["east_m"]), float(mk["north_m"])]]))
    return np.concatenate(pts)


def centroid(poly: np.ndarray) -> tuple[float, float]:
    """Area centroid of a simple polygon (shoelace formula); vertex mean if degenerate."""
    x, y = poly[:, 0], poly[:, 1]
    x1, y1 = np.roll(x, -1), np.roll(y, -1)
    cross = x * y1 - x1 * y
    a = cross.sum() / 2.0
    if abs(a) < 1e-9:
        return float(x.mean()), float(y.mean())
    return (float(((x + x1) * cross).sum() / (6 * a)), float(((y + y1) * cross).sum() / (6 * a)))
