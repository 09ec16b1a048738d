"""Site plans: obstacles and candidate mounting spots, and the horizon they make
at any point (DEVELOPERS.md, "Spot search").  One concept per module:

- ``model``: the plan's dataclasses (Building, Tree, ..., Plan) and its limits;
- ``geodesy``: WGS84 longitude/latitude to metres east/north of the site point;
- ``entries``: the checks one plan entry gets, shared by the two readers;
- ``read_toml``: the plan as TOML tables (a site file's ``[plan]``, plan.toml),
  and back (``plan_tables``);
- ``read_geojson``: the plan as GeoJSON (RFC 7946);
- ``measured``: measured horizon points with a distance, as skylines;
- ``scene``: a plan compiled into panels, tree cylinders and roofs (Scene);
- ``rays``: derived horizons by ray casting over a scene, with their labels.

The names below are the ones the rest of the project imports from here.
"""

from .geodesy import WGS84_A_M, WGS84_E2, lonlat_to_local
from .measured import measured_obstacles
from .model import PLAN_RADIUS_M, Area, Building, FixedPoint, Plan, Pole, Prism, Skyline, Tree, Wall
from .rays import (
    AZIMUTHS_DEG,
    derived_horizon,
    derived_horizon_labels,
    derived_horizon_points,
    derived_horizons,
)
from .read_geojson import load_plan_geojson
from .read_toml import load_plan_toml, plan_from_site_table, plan_tables
from .scene import Scene, compile_plan

__all__ = [
    "AZIMUTHS_DEG", "PLAN_RADIUS_M", "WGS84_A_M", "WGS84_E2",
    "Area", "Building", "FixedPoint", "Plan", "Pole", "Prism", "Scene", "Skyline", "Tree", "Wall",
    "compile_plan", "derived_horizon", "derived_horizon_labels", "derived_horizon_points", "derived_horizons",
    "load_plan_geojson", "load_plan_toml", "lonlat_to_local", "measured_obstacles", "plan_from_site_table",
    "plan_tables",
]
