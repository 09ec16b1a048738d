"""A mount placed on the site plan (``[mount] east_m, north_m``): the run assesses
the horizon derived at that spot, and gives the spot ranking's own figures for it."""

from __future__ import annotations

import math
import shutil
from dataclasses import replace

import numpy as np
import pytest

from survey.errors import InputError
from survey.pipeline import result_dict, run_site
from survey.report import site_document
from survey.site import load_site, site_from_dict
from survey.spots import SpotEvaluator, horizon_at, rank_spots

from .helpers import DEMO, MINIMAL_SITE

HOURS = 2  # short windows keep the tests quick; the comparisons are exact at any length


@pytest.fixture(scope="module")
def farm():
    site = load_site(DEMO / "alder-brook-farm/site.toml")
    run = run_site(site, hours=HOURS)
    return site, run, rank_spots(run)


def figures(x):
    return (x.blocked_fraction, x.availability, x.interruption)


def placed(site, east_m, north_m, height_m):
    """The site with its mount moved on the plan, as an editor does it (dataclasses.replace)."""
    return replace(site, mount=replace(site.mount, at=(east_m, north_m), height_m=height_m))


def test_mount_on_a_ranked_spot_gives_the_ranking_figures_bit_for_bit(farm):
    site, run, ranking = farm
    ev = SpotEvaluator(run)
    spots = ranking.best_of_each()
    # The demo's best of each: a pole, a roof area and a fixed point, at heights
    # other than the 6.5 m the horizon was measured from (so that height must be kept).
    assert {r.candidate.kind for r in spots} == {"pole", "area", "point"}
    assert any(r.candidate.height_m != site.mount.height_m for r in spots)
    for r in spots:
        c = r.candidate
        moved = placed(site, c.east_m, c.north_m, c.height_m)
        assert moved.horizon_height_m == site.mount.height_m  # where the points were measured from
        got = run_site(moved, hours=HOURS)
        assert figures(got.assessment) == figures(r)
        # SiteRun.mask is the mask used: the evaluator's mask for that spot, exactly.
        np.testing.assert_array_equal(got.mask.el_deg, ev.mask_for(c.east_m, c.north_m, c.height_m).el_deg)
        assert (f"mount at {c.east_m:.1f} m E, {c.north_m:.1f} m N on the site plan: horizon derived "
                "from the plan, not measured there") in got.warnings
        mount = result_dict(got)["site"]["mount"]
        assert (mount["east_m"], mount["north_m"], mount["height_m"]) == (c.east_m, c.north_m, c.height_m)
    assert "east_m" not in result_dict(run)["site"]["mount"]  # only when placed


def test_the_same_from_the_site_file(farm, tmp_path):
    site, run, ranking = farm
    best = ranking.best
    c = best.candidate
    folder = tmp_path / "farm"
    shutil.copytree(DEMO / "alder-brook-farm", folder)
    text = (folder / "site.toml").read_text(encoding="utf-8")
    old_mount = "height_m = 6.5          # ridge-line bracket on the north gable\n"
    assert old_mount in text
    text = text.replace(old_mount, f"height_m = {c.height_m!r}\neast_m = {c.east_m!r}\nnorth_m = {c.north_m!r}\n")
    text = text.replace('reference = "magnetic"\n', 'reference = "magnetic"\nmeasured_height_m = 6.5\n')
    (folder / "site.toml").write_text(text, encoding="utf-8")
    placed = load_site(folder / "site.toml")
    assert placed.mount.at == (c.east_m, c.north_m) and placed.measured_height_m == 6.5
    assert figures(run_site(placed, hours=HOURS).assessment) == figures(best)
    # Without measured_height_m the points are taken from the mount height, and the run says so.
    (folder / "site.toml").write_text(text.replace("measured_height_m = 6.5\n", ""), encoding="utf-8")
    unsure = run_site(load_site(folder / "site.toml"), hours=HOURS)
    assert any("measured_height_m" in w for w in unsure.warnings)


def test_mount_at_the_survey_point_uses_the_derived_horizon(farm):
    site, run, _ = farm
    at_origin = run_site(placed(site, 0.0, 0.0, site.mount.height_m), hours=HOURS)
    h = horizon_at(run, 0.0, 0.0, site.mount.height_m)  # the reference: spots.horizon_at, 3 decimals
    assert [round(float(x), 3) for x in at_origin.mask.el_deg] == h["elevation_deg"]
    assert list(at_origin.mask.az_deg) == h["azimuth_deg"]
    assert at_origin.mask.az_deg.size == 360 and run.mask.az_deg.size == len(site.horizon.points)


def test_hand_worked_derived_horizon_from_a_wall(write_site):
    # A wall 7 m high along north = 10 m; the antenna at (0, 2), 3 m up.  Due north the
    # wall top is 8 m away and 4 m higher: elevation atan(4 / 8) = 26.5651 deg
    # (hand-worked).  Due south nothing stands: 0 deg.
    path = write_site(MINIMAL_SITE.replace("height_m = 5.0", "height_m = 3.0\neast_m = 0.0\nnorth_m = 2.0")
                      + '\n[[plan.wall]]\nname = "wall"\nline = [[-50.0, 10.0], [50.0, 10.0]]\nheight_m = 7.0\n')
    run = run_site(load_site(path), hours=HOURS)
    assert run.mask.elevation_at(0.0) == pytest.approx(math.degrees(math.atan(4 / 8)), abs=1e-9)
    assert run.mask.elevation_at(180.0) == 0.0
    assert not any("far points only" in w for w in run.warnings)
    assert run.mask.labels[0] == "wall" and run.mask.labels[180] == ""  # the sectors name what blocks


