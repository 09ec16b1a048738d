"""Tests for survey.render: geometry of the sky plot checked on the pixels.

Projection used throughout (worked by hand, independent of the module):
north up, east right, azimuth clockwise, radius linear in zenith distance:

    r = R * (90 - el) / 90
    x = cx + r * sin(az)
    y = cy - r * cos(az)        (image y grows downwards)

so az 90, el 45 lies right of the centre at half the radius, and az 0,
el 0 is the top of the rim.
"""

import io
import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from PIL import Image

from survey.render import (
    encode_png, horizon_panorama, horizon_panorama_for_run, outage_timeline,
    outage_timeline_for_run, outage_timeline_frame, panorama_frame, panorama_xy, plan_figure,
    plan_layout, plan_xy, plot_frame, project, sky_plot,
)

SIZE = 1000


def expected_xy(az_deg, el_deg, frame):
    """The projection formula written out (see module docstring)."""
    cx, cy, R = frame
    r = R * (90.0 - el_deg) / 90.0
    a = math.radians(az_deg)
    return cx + r * math.sin(a), cy - r * math.cos(a)


def clear_mask_az():
    az = np.arange(0.0, 360.0, 0.5)
    return az, np.zeros_like(az)


def render(az=(), el=(), blocked=None, *, mask=None, min_el=25.0, fov=None,
           notes=(), size=SIZE, weight_s=15.0):
    az = np.asarray(az, dtype=np.float32)
    el = np.asarray(el, dtype=np.float32)
    if blocked is None:
        blocked = np.zeros(az.shape, dtype=bool)
    m_az, m_el = mask if mask is not None else clear_mask_az()
    img = sky_plot(az_deg=az, el_deg=el, blocked=np.asarray(blocked, bool),
                   weight_s=weight_s, mask_az_deg=m_az, mask_el_deg=m_el,
                   min_elevation_deg=min_el, title="Test site",
                   subtitle="2026-06-01 00:00 UTC · 24 h · 15 s step",
                   notes=notes, fov=fov, size_px=size)
    return img, np.asarray(img).astype(np.int32)


def repeat(az, el, n):
    return np.full(n, az, np.float32), np.full(n, el, np.float32)


# --- pixel classifiers (Okabe & Ito hues used by the figure) ---------------
def is_clear(px):      # blue family: #56B4E9 .. #0072B2 and darker
    r, _g, b = px[..., 0], px[..., 1], px[..., 2]
    return (b - r > 45) & (b > 50)


def is_blocked(px):    # orange/vermillion family: #E69F00 .. #D55E00
    r, _g, b = px[..., 0], px[..., 1], px[..., 2]
    return (r - b > 60)


def is_fov(px):        # reddish purple #CC79A7
    r, g, b = px[..., 0], px[..., 1], px[..., 2]
    return (r - g > 50) & (b - g > 25)


def lum(px):
    return px[..., :3].mean(axis=-1)


def disc_pixels(frame, shrink=0.0):
    cx, cy, R = frame
    yy, xx = np.mgrid[0:SIZE, 0:SIZE]
    return np.hypot(xx + 0.5 - cx, yy + 0.5 - cy) <= R - shrink


def near(arr, x, y, rad=3):
    x, y = int(round(x)), int(round(y))
    return arr[y - rad:y + rad + 1, x - rad:x + rad + 1]


# ---------------------------------------------------------------------------
def test_image_size_and_mode():
    for size in (1000, 640):
        img, _ = render(size=size)
        assert img.size == (size, size)
        assert img.mode == "RGB"


def test_project_matches_hand_worked_points():
    f = plot_frame(SIZE)
    cx, cy, R = f
    cases = {
        (90.0, 45.0): (cx + R / 2, cy),          # east, half radius
        (0.0, 0.0): (cx, cy - R),                # north on the rim
        (180.0, 60.0): (cx, cy + R / 3),         # south, a third out
        (270.0, 30.0): (cx - 2 * R / 3, cy),     # west, two thirds out
        (123.0, 90.0): (cx, cy),                 # zenith, any azimuth
    }
    for (az, el), (x, y) in cases.items():
        px, py = project(az, el, f)
        assert px == pytest.approx(x, abs=1e-9)
        assert py == pytest.approx(y, abs=1e-9)
        assert expected_xy(az, el, f) == pytest.approx((x, y), abs=1e-9)


def test_rim_is_drawn_where_the_frame_says():
    f = plot_frame(SIZE)
    _, px = render()
    cx, cy, R = f
    L = lum(px)
    for a in range(15, 360, 30):  # between the azimuth spokes and labels
        ar = math.radians(a)
        window = [L[int(round(cy - rr * math.cos(ar))), int(round(cx + rr * math.sin(ar)))]
                  for rr in np.arange(R - 2.0, R + 2.01, 0.5)]
        assert min(window) < 110, f"rim missing at az {a}"


