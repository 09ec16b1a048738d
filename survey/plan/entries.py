"""One plan entry from its raw fields: the kinds, their keys, and the geometry
and number checks that the TOML and GeoJSON readers share (each problem names
its field; all are reported at once).  The underscored helpers are for the
readers in this package only."""

from __future__ import annotations

import math

import shapely

from ..errors import InputError, Problems
from ..tables import Table, is_number
from .model import (
    MAX_HEIGHT_M,
    PLAN_RADIUS_M,
    XY,
    Area,
    Building,
    FixedPoint,
    Plan,
    Pole,
    Prism,
    Tree,
    Wall,
)

KINDS = ("building", "tree", "wall", "prism", "area", "pole", "point")
KEYS = {
    "building": ("name", "footprint", "height_m", "ridge", "ridge_height_m"),
    "tree": ("name", "at", "crown_radius_m", "height_m", "growth_m_per_year"),
    "wall": ("name", "line", "height_m"),
    "prism": ("name", "polygon", "height_m"),
    "area": ("name", "polygon", "height_m"),
    "pole": ("name", "at", "min_height_m", "max_height_m"),
    "point": ("name", "at", "height_m"),
}
GEOMETRY_KEY = {"building": "footprint", "tree": "at", "wall": "line", "prism": "polygon",
                "area": "polygon", "pole": "at", "point": "at"}


def _positions(raw, field: str, problems: Problems, what: str) -> list[XY] | None:
    """A list of [east_m, north_m] (or [lon, lat]) pairs; None after a problem."""
    if not isinstance(raw, (list, tuple)) or not raw:
        problems.add(field, f"expected {what}")
        return None
    out = []
    for i, p in enumerate(raw):
        if (not isinstance(p, (list, tuple)) or len(p) not in (2, 3)
                or not all(is_number(c) for c in p)):
            problems.add(f"{field}[{i}]", f"expected a pair of numbers, got {p!r}")
            return None
        out.append((float(p[0]), float(p[1])))
    return out


def _position(raw, field: str, problems: Problems) -> XY | None:
    if (not isinstance(raw, (list, tuple)) or len(raw) not in (2, 3)
            or not all(is_number(c) for c in raw)):
        problems.add(field, f"expected a pair of numbers, got {raw!r}")
        return None
    return float(raw[0]), float(raw[1])


def _check_radius(points: list[XY], field: str, problems: Problems) -> bool:
    far = max((math.hypot(e, n) for e, n in points), default=0.0)
    if far > PLAN_RADIUS_M:
        problems.add(field, f"a point lies {far:,.0f} m from the site point (plans reach "
                            f"{PLAN_RADIUS_M:,.0f} m at most: wrong coordinates or wrong site?)")
        return False
    return True


def _ring(points: list[XY], field: str, problems: Problems, closed_required: bool) -> tuple[XY, ...] | None:
    """A polygon ring: at least three distinct corners, not self-intersecting.
    Returned without the closing repeat of the first corner."""
    if closed_required:  # RFC 7946 3.1.6: first and last positions are equivalent
        if len(points) < 4:
            problems.add(field, f"a polygon ring needs at least 4 positions (closed), got {len(points)}")
            return None
        if points[0] != points[-1]:
            problems.add(field, "polygon ring is not closed (the last position must repeat the first)")
            return None
    if len(points) > 1 and points[0] == points[-1]:
        points = points[:-1]
    if len(set(points)) < 3:
        problems.add(field, f"a polygon needs at least 3 distinct corners, got {len(set(points))}")
        return None
    poly = shapely.Polygon(points)
    if not poly.is_valid:
        problems.add(field, f"invalid polygon: {shapely.is_valid_reason(poly)}")
        return None
    if poly.area <= 0.0:
        problems.add(field, "polygon has no area")
        return None
    return tuple(points)


def _line(points: list[XY], field: str, problems: Problems) -> tuple[XY, ...] | None:
    if len(points) < 2:
        problems.add(field, f"a line needs at least 2 points, got {len(points)}")
        return None
    if shapely.LineString(points).length <= 0.0:
        problems.add(field, "line has no length")
        return None
    return tuple(points)


