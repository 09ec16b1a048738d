"""Site plans and derived horizons, checked against hand-worked trigonometry,
pymap3d (an independent geodesy library from PyPI) and round trips."""

from __future__ import annotations

import json
import math

import numpy as np
import pymap3d
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

from survey.errors import InputError
from survey.horizon import HorizonPoint
from survey.plan import (
    WGS84_A_M,
    WGS84_E2,
    Building,
    Plan,
    Prism,
    Tree,
    Wall,
    compile_plan,
    derived_horizon,
    derived_horizon_labels,
    derived_horizon_points,
    derived_horizons,
    load_plan_geojson,
    load_plan_toml,
    lonlat_to_local,
    measured_obstacles,
)
from survey.site import load_site

from .helpers import DEMO, MINIMAL_SITE

deg = math.degrees
atan = math.atan

# The issue's worked cases.
BLOCK = Building("block", ((-5, 15), (5, 15), (5, 25), (-5, 25)), 10.0)
SPRUCE = Tree("spruce", (0, -20), 3.0, 12.0, 0.3)


# ----------------------------------------------------------- hand-worked geometry

def test_flat_building_due_north_and_its_corners():
    h = derived_horizon(Plan(buildings=(BLOCK,)), 0, 0, 2.0)
    # Near face 15 m north, top 10 m, antenna 2 m: atan((10 - 2) / 15) = 28.07 deg.
    assert h[0] == pytest.approx(deg(atan(8 / 15)), abs=1e-9)
    assert h[0] == pytest.approx(28.07, abs=0.005)
    # The near corners (+-5, 15) lie at atan(5/15) = 18.43 deg either side of north;
    # the far corners (+-5, 25) at atan(5/25) = 11.31 deg are inside that extent.
    half = deg(atan(5 / 15))
    assert half == pytest.approx(18.43, abs=0.005)
    # At 18 deg the ray meets the near face at s = 15 / cos(18 deg) = 15.77 m:
    # atan(8 / 15.77) = 26.90 deg.
    assert h[18] == pytest.approx(deg(atan(8 / (15 / math.cos(math.radians(18))))), abs=1e-9)
    assert h[342] == pytest.approx(h[18], abs=1e-9)
    assert h[19] == 0.0 and h[341] == 0.0  # beyond the corners' extent: clear
    assert h[90] == 0.0 and h[270] == 0.0 and h[180] == 0.0  # nothing due east, west or south


def test_each_degree_is_named_after_the_obstacle_that_sets_it():
    """The block due north (+-18.43 deg, as worked above) and the spruce due south
    (+-8.63 deg) name their degrees; a taller tower behind the block, seen over
    it, takes the name where it rises higher."""
    tower = Building("tower", ((-1, 30), (1, 30), (1, 32), (-1, 32)), 40.0)  # atan(38/30) = 51.7 deg
    plan = Plan(buildings=(BLOCK, tower), trees=(SPRUCE,))
    names = derived_horizon_labels(plan, 0, 0, 2.0)
    h = derived_horizon(plan, 0, 0, 2.0)
    assert h[0] == pytest.approx(deg(atan(38 / 30)), abs=1e-9) and names[0] == "tower"
    assert names[18] == names[342] == "block"  # beside the tower (atan(1/30) = 1.9 deg wide)
    assert names[180] == names[188] == names[172] == "spruce"
    assert names[90] == names[270] == names[19] == names[189] == ""  # clear sky has no name
    assert all((names[k] == "") == (h[k] == 0.0) for k in range(360))


def test_tree_due_south_and_its_width():
    h = derived_horizon(Plan(trees=(SPRUCE,)), 0, 0, 2.0)
    # Cylinder of radius 3 m centred 20 m south: its near side is 17 m away, its top
    # 12 m: atan((12 - 2) / 17) = 30.47 deg.
    assert h[180] == pytest.approx(deg(atan(10 / 17)), abs=1e-9)
    assert h[180] == pytest.approx(30.47, abs=0.005)
    # Angular half-width from the radius: asin(3 / 20) = 8.63 deg.
    half = deg(math.asin(3 / 20))
    assert half == pytest.approx(8.63, abs=0.005)
    assert h[188] > 0 and h[172] > 0 and h[189] == 0.0 and h[171] == 0.0
    # At 8 deg off the centre line: t = 20 cos 8, p = 20 sin 8, the sight line meets
    # the crown at s = t - sqrt(3^2 - p^2).
    t, p = 20 * math.cos(math.radians(8)), 20 * math.sin(math.radians(8))
    assert h[188] == pytest.approx(deg(atan(10 / (t - math.sqrt(9 - p * p)))), abs=1e-9)