def test_clear_samples_land_at_projected_pixel_east_half_radius():
    f = plot_frame(SIZE)
    az, el = repeat(90.0, 45.0, 200)
    _, px = render(az, el)
    x, y = expected_xy(90.0, 45.0, f)          # = (cx + R/2, cy)
    inside = disc_pixels(f)
    clear = is_clear(px) & inside
    assert clear.sum() > 20
    ys, xs = np.nonzero(clear)
    # The blob's centroid is where the formula puts it (grid lines cross here
    # so the centroid, not one pixel, is the robust check).
    assert xs.mean() + 0.5 == pytest.approx(x, abs=2.0)
    assert ys.mean() + 0.5 == pytest.approx(y, abs=2.0)
    # compact: nothing coloured far from the point
    assert np.hypot(xs + 0.5 - x, ys + 0.5 - y).max() < 16
    assert is_clear(near(px, x, y)).any()
    assert not (is_blocked(px) & inside).any()
    # East is to the right: the mirror point (west) stays uncoloured.
    xw, yw = expected_xy(270.0, 45.0, f)
    assert not is_clear(near(px, xw, yw, 6)).any()


def test_clear_sample_off_grid_exact_pixel():
    f = plot_frame(SIZE)
    az, el = repeat(200.0, 52.0, 50)   # not on a spoke or ring
    _, px = render(az, el)
    x, y = expected_xy(200.0, 52.0, f)
    assert is_clear(px[int(y), int(x)])
    # and north-up: az 200 is below and left of the centre
    cx, cy, _ = f
    assert x < cx and y > cy


def test_blocked_samples_show_blocked_hue_instead():
    f = plot_frame(SIZE)
    az, el = repeat(90.0, 45.0, 200)
    _, px = render(az, el, blocked=np.ones(200, bool))
    x, y = expected_xy(90.0, 45.0, f)
    inside = disc_pixels(f)
    blk = is_blocked(px) & inside
    assert blk.sum() > 20
    ys, xs = np.nonzero(blk)
    assert xs.mean() + 0.5 == pytest.approx(x, abs=2.0)
    assert ys.mean() + 0.5 == pytest.approx(y, abs=2.0)
    assert not (is_clear(px) & inside).any()


def test_dominant_layer_wins_where_both_present():
    f = plot_frame(SIZE)
    az, el = repeat(200.0, 52.0, 110)
    blocked = np.zeros(110, bool)
    blocked[10:] = True                      # 10 clear, 100 blocked
    _, px = render(az, el, blocked)
    x, y = expected_xy(200.0, 52.0, f)
    assert is_blocked(px[int(y), int(x)])


def test_density_ramp_dark_is_dense_and_single_sample_visible():
    f = plot_frame(SIZE)
    a1, e1 = repeat(200.0, 52.0, 1)          # one sample
    a2, e2 = repeat(340.0, 52.0, 60)         # sixty samples
    _, px = render(np.concatenate([a1, a2]), np.concatenate([e1, e2]))
    x1, y1 = expected_xy(200.0, 52.0, f)
    x2, y2 = expected_xy(340.0, 52.0, f)
    p1 = px[int(y1), int(x1)]
    p2 = px[int(y2), int(x2)]
    assert is_clear(p1) and is_clear(p2)     # sparse pass still tinted
    assert lum(p2) < lum(p1) - 40            # denser is darker


def test_obstruction_fill_under_mask_not_above():
    f = plot_frame(SIZE)
    m_az = np.arange(0.0, 360.0, 0.5)
    m_el = np.where((m_az >= 120) & (m_az <= 170), 35.0, 0.0)
    _, px = render(mask=(m_az, m_el))
    # Under the mask (el 10 < 35 at az 145): neutral grey, not white.
    x, y = expected_xy(145.0, 10.0, f)
    patch = near(px, x, y, 3).reshape(-1, 3)
    assert lum(patch).mean() < 235
    assert (np.ptp(patch, axis=1) < 12).all()      # grey, no hue
    assert lum(patch).min() < lum(patch).max() - 30  # hatched, not flat
    # Above it (el 50 at az 145) and outside it (az 200, el 10): white sky.
    for az, el in ((145.0, 50.0), (200.0, 10.0)):
        x, y = expected_xy(az, el, f)
        assert (near(px, x, y, 2) > 245).all(), (az, el)
    # Scanning outwards along az 145 from el 42 (inside the 45 deg grid
    # ring), the first non-white pixel is the obstruction outline at el 35.
    cx, cy, R = f
    a = math.radians(145.0)
    L = lum(px)
    first_dark_r = None
    for rr in np.arange(R * 48 / 90, R * 0.95, 0.5):
        v = L[int(cy - rr * math.cos(a)), int(cx + rr * math.sin(a))]
        if v < 240:
            first_dark_r = rr
            break
    r_edge = R * (90 - 35) / 90
    assert first_dark_r == pytest.approx(r_edge, abs=3.0)


