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
import time

import numpy as np
import pytest
from PIL import Image

from survey.render import encode_png, plot_frame, project, sky_plot

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
    render(az[:1000], el[:1000], blocked[:1000], mask=(m_az, m_el))  # warm-up
    t0 = time.perf_counter()
    img, px = render(az, el, blocked, mask=(m_az, m_el), fov=(180.0, 60.0, 45.0))
    dt = time.perf_counter() - t0
    assert dt < 2.5, f"render took {dt:.2f} s"   # ~0.3 s on a laptop-class CPU
    f = plot_frame(SIZE, fov=True)
    x, y = expected_xy(265.0, 8.0, f)            # inside the barn
    assert is_blocked(px[int(y), int(x)])
