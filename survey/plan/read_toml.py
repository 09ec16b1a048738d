"""The plan as TOML tables, both ways: the ``[plan]`` table of a site file
(inline ``[[plan.building]]`` ... tables or a plan file it names), a plan.toml
file, and a plan written back as plain tables (``plan_tables``)."""

from __future__ import annotations

from pathlib import Path

from ..errors import InputError, Problems
from ..fileio import parse_toml, read_text
from ..tables import Table
from .entries import GEOMETRY_KEY, KEYS, KINDS, _collect, _line, _make, _position, _positions, _ridge, _ring, check_plan_size
from .model import Plan
from .read_geojson import load_plan_geojson


def plan_from_tables(doc: dict, prefix: str, problems: Problems, source: str) -> Plan:
    """A plan from TOML tables: ``doc[kind]`` is a list of tables (``[[building]]``,
    ...), positions in metres [east, north]; fields are reported as
    ``{prefix}{kind}[i].{key}``.  Problems are added to ``problems``."""
    entries: dict[str, list] = {k: [] for k in KINDS}
    check_plan_size(sum(len(v) for k in KINDS if isinstance(v := doc.get(k), list)), source)
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