def test_min_elevation_ring_is_dark_and_dashed():
    f = plot_frame(SIZE)
    _, px = render(min_el=25.0)
    cx, cy, R = f
    L = lum(px)

    def ring_dark_fraction(el):
        r = R * (90 - el) / 90
        dark = []
        for a in np.arange(0.0, 360.0, 1.0):
            if 0 <= a <= 30 or 180 <= a <= 210:   # ring labels, min label
                continue
            ar = math.radians(a)
            w = [L[int(round(cy - rr * math.cos(ar))), int(round(cx + rr * math.sin(ar)))]
                 for rr in np.arange(r - 2.0, r + 2.01, 0.5)]
            dark.append(min(w) < 90)
        return np.mean(dark)

    frac = ring_dark_fraction(25.0)
    assert 0.35 < frac < 0.92          # dark, with gaps: dashed
    assert ring_dark_fraction(45.0) < 0.05   # ordinary grid rings are light


def test_fov_outline_on_cone_edge():
    f = plot_frame(SIZE, fov=True)
    _, px = render(fov=(0.0, 60.0, 20.0))
    fov = is_fov(px)
    # Along the boresight meridian the edge is at el 60 +- 20.
    for az, el in ((0.0, 80.0), (0.0, 40.0)):
        x, y = expected_xy(az, el, f)
        assert is_fov(near(px, x, y, 3)).any(), (az, el)
    # Bearing 90 deg from the boresight, by spherical trigonometry:
    #   el = asin(sin60 cos20) = asin(0.81380) = 54.47 deg
    #   daz = atan2(sin20 cos60, cos20 - sin60 sin54.47)
    #       = atan2(0.17101, 0.93969 - 0.70477) = 36.06 deg
    el_e = math.degrees(math.asin(math.sin(math.radians(60)) * math.cos(math.radians(20))))
    assert el_e == pytest.approx(54.47, abs=0.01)
    for az in (36.06, 360.0 - 36.06):
        x, y = expected_xy(az, 54.47, f)
        assert is_fov(near(px, x, y, 3)).any(), az
    # ... and not at the boresight ring radius far off to the south.
    x, y = expected_xy(180.0, 60.0, f)
    assert not is_fov(near(px, x, y, 6)).any()
    assert fov.sum() > 100


def test_empty_input_renders():
    f = plot_frame(SIZE)
    img, px = render()
    assert img.size == (SIZE, SIZE)
    inside = disc_pixels(f)
    assert not (is_clear(px) & inside).any()
    assert not (is_blocked(px) & inside).any()
    # centre of an empty sky is white
    cx, cy, R = f
    x, y = expected_xy(200.0, 52.0, f)
    assert (near(px, x, y, 2) > 245).all()


def test_notes_shift_frame_and_nonfinite_samples_are_dropped():
    f0, f2 = plot_frame(SIZE, 0), plot_frame(SIZE, 2)
    assert f2.cy > f0.cy and f2.radius < f0.radius
    az = np.array([90.0, np.nan, 10.0], np.float32)
    el = np.array([45.0, 30.0, np.inf], np.float32)
    img, px = render(az, el, notes=("note one", "note two"))
    x, y = expected_xy(90.0, 45.0, f2)
    assert is_clear(near(px, x, y)).any()


def test_input_validation():
    with pytest.raises(ValueError):
        render([1.0, 2.0], [10.0], [False, False])
    with pytest.raises(ValueError):
        render([1.0], [10.0], weight_s=0.0)


def test_encode_png_roundtrip():
    img, _ = render(*repeat(90.0, 45.0, 10))
    data = encode_png(img)
    assert isinstance(data, bytes)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    back = Image.open(io.BytesIO(data))
    assert back.size == img.size
    assert np.array_equal(np.asarray(back.convert("RGB")), np.asarray(img))


def test_large_input_is_vectorised():
    rng = np.random.default_rng(0)
    n = 500_000
    az = rng.uniform(0, 360, n).astype(np.float32)
    el = np.degrees(np.arcsin(rng.uniform(0, 1, n))).astype(np.float32)
    m_az = np.arange(0.0, 360.0, 0.5)
    m_el = np.where((m_az >= 250) & (m_az <= 280), 20.0, 0.0)
    blocked = el < np.interp(az, m_az, m_el, period=360)
    # Half a million samples render (speed belongs in bench/, not in a test).
    _img, px = render(az, el, blocked, mask=(m_az, m_el), fov=(180.0, 60.0, 45.0))
    f = plot_frame(SIZE, fov=True)
    x, y = expected_xy(265.0, 8.0, f)            # inside the barn
    assert is_blocked(px[int(y), int(x)])


