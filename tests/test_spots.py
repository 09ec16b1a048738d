"""Spot ranking: candidates re-mask one site run's tracks; the figures are
recounted independently (plain loops, np.interp) and checked for the monotonic
facts a taller pole and growing trees must obey."""

from __future__ import annotations

import json
import math
import textwrap
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from survey.assess import assess, blocked_samples, schedule_down
from survey.errors import InputError
from survey.pipeline import FleetChoice, run_site
from survey.plan import Building, Plan, Pole, Tree
from survey.site import load_site
from survey.spots import (
    Candidate,
    SpotEvaluator,
    area_points,
    candidate_points,
    growth_years,
    horizon_at,
    pole_heights,
    rank_spots,
)

from .helpers import DEMO, MINIMAL_SITE, START, plain_loop_down

SHELLS = """\
[[shell]]
name = "T"
altitude_km = 550
inclination_deg = 53
planes = 18
per_plane = 12
phasing = 1
"""

PLAN = """
[horizon]
reference = "true"
points = [[0, 5], [100, 20, 40.0, "hedge"], [130, 30, 30.0, "hedge"], [160, 25, 35.0, "hedge"], [200, 8],
          [300, 15]]

[schedule]
reassign_s = 60

[[plan.building]]
name = "barn"
footprint = [[-18, -6], [-10, -6], [-10, 6], [-18, 6]]
height_m = 7.0
ridge = [[-14, -6], [-14, 6]]
ridge_height_m = 10.0
[[plan.tree]]
name = "spruce"
at = [4, -14]
crown_radius_m = 3.0
height_m = 11.0
growth_m_per_year = 0.4
[[plan.area]]
name = "roof"
polygon = [[-2, -2], [2, -2], [2, 1], [-2, 1]]
height_m = 5.0
[[plan.pole]]
name = "yard pole"
at = [3, -6]
min_height_m = 2.0
max_height_m = 8.0
[[plan.point]]
name = "gable"
at = [0, 2]
height_m = 6.0
"""


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    d = tmp_path_factory.mktemp("spots")
    (d / "shells.toml").write_text(SHELLS)
    (d / "site.toml").write_text(textwrap.dedent(MINIMAL_SITE) + PLAN)
    site = load_site(d / "site.toml")
    return run_site(site, FleetChoice(shells=d / "shells.toml"), start=START, hours=4, step_s=30)


def test_candidates_grid_poles_points():
    # A 2 m x 1 m rectangle at 0.5 m: cell centres 0.25, 0.75, ... -> 4 x 2 = 8 points.
    pts = area_points(((0, 0), (2, 0), (2, 1), (0, 1)), 0.5)
    assert len(pts) == 8 and pts[:, 0].min() == 0.25 and pts[:, 1].max() == 0.75
    # A triangle keeps only the centres inside it.
    tri = area_points(((0, 0), (2, 0), (0, 2)), 0.5)
    assert len(tri) == 6 and (tri.sum(axis=1) < 2).all()
    # A sliver smaller than a cell still gives one point.
    assert len(area_points(((0, 0), (0.1, 0), (0.1, 0.1)), 0.5)) == 1
    assert pole_heights(2.0, 3.1) == [2.0, 2.25, 2.5, 2.75, 3.0, 3.1]  # the maximum is included
    assert pole_heights(2.0, 3.0) == [2.0, 2.25, 2.5, 2.75, 3.0]
    assert pole_heights(4.0, 4.0) == [4.0]
    assert growth_years(3) == [0.0, 1.0, 2.0, 3.0] and growth_years(2.5) == [0.0, 1.0, 2.0, 2.5]
    assert len(growth_years(50)) == 11 and growth_years(0) == []


def test_ranking_order_and_json_contract(run):
    r = rank_spots(run)
    d = json.loads(json.dumps(r.as_dict()))  # JSON-ready
    cands = d["candidates"]
    # roof: 4 m x 3 m at 0.5 m = 8 x 6 = 48; pole 2..8 m in 0.25 m steps = 25; one point.
    assert len(cands) == 48 + 25 + 1
    for c in cands:
        assert set(c) >= {"name", "east_m", "north_m", "height_m", "blocked_fraction", "availability",
                          "interruption"}
    keys = [(c["blocked_fraction"], c["interruption"], c["height_m"]) for c in cands]
    assert keys == sorted(keys)  # best first: blocked, then interruption, then lower height
    assert d["best"] == cands[0]
    assert d["target_blocked"] == run.site.criteria.qualified_max_blocked  # the default target
    assert d["survey_point"]["blocked_fraction"] == run.assessment.blocked_fraction
    assert d["over_time"] == [] and d["years"] == 0.0


