"""The plan as GeoJSON (RFC 7946): WGS84 longitude/latitude features, converted
to metres east/north of the site point (geodesy.py) and checked as the TOML
form is (entries.py)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import InputError, Problems
from ..fileio import parse_json, read_text
from ..tables import Table
from .entries import GEOMETRY_KEY, KEYS, KINDS, _collect, _line, _make, _position, _positions, _ridge, _ring, check_plan_size
from .geodesy import lonlat_to_local
from .model import XY, Plan

GEOJSON_TYPE = {"building": "Polygon", "prism": "Polygon", "area": "Polygon", "wall": "LineString",
                "tree": "Point", "pole": "Point", "point": "Point"}


def load_plan_geojson(path: str | Path, origin_lat_deg: float, origin_lon_deg: float) -> Plan:
    """A plan as GeoJSON (RFC 7946): a FeatureCollection (or one Feature) whose
    features carry ``properties.role`` (building, tree, wall, prism, area, pole,
    point) and the same property names as the TOML form; positions are WGS84
    [longitude, latitude], converted to metres east/north of the site point.
    A building's ``ridge`` property is two [longitude, latitude] positions.
    Other properties are ignored (RFC 7946 allows foreign members)."""
    path = Path(path)
    text = read_text(path, "plan file")
    doc = parse_json(text, str(path))
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

    check_plan_size(len(features), str(path))
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