# ===========================================================================
# Horizon panorama
#
# Mapping (linear, worked by hand): for a plot area (left, top, width, height)
#     x = left + width * az / 360,   y = top + height * (90 - el) / 90
# so azimuth 90 is a quarter of the width from the left edge, 180 half-way,
# and elevation 45 half-way up.
# ===========================================================================
PANO = (1500, 500)


def pano(points=(), mask=None, az=(), el=(), blocked=None, min_el=25.0, size=PANO):
    m_az = np.arange(0.0, 360.0, 0.5)
    m_el = np.zeros_like(m_az) if mask is None else mask(m_az)
    img = horizon_panorama(mask_az_deg=m_az, mask_el_deg=m_el, points=points,
                           az_deg=np.asarray(az, np.float32), el_deg=np.asarray(el, np.float32),
                           blocked=blocked, weight_s=15.0, min_elevation_deg=min_el,
                           title="Test site: horizon profile", subtitle="test window", size=size)
    return img, np.asarray(img).astype(np.int32)


def test_panorama_size_and_mode():
    img, _ = pano()
    assert img.size == PANO and img.mode == "RGB"
    img = horizon_panorama()                      # all defaults: empty, print size
    assert img.size == (2400, 800) and img.mode == "RGB"


def test_panorama_frame_is_linear_in_azimuth_and_elevation():
    f = panorama_frame(PANO)
    x90, y45 = panorama_xy(90.0, 45.0, f)
    assert x90 - f.left == pytest.approx(f.width / 4.0, abs=1e-9)   # a quarter across
    assert y45 - f.top == pytest.approx(f.height / 2.0, abs=1e-9)   # half-way up
    x0, y0 = panorama_xy(0.0, 0.0, f)
    x360, y90 = panorama_xy(360.0, 90.0, f)
    assert (x0, y0) == pytest.approx((f.left, f.top + f.height))
    assert (x360, y90) == pytest.approx((f.left + f.width, f.top))
    # The plot sits inside the image with room for labels on every side.
    assert 0 < f.left and f.left + f.width < PANO[0]
    assert 0 < f.top and f.top + f.height < PANO[1]


def column(px, x, el_lo, el_hi, f, skip=()):
    """Pixels down the column at x between two elevations, leaving out bands
    of +-2 deg round the elevations in ``skip`` (grid and min-elevation lines)."""
    out = []
    for el in np.arange(el_lo, el_hi, 0.25):
        if any(abs(el - s) < 2.0 for s in skip):
            continue
        _, y = panorama_xy(0.0, el, f)
        out.append(px[int(y), int(x)])
    return np.array(out)


def test_panorama_hatch_under_obstructed_azimuth_only():
    f = panorama_frame(PANO)
    _, px = pano(mask=lambda a: np.where((a >= 120) & (a <= 170), 40.0, 0.0))
    skip = (15, 25, 30)   # grid lines at 15 and 30 deg, dashed minimum at 25
    x_obs, _ = panorama_xy(145.0, 0.0, f)
    x_clear, _ = panorama_xy(250.0, 0.0, f)
    obs = column(px, x_obs, 3.0, 37.0, f, skip)
    clear = column(px, x_clear, 3.0, 37.0, f, skip)
    L = lum(obs)
    assert (np.ptp(obs, axis=1) < 12).all()         # neutral grey, no hue
    assert 205 < np.median(L) < 240                  # the light grey fill ...
    assert L.min() < 170                             # ... crossed by hatch lines
    # hatch stripes: several separate dark runs down the column
    dark = L < 190
    assert np.count_nonzero(np.diff(dark.astype(int)) == 1) >= 3
    assert (lum(clear) > 245).all()                  # clear azimuth: white sky
    # Above the obstruction (el 50) the obstructed azimuth is white too.
    assert (lum(column(px, x_obs, 47.0, 58.0, f)) > 245).all()


def test_panorama_outline_at_mask_elevation():
    f = panorama_frame(PANO)
    _, px = pano(mask=lambda a: np.where((a >= 120) & (a <= 170), 40.0, 0.0))
    x, _ = panorama_xy(145.0, 0.0, f)
    L = lum(px)
    # Scanning down from el 44 the first dark pixel is the outline at el 40.
    for el in np.arange(44.0, 30.0, -0.1):
        _, y = panorama_xy(0.0, el, f)
        if L[int(y), int(x)] < 150:
            break
    _, y40 = panorama_xy(0.0, 40.0, f)
    assert y == pytest.approx(y40, abs=2.5)


