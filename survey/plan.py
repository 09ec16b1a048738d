"""Site plans: obstacles and candidate mounting spots, and the horizon they make
at any point.

A plan is drawn in local metres east and north of the site point (the survey
point where the horizon was measured), either as TOML tables (``[[plan.building]]``
and so on, in the site file or in a plan file it names) or as GeoJSON (RFC 7946:
WGS84 longitude/latitude, converted here to the local tangent plane at the site
point with the exact WGS84 geodetic -> ECEF -> ENU transformation).

Obstacles: buildings (footprint, eaves height, optional ridge for a gable roof),
trees (a vertical cylinder of the crown radius up to the top height; the crown
radius stays fixed as a tree grows), walls and fences (polyline, height), other
prisms (polygon, height), and skylines made from measured horizon points that
carry a distance.  Candidates: mounting areas (polygon at an antenna height),
poles (position, height range) and fixed points.

Assumptions, said once: the ground is flat and level (all heights are above the
site point's ground; over the 2 km plan radius the Earth's curvature drops a
point by d^2/2R, 0.3 m at 2 km, which is neglected), and obstacles are opaque.

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

import json
import math
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import shapely

from .errors import InputError, Problems
from .fileio import parse_toml, read_text
from .horizon import HorizonPoint
from .tables import Table

PLAN_RADIUS_M = 2000.0  # coordinates farther than this from the site point are a mistake
MAX_HEIGHT_M = 500.0
AZIMUTHS_DEG = np.arange(360.0)  # the derived horizon's true azimuths
LONE_POINT_HALF_WIDTH_DEG = 0.5  # a lone measured point with a distance: see measured_obstacles
SKYLINE_STEP_DEG = 2.0  # arc between two measured points drawn as chords at most this far apart

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
GEOJSON_TYPE = {"building": "Polygon", "prism": "Polygon", "area": "Polygon", "wall": "LineString",
                "tree": "Point", "pole": "Point", "point": "Point"}

XY = tuple[float, float]


# --------------------------------------------------------------------------- model

@dataclass(frozen=True)
class Building:
    """A building: footprint ring (metres east, north; not closed), eaves height.
    With ``ridge`` (two points) and ``ridge_height_m`` the roof is a gable roof:
    two planes meeting along the line through the ridge points, each falling to
    ``height_m`` at the footprint corner farthest from that line on its side
    (exact for a rectangle with the ridge parallel to two sides)."""

    name: str
    footprint: tuple[XY, ...]
    height_m: float
    ridge: tuple[XY, XY] | None = None
    ridge_height_m: float | None = None


@dataclass(frozen=True)
class Tree:
    """A tree as a vertical cylinder: crown radius about ``at``, up to ``height_m``.
    Growth raises the top by ``growth_m_per_year`` a year; the crown radius is kept."""

    name: str
    at: XY
    crown_radius_m: float
    height_m: float
    growth_m_per_year: float = 0.0

    def height_after(self, years: float) -> float:
        return self.height_m + self.growth_m_per_year * years


@dataclass(frozen=True)
class Wall:
    """A wall or fence: a polyline with a constant top height (no thickness)."""

    name: str
    line: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Prism:
    """Any other solid: a polygon extruded to a flat top at ``height_m``."""

    name: str
    polygon: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Skyline:
    """A vertical panel from ``start`` to ``end`` whose top height varies linearly
    from ``start_height_m`` to ``end_height_m``: how measured horizon points with
    a distance become obstacles (see :func:`measured_obstacles`)."""

    name: str
    start: XY
    end: XY
    start_height_m: float
    end_height_m: float


@dataclass(frozen=True)
class Area:
    """A mounting area (a roof plane, a flat roof, a yard): candidate points inside
    ``polygon`` with the antenna ``height_m`` above ground."""

    name: str
    polygon: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Pole:
    """A pole position with the range of heights it may have (antenna above ground)."""

    name: str
    at: XY
    min_height_m: float
    max_height_m: float


@dataclass(frozen=True)
class FixedPoint:
    """A single candidate spot, e.g. a chimney bracket: position and antenna height."""

    name: str
    at: XY
    height_m: float


@dataclass(frozen=True)
class Plan:
    """Obstacles and candidates of one site, in metres east/north of the site point."""

    buildings: tuple[Building, ...] = ()
    trees: tuple[Tree, ...] = ()
    walls: tuple[Wall, ...] = ()
    prisms: tuple[Prism, ...] = ()
    areas: tuple[Area, ...] = ()
    poles: tuple[Pole, ...] = ()
    points: tuple[FixedPoint, ...] = ()
    skylines: tuple[Skyline, ...] = ()
    source: str = ""  # the file the plan was read from

    @property
    def has_obstacles(self) -> bool:
        return bool(self.buildings or self.trees or self.walls or self.prisms or self.skylines)

    @property
    def has_candidates(self) -> bool:
        return bool(self.areas or self.poles or self.points)

    def with_skylines(self, skylines) -> Plan:
        """The same plan with ``skylines`` (from measured points) added."""
        return replace(self, skylines=self.skylines + tuple(skylines))


# ------------------------------------------------------------------ coordinates

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


# ---------------------------------------------------------------------- parsing

def _is_number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _positions(raw, field: str, problems: Problems, what: str) -> list[XY] | None:
    """A list of [east_m, north_m] (or [lon, lat]) pairs; None after a problem."""
    if not isinstance(raw, (list, tuple)) or not raw:
        problems.add(field, f"expected {what}")
        return None
    out = []
    for i, p in enumerate(raw):
        if (not isinstance(p, (list, tuple)) or len(p) not in (2, 3)
                or not all(_is_number(c) for c in p)):
            problems.add(f"{field}[{i}]", f"expected a pair of numbers, got {p!r}")
            return None
        out.append((float(p[0]), float(p[1])))
    return out


def _position(raw, field: str, problems: Problems) -> XY | None:
    if (not isinstance(raw, (list, tuple)) or len(raw) not in (2, 3)
            or not all(_is_number(c) for c in raw)):
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


def _collect(entries: dict[str, list], source: str) -> Plan:
    return Plan(tuple(entries["building"]), tuple(entries["tree"]), tuple(entries["wall"]),
                tuple(entries["prism"]), tuple(entries["area"]), tuple(entries["pole"]),
                tuple(entries["point"]), (), source)


def plan_from_tables(doc: dict, prefix: str, problems: Problems, source: str) -> Plan:
    """A plan from TOML tables: ``doc[kind]`` is a list of tables (``[[building]]``,
    ...), positions in metres [east, north]; fields are reported as
    ``{prefix}{kind}[i].{key}``.  Problems are added to ``problems``."""
    entries: dict[str, list] = {k: [] for k in KINDS}
    for kind in KINDS:
        raw = doc.get(kind, [])
        if not isinstance(raw, list):
            problems.add(f"{prefix}{kind}", f"expected a list of tables ([[{prefix}{kind}]])")
            continue
        for i, entry in enumerate(raw):
            field = f"{prefix}{kind}[{i}]"
            t = Table(entry, field, problems, KEYS[kind])
            gkey = GEOMETRY_KEY[kind]
            geom = ridge = None
            if gkey not in t.data:
                problems.add(f"{field}.{gkey}", "missing")
            elif kind in ("tree", "pole", "point"):
                geom = _position(t.data[gkey], f"{field}.{gkey}", problems)
            else:
                pts = _positions(t.data[gkey], f"{field}.{gkey}", problems,
                                 "a list of [east_m, north_m] points")
                if pts is not None:
                    geom = (_line(pts, f"{field}.{gkey}", problems) if kind == "wall"
                            else _ring(pts, f"{field}.{gkey}", problems, closed_required=False))
            if kind == "building" and "ridge" in t.data:
                ridge = _ridge(t.data["ridge"], f"{field}.ridge", problems)
            item = _make(kind, t, geom, ridge, field, i, problems)
            if item is not None:
                entries[kind].append(item)
    return _collect(entries, source)


def plan_tables(plan: Plan) -> dict:
    """The inverse of :func:`plan_from_tables`: a plan's drawn obstacles and
    candidates as plain TOML-style tables (metres east/north; a GeoJSON plan comes
    out in local metres).  Skylines are left out: they come from the horizon."""
    def xy(p):
        return [float(p[0]), float(p[1])]

    out: dict[str, list] = {}
    for b in plan.buildings:
        t = {"name": b.name, "footprint": [xy(p) for p in b.footprint], "height_m": b.height_m}
        if b.ridge is not None:
            t.update(ridge=[xy(p) for p in b.ridge], ridge_height_m=b.ridge_height_m)
        out.setdefault("building", []).append(t)
    for tr in plan.trees:
        out.setdefault("tree", []).append({"name": tr.name, "at": xy(tr.at), "crown_radius_m": tr.crown_radius_m,
                                           "height_m": tr.height_m, "growth_m_per_year": tr.growth_m_per_year})
    for w in plan.walls:
        out.setdefault("wall", []).append({"name": w.name, "line": [xy(p) for p in w.line], "height_m": w.height_m})
    for kind, items in (("prism", plan.prisms), ("area", plan.areas)):
        for x in items:
            out.setdefault(kind, []).append({"name": x.name, "polygon": [xy(p) for p in x.polygon],
                                             "height_m": x.height_m})
    for pole in plan.poles:
        out.setdefault("pole", []).append({"name": pole.name, "at": xy(pole.at), "min_height_m": pole.min_height_m,
                                           "max_height_m": pole.max_height_m})
    for pt in plan.points:
        out.setdefault("point", []).append({"name": pt.name, "at": xy(pt.at), "height_m": pt.height_m})
    return out


def _ridge(raw, field: str, problems: Problems):
    pts = _positions(raw, field, problems, "two points [[east_m, north_m], [east_m, north_m]]")
    if pts is None:
        return None
    if len(pts) != 2 or pts[0] == pts[1]:
        problems.add(field, "expected two different points")
        return None
    return tuple(pts)


def load_plan_toml(path: str | Path) -> Plan:
    """A plan file in TOML: ``[[building]]``, ``[[tree]]``, ... tables at the top
    level (or under one ``[plan]`` table), positions in metres east/north."""
    path = Path(path)
    doc = parse_toml(read_text(path, "plan file"), str(path))
    prefix = ""
    if set(doc) == {"plan"} and isinstance(doc["plan"], dict):
        doc, prefix = doc["plan"], "plan."
    problems = Problems(str(path))
    for key in doc:
        if key not in KINDS:
            problems.add(f"{prefix}{key}", f"unknown table (expected {', '.join(KINDS)})")
    plan = plan_from_tables(doc, prefix, problems, str(path))
    problems.raise_if_any()
    return plan


def load_plan_geojson(path: str | Path, origin_lat_deg: float, origin_lon_deg: float) -> Plan:
    """A plan as GeoJSON (RFC 7946): a FeatureCollection (or one Feature) whose
    features carry ``properties.role`` (building, tree, wall, prism, area, pole,
    point) and the same property names as the TOML form; positions are WGS84
    [longitude, latitude], converted to metres east/north of the site point.
    A building's ``ridge`` property is two [longitude, latitude] positions.
    Other properties are ignored (RFC 7946 allows foreign members)."""
    path = Path(path)
    text = read_text(path, "plan file")
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"{path}: line {exc.lineno}: not valid JSON: {exc.msg}") from None
    problems = Problems(str(path))
    if isinstance(doc, dict) and doc.get("type") == "Feature":
        features = [doc]
    elif isinstance(doc, dict) and doc.get("type") == "FeatureCollection":
        features = doc.get("features")
        if not isinstance(features, list):
            raise InputError(f"{path}: features: expected a list of Feature objects")
    else:
        raise InputError(f"{path}: expected a GeoJSON FeatureCollection (RFC 7946)")

    def to_local(lonlat: list[XY], field: str):
        for i, (lon, lat) in enumerate(lonlat):
            if not (-180.0 <= lon <= 180.0 and -90.0 <= lat <= 90.0):
                problems.add(f"{field}[{i}]", f"[{lon}, {lat}] is not a [longitude, latitude] in degrees")
                return None
        e, n = lonlat_to_local(np.array([p[0] for p in lonlat]), np.array([p[1] for p in lonlat]),
                               origin_lat_deg, origin_lon_deg)
        return [(float(a), float(b)) for a, b in zip(np.atleast_1d(e), np.atleast_1d(n))]

    entries: dict[str, list] = {k: [] for k in KINDS}
    counts = {k: 0 for k in KINDS}
    for i, feat in enumerate(features):
        where = f"features[{i}]"
        if not isinstance(feat, dict) or feat.get("type") != "Feature":
            problems.add(where, "expected a Feature object")
            continue
        props = feat.get("properties") or {}
        if not isinstance(props, dict):
            problems.add(f"{where}.properties", "expected an object")
            continue
        if isinstance(props.get("name"), str) and props["name"]:
            where = f'{where} ("{props["name"]}")'
        role = props.get("role")
        if role is None:
            problems.add(f"{where}.properties.role", f"missing (one of: {', '.join(KINDS)})")
            continue
        if role not in KINDS:
            problems.add(f"{where}.properties.role", f"{role!r} is not one of: {', '.join(KINDS)}")
            continue
        geom = feat.get("geometry")
        want = GEOJSON_TYPE[role]
        gtype = geom.get("type") if isinstance(geom, dict) else None
        if gtype != want:
            problems.add(f"{where}.geometry", f"a {role} needs a {want} geometry, got {gtype or 'none'}")
            continue
        coords = geom.get("coordinates")
        gfield = f"{where}.geometry.coordinates"
        local = None
        if want == "Point":
            p = _position(coords, gfield, problems)
            if p is not None:
                pts = to_local([p], gfield)
                local = pts[0] if pts else None
        elif want == "LineString":
            pts = _positions(coords, gfield, problems, "a list of [longitude, latitude] positions")
            pts = to_local(pts, gfield) if pts is not None else None
            local = _line(pts, gfield, problems) if pts is not None else None
        else:
            if not isinstance(coords, list) or not coords:
                problems.add(gfield, "expected a list of linear rings")
            elif len(coords) > 1:
                problems.add(gfield, "polygons with holes are not supported: draw the solid parts")
            else:
                ring = _positions(coords[0], f"{gfield}[0]", problems,
                                  "a ring of [longitude, latitude] positions")
                pts = to_local(ring, f"{gfield}[0]") if ring is not None else None
                local = _ring(pts, f"{gfield}[0]", problems, closed_required=True) if pts is not None else None
        ridge = None
        if role == "building" and "ridge" in props:
            r = _positions(props["ridge"], f"{where}.properties.ridge", problems,
                           "two [longitude, latitude] positions")
            r = to_local(r, f"{where}.properties.ridge") if r is not None else None
            if r is not None:
                ridge = _ridge([list(p) for p in r], f"{where}.properties.ridge", problems)
        ours = {k: v for k, v in props.items() if k in KEYS[role] and k != GEOMETRY_KEY[role]}
        t = Table(ours, f"{where}.properties", problems, KEYS[role])
        item = _make(role, t, local, ridge, f"{where}.properties", counts[role], problems, gfield)
        counts[role] += 1
        if item is not None:
            entries[role].append(item)
    problems.raise_if_any()
    return _collect(entries, str(path))


def plan_from_site_table(table, site_path: Path, problems: Problems,
                         origin: tuple[float, float] | None) -> Plan | None:
    """The ``[plan]`` table of a site file: inline ``[[plan.building]]`` ... tables,
    or ``file = "plan.toml"`` / ``file = "plan.geojson"`` relative to the site
    file's folder.  ``origin`` is the site's (latitude, longitude), None when it
    is itself invalid (a GeoJSON plan then waits for a valid site point)."""
    if not isinstance(table, dict):
        problems.add("plan", "expected a table")
        return None
    for key in table:
        if key not in KINDS and key != "file":
            problems.add(f"plan.{key}", f"unknown key (expected file or one of: {', '.join(KINDS)})")
    if "file" in table:
        if any(k in table for k in KINDS):
            problems.add("plan", "give either file or inline tables, not both")
            return None
        name = table["file"]
        if not isinstance(name, str) or not name:
            problems.add("plan.file", f"expected a file name, got {name!r}")
            return None
        path = site_path.parent / name
        try:
            if path.suffix.lower() in (".geojson", ".json"):
                if origin is None:
                    return None
                return load_plan_geojson(path, *origin)
            if path.suffix.lower() == ".toml":
                return load_plan_toml(path)
        except InputError as exc:
            problems.items.extend(exc.problems)
            return None
        problems.add("plan.file", f"{name!r}: expected a .toml or .geojson plan file")
        return None
    return plan_from_tables(table, "plan.", problems, str(site_path))


# --------------------------------------------------------- measured horizon points

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


# ------------------------------------------------------------- derived horizons

class Scene:
    """A plan compiled into arrays for the derived-horizon kernel: panels (P, Q,
    top heights at P and Q), tree cylinders, and solid footprints (for an antenna
    standing inside one)."""

    def __init__(self, plan: Plan):
        self.plan = plan
        P, Q, hP, hQ = [], [], [], []
        self.panel_names: list[str] = []  # the obstacle each panel belongs to (labels sectors)
        owner = [""]

        def panel(a, b, ha, hb):
            if a != b:
                P.append(a), Q.append(b), hP.append(ha), hQ.append(hb)
                self.panel_names.append(owner[0])

        self.solids = []  # (shapely polygon, roof height function)
        for b in plan.buildings:
            owner[0] = b.name
            roof = _roof_function(b)
            ring = list(b.footprint)
            for a, c in zip(ring, ring[1:] + ring[:1]):
                if b.ridge is not None:
                    da, dc = roof.signed(a), roof.signed(c)
                    if da * dc < 0:  # the edge crosses the ridge line: the gable's apex
                        f = da / (da - dc)
                        m = (a[0] + f * (c[0] - a[0]), a[1] + f * (c[1] - a[1]))
                        panel(a, m, roof.height(a), b.ridge_height_m)
                        panel(m, c, b.ridge_height_m, roof.height(c))
                        continue
                panel(a, c, roof.height(a), roof.height(c))
            poly = shapely.Polygon(b.footprint)
            if b.ridge is not None:
                for seg in roof.ridge_segments(poly):
                    panel(seg[0], seg[1], b.ridge_height_m, b.ridge_height_m)
            self.solids.append((poly, roof))
        for p in plan.prisms:
            owner[0] = p.name
            ring = list(p.polygon)
            for a, c in zip(ring, ring[1:] + ring[:1]):
                panel(a, c, p.height_m, p.height_m)
            self.solids.append((shapely.Polygon(p.polygon), _FlatRoof(p.height_m)))
        for w in plan.walls:
            owner[0] = w.name
            for a, c in zip(w.line, w.line[1:]):
                panel(a, c, w.height_m, w.height_m)
        for s in plan.skylines:
            owner[0] = s.name
            panel(s.start, s.end, s.start_height_m, s.end_height_m)
        self.P = np.array(P, dtype=np.float64).reshape(-1, 2)
        self.Q = np.array(Q, dtype=np.float64).reshape(-1, 2)
        self.hP = np.array(hP, dtype=np.float64)
        self.hQ = np.array(hQ, dtype=np.float64)
        t = plan.trees
        self.tree_xy = np.array([tr.at for tr in t], dtype=np.float64).reshape(-1, 2)
        self.tree_r = np.array([tr.crown_radius_m for tr in t], dtype=np.float64)
        self.tree_h = np.array([tr.height_m for tr in t], dtype=np.float64)
        self.tree_g = np.array([tr.growth_m_per_year for tr in t], dtype=np.float64)

    def inside(self, east_m, north_m, height_m, years: float = 0.0) -> list[list[str]]:
        """For each point, the names of the solids or tree crowns it stands inside
        (below their top): such a point sees no sky."""
        e, n, z = (np.atleast_1d(np.asarray(v, dtype=np.float64)) for v in (east_m, north_m, height_m))
        e, n, z = np.broadcast_arrays(e, n, z)
        out: list[list[str]] = [[] for _ in range(e.size)]
        names = [b.name for b in self.plan.buildings] + [p.name for p in self.plan.prisms]
        for (poly, roof), name in zip(self.solids, names):
            for i in np.flatnonzero(_under_roof(poly, roof, e, n, z)):
                out[i].append(name)
        if self.tree_r.size:
            h = self.tree_h + self.tree_g * years
            d = np.hypot(self.tree_xy[None, :, 0] - e[:, None], self.tree_xy[None, :, 1] - n[:, None])
            for i, j in zip(*np.nonzero((d <= self.tree_r[None, :]) & (h[None, :] > z[:, None] + 1e-9))):
                out[i].append(self.plan.trees[j].name)
        return out


class _FlatRoof:
    def __init__(self, h: float):
        self.h = h

    def height(self, p):
        return self.h

    def heights(self, x, y):
        return np.full(np.shape(x), self.h)


class _GableRoof:
    """Two roof planes meeting along the ridge line (see Building)."""

    def __init__(self, b: Building):
        (x0, y0), (x1, y1) = b.ridge
        length = math.hypot(x1 - x0, y1 - y0)
        self.o = (x0, y0)
        self.u = ((x1 - x0) / length, (y1 - y0) / length)
        self.nrm = (-self.u[1], self.u[0])
        d = [self.signed(p) for p in b.footprint]
        self.w_pos = max([v for v in d if v > 0], default=0.0) or 1.0
        self.w_neg = max([-v for v in d if v < 0], default=0.0) or 1.0
        self.eave, self.ridge_h = b.height_m, b.ridge_height_m

    def signed(self, p) -> float:
        return (p[0] - self.o[0]) * self.nrm[0] + (p[1] - self.o[1]) * self.nrm[1]

    def height(self, p) -> float:
        return float(self.heights(np.array([p[0]]), np.array([p[1]]))[0])

    def heights(self, x, y):
        d = (np.asarray(x) - self.o[0]) * self.nrm[0] + (np.asarray(y) - self.o[1]) * self.nrm[1]
        w = np.where(d >= 0, self.w_pos, self.w_neg)
        return self.ridge_h - (self.ridge_h - self.eave) * np.minimum(np.abs(d) / w, 1.0)

    def ridge_segments(self, poly) -> list[tuple[XY, XY]]:
        """The ridge line's pieces over the footprint (the line extended across it)."""
        far = 2.0 * PLAN_RADIUS_M + 1000.0
        line = shapely.LineString([(self.o[0] - far * self.u[0], self.o[1] - far * self.u[1]),
                                   (self.o[0] + far * self.u[0], self.o[1] + far * self.u[1])])
        cut = poly.intersection(line)
        parts = getattr(cut, "geoms", [cut])
        out = []
        for g in parts:
            if isinstance(g, shapely.LineString) and g.length > 0:
                c = list(g.coords)
                out.append((tuple(c[0]), tuple(c[-1])))
        return out


def _roof_function(b: Building):
    return _GableRoof(b) if b.ridge is not None else _FlatRoof(b.height_m)


def _under_roof(poly, roof, e, n, z) -> np.ndarray:
    """Points on or inside the footprint that are below its roof there."""
    on = shapely.intersects_xy(poly, e, n)
    out = np.zeros(e.shape, dtype=bool)
    if on.any():
        out[on] = roof.heights(e[on], n[on]) > z[on] + 1e-9
    return out


def compile_plan(plan: Plan) -> Scene:
    return plan if isinstance(plan, Scene) else Scene(plan)


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
    I, J = np.nonzero(top[None, :] > oz[:, None])
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
    I, J = np.nonzero(h_all[None, :] > oz[:, None])
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