def test_tree_growth_raises_the_top_only():
    # Ten years at 0.3 m/year: top 15 m, radius unchanged: atan(13 / 17) = 37.41 deg.
    h = derived_horizon(Plan(trees=(SPRUCE,)), 0, 0, 2.0, years=10)
    assert h[180] == pytest.approx(deg(atan(13 / 17)), abs=1e-9)
    assert h[189] == 0.0 and h[188] > 0  # same width: the crown radius is kept
    assert SPRUCE.height_after(10) == pytest.approx(15.0)


def test_wall_hand_worked():
    wall = Wall("fence", ((-10, 8), (10, 8)), 3.0)
    h = derived_horizon(Plan(walls=(wall,)), 0, 0, 1.5)
    assert h[0] == pytest.approx(deg(atan(1.5 / 8)), abs=1e-9)  # 10.62 deg
    # At 45 deg the ray crosses y = 8 at x = 8, s = 8 sqrt(2) = 11.31 m.
    assert h[45] == pytest.approx(deg(atan(1.5 / (8 * math.sqrt(2)))), abs=1e-9)
    # Its ends (+-10, 8) are at atan(10 / 8) = 51.34 deg either side of north.
    assert h[51] > 0 and h[52] == 0.0 and h[309] > 0 and h[308] == 0.0
    # An antenna above the wall's top sees no wall at all.
    assert not derived_horizon(Plan(walls=(wall,)), 0, 0, 3.5).any()


def test_pitched_roof_ridge_across_the_line_of_sight():
    # Eaves 10 m along the block's edges, ridge 16 m along y = 20 (east-west).
    barn = Building("barn", BLOCK.footprint, 10.0, ((-5, 20), (5, 20)), 16.0)
    h = derived_horizon(Plan(buildings=(barn,)), 0, 0, 2.0)
    # Due north: the eaves at 15 m give atan(8/15) = 28.07, the ridge at 20 m gives
    # atan(14/20) = 34.99 deg: the ridge wins.
    assert h[0] == pytest.approx(max(deg(atan(8 / 15)), deg(atan(14 / 20))), abs=1e-9)
    assert h[0] == pytest.approx(34.99, abs=0.005)


def test_pitched_roof_gable_end_facing():
    # Ridge north-south along x = 0: due north the ray meets the gable's apex
    # (0, 15) at the ridge height: atan((16 - 2) / 15) = 43.03 deg.
    barn = Building("barn", BLOCK.footprint, 10.0, ((0, 15), (0, 25)), 16.0)
    h = derived_horizon(Plan(buildings=(barn,)), 0, 0, 2.0)
    assert h[0] == pytest.approx(deg(atan(14 / 15)), abs=1e-9)
    # At 10 deg the ray crosses the gable at x = 15 tan 10 = 2.645 m from the apex,
    # where the roof is 16 - 6 * 2.645 / 5 high, at s = 15 / cos 10.
    x = 15 * math.tan(math.radians(10))
    assert h[10] == pytest.approx(deg(atan((16 - 6 * x / 5 - 2) / (15 / math.cos(math.radians(10))))),
                                  abs=1e-9)


def test_antenna_on_the_roof():
    barn = Building("barn", BLOCK.footprint, 10.0, ((-5, 20), (5, 20)), 16.0)
    plan = Plan(buildings=(barn,))
    # 2 m up the south slope the roof is 10 + 6 * 2 / 5 = 12.4 m; a mast 1 m above it.
    h = derived_horizon(plan, 0, 17, 13.4)
    # The ridge, higher than the antenna, 3 m north still blocks: atan(2.6 / 3) = 40.91 deg.
    assert h[0] == pytest.approx(deg(atan(2.6 / 3)), abs=1e-9)
    # The roof under it does not count: south, east and west are clear.
    assert h[180] == 0.0 and h[90] == 0.0 and h[270] == 0.0
    # Below the roof surface the antenna is inside the building: no sky at all.
    assert (derived_horizon(plan, 0, 17, 5.0) == 90.0).all()
    assert compile_plan(plan).inside([0, 0], [17, 17], [5.0, 13.4]) == [["barn"], []]
    # On a flat roof, above it: clear all round.
    assert not derived_horizon(Plan(prisms=(Prism("shed", BLOCK.footprint, 10.0),)), 0, 20, 10.5).any()