HAND_PLAN = """
[horizon]
reference = "true"
points = [[0, 5], [90, 35], [200, 8], [300, 30]]

[schedule]
reassign_s = 60

[[plan.prism]]
name = "shed"
polygon = [[-12, -10], [-6, -10], [-6, 2], [-12, 2]]
height_m = 9.0
[[plan.tree]]
name = "spruce"
at = [4, -14]
crown_radius_m = 3.0
height_m = 11.0
[[plan.pole]]
name = "yard pole"
at = [3, -6]
min_height_m = 2.0
max_height_m = 4.0
"""


def hand_horizon(e0, n0, z):
    """The horizon at (e0, n0, z) by hand trigonometry, at each whole degree: a flat
    roof is highest where the ray first meets a wall (atan((h - z)/s) falls with s
    along a flat top), a cylinder crown where the ray first meets its circle."""
    shed = [(-12, -10), (-6, -10), (-6, 2), (-12, 2)]
    out = np.zeros(360)
    for k in range(360):
        dx, dy = math.sin(math.radians(k)), math.cos(math.radians(k))
        best = 0.0
        for (ax, ay), (bx, by) in zip(shed, shed[1:] + shed[:1]):
            # Solve P + s*d = A + u*(B - A) for s >= 0, 0 <= u <= 1 (Cramer's rule).
            ex, ey = bx - ax, by - ay
            det = dx * (-ey) - dy * (-ex)
            if abs(det) < 1e-12:
                continue
            rx, ry = ax - e0, ay - n0
            s_ = (rx * (-ey) - ry * (-ex)) / det
            u = (dx * ry - dy * rx) / det
            if s_ > 0 and 0 <= u <= 1:
                best = max(best, math.degrees(math.atan2(9.0 - z, s_)))
        cx, cy, r = 4 - e0, -14 - n0, 3.0
        along = cx * dx + cy * dy
        perp2 = cx * cx + cy * cy - along * along
        if along > 0 and perp2 <= r * r:
            s_ = along - math.sqrt(r * r - perp2)
            best = max(best, math.degrees(math.atan2(11.0 - z, s_)))
        out[k] = best
    return out


def test_one_candidate_against_an_independent_recount(tmp_path):
    """The yard pole's figures at 2 m recounted from scratch: its horizon by hand
    trigonometry (hand_horizon), raised to the far points' mask by np.interp, the
    tracks compared sample by sample in a plain loop, the scheduling model as the
    plain loop of test_metrics."""
    (tmp_path / "shells.toml").write_text(SHELLS)
    (tmp_path / "site.toml").write_text(textwrap.dedent(MINIMAL_SITE) + HAND_PLAN)
    run = run_site(load_site(tmp_path / "site.toml"), FleetChoice(shells=tmp_path / "shells.toml"),
                   start=START, hours=4, step_s=30)
    tracks = run.tracks
    cand = next(r for r in rank_spots(run).results
                if r.candidate.name == "yard pole" and r.candidate.height_m == 2.0)
    near = hand_horizon(3.0, -6.0, 2.0)
    assert near[180] > 20 and near[270] > 10 and near[0] == 0.0  # the tree south, the shed west
    far_az, far_el = [0, 90, 200, 300], [5, 35, 8, 30]
    fx = [a - 360 for a in far_az] + far_az + [a + 360 for a in far_az]
    mask = [max(near[k], float(np.interp(k, fx, far_el * 3))) for k in range(360)]
    xp, fp = list(range(-360, 720)), mask * 3

    def is_blocked(az, el):
        return float(el) < np.interp(float(az) % 360.0, xp, fp)

    blocked = np.array([is_blocked(a, e) for a, e in zip(tracks.az_deg, tracks.el_deg)])
    clear_at = {int(k) for k, b in zip(tracks.time_index, blocked) if not b}
    assert 100 < blocked.sum() < blocked.size - 100  # a case where the count matters
    assert cand.blocked_fraction == blocked.sum() / len(tracks)
    assert cand.availability == pytest.approx(len(clear_at) / tracks.count, abs=1e-15)
    samples = (tracks.sat, tracks.time_index, tracks.az_deg, tracks.el_deg)
    down = plain_loop_down(samples, tracks.count, tracks.window.step_s, run.site.schedule.reassign_s,
                           is_blocked)
    assert cand.interruption == pytest.approx(down.mean(), abs=1e-15)