def _ridge(raw, field: str, problems: Problems):
    pts = _positions(raw, field, problems, "two points [[east_m, north_m], [east_m, north_m]]")
    if pts is None:
        return None
    if len(pts) != 2 or pts[0] == pts[1]:
        problems.add(field, "expected two different points")
        return None
    return tuple(pts)


def _make(kind: str, t: Table, geom, ridge, field: str, index: int, problems: Problems,
          geom_field: str | None = None):
    """One plan entry from its typed fields (geometry already in local metres, or
    None after a geometry problem: the other fields are still checked, so every
    problem is reported at once)."""
    n_before = len(problems.items)
    name = t.text("name", "") or f"{kind} {index + 1}"
    if geom is not None:
        corners = [geom] if kind in ("tree", "pole", "point") else list(geom)
        _check_radius(corners, geom_field or f"{field}.{GEOMETRY_KEY[kind]}", problems)
    item = None
    if kind == "building":
        h = t.number("height_m", None, 0.0, MAX_HEIGHT_M, required=True, positive=True)
        rh = t.number("ridge_height_m", None, 0.0, MAX_HEIGHT_M, positive=True)
        if "ridge" in t.data and "ridge_height_m" not in t.data:
            problems.add(f"{field}.ridge_height_m", "missing (a ridge needs its height)")
        elif "ridge_height_m" in t.data and "ridge" not in t.data:
            problems.add(f"{field}.ridge", "missing (ridge_height_m needs a ridge line)")
        if ridge is not None and rh is not None and h is not None and geom is not None:
            if rh < h:
                problems.add(f"{field}.ridge_height_m", f"{rh:g} is below the eaves height_m {h:g}")
            elif (_check_radius(list(ridge), f"{field}.ridge", problems)
                  and not shapely.Polygon(geom).intersects(shapely.LineString(ridge))):
                problems.add(f"{field}.ridge", "the ridge does not cross the footprint")
        item = Building(name, geom, h, ridge if rh is not None else None, rh if ridge is not None else None)
    elif kind == "tree":
        r = t.number("crown_radius_m", None, 0.0, 100.0, required=True, positive=True)
        h = t.number("height_m", None, 0.0, MAX_HEIGHT_M, required=True, positive=True)
        g = t.number("growth_m_per_year", 0.0, 0.0, 10.0)
        item = Tree(name, geom, r, h, g)
    elif kind in ("wall", "prism"):
        h = t.number("height_m", None, 0.0, MAX_HEIGHT_M, required=True, positive=True)
        item = (Wall if kind == "wall" else Prism)(name, geom, h)
    elif kind in ("area", "point"):
        h = t.number("height_m", None, 0.0, MAX_HEIGHT_M, required=True)
        item = (Area if kind == "area" else FixedPoint)(name, geom, h)
    else:
        lo = t.number("min_height_m", None, 0.0, MAX_HEIGHT_M, required=True)
        hi = t.number("max_height_m", None, 0.0, MAX_HEIGHT_M, required=True)
        if lo is not None and hi is not None and hi < lo:
            problems.add(f"{field}.max_height_m", f"{hi:g} is below min_height_m {lo:g}")
        item = Pole(name, geom, lo, hi)
    return None if geom is None or len(problems.items) > n_before else item


MAX_PLAN_OBJECTS = 5_000  # README, "Limits": each obstacle is traced on every ray of every spot


def check_plan_size(count: int, source: str) -> None:
    """Refuse a plan of more than MAX_PLAN_OBJECTS objects, before reading them."""
    if count > MAX_PLAN_OBJECTS:
        raise InputError(f"{source}: plan: {count:,} objects, more than the limit of {MAX_PLAN_OBJECTS:,}: "
                         "draw only what stands near the mount")


def _collect(entries: dict[str, list], source: str) -> Plan:
    check_plan_size(sum(len(v) for v in entries.values()), source)
    return Plan(tuple(entries["building"]), tuple(entries["tree"]), tuple(entries["wall"]),
                tuple(entries["prism"]), tuple(entries["area"]), tuple(entries["pole"]),
                tuple(entries["point"]), (), source)