def test_inside_a_crown_sees_no_sky():
    assert (derived_horizon(Plan(trees=(SPRUCE,)), 0, -19, 2.0) == 90.0).all()
    assert not derived_horizon(Plan(trees=(SPRUCE,)), 0, -19, 12.5).any()  # above its top


def test_batched_equals_one_at_a_time():
    plan = Plan(buildings=(BLOCK, Building("barn", ((20, -5), (30, -5), (30, 5), (20, 5)), 6, ((20, 0), (30, 0)), 9)),
                trees=(SPRUCE,), walls=(Wall("w", ((-20, -5), (-20, 5), (-15, 10)), 2.0),))
    rng = np.random.default_rng(1)
    e, n, z = rng.uniform(-12, 12, 700), rng.uniform(-12, 12, 700), rng.uniform(0, 14, 700)
    many = derived_horizons(plan, e, n, z, years=3)  # more than one kernel chunk
    for i in (0, 1, 350, 699):
        np.testing.assert_array_equal(many[i], derived_horizon(plan, e[i], n[i], z[i], years=3))
    assert many.min() >= 0 and many.max() <= 90


# ------------------------------------------------------- measured points as obstacles

def test_measured_point_with_distance_becomes_an_obstacle():
    # Two points 20 m out, 30 deg up from a 2 m mount: tops 2 + 20 tan 30 = 13.55 m,
    # at azimuths 350 and 10: a skyline between them; a far point stays far.
    pts = [HorizonPoint(350, 30, 20.0, "hedge"), HorizonPoint(10, 30, 20.0, "hedge"), HorizonPoint(180, 5)]
    skylines, far = measured_obstacles(pts, 2.0)
    assert [p.azimuth_deg for p in far] == [180]
    assert all(s.start_height_m == pytest.approx(2 + 20 * math.tan(math.radians(30))) for s in skylines)
    plan = Plan(skylines=skylines)
    h = derived_horizon(plan, 0, 0, 2.0)
    assert h[350] == pytest.approx(30, abs=1e-9) and h[0] == pytest.approx(30, abs=1e-9)
    assert h[10] == pytest.approx(30, abs=1e-9) and h[11] == 0.0 and h[349] == 0.0
    # 10 m nearer (moved north), the skyline's top 11.55 m above the antenna is
    # 20 cos(0) - 10 = 10 m away due north: atan(11.547 / 10) = 49.1 deg.
    h2 = derived_horizon(plan, 0, 10, 2.0)
    assert h2[0] == pytest.approx(deg(atan(20 * math.tan(math.radians(30)) / 10)), abs=1e-9)
    # Raised 5 m, it drops to atan(6.547 / 20) = 18.1 deg.
    assert derived_horizon(plan, 0, 0, 7.0)[0] == pytest.approx(deg(atan((20 * math.tan(math.radians(30)) - 5) / 20)))


def test_lone_measured_point_is_kept():
    skylines, far = measured_obstacles([HorizonPoint(100.3, 20, 30.0), HorizonPoint(200, 4)], 1.0)
    assert len(skylines) == 1 and len(far) == 1
    h = derived_horizon(Plan(skylines=skylines), 0, 0, 1.0)
    assert h[100] > 19.9 and h[101] == 0.0 and h[99] == 0.0  # +-0.5 deg wide


def test_round_trip_plan_horizon_points_obstacles_horizon():
    plan = Plan(buildings=(Building("barn", BLOCK.footprint, 10.0, ((-5, 20), (5, 20)), 16.0),),
                trees=(SPRUCE, Tree("oak", (-25, -3), 5.0, 14.0)),
                walls=(Wall("fence", ((12, -10), (18, 0), (12, 6)), 3.0),),
                prisms=(Prism("silo", ((-30, 20), (-26, 20), (-26, 24), (-30, 24)), 15.0),))
    z = 2.5
    first = derived_horizon(plan, 0, 0, z)
    points = derived_horizon_points(plan, 0, 0, z)
    assert any(p.distance_m is None for p in points) and sum(p.distance_m is not None for p in points) > 60
    skylines, far = measured_obstacles(points, z)
    assert all(p.elevation_deg == 0 for p in far)
    again = derived_horizon(Plan(skylines=skylines), 0, 0, z)
    np.testing.assert_allclose(again, first, atol=1e-9)


