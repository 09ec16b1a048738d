"""Routes (survey/platform/route.py, moving.py): GPX read with gpxpy, tracks for
the moving observer checked against skyfield, a route due east against a fixed
heading of 90°, and the one-line errors for bad tracks."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from survey.errors import InputError
from survey.pipeline import run_site
from survey.platform import read_route
from survey.platform.route import courses_deg, route_at
from survey.site import load_site

from .helpers import START

SITE = """\
[site]
name = "Test boat"
latitude = 45.3
longitude = -72.6

[mount]
kind = "marine"
height_m = 3.0

[terminal]
min_elevation_deg = 25.0

[horizon]
frame = "body"
points = [[0, 0], [60, 0], [80, 40, "arch"], [100, 40, "arch"], [120, 0], [250, 0], [270, 35, "mast"], [290, 0]]

[platform]
{platform}
"""


def gpx(points, times=True) -> str:
    """A GPX 1.1 track: points (lat, lon, time) as a plain string, as a logger writes it."""
    rows = []
    for lat, lon, when in points:
        t = f"<time>{when:%Y-%m-%dT%H:%M:%SZ}</time>" if times and when is not None else ""
        rows.append(f'<trkpt lat="{lat}" lon="{lon}"><ele>0</ele>{t}</trkpt>')
    return ('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="test" '
            'xmlns="http://www.topografix.com/GPX/1/1"><trk><name>t</name><trkseg>'
            + "".join(rows) + "</trkseg></trk></gpx>\n")


def east_along_parallel(lat, lon0, hours, km_per_h, every_s=60):
    """Points due east along a parallel: longitude moves by d / (R cos lat)."""
    n = int(hours * 3600 / every_s) + 1
    dlon = np.degrees(km_per_h * every_s / 3600.0 / (6371.0088 * np.cos(np.radians(lat))))
    return [(lat, round(lon0 + i * dlon, 7), START + timedelta(seconds=i * every_s)) for i in range(n)]


def write_route(tmp_path, points, platform=None, times=True):
    (tmp_path / "route.gpx").write_text(gpx(points, times), encoding="utf-8")
    path = tmp_path / "site.toml"
    path.write_text(SITE.format(platform=platform or 'route = "route.gpx"'), encoding="utf-8")
    return path


def test_courses_against_hand_trigonometry():
    """Great-circle initial course (the forward-azimuth formula, e.g. any
    navigation text): due north 0°, due east along the equator 90°, due west 270°,
    and along a parallel a little north of east... no: a little *south* of 90° at
    the start in the northern hemisphere, by about half the longitude step times sin(lat)."""
    c = courses_deg(np.array([0.0, 1.0, 1.0]), np.array([0.0, 0.0, 1.0]))
    assert c[0] == pytest.approx(0.0)
    assert courses_deg(np.array([0.0, 0.0]), np.array([0.0, 1.0]))[0] == pytest.approx(90.0)
    assert courses_deg(np.array([0.0, 0.0]), np.array([1.0, 0.0]))[0] == pytest.approx(270.0)
    lat, dlon = 45.0, 0.01
    course = courses_deg(np.array([lat, lat]), np.array([0.0, dlon]))[0]
    assert course == pytest.approx(90.0 - dlon / 2 * np.sin(np.radians(lat)), abs=1e-5)
    # Through the antimeridian: 179.99 E to 179.99 W is east.
    assert courses_deg(np.array([10.0, 10.0]), np.array([179.99, -179.99]))[0] == pytest.approx(90.0, abs=0.01)


def test_positions_are_interpolated_and_held_at_the_ends(tmp_path):
    pts = [(10.0, 179.9, START), (10.2, -179.9, START + timedelta(hours=1))]
    (tmp_path / "r.gpx").write_text(gpx(pts), encoding="utf-8")
    r = read_route(tmp_path / "r.gpx")
    t0 = START.timestamp()
    lat, lon, ele, head = route_at(r, np.array([t0 - 60, t0 + 1800, t0 + 7200]))
    assert lat == pytest.approx([10.0, 10.1, 10.2])
    assert lon == pytest.approx([179.9, 180.0 - 360.0 * (lon[1] < 0), -179.9], abs=1e-9)  # through 180, not across the globe
    assert np.all(np.abs(head - 45) < 45)


def test_route_tracks_agree_with_skyfield_for_the_moving_point(tmp_path):
    """Outside reference: skyfield's (satellite - wgs84.latlon(...)).at(t).altaz()
    at the route's own position at each sampled time, from the same SGP4 elements."""
    from skyfield.api import EarthSatellite, load, wgs84

    site = load_site(write_route(tmp_path, east_along_parallel(45.3, -72.6, 2.0, 60.0)))
    run = run_site(site, step_s=30.0)
    raw = run.tracks  # body frame, level: true elevation, azimuth from the bow
    p = run.platform
    ts = load.timescale(builtin=True)
    rng = np.random.default_rng(3)
    pick = rng.choice(len(raw), 150, replace=False)
    for i in pick:
        k, s = int(raw.time_index[i]), int(raw.sat[i])
        when = run.window.start + timedelta(seconds=k * run.window.step_s)
        sat = EarthSatellite.from_satrec(run.fleet.satrecs[s], ts)
        here = wgs84.latlon(float(p.latitude_deg[k]), float(p.longitude_deg[k]), elevation_m=3.0)
        alt, az, _ = (sat - here).at(ts.from_datetime(when)).altaz()
        assert raw.el_deg[i] == pytest.approx(alt.degrees, abs=0.01)
        assert raw.az_deg[i] == pytest.approx((az.degrees - p.headings_deg[k]) % 360.0, abs=0.01)
    # No satellite above the minimum elevation is missing at a few times.
    for k in (0, 120, 239):
        when = ts.from_datetime(run.window.start + timedelta(seconds=k * run.window.step_s))
        here = wgs84.latlon(float(p.latitude_deg[k]), float(p.longitude_deg[k]), elevation_m=3.0)
        seen = set(raw.sat[raw.time_index == k].tolist())
        for s, rec in enumerate(run.fleet.satrecs):
            alt = (EarthSatellite.from_satrec(rec, ts) - here).at(when).altaz()[0].degrees
            if alt >= 25.02:
                assert s in seen, (k, s, alt)
            elif alt < 24.98:
                assert s not in seen, (k, s, alt)