def test_a_placed_mount_names_its_obstructions(farm):
    site, _, ranking = farm
    best = ranking.best.candidate
    run = run_site(placed(site, best.east_m, best.north_m, best.height_m), hours=HOURS)
    assert run.assessment.sectors and all(sec.labels for sec in run.assessment.sectors)
    assert {"alders", "tall alder"} & set(run.assessment.sectors[0].labels)  # the demo's costliest, by name


def test_no_plan_and_no_distance_warns_the_horizon_is_the_far_points(write_site):
    path = write_site(MINIMAL_SITE.replace("height_m = 5.0", "height_m = 5.0\neast_m = 3.0\nnorth_m = -4.0")
                      + "\n[horizon]\npoints = [[0, 5], [180, 15]]\n")
    run = run_site(load_site(path), hours=HOURS)
    assert "mount at 3.0 m E, -4.0 m N on the site plan: horizon derived from the plan, not measured there" \
        in run.warnings
    assert any("the derived horizon is the far points only" in w for w in run.warnings)
    # Far points apply unchanged: between 5 deg at 0 and 15 deg at 180, linear in
    # azimuth, 90 deg gives (5 + 15) / 2 = 10 deg (hand-worked).
    assert run.mask.elevation_at(90.0) == pytest.approx(10.0, abs=1e-12)
    assert run.mask.elevation_at(270.0) == pytest.approx(10.0, abs=1e-12)


BAD_MOUNTS = [
    ("east_m = 3.0", ["mount.north_m", "missing"]),
    ("north_m = 3.0", ["mount.east_m", "missing"]),
    ("east_m = 5000.0\nnorth_m = 0.0", ["mount.east_m", "5000.0 is outside"]),
    ("east_m = 0.0\nnorth_m = -5000", ["mount.north_m", "-5000 is outside"]),
    ("east_m = 1500.0\nnorth_m = 1500.0", ["mount.east_m", "2,121 m from the site point"]),  # hypot(1500, 1500)
    ('east_m = "3 m"\nnorth_m = 0.0', ["mount.east_m", "expected a number"]),
]


@pytest.mark.parametrize("lines,fragments", BAD_MOUNTS)
def test_bad_mount_positions_are_one_line_each(write_site, lines, fragments):
    path = write_site(MINIMAL_SITE.replace("height_m = 5.0", "height_m = 5.0\n" + lines))
    with pytest.raises(InputError) as exc:
        load_site(path)
    assert len(exc.value.problems) == 1, exc.value.problems
    line = exc.value.problems[0]
    assert line.startswith(f"{path}: ") and "\n" not in line
    for frag in fragments:
        assert frag in line


def test_measured_height_needs_a_placed_mount(write_site):
    path = write_site(MINIMAL_SITE + "\n[horizon]\nmeasured_height_m = 4.0\n")
    with pytest.raises(InputError) as exc:
        load_site(path)
    assert len(exc.value.problems) == 1 and "horizon.measured_height_m" in exc.value.problems[0]


def test_report_site_document_round_trips_the_placed_mount(farm):
    site, _, _ = farm
    moved = placed(site, 12.0, 6.0, 8.25)
    doc = site_document(moved)
    assert (doc["mount"]["east_m"], doc["mount"]["north_m"]) == (12.0, 6.0)
    back = site_from_dict(doc, site.path)
    assert back.mount == moved.mount and back.measured_height_m == 6.5 and back.horizon_height_m == 6.5
    # Back at the survey point the antenna is where the horizon was measured: its height is the mount's.
    home = replace(moved, mount=replace(moved.mount, at=None, height_m=7.0))
    assert home.measured_height_m == 7.0 and home.horizon_height_m == 7.0
    assert "measured_height_m" not in site_document(home)["horizon"]
    assert "east_m" not in site_document(home)["mount"]


def test_honest_warnings_for_a_window_and_a_horizon_that_cannot_show_everything(write_site):
    """A step over 60 s (common practice), a window shorter than one orbit (the
    embedded shells' slowest period, 2 pi / n: about 100 min at 745 km by
    Kepler's third law), and more than 60 degrees between horizon readings."""
    from survey.pipeline import run_site
    from survey.site import load_site

    site = load_site(write_site(MINIMAL_SITE + '\n[horizon]\nreference = "true"\npoints = [[10, 5], [100, 8], [150, 4]]\n'))
    run = run_site(site, hours=1, step_s=120)
    text = " | ".join(run.warnings)
    assert "sample step 120 s is coarser than 60 s" in text
    assert "window of 60 min is shorter than one orbit (100 min)" in text
    assert "no horizon point measured across 10°–100° (90°), 150°–10° (220°)" in text
    calm = run_site(load_site(write_site(MINIMAL_SITE + '\n[horizon]\nreference = "true"\npoints = '
                                         '[[0, 5], [50, 5], [100, 5], [150, 5], [200, 5], [250, 5], [300, 5]]\n',
                                         "calm.toml")), hours=3, step_s=30)
    assert not any(w.startswith(("sample step", "window of", "no horizon point")) for w in calm.warnings)