# ------------------------------------------------------------- monotonic facts

coord = st.floats(-40, 40, allow_nan=False)


@st.composite
def plans(draw):
    trees = tuple(Tree(f"t{i}", (draw(coord), draw(coord)), draw(st.floats(0.5, 6)), draw(st.floats(1, 30)),
                       draw(st.floats(0, 1))) for i in range(draw(st.integers(0, 3))))
    blds = []
    for i in range(draw(st.integers(0, 2))):
        x, y = draw(coord), draw(coord)
        w, d = draw(st.floats(2, 15)), draw(st.floats(2, 15))
        eave = draw(st.floats(2, 12))
        ridge = ((x, y + d / 2), (x + w, y + d / 2)) if draw(st.booleans()) else None
        blds.append(Building(f"b{i}", ((x, y), (x + w, y), (x + w, y + d), (x, y + d)), eave, ridge,
                             eave + draw(st.floats(0, 6)) if ridge else None))
    return Plan(buildings=tuple(blds), trees=trees)


@settings(max_examples=40, deadline=None)
@given(plans(), coord, coord, st.floats(0, 20), st.floats(0.01, 10), st.floats(0, 30), st.floats(0.1, 20))
def test_higher_never_sees_more_obstacle_and_growth_never_less(plan, e, n, z, dz, years, dyears):
    low, high = derived_horizons(plan, [e, e], [n, n], [z, z + dz], years)
    assert (high <= low + 1e-9).all()  # raising the antenna never raises the horizon
    grown = derived_horizon(plan, e, n, z, years + dyears)
    assert (grown >= low - 1e-9).all()  # growing trees never lowers it


# ---------------------------------------------------------------- coordinates

def test_local_plane_against_pymap3d_and_by_hand():
    lat0, lon0 = 45.3182, -72.6415
    rng = np.random.default_rng(7)
    lat = lat0 + rng.uniform(-0.015, 0.015, 50)
    lon = lon0 + rng.uniform(-0.02, 0.02, 50)
    e, n = lonlat_to_local(lon, lat, lat0, lon0)
    # pymap3d (PyPI) geodetic2enu, WGS84, both points at height 0.
    pe, pn, _ = pymap3d.geodetic2enu(lat, lon, 0.0, lat0, lon0, 0.0)
    np.testing.assert_allclose(e, pe, atol=1e-6)
    np.testing.assert_allclose(n, pn, atol=1e-6)
    # By hand, on the equator at longitude 0: a point 0.001 deg east lies at
    # ECEF (a cos 0.001deg, a sin 0.001deg, 0); east is the Y difference,
    # a sin(0.001 deg) = 6378137 * 1.745329e-5 = 111.3195 m, and north is 0.
    e1, n1 = lonlat_to_local(0.001, 0.0, 0.0, 0.0)
    assert e1 == pytest.approx(WGS84_A_M * math.sin(math.radians(0.001)), abs=1e-9)
    assert e1 == pytest.approx(111.3195, abs=1e-4) and n1 == pytest.approx(0.0, abs=1e-9)
    # 0.001 deg north: north is the Z difference, N (1 - e^2) sin(phi) with
    # N = a / sqrt(1 - e^2 sin^2 phi), about 110.5743 m.
    phi = math.radians(0.001)
    _, n2 = lonlat_to_local(0.0, 0.001, 0.0, 0.0)
    expect = WGS84_A_M / math.sqrt(1 - WGS84_E2 * math.sin(phi) ** 2) * (1 - WGS84_E2) * math.sin(phi)
    assert n2 == pytest.approx(expect, abs=1e-9) and n2 == pytest.approx(110.5743, abs=1e-4)


