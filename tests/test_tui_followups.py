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
from tui.widgets.skychart import SkyChart  # noqa: E402

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
            palette = [c.title for c in app.get_system_commands(ws)]
            await pilot.press("f3")
            await pilot.press("p")
            await pilot.pause(0.3)
            await pilot.press("enter")
            await until(pilot, lambda: editor.photo_spec is None, 10, "the photo detached")
            await pilot.press("ctrl+s")
            await pilot.pause(0.3)
            saved = load_site(site_file)
            saved_text = site_file.read_text(encoding="utf-8")
            await pilot.press("ctrl+z")
            await pilot.pause(0.3)
            restored = editor.photo_spec
            await pilot.press("ctrl+s")
            await pilot.pause(0.3)
            return saved, saved_text, restored, palette

    saved, saved_text, restored, palette = drive(go())
    assert "[horizon.photo]" not in saved_text and "file = \"panorama.jpg\"" not in saved_text
    assert "Photo skyline to points" in palette
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


# ----------------------------------------------------------------- body frame (issue 15)

def test_profile_names_the_body_frame_under_its_azimuths():
    """72 plot columns: 5° a column, so 90° is column 4 + 18 (hand arithmetic);
    the vessel's words sit under 0, 90, 180, 270 and 360, no compass letter."""
    from tui.widgets.frames import VESSEL
    from tui.widgets.profile import GUTTER, horizon_profile

    rows = horizon_profile([0, 90, 180], [10, 20, 10], GUTTER + 72, 12, names=VESSEL, colour=False).plain.split("\n")
    labels = rows[12 - 2]  # the legend is the last row, the labels above it
    assert labels[GUTTER:GUTTER + 3] == "bow" and labels.rstrip().endswith("bow")
    assert labels[GUTTER + 18 - 1:GUTTER + 18 + 3] == "stbd"  # centred: 4 letters from one left of the tick
    assert labels[GUTTER + 36 - 2:GUTTER + 36 + 3] == "stern"
    assert labels[GUTTER + 54 - 1:GUTTER + 54 + 3] == "port"
    assert not {"N", "E", "S", "W"} & set(labels.split())
    plain = horizon_profile([0, 90, 180], [10, 20, 10], GUTTER + 72, 12, colour=False).plain.split("\n")[10]
    assert plain[GUTTER] == "N" and plain[GUTTER + 18] == "E"  # a fixed site keeps N E S W


def test_sky_chart_names_the_body_frame_round_its_rim():
    from tui.widgets.frames import VEHICLE
    from tui.widgets.skychart import sky_chart_from, sky_layout

    w, h = 40, 21
    lay = sky_layout(w, h)
    rows = sky_chart_from([], [], None, [], [], 25.0, w, h, colour=False, names=VEHICLE).plain.split("\n")
    rc, cc, n = lay.rc, lay.cc, lay.n
    assert rows[rc - n - 1][cc - 2:cc + 3] == "front" and rows[rc + n + 1][cc - 1:cc + 3] == "rear"
    right = rows[rc][cc + 2 * n + 1:]
    left = rows[rc][:cc - 2 * n]
    down = "".join(r[cc + 2 * n + 1] for r in rows[rc - 2:rc + 3])
    assert right.startswith("right") or down == "right"
    assert left.endswith("left") or "".join(r[cc - 2 * n - 1] for r in rows[rc - 1:rc + 3]) == "left"
    assert "N" not in rows[rc - n - 1]


@pytest.mark.parametrize("name, front, side", [("tern-sloop", "bow", "stbd"), ("wren-camper", "front", "right")])
def test_the_app_names_the_body_frame_on_every_tab(tmp_path, name, front, side):
    site_file = demo_copy(tmp_path, name)
    app = app_for(site_file, tmp_path)

    async def go():
        async with app.run_test(size=(120, 50)) as pilot:
            ws = app.workspace
            await until(pilot, lambda: ws.query_one("#findings-body").display, 60, "findings")
            await pilot.press("f3")
            await pilot.pause(0.3)
            editor = ws.query_one(HorizonEditor)
            profile = editor.query_one("#profile")
            preview = profile._draw(profile.size.width, profile.size.height, False).plain
            phrases = " ".join(str(p) for p in editor.query_one("#reference").phrases)
            columns = [str(c.label) for c in editor.query_one("#points").columns.values()]
            await pilot.press("f4")
            await pilot.pause(0.3)
            sky = ws.query_one(SkyChart)
            chart = sky._draw(sky.size.width, sky.size.height, False).plain
            caption = str(ws.query_one("#sky-caption").render())
            label = str(ws.query_one("#f-terminal-tilt_azimuth_deg").parent.query_one(".field-label").render())
            return preview, phrases, columns, chart, caption, label

    preview, phrases, columns, chart, caption, label = drive(go())
    assert f"bearings from the {front}" in phrases
    assert f"{front.capitalize()}°" in columns and "True°" not in columns
    assert side in preview.split("\n")[-2] and " N " not in preview.split("\n")[-2]
    rows = chart.split("\n")
    down = ["".join(r[c] if c < len(r) else " " for r in rows) for c in range(max(map(len, rows)))]
    assert front in chart and (side in chart or any(side in col for col in down))
    assert f"bearings from the {front}" in caption and "North up" not in caption
    assert label == f"Tilted toward, ° from {front}"


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 40), st.floats(-30.0, 30.0), st.sampled_from(["true", "magnetic"]))
def test_any_skyline_is_kept_within_half_a_degree(seed, smooth, dec, ref):
    """For every skyline (random, from white noise 0..90° to smooth hills:
    a moving average of ``smooth`` samples, through north) and declination,
    the points' mask is within 0.5° of it at every 0.1°, and every bearing is
    in 0..360."""
    az = np.arange(0.0, 360.0, 0.5)
    noise = np.random.default_rng(seed).uniform(0.0, 90.0, az.size)
    el = np.convolve(np.r_[noise, noise[:smooth - 1]], np.ones(smooth) / smooth, mode="valid")
    points, _ = photo_points(HorizonProfile((), ref), az, el, dec)
    shift = dec if ref == "magnetic" else 0.0
    fine = np.arange(0.0, 360.0, 0.1)
    assert np.abs(hand_mask(points, shift)(fine) - np.interp(fine, az, el, period=360.0)).max() <= 0.5
    assert all(0.0 <= p.azimuth_deg < 360.0 for p in points)


def test_the_tilt_label_follows_the_mount_kind(tmp_path):
    """A vessel's tilt is toward a bearing from the bow; set the mount kind
    to vehicle on the form and it reads from the front."""
    from textual.widgets import Select

    site_file = demo_copy(tmp_path, "tern-sloop")
    app = app_for(site_file, tmp_path)

    def label():
        ws = app.workspace
        return str(ws.query_one("#f-terminal-tilt_azimuth_deg").parent.query_one(".field-label").render())

    async def go():
        async with app.run_test(size=(120, 50)) as pilot:
            await until(pilot, lambda: app.workspace.query_one("#findings-body").display, 60, "findings")
            first = label()
            app.workspace.query_one("#f-mount-kind", Select).value = "vehicle"
            await pilot.pause(0.3)
            return first, label()

    first, then = drive(go())
    assert first == "Tilted toward, ° from bow" and then == "Tilted toward, ° from front"