def test_panorama_tracks_land_where_the_frame_says():
    f = panorama_frame(PANO)
    n = 200
    az = np.concatenate([np.full(n, 200.0), np.full(n, 60.0)])
    el = np.concatenate([np.full(n, 52.0), np.full(n, 30.0)])
    blocked = np.concatenate([np.zeros(n, bool), np.ones(n, bool)])
    _, px = pano(az=az, el=el, blocked=blocked,
                 mask=lambda a: np.where((a >= 40) & (a <= 80), 35.0, 0.0))
    plot = np.zeros(px.shape[:2], bool)
    plot[int(f.top) + 2:int(f.top + f.height) - 2, int(f.left) + 2:int(f.left + f.width) - 2] = True
    for want, cls, (a, e) in ((True, is_clear, (200.0, 52.0)), (True, is_blocked, (60.0, 30.0))):
        ys, xs = np.nonzero(cls(px) & plot)
        assert xs.size > 10
        x, y = panorama_xy(a, e, f)
        # The sample's 1 deg cell, smoothed symmetrically: centroid within 1.5 deg.
        assert abs(xs.mean() + 0.5 - x) < 1.5 * f.width / 360
        assert abs(ys.mean() + 0.5 - y) < 1.5 * f.height / 90
    # Clear samples are not drawn in the blocked hue and vice versa.
    x, y = panorama_xy(200.0, 52.0, f)
    assert not is_blocked(near(px, x, y, 4)).any()
    x, y = panorama_xy(60.0, 30.0, f)
    assert not is_clear(near(px, x, y, 4)).any()


def test_panorama_min_elevation_line_dashed():
    f = panorama_frame(PANO)
    _, px = pano(min_el=25.0)
    L = lum(px)

    def dark_fraction(el):
        _, y = panorama_xy(0.0, el, f)
        xs = np.arange(int(f.left) + 2, int(f.left + f.width) - 2)
        band = L[int(round(y)) - 2:int(round(y)) + 3, xs]
        return np.mean(band.min(axis=0) < 90)

    assert 0.35 < dark_fraction(25.0) < 0.9      # dark with gaps: dashed
    assert dark_fraction(45.0) < 0.05            # a grid line is light


def dark_text(px, box):
    x0, y0, x1, y1 = (int(v) for v in box)
    return np.count_nonzero(lum(px[y0:y1, x0:x1]) < 90)


def test_panorama_marks_points_and_labels_a_run_once():
    f = panorama_frame(PANO)
    u = 1.5  # layout unit of a 1500 x 500 image (1/1000 of the width)
    pts = [(100.0, 20.0, "hedge"), (200.0, 30.0, "hedge"), (300.0, 20.0, "barn")]
    _, px = pano(points=pts, min_el=5.0)
    for a, e, _ in pts:
        x, y = panorama_xy(a, e, f)
        assert lum(px[int(y), int(x)]) > 230                     # white ring centre
        ring = [lum(px[int(round(y - r * math.cos(t))), int(round(x + r * math.sin(t)))])
                for t in np.linspace(0, 2 * math.pi, 16, endpoint=False)
                for r in (4.5 * u, 5.0 * u, 5.5 * u)]
        assert min(ring) < 90                                    # black ring
    # A run of equal labels is labelled once, above its highest point (200 deg):
    # text above 200 and above 300, none above 100.
    def above(a, e):
        x, y = panorama_xy(a, e, f)
        return (x - 30 * u, y - 30 * u, x + 30 * u, y - 8 * u)
    assert dark_text(px, above(200.0, 30.0)) > 20
    assert dark_text(px, above(300.0, 20.0)) > 20
    assert dark_text(px, above(100.0, 20.0)) == 0


def test_panorama_empty_inputs_render_white_sky():
    f = panorama_frame(PANO)
    _, px = pano()
    inner = px[int(f.top) + 3:int(f.top + f.height) - 3, int(f.left) + 3:int(f.left + f.width) - 3]
    assert not is_clear(inner).any() and not is_blocked(inner).any()
    x, y = panorama_xy(200.0, 52.0, f)
    assert (near(px, x, y, 2) > 245).all()


def test_panorama_input_validation():
    with pytest.raises(ValueError):
        horizon_panorama(az_deg=[1.0, 2.0], el_deg=[10.0])
    with pytest.raises(ValueError):
        horizon_panorama(weight_s=0.0)
    with pytest.raises(ValueError):
        horizon_panorama(size=(100, 50))


# ---------------------------------------------------------------------------
# Adapters on a real (short) run of a demo site
# ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def alder_run():
    from survey.pipeline import run_site
    from survey.site import load_site

    from .conftest import DEMO
    return run_site(load_site(DEMO / "alder-brook-farm" / "site.toml"), hours=1, step_s=30)