def test_demo_geojson_plan_matches_the_toml_plan():
    site = load_site(DEMO / "alder-brook-farm/site.toml")
    assert site.plan is not None and site.plan.has_candidates and site.plan.has_obstacles
    geo = load_plan_geojson(DEMO / "alder-brook-farm/plan.geojson", site.latitude_deg, site.longitude_deg)
    toml = load_plan_toml(DEMO / "alder-brook-farm/plan.toml")
    assert site.plan.buildings == toml.buildings
    for kind in ("buildings", "trees", "walls", "prisms", "areas", "poles", "points"):
        a, b = getattr(geo, kind), getattr(toml, kind)
        assert [x.name for x in a] == [x.name for x in b]
    # Positions agree to a few millimetres (the GeoJSON carries 8 decimals of a degree).
    h_geo = derived_horizons(geo, [0, 12, -1.1], [0, 6, -7], [6.5, 4, 7.8], 5)
    h_toml = derived_horizons(toml, [0, 12, -1.1], [0, 6, -7], [6.5, 4, 7.8], 5)
    np.testing.assert_allclose(h_geo, h_toml, atol=0.01)


# ---------------------------------------------------------------- bad input

def feature(role, geometry, **props):
    return {"type": "Feature", "properties": {"role": role, **props}, "geometry": geometry}


LAT0, LON0 = 45.0, -73.0
DLAT = 1e-4  # about 11 m


def square(lon=LON0, lat=LAT0, d=DLAT):
    return {"type": "Polygon", "coordinates": [[[lon, lat], [lon + d, lat], [lon + d, lat + d], [lon, lat + d],
                                                [lon, lat]]]}


GEO_BAD = [
    ("self-intersecting", feature("building", {"type": "Polygon", "coordinates": [[
        [LON0, LAT0], [LON0 + DLAT, LAT0 + DLAT], [LON0 + DLAT, LAT0], [LON0, LAT0 + DLAT], [LON0, LAT0]]]},
        name="bowtie barn", height_m=8), ['features[0] ("bowtie barn").geometry.coordinates[0]',
                                          "invalid polygon: Self-intersection"]),
    ("unclosed ring", feature("area", {"type": "Polygon", "coordinates": [[
        [LON0, LAT0], [LON0 + DLAT, LAT0], [LON0 + DLAT, LAT0 + DLAT], [LON0, LAT0 + DLAT]]]},
        name="roof", height_m=5), ['features[0] ("roof")', "not closed"]),
    ("too few points", feature("wall", {"type": "LineString", "coordinates": [[LON0, LAT0]]}, name="fence",
                               height_m=2), ['features[0] ("fence")', "at least 2 points"]),
    ("missing height", feature("building", square(), name="shed"),
     ['features[0] ("shed").properties.height_m', "missing"]),
    ("far away", feature("tree", {"type": "Point", "coordinates": [LON0 + 0.05, LAT0]}, name="oak",
                         crown_radius_m=3, height_m=10),
     # 0.05 deg of longitude at 45 N: N cos(45) * 0.05 * pi / 180 = 3,942 m, N = 6,388,838 m
     ['features[0] ("oak").geometry.coordinates', "3,942 m from the site point"]),
    ("wrong geometry", feature("tree", square(), name="oak", crown_radius_m=3, height_m=10),
     ['features[0] ("oak").geometry', "a tree needs a Point geometry, got Polygon"]),
    ("unknown role", feature("garage", square(), name="g", height_m=3),
     ['features[0] ("g").properties.role', "'garage' is not one of"]),
    ("pole heights", feature("pole", {"type": "Point", "coordinates": [LON0, LAT0]}, min_height_m=5,
                             max_height_m=3), ["features[0].properties.max_height_m", "below min_height_m"]),
]


@pytest.mark.parametrize("desc,feat,fragments", GEO_BAD, ids=[c[0] for c in GEO_BAD])
def test_geojson_errors_name_the_file_and_the_feature(tmp_path, desc, feat, fragments):
    path = tmp_path / "plan.geojson"
    path.write_text(json.dumps({"type": "FeatureCollection", "features": [feat]}))
    with pytest.raises(InputError) as exc:
        load_plan_geojson(path, LAT0, LON0)
    (line,) = exc.value.problems
    assert line.startswith(f"{path}: ")
    for frag in fragments:
        assert frag in line