def test_fast_masking_is_assess_bit_for_bit(run):
    ev = SpotEvaluator(run)
    rng = np.random.default_rng(3)
    for e, n, z in [(0, 2, 6.0), (3, -6, 2.0), (3, -6, 8.0), (-1, 0, 5.0), *rng.uniform(-5, 5, (4, 3)) + [0, 0, 5]]:
        m = ev.mask_for(e, n, z)
        np.testing.assert_array_equal(ev.blocked(m.el_deg), blocked_samples(run.tracks, m))
        a = assess(run.tracks, m, run.site.criteria, run.site.schedule)
        (res,) = ev.evaluate([Candidate("x", "point", e, n, z)])
        assert (res.blocked_fraction, res.availability, res.interruption) == \
               (a.blocked_fraction, a.availability, a.interruption)
        np.testing.assert_array_equal(a.down, schedule_down(run.tracks, a.blocked, run.site.schedule.reassign_s))


def test_lowest_pole_height_meets_the_target_and_a_step_lower_does_not(run):
    ev = SpotEvaluator(run)
    heights = pole_heights(2.0, 8.0)
    res = ev.evaluate([Candidate("yard pole", "pole", 3, -6, h) for h in heights])
    bf = [r.blocked_fraction for r in res]
    assert bf == sorted(bf, reverse=True)  # never worse higher up
    assert bf[0] > bf[-1]  # and the pole height matters here
    target = (bf[0] + bf[-1]) / 2
    (pole,) = rank_spots(run, target_blocked=target).poles
    h = pole.lowest.candidate.height_m
    i = heights.index(h)
    assert bf[i] <= target and i > 0 and bf[i - 1] > target  # 0.25 m lower misses it
    assert pole.as_dict()["lowest_height_m"] == h
    (never,) = rank_spots(run, target_blocked=0.0).poles if bf[-1] > 0 else [None]
    if never is not None:
        assert never.lowest is None and never.as_dict()["lowest_height_m"] is None


@st.composite
def yard_plans(draw):
    c = st.floats(-25, 25, allow_nan=False)
    trees = tuple(Tree(f"t{i}", (draw(c), draw(c)), draw(st.floats(1, 5)), draw(st.floats(3, 25)),
                       draw(st.floats(0, 1))) for i in range(draw(st.integers(1, 4))))
    x, y = draw(c), draw(c)
    barn = Building("b", ((x, y), (x + 8, y), (x + 8, y + 6), (x, y + 6)), draw(st.floats(3, 12)))
    return Plan(buildings=(barn,), trees=trees, poles=(Pole("p", (draw(c), draw(c)), 2.0, 10.0),))


@settings(max_examples=25, deadline=None)
@given(yard_plans(), st.floats(2, 9), st.floats(0.25, 5), st.floats(0, 10), st.floats(0.5, 20))
def test_raising_a_pole_never_hurts_and_growing_trees_never_help(run, plan, z, dz, years, more):
    ev = SpotEvaluator(run, plan)
    (x, y) = plan.poles[0].at
    low, high = ev.evaluate([Candidate("p", "pole", x, y, z), Candidate("p", "pole", x, y, z + dz)], years)
    assert high.blocked_fraction <= low.blocked_fraction
    (grown,) = ev.evaluate([Candidate("p", "pole", x, y, z)], years + more)
    assert grown.blocked_fraction >= low.blocked_fraction