def test_a_route_due_east_is_a_heading_of_90(tmp_path):
    """The issue's check: a route due east along a parallel gives, within 0.01, the
    figures of the same body-frame mask at a fixed heading of 90°."""
    path = write_route(tmp_path, east_along_parallel(45.3, -72.65, 6.0, 15.0))
    route_run = run_site(load_site(path), step_s=30.0)
    assert route_run.window.start == START and route_run.window.hours == pytest.approx(6.0)
    assert np.all(np.abs(route_run.platform.headings_deg - 90.0) < 0.05)
    fixed = tmp_path / "fixed.toml"
    fixed.write_text(SITE.format(platform="heading_deg = 90").replace("longitude = -72.6", "longitude = -72.0"),
                     encoding="utf-8")
    ref = run_site(load_site(fixed), start=START, hours=6.0, step_s=30.0).assessment
    a = route_run.assessment
    assert a.blocked_fraction > 0.02
    assert a.blocked_fraction == pytest.approx(ref.blocked_fraction, abs=0.01)
    assert a.availability == pytest.approx(ref.availability, abs=0.01)
    assert a.interruption == pytest.approx(ref.interruption, abs=0.01)
    down = route_run.platform
    assert down.latitude_deg.size == route_run.window.count


def test_a_gap_is_a_warning(tmp_path):
    pts = east_along_parallel(45.3, -72.6, 1.0, 10.0, every_s=300)
    pts = pts[:3] + [(lat, lon, t + timedelta(minutes=40)) for lat, lon, t in pts[3:]]
    run = run_site(load_site(write_route(tmp_path, pts)), step_s=60.0)
    assert any("gap(s) of more than 10 min" in w for w in run.warnings), run.warnings


@pytest.mark.parametrize("case, fragment", [
    ("no times", "track point 1 has no <time>"),
    ("one point", "a single track point"),
    ("latitude", "track point 2: latitude 95.0 is outside -90 to 90"),
    ("longitude", "track point 1: longitude 200.0 is outside -180 to 180"),
    ("not a number", "not a GPX file gpxpy can read (Invalid value"),
    ("backwards", "track point 3: its time is not after point 2's"),
    ("not gpx", "not a GPX file gpxpy can read"),
    ("no track", "no track points"),
    ("doctype", "DOCTYPE"),
])
def test_bad_routes_are_one_line_errors(tmp_path, case, fragment):
    pts = east_along_parallel(45.3, -72.6, 0.5, 10.0, every_s=600)
    text = {
        "no times": gpx(pts, times=False),
        "one point": gpx(pts[:1]),
        "latitude": gpx([pts[0], (95.0, pts[1][1], pts[1][2])] + pts[2:]),
        "longitude": gpx([(45.3, 200.0, START)] + pts[1:]),
        "not a number": gpx([(45.3, "abc", START)] + pts[1:]),
        "backwards": gpx([pts[0], pts[2], pts[1]]),
        "not gpx": "<gpx><trk><trkseg><trkpt lat=",
        "no track": gpx([]),
        "doctype": '<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY a "b">]>' + gpx(pts)[38:],
    }[case]
    (tmp_path / "route.gpx").write_text(text, encoding="utf-8")
    path = tmp_path / "site.toml"
    path.write_text(SITE.format(platform='route = "route.gpx"'), encoding="utf-8")
    with pytest.raises(InputError) as exc:
        load_site(path)
    assert len(exc.value.problems) == 1 and "route.gpx: " in exc.value.problems[0], exc.value.problems
    assert fragment in exc.value.problems[0], exc.value.problems


def test_cli_bad_route_exits_2_with_one_line(tmp_path):
    import subprocess
    import sys

    (tmp_path / "route.gpx").write_text(gpx([(45.3, -72.6, START)]), encoding="utf-8")
    path = tmp_path / "site.toml"
    path.write_text(SITE.format(platform='route = "route.gpx"'), encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "survey.cli", "assess", str(path)], capture_output=True, text=True)
    assert out.returncode == 2 and "Traceback" not in out.stderr
    assert out.stderr.strip().count("\n") == 0 and "single track point" in out.stderr


def test_route_window_defaults_to_the_track_and_flags_win(tmp_path):
    path = write_route(tmp_path, east_along_parallel(45.3, -72.6, 2.0, 20.0))
    site = load_site(path)
    run = run_site(site, step_s=60.0)
    assert run.window.start == START and run.window.hours == pytest.approx(2.0)
    later = datetime(2026, 6, 1, 1, 0, tzinfo=timezone.utc)
    run = run_site(site, start=later, step_s=60.0)
    assert run.window.start == later and run.window.hours == pytest.approx(1.0)
    run = run_site(site, start=later, hours=3.0, step_s=60.0)
    assert any("outside the route's times" in w for w in run.warnings)