def test_geojson_all_problems_at_once_and_not_json(tmp_path):
    path = tmp_path / "plan.geojson"
    path.write_text(json.dumps({"type": "FeatureCollection", "features": [
        feature("building", square(), name="a"), feature("tree", {"type": "Point", "coordinates": [LON0, LAT0]},
                                                         name="b", height_m=4)]}))
    with pytest.raises(InputError) as exc:
        load_plan_geojson(path, LAT0, LON0)
    assert len(exc.value.problems) == 2 and "crown_radius_m: missing" in exc.value.problems[1]
    path.write_text("{ not json")
    with pytest.raises(InputError, match="not valid JSON"):
        load_plan_geojson(path, LAT0, LON0)


SITE_PLAN = """
[[plan.building]]
name = "barn"
footprint = [[-5, 15], [5, 15], [5, 25], [-5, 25]]
height_m = 10.0
ridge = [[-5, 20], [5, 20]]
ridge_height_m = 12.0
[[plan.tree]]
name = "spruce"
at = [0, -20]
crown_radius_m = 3.0
height_m = 12.0
growth_m_per_year = 0.3
[[plan.wall]]
line = [[-20, -5], [-20, 5]]
height_m = 2.0
[[plan.area]]
name = "north roof"
polygon = [[-4, 2], [4, 2], [4, 6], [-4, 6]]
height_m = 6.0
[[plan.pole]]
name = "yard pole"
at = [8, -4]
min_height_m = 2.0
max_height_m = 9.0
[[plan.point]]
at = [1, 1]
height_m = 3
"""


def test_site_file_with_the_issue_plan(write_site):
    site = load_site(write_site(MINIMAL_SITE + SITE_PLAN))
    p = site.plan
    assert p.buildings[0].ridge == ((-5.0, 20.0), (5.0, 20.0)) and p.trees[0].growth_m_per_year == 0.3
    assert p.walls[0].name == "wall 1" and p.points[0].name == "point 1"  # default names
    assert p.poles[0].max_height_m == 9.0 and p.areas[0].polygon[0] == (-4.0, 2.0)


def test_site_without_plan_has_none(write_site):
    assert load_site(write_site(MINIMAL_SITE)).plan is None


def test_plan_files_relative_to_the_site(write_site, tmp_path):
    (tmp_path / "plan.toml").write_text(SITE_PLAN.replace("plan.", ""))
    site = load_site(write_site(MINIMAL_SITE + '\n[plan]\nfile = "plan.toml"\n'))
    assert site.plan.trees[0].name == "spruce"
    geo = {"type": "FeatureCollection", "features": [
        feature("pole", {"type": "Point", "coordinates": [-73.0, 45.0001]}, name="p", min_height_m=2,
                max_height_m=4)]}
    (tmp_path / "plan.geojson").write_text(json.dumps(geo))
    site = load_site(write_site(MINIMAL_SITE + '\n[plan]\nfile = "plan.geojson"\n'))
    # 0.0001 deg of latitude at 45 N is about 11.1 m north (pymap3d for the exact value).
    assert site.plan.poles[0].at[1] == pytest.approx(pymap3d.geodetic2enu(45.0001, -73.0, 0, 45.0, -73.0, 0)[1])


PLAN_BAD = [
    ("missing height", ("height_m = 10.0\nridge", "ridge"), ["plan.building[0].height_m: missing"]),
    ("ridge height below eaves", ("ridge_height_m = 12.0", "ridge_height_m = 8.0"),
     ["plan.building[0].ridge_height_m", "below the eaves"]),
    ("ridge outside", ("ridge = [[-5, 20], [5, 20]]", "ridge = [[50, 20], [60, 20]]"),
     ["plan.building[0].ridge", "does not cross the footprint"]),
    ("self-intersecting", ("[[-4, 2], [4, 2], [4, 6], [-4, 6]]", "[[-4, 2], [4, 6], [4, 2], [-4, 6]]"),
     ["plan.area[0].polygon", "Self-intersection"]),
    ("too few corners", ("[[-4, 2], [4, 2], [4, 6], [-4, 6]]", "[[-4, 2], [4, 2]]"),
     ["plan.area[0].polygon", "at least 3 distinct corners"]),
    ("far away", ("at = [8, -4]", "at = [3000, -4]"), ["plan.pole[0].at", "3,000 m from the site point"]),
    ("unknown key", ("growth_m_per_year = 0.3", "growth = 0.3"), ["plan.tree[0].growth", "unknown key"]),
    ("bad position", ("at = [0, -20]", 'at = "south"'), ["plan.tree[0].at", "expected a pair of numbers"]),
    ("negative crown", ("crown_radius_m = 3.0", "crown_radius_m = -3.0"), ["plan.tree[0].crown_radius_m"]),
]