def test_panorama_for_run_marks_points_in_true_azimuth(alder_run):
    run = alder_run
    img = horizon_panorama_for_run(run, size=PANO)
    assert img.size == PANO and img.mode == "RGB"
    px = np.asarray(img).astype(np.int32)
    f = panorama_frame(PANO)
    # The demo's "tall alder" is at compass bearing 152, elevation 40.  True
    # bearing = compass bearing + declination (east positive), so with the
    # site's WMM declination (about -14 deg here) it is marked near 138, not 152.
    dec = run.declination.declination_deg
    assert -16.0 < dec < -12.0
    x_true, y = panorama_xy((152.0 + dec) % 360.0, 40.0, f)
    x_mag, _ = panorama_xy(152.0, 40.0, f)
    assert lum(px[int(y), int(x_true)]) > 230          # ring centre (white)
    assert (lum(near(px, x_true, y, 6)) < 90).any()    # ring
    assert not (lum(near(px, x_mag, y, 2)) < 90).any() # nothing drawn at the compass bearing


def test_timeline_for_run_size(alder_run):
    img = outage_timeline_for_run(alder_run)
    assert img.mode == "RGB" and img.size == (2400, 700)


# ===========================================================================
# Outage timeline
#
# Day rows: x = left + width * (seconds after 00:00 UTC) / 86400, so 06:00
# is a quarter across and 07:00 is 7/24 across.
# ===========================================================================
T0 = datetime(2026, 6, 1, tzinfo=timezone.utc)


def down_at(hours, step_s, *intervals_h):
    n = int(math.floor(hours * 3600 / step_s + 1e-9))
    t_h = np.arange(n) * step_s / 3600.0
    down = np.zeros(n, bool)
    for a, b in intervals_h:
        down |= (t_h >= a) & (t_h < b)
    return down


def timeline(down, hours, step_s=15.0, start=T0, size=(1200, 500)):
    img = outage_timeline(start=start, hours=hours, step_s=step_s, down=down,
                          title="Test site: drop-outs", subtitle="test", size=size)
    return img, np.asarray(img).astype(np.int32)


def row_lum(px, f, r, x):
    y0 = f.row_top(r) + 0.3 * f.row_height
    y1 = f.row_top(r) + 0.7 * f.row_height
    return lum(px[int(y0):int(y1), int(round(x))]).mean()


def test_timeline_frame_day_axis():
    f = outage_timeline_frame(T0, 24.0, 15.0, size=(1200, 500))
    assert f.rows == 1 and f.axis_start_s == 0 and f.axis_span_s == 86400
    assert f.x(6 * 3600) - f.left == pytest.approx(f.width / 4.0)
    assert f.x(24 * 3600) == pytest.approx(f.left + f.width)
    assert outage_timeline_frame(T0, 168.0, 15.0).rows == 7
    # A window starting at noon touches two UTC days.
    assert outage_timeline_frame(T0 + timedelta(hours=12), 24.0, 15.0).rows == 2


def test_timeline_down_hour_darkens_its_columns():
    down = down_at(24.0, 15.0, (6.0, 7.0))
    img, px = timeline(down, 24.0)
    assert img.size == (1200, 500) and img.mode == "RGB"
    f = outage_timeline_frame(T0, 24.0, 15.0, size=(1200, 500))
    inside = [row_lum(px, f, 0, f.x(s)) for s in np.linspace(6.05, 6.95, 10) * 3600]
    outside = [row_lum(px, f, 0, f.x(s)) for s in (3 * 3600 + 600, 12 * 3600 + 600, 7.2 * 3600)]
    assert max(inside) < 120          # dark bar from 06:00 to 07:00
    assert min(outside) > 190         # light row elsewhere
    assert is_blocked(px[int(f.row_top(0) + f.row_height / 2), int(f.x(6.5 * 3600))])


def test_timeline_multi_day_rows_and_hour_summary():
    down = down_at(72.0, 60.0, (24 + 18.0, 24 + 19.0))     # day 2, 18:00-19:00
    size = (1200, 800)
    _, px = timeline(down, 72.0, step_s=60.0, size=size)
    f = outage_timeline_frame(T0, 72.0, 60.0, size=size)
    assert f.rows == 3
    x = f.x(18.5 * 3600)
    assert row_lum(px, f, 1, x) < 120
    assert row_lum(px, f, 0, x) > 190 and row_lum(px, f, 2, x) > 190
    # The per-hour chart below the rows has a bar in the 18-19 h column only.
    rows_bottom = int(f.rows_top + f.rows * f.row_pitch) + 5
    below = px[rows_bottom:, :]
    assert np.count_nonzero(is_blocked(below[:, int(f.x(18.5 * 3600))])) > 5
    assert np.count_nonzero(is_blocked(below[:, int(f.x(12.5 * 3600))])) == 0


