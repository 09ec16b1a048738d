"""Moving installs (survey/platform/): body-frame rotations, heading modes,
attitude, roadside canyons, and the same figures as a fixed site where they must
agree.  Sources are named beside each check."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from survey.errors import InputError
from survey.horizon import HorizonMask
from survey.pipeline import TrackCache, result_dict, run_site
from survey.platform import CANYONS
from survey.platform.frames import canyon_elevation_deg, to_body
from survey.site import load_site

from .helpers import START

HEAD = """\
[site]
name = "Test platform"
latitude = 45.3
longitude = -72.6
elevation_m = 0.0

[mount]
kind = "{kind}"
height_m = 2.2

[terminal]
min_elevation_deg = 25.0
{terminal}
"""
BODY_POINTS = ('[[0, 0], [40, 0], [45, 45, "mast"], [50, 45, "mast"], [55, 0], [150, 0], [170, 35, "arch"], '
               '[200, 35, "arch"], [215, 0], [300, 0], [310, 30, "box"], [320, 0]]')
WINDOW = dict(start=START, hours=6.0, step_s=30.0)


def write(tmp_path, kind="marine", platform="heading_deg = 0", points=None, terminal="", name="site.toml"):
    text = HEAD.format(kind=kind, terminal=terminal)
    if points:
        text += f'\n[horizon]\nframe = "body"\npoints = {points}\n'
    if platform is not None:
        text += f"\n[platform]\n{textwrap.dedent(platform)}\n"
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# ------------------------------------------------------------------ rotations, by hand

def test_a_starboard_obstruction_at_heading_30_blocks_true_azimuth_120():
    """Hand trigonometry: body azimuth = true azimuth - heading (a turn about the
    vertical), so the obstruction at 90° (starboard) with heading 30° sits at 120° true."""
    az_b, el_b = to_body(np.array([120.0, 90.0, 30.0]), np.array([30.0, 30.0, 30.0]), 30.0)
    assert az_b == pytest.approx([90.0, 60.0, 0.0])
    assert el_b == pytest.approx([30.0, 30.0, 30.0])
    mask = HorizonMask(np.array([80.0, 85.0, 95.0, 100.0]), np.array([0.0, 50.0, 50.0, 0.0]))
    blocked = el_b < mask.elevation_at(az_b)
    assert blocked.tolist() == [True, False, False]
    # Through north: heading 350°, true 80° -> body 90°.
    assert to_body(80.0, 10.0, 350.0)[0] == pytest.approx(90.0)


def test_a_heel_to_starboard_lowers_the_port_beam_by_the_heel():
    """Hand trigonometry: rolled by phi about the fore-aft axis, the deck normal is
    (0, sin phi, cos phi) in (forward, starboard, up); a satellite on the port beam
    at elevation e has sin(el_deck) = sin e cos phi - cos e sin phi = sin(e - phi)."""
    heel = 10.0
    for e in (20.0, 45.0, 70.0):
        port = to_body(270.0, e, 0.0, 0.0, heel)[1]
        starboard = to_body(90.0, e, 0.0, 0.0, heel)[1]
        assert float(port) == pytest.approx(e - heel, abs=1e-9)
        assert float(starboard) == pytest.approx(e + heel if e + heel <= 90 else 180 - e - heel, abs=1e-9)
    # Ahead and astern, a heel moves the elevation by far less (second order).
    ahead = float(to_body(0.0, 45.0, 0.0, 0.0, heel)[1])
    assert abs(ahead - 45.0) < 1.0
    # Pitch bow up by theta lowers a satellite dead ahead by theta (same reasoning about the starboard axis).
    assert float(to_body(0.0, 45.0, 0.0, 8.0, 0.0)[1]) == pytest.approx(37.0, abs=1e-9)


def test_heel_with_a_cone_equals_a_fixed_terminal_tilted_toward_starboard(tmp_path):
    """The issue's worked case: heel 10° at heading 0 with a cone gives the figures
    of a fixed terminal tilted 10° toward azimuth 90°.  The fixed side runs the
    fixed-site engine (tracks.compute_tracks culls the cone itself)."""
    cone = "scan_half_angle_deg = 40.0"
    moving = load_site(write(tmp_path, platform="heading_deg = 0\nheel_deg = 10.0", terminal=cone))
    fixed = load_site(write(tmp_path, kind="fixed", platform=None, name="fixed.toml",
                            terminal=cone + "\ntilt_deg = 10.0\ntilt_azimuth_deg = 90.0"))
    a, b = run_site(moving, **WINDOW).assessment, run_site(fixed, **WINDOW).assessment
    assert abs(a.usable_samples - b.usable_samples) <= max(3, b.usable_samples // 2000)
    assert a.availability == pytest.approx(b.availability, abs=1e-3)
    assert a.interruption == pytest.approx(b.interruption, abs=1e-3)


# ------------------------------------------------------------------ equalities with the fixed case

def _fixed_site_figures(tmp_path, shift_deg, cache):
    """The fixed-site engine with the body mask turned to true bearings by hand
    (true = body + heading), the same place and window."""
    pts = eval(BODY_POINTS)  # noqa: S307 - our own literal above
    turned = [[(p[0] + shift_deg) % 360.0, *p[1:]] for p in pts]
    text = HEAD.format(kind="fixed", terminal="") + f'\n[horizon]\nreference = "true"\npoints = {turned}\n'
    path = tmp_path / f"fixed{shift_deg:g}.toml"
    path.write_text(text, encoding="utf-8")
    return run_site(load_site(path), cache=cache, **WINDOW).assessment


def test_uniform_headings_equal_the_mean_of_36_fixed_headings(tmp_path):
    """The issue's check: a body-frame mask with all headings equally likely gives
    the mean blocked fraction of 36 evenly spaced fixed headings, within 0.01;
    the fixed runs go through the fixed-site engine with the mask turned by hand."""
    run = run_site(load_site(write(tmp_path, platform='headings = "uniform"', points=BODY_POINTS)), **WINDOW)
    cache = TrackCache()
    fixed = [_fixed_site_figures(tmp_path, h, cache) for h in range(0, 360, 10)]
    mean_bf = float(np.mean([f.blocked_fraction for f in fixed]))
    mean_av = float(np.mean([f.availability for f in fixed]))
    assert 0.02 < mean_bf < 0.5  # the mask really blocks something
    assert run.assessment.blocked_fraction == pytest.approx(mean_bf, abs=0.01)
    assert run.assessment.availability == pytest.approx(mean_av, abs=0.01)
    # The by-heading table (sector centres 5°, 15°, ...) against the fixed runs at 0°, 10°, ...:
    # each sector's centre lies between two fixed headings.
    rows = run.platform.by_heading
    assert [r.heading_deg for r in rows] == [5.0 + 10 * j for j in range(36)]
    assert np.mean([r.blocked_fraction for r in rows]) == pytest.approx(mean_bf, abs=0.01)
    # A fixed heading of 90° equals the fixed site with the mask turned by 90°, sample for sample.
    at90 = run_site(load_site(write(tmp_path, platform="heading_deg = 90", points=BODY_POINTS, name="h90.toml")),
                    **WINDOW).assessment
    ref = fixed[9]
    assert at90.blocked_samples == ref.blocked_samples and at90.usable_samples == ref.usable_samples
    assert at90.interruption == ref.interruption


@pytest.mark.parametrize("platform", ["heading_deg = 0", 'headings = "uniform"', "headings = [1, 0, 3, 0]"])
def test_a_still_marine_site_with_a_clear_sky_is_the_fixed_site(tmp_path, platform):
    """The issue's check: no obstructions and no motion give exactly the fixed-site
    result at the same place (every figure, every outage)."""
    moving = run_site(load_site(write(tmp_path, platform=platform)), **WINDOW)
    fixed = run_site(load_site(write(tmp_path, kind="fixed", platform=None, name="fixed.toml")), **WINDOW)
    a, b = result_dict(moving), result_dict(fixed)
    for key in ("usable_samples", "blocked_samples", "blocked_fraction", "availability", "interruption",
                "outages", "sectors", "verdict"):
        assert a[key] == b[key], key


def test_histogram_headings_follow_their_weights(tmp_path):
    """Weights [1, 0, 0, 0] put every heading in the bin centred on north (315°-45°)."""
    run = run_site(load_site(write(tmp_path, platform="headings = [1, 0, 0, 0]")), **WINDOW)
    h = run.platform.headings_deg
    assert np.all((h >= 315.0) | (h < 45.0))
    assert np.histogram((h + 45.0) % 360.0, bins=9, range=(0, 90))[0].min() > 0.08 * h.size  # spread over the bin


# ------------------------------------------------------------------ canyon

@pytest.mark.parametrize("alpha", [0.0, 15.0, 30.0, 45.0, 90.0, 135.0, 180.0, 270.0, 333.0])
def test_street_canyon_mask_follows_the_formula(tmp_path, alpha):
    """The street-canyon geometry (the issue's formula), by hand with math.atan:
    el(a) = atan((H - h) |sin a| / (W / 2)), town street H = 12 m, W = 16 m, h = 2.2 m."""
    expect = math.degrees(math.atan((12.0 - 2.2) * abs(math.sin(math.radians(alpha))) / 8.0))
    assert float(canyon_elevation_deg(alpha, CANYONS["town-street"], 2.2)) == pytest.approx(expect, abs=1e-9)
    site = load_site(write(tmp_path, kind="vehicle", platform='heading_deg = 0\ncanyon = "town-street"'))
    run = run_site(site, start=START, hours=1.0, step_s=60.0)
    assert float(run.mask.elevation_at(alpha)) == pytest.approx(expect, abs=0.05)
    # A road lined higher than the antenna blocks abeam, not ahead.
    if alpha in (0.0, 180.0):
        assert expect == pytest.approx(0.0, abs=1e-9)


def test_a_canyon_lower_than_the_antenna_blocks_nothing():
    assert float(canyon_elevation_deg(90.0, CANYONS["open-highway"], 5.0)) == 0.0


# ------------------------------------------------------------------ bad input

@pytest.mark.parametrize("platform, fragment", [
    ("heading_deg = 400", "platform.heading_deg: 400 is outside 0.0 to 360.0"),
    ("heading_deg = 10\nheadings = \"uniform\"", "give one of heading_deg, headings, route"),
    ("headings = [0, 0]", "must add up to more than 0"),
    ("headings = \"sometimes\"", "expected \"uniform\" or a list"),
    ("sea_state = \"stormy\"", "platform.sea_state: 'stormy' is not one of"),
    ("sea_state = \"calm\"\nroll_deg = 3", "give either sea_state or roll_deg"),
    ("canyon = \"town-street\"", "a roadside canyon is for a vehicle"),
    ("heel_deg = 60", "platform.heel_deg: 60 is outside"),
    ("spin = 3", "platform.spin: unknown key"),
])
def test_bad_platform_values_are_one_line_each(tmp_path, platform, fragment):
    with pytest.raises(InputError) as exc:
        load_site(write(tmp_path, platform=platform))
    assert any(fragment in p and "site.toml" in p for p in exc.value.problems), exc.value.problems


def test_a_platform_needs_a_moving_mount_and_body_bearings(tmp_path):
    with pytest.raises(InputError) as exc:
        load_site(write(tmp_path, kind="fixed"))
    assert any("mount.kind \"vehicle\" or \"marine\"" in p for p in exc.value.problems)
    path = tmp_path / "true.toml"
    path.write_text(HEAD.format(kind="marine", terminal="") + '\n[horizon]\npoints = [[10, 20], [50, 30]]\n'
                    "\n[platform]\nheading_deg = 0\n", encoding="utf-8")
    with pytest.raises(InputError) as exc:
        load_site(path)
    assert any("horizon.frame" in p and "frame = \"body\"" in p for p in exc.value.problems)
    path.write_text(HEAD.format(kind="marine", terminal="") + '\n[horizon]\nframe = "body"\nreference = "magnetic"\n'
                    "points = [[10, 20], [50, 30]]\n\n[platform]\nheading_deg = 0\n", encoding="utf-8")
    with pytest.raises(InputError) as exc:
        load_site(path)
    assert any("horizon.reference: does not apply to body-frame bearings" in p for p in exc.value.problems)


def test_sea_states_table_for_a_vessel(tmp_path):
    """Rougher seas tilt the deck-fixed cone further, so fewer samples stay usable
    and the blocked share of a body mask moves; calm is near the still figures."""
    site = load_site(write(tmp_path, platform="heading_deg = 0", points=BODY_POINTS,
                           terminal="scan_half_angle_deg = 50.0"))
    run = run_site(site, **WINDOW)
    names = [r.name for r in run.platform.sea_states]
    assert names == ["calm", "moderate", "rough"]
    calm = run.platform.sea_states[0]
    assert calm.blocked_fraction == pytest.approx(run.assessment.blocked_fraction, abs=0.01)
    assert run.platform.sea_states[2].availability <= calm.availability + 1e-9


def test_a_deck_plan_ranks_spots_in_the_body_frame(tmp_path):
    """A mast 13 m tall 6 m forward of the reference point, seen from 2.5 m above
    the deck there: atan((13 - 2.5) / 5.9) = 60.7° dead ahead (hand trigonometry;
    the prism's near face is 5.9 m away), and nothing astern."""
    from survey.api import horizon_at, rank_spots

    text = (HEAD.format(kind="marine", terminal="").replace("height_m = 2.2", "height_m = 2.5")
            + "\n[platform]\nheading_deg = 0\n"
            + '\n[[plan.prism]]\nname = "mast"\npolygon = [[-0.1, 5.9], [0.1, 5.9], [0.1, 6.1], [-0.1, 6.1]]\n'
            + "height_m = 13.0\n"
            + '\n[[plan.point]]\nname = "arch"\nat = [0, 0]\nheight_m = 2.5\n'
            + '\n[[plan.point]]\nname = "at the mast"\nat = [0, 5.0]\nheight_m = 2.5\n')
    path = tmp_path / "deck.toml"
    path.write_text(text, encoding="utf-8")
    site = load_site(path)
    derived = horizon_at(site, 0.0, 0.0, 2.5)
    assert derived["elevation_deg"][0] == pytest.approx(math.degrees(math.atan(10.5 / 5.9)), abs=0.01)
    assert derived["elevation_deg"][180] == pytest.approx(0.0, abs=1e-9)
    ranking = rank_spots(run_site(site, **WINDOW))
    assert ranking.best.candidate.name == "arch"  # right under the mast is far worse
    assert any("body frame" in w for w in ranking.warnings)
    geo = tmp_path / "geo.toml"
    geo.write_text(HEAD.format(kind="marine", terminal="") + '\n[platform]\nheading_deg = 0\n'
                   '\n[plan]\nfile = "deck.geojson"\n', encoding="utf-8")
    (tmp_path / "deck.geojson").write_text('{"type": "FeatureCollection", "features": []}', encoding="utf-8")
    with pytest.raises(InputError) as exc:
        load_site(geo)
    assert any("plan.file: a GeoJSON plan is in longitude and latitude" in p for p in exc.value.problems)


def test_a_heel_edit_reuses_the_tracks_and_gives_a_clean_run(tmp_path):
    """The text UI's cache (pipeline.TrackCache): a platform's tracks depend on the
    minimum elevation and the route only; after a heel edit the cached run equals
    a clean one."""
    from dataclasses import replace

    site = load_site(write(tmp_path, platform="heading_deg = 20", points=BODY_POINTS))
    cache = TrackCache()
    first = run_site(site, cache=cache, **WINDOW)
    heeled = replace(site, platform=replace(site.platform, attitude=replace(site.platform.attitude, heel_deg=8.0)))
    again = run_site(heeled, cache=cache, **WINDOW)
    clean = run_site(heeled, **WINDOW)
    assert again.fleet is first.fleet  # reused
    assert result_dict(again) == result_dict(clean)