@pytest.mark.parametrize("desc,change,fragments", PLAN_BAD, ids=[c[0] for c in PLAN_BAD])
def test_bad_plan_in_site_file(write_site, desc, change, fragments):
    old, new = change
    assert old in SITE_PLAN
    path = write_site(MINIMAL_SITE + SITE_PLAN.replace(old, new, 1))
    with pytest.raises(InputError) as exc:
        load_site(path)
    (line,) = exc.value.problems
    assert line.startswith(f"{path}: ")
    for frag in fragments:
        assert frag in line


def test_plan_file_problems_name_the_plan_file(write_site, tmp_path):
    (tmp_path / "plan.toml").write_text("[[tree]]\nat = [0, 5]\nheight_m = 4\n[[shed]]\n")
    with pytest.raises(InputError) as exc:
        load_site(write_site(MINIMAL_SITE + '\n[plan]\nfile = "plan.toml"\n'))
    plan_path = tmp_path / "plan.toml"
    unknown = f"{plan_path}: shed: unknown table (expected building, tree, wall, prism, area, pole, point)"
    assert sorted(exc.value.problems) == sorted([unknown, f"{plan_path}: tree[0].crown_radius_m: missing"])
    with pytest.raises(InputError) as exc:
        load_site(write_site(MINIMAL_SITE + '\n[plan]\nfile = "nowhere.geojson"\n'))
    assert exc.value.problems == [f"{tmp_path / 'nowhere.geojson'}: plan file not found"]
    with pytest.raises(InputError) as exc:
        load_site(write_site(MINIMAL_SITE + '\n[plan]\nfile = "plan.toml"\n[[plan.tree]]\nat = [0, 1]\n'))
    assert any("give either file or inline tables" in p for p in exc.value.problems)


def test_panel_method_against_an_independent_ray_march():
    """Independent check of derived_horizons: march along each ray in 1 cm steps,
    look up the obstacle top under every step (shapely point-in-polygon, the gable
    roof's height, the tree's disc) and keep the highest elevation.  The march can
    only miss an edge by less than one step, so it may read a little low, never high."""
    from survey.plan import Building, Plan, Prism, Tree
    from survey.plan.scene import _roof_function

    plan = Plan(buildings=(Building("house", ((-4.0, 6.0), (4.0, 6.0), (4.0, 14.0), (-4.0, 14.0)), 4.0,
                                    ((0.0, 6.0), (0.0, 14.0)), 7.5),),
                prisms=(Prism("tank", ((9.0, -3.0), (12.0, -3.0), (12.0, 1.0), (9.0, 1.0)), 5.0),),
                trees=(Tree("oak", (-10.0, -12.0), 3.5, 14.0),))
    s = np.arange(0.01, 60.0, 0.01)
    # On the roof at (-1, 10) the roof is 6.625 m high and the ridge (7.5 m) 1 m away still blocks the east.
    for e, n, z in ((0.0, 0.0, 2.0), (2.0, 9.0, 9.0), (-1.0, 10.0, 7.0), (6.0, -6.0, 3.0)):
        got = derived_horizons(plan, np.array([e]), np.array([n]), np.array([z]))[0]
        for az in range(0, 360, 3):
            x, y = e + s * math.sin(math.radians(az)), n + s * math.cos(math.radians(az))
            top = np.zeros_like(s)
            for b in plan.buildings:
                inside = shapely.contains_xy(shapely.Polygon(b.footprint), x, y)
                top[inside] = np.maximum(top[inside], _roof_function(b).heights(x[inside], y[inside]))
            for p in plan.prisms:
                inside = shapely.contains_xy(shapely.Polygon(p.polygon), x, y)
                top[inside] = np.maximum(top[inside], p.height_m)
            for t in plan.trees:
                inside = np.hypot(x - t.at[0], y - t.at[1]) <= t.crown_radius_m
                top[inside] = np.maximum(top[inside], t.height_m)
            march = max(0.0, float(np.degrees(np.arctan2(top - z, s))[top > 0].max(initial=0.0)))
            assert got[az] >= march - 1e-6, (e, n, z, az)
            assert got[az] - march < 0.35, (e, n, z, az, got[az], march)
