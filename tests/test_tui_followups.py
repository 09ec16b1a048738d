"""Text UI follow-ups of issues 15 and 18: a vehicle's or vessel's body frame
named on the Horizon and Sky tabs, and the photo skyline turned into points.

The skyline is checked against the engine's own photo reading
(``survey.photo.photo_skyline``, itself checked against drawn scenes in
tests/test_photo.py), computed here apart from the app, and the points' mask
against it by hand interpolation (np.interp, periodic) at every degree."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("textual")

from survey.horizon import HorizonPoint, HorizonProfile  # noqa: E402
from survey.magnetic import declination  # noqa: E402
from survey.photo import PhotoSpec, photo_skyline  # noqa: E402
from survey.photo.points import photo_points  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.window import window_start  # noqa: E402
from tui.panes.horizon_editor import HorizonEditor  # noqa: E402

from .test_tui import app_for, demo_copy, drive, until  # noqa: E402

DEGREES = np.arange(0.0, 360.0, 1.0)


def hand_mask(points, dec):
    """Straight lines between the points' true azimuths, through north."""
    az = np.array([(p.azimuth_deg + dec) % 360.0 for p in points])
    el = np.array([p.elevation_deg for p in points])
    return lambda a: np.interp(a, az, el, period=360.0)


def independent_skyline(site, dec_deg):
    spec = site.photo
    true_bearing = spec.bearing_deg + (dec_deg if site.horizon.reference == "magnetic" else 0.0)
    return photo_skyline(PhotoSpec(spec.file, spec.projection, true_bearing, spec.lens, spec.circle))


def test_points_follow_a_skyline_through_north_within_half_a_degree():
    """A skyline with a steep mast, a ragged crown and a roof ridge across
    north (355°..5°): the thinned points' mask within 0.5° at every degree and
    every 0.1° (true and compass bearings, declination -14.3°: south of the
    equator's values from memory, sign only matters)."""
    az = np.arange(0.0, 360.0, 0.5)
    el = 8.0 + 4.0 * np.sin(np.radians(3 * az)) + 2.5 * np.sin(np.radians(17 * az))
    el[(az >= 350) | (az <= 8)] = 30.0  # a roof across north
    el[(az >= 120) & (az <= 121.5)] = 45.0  # a mast
    el = np.clip(el, 0.0, 90.0)
    fine = np.arange(0.0, 360.0, 0.1)
    sky = np.interp(fine, az, el, period=360.0)
    for ref, dec in (("true", 0.0), ("magnetic", -14.3)):
        points, dropped = photo_points(HorizonProfile((), ref), az, el, dec)
        assert dropped == 0 and all(p.label == "photo" for p in points)
        assert len(points) < len(az) / 3  # thinned
        assert np.abs(hand_mask(points, dec)(fine) - sky).max() <= 0.5
        assert all(0.0 <= p.azimuth_deg < 360.0 for p in points)


def test_measured_points_above_the_skyline_stay_as_typed():
    az = np.arange(0.0, 360.0, 0.5)
    el = np.full(az.shape, 5.0)
    mine = (HorizonPoint(200.0, 30.0, 12.0, "oak"), HorizonPoint(40.0, 2.0, None, "low hedge"))
    points, dropped = photo_points(HorizonProfile(mine, "magnetic"), az, el, 3.0)
    assert dropped == 1 and mine[0] in points and mine[1] not in points
    want = np.maximum(5.0, hand_mask(mine, 3.0)(DEGREES))  # the mask before: max(points, skyline)
    assert np.abs(hand_mask(points, 3.0)(DEGREES) - want).max() <= 0.5


def test_photo_to_points_in_the_app_saves_and_undoes(tmp_path):
    """fernbank-paddock (compass bearings, a panorama): key p, confirm; the
    saved file has points and no photo, its mask within 0.5° of
    max(photo skyline, the measured hedge points) at every degree; ctrl+z
    brings the photo back (and saves it)."""
    site_file = demo_copy(tmp_path, "fernbank-paddock")
    before = load_site(site_file)
    app = app_for(site_file, tmp_path)

    async def go():
        async with app.run_test(size=(120, 40)) as pilot:
            ws = app.workspace
            await until(pilot, lambda: ws.query_one(HorizonEditor).photo is not None, 60, "the photo skyline")
            editor = ws.query_one(HorizonEditor)
            await pilot.press("f3")
            await pilot.press("p")
            await pilot.pause(0.3)
            await pilot.press("enter")
            await until(pilot, lambda: editor.photo_spec is None, 10, "the photo detached")
            await pilot.press("ctrl+s")
            await pilot.pause(0.3)
            saved = load_site(site_file)
            await pilot.press("ctrl+z")
            await pilot.pause(0.3)
            restored = editor.photo_spec
            await pilot.press("ctrl+s")
            await pilot.pause(0.3)
            return saved, restored

    saved, restored = drive(go())
    assert saved.photo is None
    assert saved.horizon.reference == "magnetic"
    assert sum(p.label == "photo" for p in saved.horizon.points) > 10
    dec = declination(before.latitude_deg, before.longitude_deg, before.elevation_m,
                      window_start(before)).declination_deg
    sky = independent_skyline(before, dec)
    hedge = hand_mask(before.horizon.points, dec)
    want = np.maximum(np.interp(DEGREES, sky.az_deg, sky.el_deg, period=360.0), hedge(DEGREES))
    got = hand_mask(saved.horizon.points, dec)(DEGREES)
    assert np.abs(got - want).max() <= 0.5
    assert restored == before.photo
    assert load_site(site_file).photo == before.photo