def test_timeline_no_outages_says_so():
    img, px = timeline(np.zeros(24 * 240, bool), 24.0)
    f = outage_timeline_frame(T0, 24.0, 15.0, size=(1200, 500))
    u = 1.2                                  # layout unit: 1/1000 of the width
    rows_bottom = f.rows_top + f.rows * f.row_pitch
    assert not is_blocked(px[:int(rows_bottom + 100 * u)]).any()   # no bar, rows or chart
    assert is_blocked(px[int(rows_bottom + 100 * u):]).any()       # (the legend swatch is)
    # The message sits in the middle of the row (dark text on a white card).
    y = int(f.row_top(0) + f.row_height / 2)
    mid = px[y - 6:y + 6, int(f.x(9 * 3600)):int(f.x(15 * 3600))]
    assert np.count_nonzero(lum(mid) < 90) > 20
    # default size for one day
    img = outage_timeline(start=T0, hours=24.0, step_s=15.0, down=np.zeros(5760, bool))
    assert img.size == (2400, 700)


def test_timeline_short_window_zooms_in():
    down = down_at(1.0, 15.0, (0.5, 0.5 + 5 / 60))      # 00:30-00:35
    _, px = timeline(down, 1.0)
    f = outage_timeline_frame(T0, 1.0, 15.0, size=(1200, 500))
    assert f.rows == 1 and f.axis_start_s == 0 and f.axis_span_s == 3600
    assert row_lum(px, f, 0, f.x(1950)) < 120             # 00:32:30
    assert row_lum(px, f, 0, f.x(900)) > 190              # 00:15
    # A single 15 s drop-out is still drawn (at least one visible column).
    down = down_at(24.0, 15.0, (13.0, 13.0 + 15 / 3600))
    _, px = timeline(down, 24.0)
    f = outage_timeline_frame(T0, 24.0, 15.0, size=(1200, 500))
    y = int(f.row_top(0) + f.row_height / 2)
    assert is_blocked(px[y, int(f.x(13 * 3600)) - 2:int(f.x(13 * 3600)) + 3]).any()


def test_timeline_default_height_grows_and_is_capped():
    h7 = outage_timeline(start=T0, hours=168, step_s=60, down=np.zeros(168 * 60, bool)).size[1]
    h60 = outage_timeline(start=T0, hours=1440, step_s=600,
                          down=np.zeros(1440 * 6, bool)).size[1]
    assert 700 < h7 < h60 <= 2400


def test_timeline_validation():
    with pytest.raises(ValueError):
        outage_timeline(start=T0, hours=1.0, step_s=15.0, down=np.zeros(10, bool))


# ===========================================================================
# Site plan
# ===========================================================================
PLAN = (800, 800)
BARN = {"kind": "building", "name": "barn", "height_m": 10.0,
        "polygon": [[10, 5], [20, 5], [20, 15], [10, 15]]}
TREE = {"kind": "tree", "name": "spruce", "at": [-15, -10], "radius_m": 3.0, "height_m": 12.0}
WALL_ = {"kind": "wall", "line": [[-20, 10], [-20, 18]], "height_m": 2.0}


def plan(obstacles=(BARN, TREE, WALL_), cells=(), markers=(), best=None, size=PLAN):
    kw = dict(obstacles=list(obstacles), cells=list(cells), markers=list(markers), best=best)
    img = plan_figure(title="Test plan", subtitle="test", size=size, **kw)
    return img, np.asarray(img).astype(np.int32), plan_layout(size=size, **kw)


def test_plan_size_mode_and_empty():
    img, _, _ = plan()
    assert img.size == PLAN and img.mode == "RGB"
    img = plan_figure()                                  # nothing at all
    assert img.size == (1600, 1600) and img.mode == "RGB"
    img, px, lay = plan(obstacles=(), cells=())
    f = lay.frame
    inner = px[int(f.top) + 5:int(f.bottom) - 5, int(f.left) + 5:int(f.right) - 5]
    assert not is_blocked(inner).any()