def test_years_report_how_the_best_spot_holds_up(run):
    r = rank_spots(run, years=8)
    assert [y for y, _ in r.over_time] == [float(y) for y in range(9)]
    assert all(res.candidate == r.best.candidate for _, res in r.over_time)
    bfs = [res.blocked_fraction for _, res in r.over_time]
    assert bfs == sorted(bfs)  # growth never helps
    assert r.over_time[-1][1].blocked_fraction == r.best.blocked_fraction  # ranked at year 8
    assert r.as_dict()["over_time"][0]["years"] == 0.0


def test_horizon_at_a_point(run):
    h = horizon_at(run, 3, -6, 4.0)
    assert h["azimuth_deg"] == list(range(360)) and len(h["elevation_deg"]) == 360
    # The spruce (radius 3 m, top 11 m) is centred 1 m east and 8 m south of the
    # point: distance D = sqrt(65), bearing 180 - atan(1/8) = 172.875 deg.  The ray at
    # 173 deg is theta = 0.125 deg off the centre line: t = D cos(theta),
    # p = D sin(theta), s = t - sqrt(3^2 - p^2); elevation atan((11 - 4) / s).
    theta = math.radians(173 - (180 - math.degrees(math.atan(1 / 8))))
    t, p = math.sqrt(65) * math.cos(theta), math.sqrt(65) * math.sin(theta)
    assert h["elevation_deg"][173] == pytest.approx(math.degrees(math.atan(7 / (t - math.sqrt(9 - p * p)))),
                                                    abs=0.001)  # 3 decimals in the JSON
    # Far points (no distance) apply unchanged: due north the measured 5 deg.
    assert h["elevation_deg"][0] == pytest.approx(5.0)
    # From a Site (true bearings: no declination needed) the same.
    assert horizon_at(run.site, 3, -6, 4.0)["elevation_deg"] == h["elevation_deg"]
    with pytest.raises(InputError, match="--at"):
        horizon_at(run, 3000, 0, 4.0)


def test_demo_site_ranks_and_rotates_compass_bearings():
    site = load_site(DEMO / "alder-brook-farm/site.toml")
    run = run_site(site, FleetChoice(), hours=0.5, step_s=60)
    r = rank_spots(run, years=2)
    assert r.best.candidate.kind in ("area", "pole", "point") and not r.warnings
    # At the survey point, the derived horizon reproduces each measured point that
    # carries a distance (rotated to true north by the declination) at whole degrees
    # next to it, within the linear change over the fraction of a degree.
    h = horizon_at(run, 0, 0, site.mount.height_m)
    dec = run.declination.declination_deg
    for p in site.horizon.points:
        if p.distance_m is not None and p.label == "tall alder":
            k = round((p.azimuth_deg + dec) % 360)
            assert h["elevation_deg"][k] == pytest.approx(p.elevation_deg, abs=1.0)


def test_bad_requests_are_input_errors(run, write_site):
    with pytest.raises(InputError, match="--spacing"):
        rank_spots(run, spacing_m=0)
    with pytest.raises(InputError, match="--years"):
        rank_spots(run, years=-1)
    with pytest.raises(InputError, match="--target-blocked"):
        rank_spots(run, target_blocked=2)
    bare = replace(run, site=replace(run.site, plan=None))
    with pytest.raises(InputError, match="plan: missing"):
        rank_spots(bare)
    no_cands = replace(run, site=replace(run.site, plan=Plan(trees=(Tree("t", (0, 9), 2, 9),))))
    with pytest.raises(InputError, match="no candidate spots"):
        rank_spots(no_cands)


def test_warnings_for_far_and_buried_candidates(run):
    plan = replace(run.site.plan, poles=(Pole("far pole", (300.0, 0.0), 3.0, 3.0),
                                         Pole("in the barn", (-14.0, 0.0), 2.0, 3.0)))
    r = rank_spots(run, plan=plan)
    text = " | ".join(r.warnings)
    assert "'far pole' is up to 300 m from the site point" in text
    assert "pole 'in the barn': 5 of 5 candidate points stand inside barn" in text
    buried = [c for c in r.results if c.candidate.name == "in the barn"]
    assert all(c.blocked_fraction == 1.0 for c in buried)
    assert len(candidate_points(plan)) == 48 + 1 + 5 + 1