def test_plan_building_lands_at_its_metres():
    _, px, lay = plan()
    f = lay.frame
    L = lum(px)
    # Inside the footprint near its south-west corner: grey fill, hatched.
    x, y = plan_xy(11.0, 6.0, f)
    patch = near(px, x, y, 4).reshape(-1, 3)
    assert (np.ptp(patch, axis=1) < 12).all() and 190 < lum(patch).mean() < 235
    # Just outside (east 8 m): white paper.
    x, y = plan_xy(8.0, 6.0, f)
    assert lum(near(px, x, y, 2)).min() > 200
    # Scanning east along north 7 m from east 6 m, the first dark pixel is the
    # west wall at east 10 m; scanning south along east 17 m from north 18 m,
    # the first is the north wall at north 15 m.
    def first_dark(xs, ys):
        for xx, yy in zip(xs, ys):
            if L[int(yy), int(xx)] < 150:
                return xx, yy
        return None
    xs, ys = plan_xy(np.linspace(6, 12, 400), np.full(400, 7.0), f)
    xd, _ = first_dark(xs, ys)
    assert xd == pytest.approx(float(plan_xy(10.0, 0.0, f)[0]), abs=2.5)
    xs, ys = plan_xy(np.full(400, 17.0), np.linspace(18, 13, 400), f)
    _, yd = first_dark(xs, ys)
    assert yd == pytest.approx(float(plan_xy(0.0, 15.0, f)[1]), abs=2.5)
    # Equal aspect: the 10 m walls are equally long east and north in pixels.
    (x0, y0), (x1, y1) = plan_xy(10.0, 5.0, f), plan_xy(20.0, 15.0, f)
    assert (x1 - x0) == pytest.approx(y0 - y1) and x1 > x0 and y1 < y0   # north up


def test_plan_tree_crown_drawn_to_radius():
    _, px, lay = plan()
    f = lay.frame

    def greenish(p):
        return p[..., 1] - p[..., 0] > 40
    x, y = plan_xy(-15.0 + 2.0, -10.0, f)       # inside the 3 m crown
    assert greenish(near(px, x, y, 2)).all()
    x, y = plan_xy(-15.0 + 4.0, -10.0, f)       # outside it
    assert not greenish(near(px, x, y, 2)).any()


def test_plan_scale_bar_matches_its_metres():
    _, px, lay = plan()
    m = lay.scale_m
    k = 10.0 ** math.floor(math.log10(m))
    assert round(m / k, 9) in (1.0, 2.0, 5.0)                 # a round length
    assert lay.scale_px == pytest.approx(m * lay.frame.px_per_m)
    # about a fifth of the map's width
    assert 0.08 < lay.scale_px / (lay.frame.right - lay.frame.left) < 0.25
    row = lum(px[int(round(lay.scale_y)), :])
    xs = np.flatnonzero(row < 80)
    xs = xs[(xs > lay.scale_x - 10) & (xs < lay.scale_x + lay.scale_px + 10)]
    assert xs.min() == pytest.approx(lay.scale_x, abs=2.0)
    assert xs.max() - xs.min() == pytest.approx(lay.scale_px, abs=2.5)


def test_plan_cells_coloured_by_blocked_fraction():
    cells = [(0.0, 20.0, 2.0, 0.0), (4.0, 20.0, 2.0, 0.2)]
    _, px, lay = plan(cells=cells)
    assert lay.blocked_max == pytest.approx(0.2)      # a round top at the largest
    f = lay.frame
    clear = near(px, *plan_xy(0.0, 20.0, f), 3).reshape(-1, 3)
    worst = near(px, *plan_xy(4.0, 20.0, f), 3).reshape(-1, 3)
    assert lum(clear).mean() > 215                      # light = clear sky
    assert lum(worst).mean() < lum(clear).mean() - 100  # dark = blocked
    assert is_blocked(worst).all()                      # the vermillion end


def test_plan_markers_and_best_spot():
    markers = [{"name": "yard pole", "east_m": 5.0, "north_m": -5.0, "kind": "pole",
                "blocked_fraction": 0.01},
               {"name": "bracket", "east_m": -5.0, "north_m": 5.0, "kind": "point",
                "blocked_fraction": 0.04}]
    best = {"name": "yard pole", "east_m": 5.0, "north_m": -5.0, "height_m": 6.5,
            "blocked_fraction": 0.01}
    _, px, lay = plan(markers=markers, best=best)
    f = lay.frame
    x, y = plan_xy(5.0, -5.0, f)
    assert (lum(near(px, x, y, 2)) < 60).all()           # the black star's core
    x, y = plan_xy(-5.0, 5.0, f)
    assert (lum(near(px, x, y, 5)) < 60).any()           # square outline
    # The site point (0, 0): a white ring with a black cross.
    x, y = plan_xy(0.0, 0.0, f)
    assert lum(px[int(y), int(x)]) < 100


def test_plan_input_validation():
    with pytest.raises(ValueError):
        plan_figure(obstacles=[{"kind": "pond", "polygon": [[0, 0], [1, 0], [1, 1]]}])
    with pytest.raises(ValueError):
        plan_figure(obstacles=[{"kind": "building", "polygon": [[0, 0], [1, 0]]}])
    with pytest.raises(ValueError):
        plan_figure(obstacles=[{"kind": "tree", "at": [0, 0]}])
    with pytest.raises(ValueError):
        plan_figure(cells=[(0, 0, 1)])
