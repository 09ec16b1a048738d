"""Tests for survey.figures: geometry of the sky plot checked on the pixels.

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

from survey.figures import (
    encode_png,
    horizon_panorama,
    horizon_panorama_for_run,
    outage_timeline,
    outage_timeline_for_run,
    outage_timeline_frame,
    panorama_frame,
    panorama_xy,
    plan_figure,
    plan_layout,
    plan_xy,
    plot_frame,
    project,
    sky_plot,
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


def disc_pixels(frame, shrink=0.0, size=SIZE):
    cx, cy, R = frame
    yy, xx = np.mgrid[0:size, 0:size]
    return np.hypot(xx + 0.5 - cx, yy + 0.5 - cy) <= R - shrink


def near(arr, x, y, rad=3):
    x, y = int(round(x)), int(round(y))
    return arr[y - rad:y + rad + 1, x - rad:x + rad + 1]


def rim_darkness(L, frame, az_list, r=None, half=2.0):
    """Darkest luminance within +-half px of radius r (default: the rim) at
    each azimuth, by the projection formula above."""
    cx, cy, R = frame
    r = R if r is None else r
    out = []
    for a in az_list:
        ar = math.radians(a)
        out.append(min(L[int(round(cy - rr * math.cos(ar))), int(round(cx + rr * math.sin(ar)))]
                       for rr in np.arange(r - half, r + half + 0.01, 0.5)))
    return np.array(out)


# ---------------------------------------------------------------------------
def test_image_size_and_mode():
    # Layout is in 1/1000ths of the image size (survey/figures/sky.py's docstring),
    # so the 640 px frame is the 1000 px frame scaled by 0.64.
    f1000 = plot_frame(1000)
    n = 200
    az = np.concatenate([np.full(n, 90.0), np.full(n, 270.0)]).astype(np.float32)
    el = np.full(2 * n, 45.0, np.float32)
    blocked = np.arange(2 * n) >= n                  # the west stack is blocked
    for size in (1000, 640):
        img, px = render(az, el, blocked, size=size)
        assert img.size == (size, size)
        assert img.mode == "RGB"
        f = plot_frame(size)
        assert tuple(f) == pytest.approx(tuple(v * size / 1000 for v in f1000), abs=1e-6)
        cx, cy, R = f
        # The rim sits at R on all sides (between the 30 deg spokes).
        assert (rim_darkness(lum(px), f, range(15, 360, 30)) < 110).all(), size
        # Hand projection: az 90 / az 270 at el 45 lie R/2 right / left of
        # the zenith; the clear blob is east, the blocked blob west.
        inside = disc_pixels(f, size=size)
        for cls, other, (x, y) in ((is_clear, is_blocked, (cx + R / 2, cy)),
                                   (is_blocked, is_clear, (cx - R / 2, cy))):
            ys, xs = np.nonzero(cls(px) & inside)
            assert xs.size > 10, size
            assert xs.mean() + 0.5 == pytest.approx(x, abs=2.0), size
            assert ys.mean() + 0.5 == pytest.approx(y, abs=2.0), size
            assert np.hypot(xs + 0.5 - x, ys + 0.5 - y).max() < 16 * size / 1000
            assert not other(near(px, x, y, 4)).any()


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
    cx, cy, R = f
    L = lum(px)
    # No track pixels anywhere on the plot, out to the azimuth labels.
    plot = disc_pixels(f, shrink=-45.0)
    assert not (is_clear(px) & plot).any()
    assert not (is_blocked(px) & plot).any()
    # The frame is still drawn: the rim at R all round ...
    assert (rim_darkness(L, f, range(15, 360, 30)) < 110).all()
    # ... and the azimuth labels 20 px (20/1000 of the width) outside it at
    # every 30 deg spoke, N at the top and E to the right (hand projection
    # at r = R + 20), with nothing between the labels.
    for a in range(0, 360, 15):
        x, y = cx + (R + 20) * math.sin(math.radians(a)), cy - (R + 20) * math.cos(math.radians(a))
        dark = np.count_nonzero(near(L, x, y, 11) < 90)
        if a % 30 == 0:
            assert dark > 15, a
        else:
            assert dark == 0, a
    # The sky between the grid rings and spokes is white: no obstruction fill
    # for a clear mask.  (Az 15 carries the ring labels; skipped.)
    for a in range(45, 360, 30):
        for e in (7.5, 37.5, 52.5, 67.5, 82.5):
            x, y = expected_xy(a, e, f)
            assert (near(px, x, y, 2) > 245).all(), (a, e)
    # The dashed minimum-elevation ring (25 deg) is at R * 65/90 and not at
    # the neighbouring 20 or 30 deg radii (away from its label at az 195 and
    # the ring labels along az 15).
    az_ring = [a for a in range(0, 360, 3) if not (175 <= a <= 215 or 5 <= a <= 25)]
    for e, lo, hi in ((25.0, 0.35, 0.92), (20.0, 0.0, 0.05), (30.0, 0.0, 0.05)):
        frac = np.mean(rim_darkness(L, f, az_ring, r=R * (90 - e) / 90) < 90)
        assert lo <= frac < hi, (e, frac)


def test_notes_shift_frame_and_nonfinite_samples_are_dropped():
    f0, f2 = plot_frame(SIZE, 0), plot_frame(SIZE, 2)
    assert f2.cy > f0.cy and f2.radius < f0.radius
    az = np.array([90.0, np.nan, 10.0], np.float32)
    el = np.array([45.0, 30.0, np.inf], np.float32)
    img, px = render(az, el, notes=("note one", "note two"))
    x, y = expected_xy(90.0, 45.0, f2)
    assert is_clear(near(px, x, y)).any()
    # The one finite sample is the only colour on the plot, and it sits at
    # the shifted frame's projection, not the note-less frame's.
    ys, xs = np.nonzero((is_clear(px) | is_blocked(px)) & disc_pixels(f2, shrink=-10.0))
    assert xs.size > 0 and np.hypot(xs + 0.5 - x, ys + 0.5 - y).max() < 16
    assert not is_clear(near(px, *expected_xy(90.0, 45.0, f0), 1)).any()
    # In particular nothing at the zenith, where an el = inf sample clipped
    # to 90 deg would land (the NaN-azimuth one is caught by the check above).
    assert not is_clear(near(px, f2.cx, f2.cy, 8)).any()


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
    # Every sample, projected by hand (module docstring), away from the edge
    # of the obstruction (3 deg band round az 250..280, el 20, where the
    # blur legitimately mixes the two layers).
    a = az.astype(np.float64)
    e = el.astype(np.float64)
    in_az = (a >= 250.0) & (a <= 280.0)
    edge = ((in_az & (np.abs(e - 20.0) < 3.0))
            | ((np.minimum(np.abs(a - 250.0), np.abs(a - 280.0)) < 3.0) & (e < 23.0)))
    cx, cy, R = f
    r = R * (90.0 - e) / 90.0
    x = cx + r * np.sin(np.radians(a))
    y = cy - r * np.cos(np.radians(a))
    p = px[y.astype(np.int64), x.astype(np.int64)]
    clear_s, blk_s = ~blocked & ~edge, blocked & ~edge
    assert clear_s.sum() > 400_000 and blk_s.sum() > 8_000
    # No sample lands on the other layer's hue: blocked hue exactly under
    # the mask, clear hue everywhere else ...
    assert np.count_nonzero(is_blocked(p[clear_s])) == 0
    assert np.count_nonzero(is_clear(p[blk_s])) == 0
    # ... and nearly all show their own hue (the rest sit under the rim,
    # rings, labels and the field-of-view line drawn over the tracks).
    assert is_clear(p[clear_s]).mean() > 0.9
    assert is_blocked(p[blk_s]).mean() > 0.85
    # The field of view is still drawn over the dense tracks: on its
    # boresight meridian it crosses el 60 - 45 = 15 deg.
    assert is_fov(near(px, *expected_xy(180.0, 15.0, f), 3)).any()


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


def pano_hand_xy(az_deg, el_deg, f):
    """The mapping above, written out from the PanoramaFrame docstring."""
    az = np.asarray(az_deg, dtype=np.float64)
    el = np.asarray(el_deg, dtype=np.float64)
    return f.left + f.width * az / 360.0, f.top + f.height * (90.0 - el) / 90.0


def test_panorama_size_and_mode():
    img, _ = pano()
    assert img.size == PANO and img.mode == "RGB"
    img_d = horizon_panorama()                    # all defaults: empty, print size
    assert img_d.size == (2400, 800) and img_d.mode == "RGB"
    # Both empty figures draw the frame: text unit u = 1/1000 of the width
    # (1.5 and 2.4 px; the height leaves room at these sizes).
    for size, u, im in ((PANO, 1.5, img), ((2400, 800), 2.4, img_d)):
        px = np.asarray(im).astype(np.int32)
        L = lum(px)
        f = panorama_frame(size)
        left, top = f.left, f.top
        right, bottom = f.left + f.width, f.top + f.height
        # The rim: dark on all four sides of the plot area.
        for t in np.linspace(0.03, 0.97, 12):
            x, y = left + t * f.width, top + t * f.height
            assert L[int(top) - 2:int(top) + 3, int(x)].min() < 90, (size, t)
            assert L[int(bottom) - 2:int(bottom) + 3, int(x)].min() < 90, (size, t)
            assert L[int(y), int(left) - 2:int(left) + 3].min() < 90, (size, t)
            assert L[int(y), int(right) - 2:int(right) + 3].min() < 90, (size, t)
        # Axis labels under every 30 deg tick (N, E, S, W and the degrees),
        # none between them; x linear in azimuth (hand mapping).
        for a in range(0, 361, 15):
            x, _ = pano_hand_xy(a, 0.0, f)
            box = L[int(bottom + 8 * u):int(bottom + 28 * u), int(x - 10 * u):int(x + 10 * u)]
            if a % 30 == 0:
                assert np.count_nonzero(box < 90) > 20, (size, a)
            else:
                assert np.count_nonzero(box < 90) == 0, (size, a)
        # Empty inputs: white sky, no track hue and no obstruction fill.
        inner = px[int(top) + 4:int(bottom) - 4, int(left) + 4:int(right) - 4]
        assert not is_clear(inner).any() and not is_blocked(inner).any()
        # (#DEDEDE fill: only stray anti-aliased line edges, no patch of it.)
        assert np.count_nonzero((np.abs(inner - 222) <= 4).all(axis=-1)) < 100
        for a in (15.0, 105.0, 195.0, 285.0):
            for e in (7.5, 37.5, 52.5, 82.5):
                assert (near(px, *pano_hand_xy(a, e, f), 2) > 245).all(), (size, a, e)
        # The dashed minimum elevation (25 deg default) at y(25), not at
        # y(20) or y(30); its label card sits at one end, so look at 40..320.
        xs = np.arange(int(pano_hand_xy(40.0, 0, f)[0]), int(pano_hand_xy(320.0, 0, f)[0]))

        def dark_fraction(e):
            y = int(round(float(pano_hand_xy(0.0, e, f)[1])))
            return np.mean(L[y - 2:y + 3, xs].min(axis=0) < 90)
        assert 0.35 < dark_fraction(25.0) < 0.9, size
        assert dark_fraction(20.0) < 0.02 and dark_fraction(30.0) < 0.02, size


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
    for cls, (a, e) in ((is_clear, (200.0, 52.0)), (is_blocked, (60.0, 30.0))):
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

    from .helpers import DEMO
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
    x_true, y = pano_hand_xy((152.0 + dec) % 360.0, 40.0, f)
    x_mag, _ = pano_hand_xy(152.0, 40.0, f)
    assert lum(px[int(y), int(x_true)]) > 230          # ring centre (white)
    assert (lum(near(px, x_true, y, 6)) < 90).any()    # ring
    assert not (lum(near(px, x_mag, y, 2)) < 90).any() # nothing drawn at the compass bearing

    # Every measured point of the demo's site.toml, rotated by hand to true
    # bearings, is marked with a white-centred black ring (radius 5u, u = 1.5).
    import tomllib

    from .helpers import DEMO
    with open(DEMO / "alder-brook-farm" / "site.toml", "rb") as fh:
        measured = tomllib.load(fh)["horizon"]["points"]
    t_az = np.array([(p[0] + dec) % 360.0 for p in measured])
    t_el = np.array([float(p[1]) for p in measured], dtype=np.float64)
    assert len(measured) == 15
    L = lum(px)
    for a, e in zip(t_az, t_el):
        x, y = pano_hand_xy(a, e, f)
        assert L[int(y), int(x)] > 230, (a, e)
        ring = [L[int(round(y - r * math.cos(t))), int(round(x + r * math.sin(t)))]
                for t in np.linspace(0, 2 * math.pi, 16, endpoint=False)
                for r in (6.75, 7.5, 8.25)]
        assert min(ring) < 90, (a, e)

    # The skyline is the measured points joined by straight lines in true
    # azimuth (periodic): hand-interpolated, every column of the plot is
    # filled (grey/hatch, or blocked tracks) below it and not above it.
    o = np.argsort(t_az)
    x0, x1 = int(f.left) + 3, int(f.left + f.width) - 3
    y0, y1 = int(f.top) + 3, int(f.top + f.height) - 3
    col_az = (np.arange(x0, x1) + 0.5 - f.left) / f.width * 360.0
    row_el = 90.0 - (np.arange(y0, y1) + 0.5 - f.top) / f.height * 90.0
    sky = np.interp(col_az, t_az[o], t_el[o], period=360.0)
    sub = px[y0:y1, x0:x1]
    under = row_el[:, None] < sky[None, :] - 1.5
    above = row_el[:, None] > sky[None, :] + 1.5
    white = (sub > 245).all(axis=-1)
    fill = (np.abs(sub - 222) <= 4).all(axis=-1)       # #DEDEDE obstruction fill
    assert under.sum() > 30_000
    assert white[under].mean() < 0.01               # (at the compass bearings: ~8 %)
    assert np.count_nonzero(is_clear(sub)[under]) < 5
    assert fill[under].mean() > 0.3
    assert fill[above].mean() < 0.002               # (at the compass bearings: ~0.7 %)

    # Track samples, projected by hand, show the blocked hue when below the
    # hand-interpolated skyline and the clear hue when above it (2 deg off
    # the skyline, where the smoothing mixes the layers).
    az = np.asarray(run.tracks.az_deg, np.float64)
    el = np.asarray(run.tracks.el_deg, np.float64)
    sky_s = np.interp(az, t_az[o], t_el[o], period=360.0)
    blk = el < sky_s
    away = np.abs(el - sky_s) > 2.0
    assert (away & blk).sum() > 80 and (away & ~blk).sum() > 1000
    x, y = pano_hand_xy(az, el, f)
    p = px[y.astype(np.int64), x.astype(np.int64)]
    assert np.count_nonzero(is_blocked(p[away & ~blk])) == 0
    assert np.count_nonzero(is_clear(p[away & blk])) == 0
    assert is_clear(p[away & ~blk]).mean() > 0.75       # rest: grid, rings, labels
    assert is_blocked(p[away & blk]).mean() > 0.75


def is_down(px):      # dark vermillion bar: vermillion #D55E00 darkened
    return is_blocked(px) & (lum(px) < 130)


def is_link_up(px):   # pale sky blue (#56B4E9 mixed towards white); its hour lines too
    r, b = px[..., 0], px[..., 2]
    return (b - r > 30) & (lum(px) > 200)


def test_timeline_for_run_size(alder_run):
    import dataclasses

    run = alder_run
    w = run.window
    img = outage_timeline_for_run(run)
    assert img.mode == "RGB" and img.size == (2400, 700)
    px = np.asarray(img).astype(np.int32)
    # The demo's hour has no drop-outs: nothing in the down colour anywhere
    # above the legend, and the row says so on a white card in its middle.
    assert not run.assessment.down.any()
    f = outage_timeline_frame(w.start, w.hours, w.step_s)
    u = 2.4                                      # layout unit: 1/1000 of the width
    rows_bottom = f.rows_top + f.rows * f.row_pitch
    assert not is_down(px[:int(rows_bottom + 110 * u)]).any()
    y = int(f.row_top(0) + f.row_height / 2)
    mid = px[y - 8:y + 8, int(f.left + 0.4 * f.width):int(f.left + 0.6 * f.width)]
    assert np.count_nonzero(lum(mid) < 90) > 50

    # Two drop-outs put into the run's own down array: samples 40..49
    # (00:20:00-00:25:00) and samples 100..101 (00:50:00-00:51:00).  A 1 h window
    # is one zoomed row, axis 00:00-01:00 (TimelineFrame docstring), so by
    # hand x(t) = left + width * t / 3600.
    down = np.zeros(w.count, bool)
    assert down.size == 120                      # 1 h at 30 s
    down[40:50] = True
    down[100:102] = True
    run2 = dataclasses.replace(run, assessment=dataclasses.replace(run.assessment, down=down))
    px = np.asarray(outage_timeline_for_run(run2)).astype(np.int32)
    # (tick and summary bins: the first of 1, 2, 5 ... min giving at most 12)
    assert f.rows == 1 and f.axis_start_s == 0 and f.axis_span_s == 3600 and f.tick_s == 300

    def hx(t):
        return f.left + f.width * t / 3600.0
    row = px[y]
    # Every sample's step, at its middle: dark where down, pale blue where up
    # (the 5 min tick lines, on the step edges, are not sampled).
    for k in range(120):
        p = row[int(hx((k + 0.5) * 30.0))]
        if down[k]:
            assert is_down(p), k
        else:
            assert is_link_up(p), k
    # The dark run on the row starts and ends at the drop-outs' own times.
    dark = np.flatnonzero(is_down(row))
    runs = np.split(dark, np.flatnonzero(np.diff(dark) > 1) + 1)
    assert len(runs) == 2
    for r, (ta, tb) in zip(runs, ((1200.0, 1500.0), (3000.0, 3060.0))):
        assert r[0] == pytest.approx(hx(ta), abs=1.5)
        assert r[-1] + 1 == pytest.approx(hx(tb), abs=1.5)
    # The per-5-minute chart below: bars in the 00:20 and 00:50 bins only,
    # standing on the chart's base line, 5 min and 1 min tall: five to one.
    chart = px[int(rows_bottom + 40 * u):int(rows_bottom + 112 * u)]
    cols = [int(hx((i + 0.5) * 300.0)) for i in range(12)]
    has_bar = [i for i, c in enumerate(cols) if is_down(chart[:, c]).any()]
    assert has_bar == [4, 10]
    base = np.flatnonzero(lum(chart[:, cols[0]]) < 90).mean()  # base line's middle, empty bin
    tall = [base - int(np.argmax(is_down(chart[:, cols[i]]))) for i in (4, 10)]
    assert tall[0] / tall[1] == pytest.approx(5.0, rel=0.1)


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
    card = px[y - 6:y + 6, int(f.x(11.9 * 3600)):int(f.x(12.1 * 3600))]
    assert (lum(card) > 245).mean() > 0.3 and not is_link_up(card).any()

    # By hand, x(t) = left + width * t / 86400 (TimelineFrame docstring).
    # The whole day is link-up pale blue: along the row's top edge (above the
    # card) from 00:00 to 24:00, and through its middle away from the card.
    def hx(f, t):
        return f.left + f.width * t / 86400.0
    xs = np.arange(int(hx(f, 0)) + 2, int(hx(f, 86400)) - 2)
    assert is_link_up(px[int(f.row_top(0)) + 3, xs]).all()
    for h in list(range(0, 8)) + list(range(17, 24)):
        assert is_link_up(px[y, int(hx(f, (h + 0.5) * 3600))]), h
    # Left of 00:00 and right of 24:00 is not the row.
    assert not is_link_up(px[y, int(hx(f, 0)) - 6]) and not is_link_up(px[y, int(hx(f, 86400)) + 6])
    # The hour chart has no bars but a soft "no down time" line in its middle.
    chart = px[int(rows_bottom + 60 * u):int(rows_bottom + 106 * u)]
    assert np.count_nonzero(lum(chart[:, int(hx(f, 10 * 3600)):int(hx(f, 14 * 3600))]) < 120) > 20
    assert np.count_nonzero(lum(chart[:, int(hx(f, 1 * 3600)):int(hx(f, 5 * 3600))]) < 120) == 0
    # default size for one day: the same row, scaled to 2400 x 700
    img = outage_timeline(start=T0, hours=24.0, step_s=15.0, down=np.zeros(5760, bool))
    assert img.size == (2400, 700)
    px = np.asarray(img).astype(np.int32)
    f = outage_timeline_frame(T0, 24.0, 15.0)
    xs = np.arange(int(hx(f, 0)) + 2, int(hx(f, 86400)) - 2)
    assert is_link_up(px[int(f.row_top(0)) + 3, xs]).all()
    assert not is_blocked(px[:int(f.rows_top + f.row_pitch + 110 * 2.4)]).any()   # (u = 2.4)


def test_timeline_short_window_zooms_in():
    down = down_at(1.0, 15.0, (0.5, 0.5 + 5 / 60))      # 00:30-00:35
    _, px = timeline(down, 1.0)
    f = outage_timeline_frame(T0, 1.0, 15.0, size=(1200, 500))
    # (tick and summary bins: the first of 1, 2, 5 ... min giving at most 12)
    assert f.rows == 1 and f.axis_start_s == 0 and f.axis_span_s == 3600 and f.tick_s == 300
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
    # 700 px for one day and 96 px (40/1000 of the 2400 px width) for each
    # further day, capped at 2400 px (survey/figures/timeline.py's default-size rule).
    assert h7 == 700 + 6 * 96
    assert h60 == 2400


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


def is_grey_patch(px, k=5):
    """Pixels at the centre of a k x k block of neutral mid-to-light grey: the
    plan's obstruction fill (#DEDEDE) and its blended hatch lines.  The 1-2 px
    grid lines, card outlines and anti-aliased text never fill such a block."""
    L = lum(px)
    g = ((np.ptp(px, axis=-1) < 12) & (L > 110) & (L < 236)).astype(np.int32)
    c = np.pad(g, ((1, 0), (1, 0))).cumsum(axis=0).cumsum(axis=1)   # box sums
    box = c[k:, k:] - c[:-k, k:] - c[k:, :-k] + c[:-k, :-k]
    return np.pad(box == k * k, k // 2)


def is_hatch(px):      # hatch lines: #3A3A3A blended 55 % into the fill, anti-aliased
    return (np.ptp(px, axis=-1) < 12) & (lum(px) > 110) & (lum(px) < 215)


def scale_bar_run(L, lay):
    """Left end and length (px) of the black bar on the scale bar's centre line."""
    row = L[int(round(lay.scale_y)), :]
    xs = np.flatnonzero(row < 80)
    xs = xs[(xs > lay.scale_x - 10) & (xs < lay.scale_x + lay.scale_px + 10)]
    return xs.min(), xs.max() - xs.min()


def test_plan_size_mode_and_empty():
    img, px, lay = plan()
    assert img.size == PLAN and img.mode == "RGB"
    # The barn's footprint (east 10..20 m, north 5..15 m) at the metres the
    # scale bar itself shows: px per metre read off the drawn bar, the site
    # point at the frame's origin (PlanFrame docstring: north up).
    L = lum(px)
    _, bar_px = scale_bar_run(L, lay)
    k = bar_px / lay.scale_m
    f = lay.frame
    xa, xb = f.ox + 10 * k, f.ox + 20 * k
    ya, yb = f.oy - 15 * k, f.oy - 5 * k
    yy, xx = np.mgrid[0:PLAN[1], 0:PLAN[0]]
    xc, yc = xx + 0.5, yy + 0.5
    inside = (xc > xa + 4) & (xc < xb - 4) & (yc > ya + 4) & (yc < yb - 4)
    ring = ((xc > xa - 14) & (xc < xb + 14) & (yc > ya - 14) & (yc < yb + 14)
            & ~((xc > xa - 4) & (xc < xb + 4) & (yc > ya - 4) & (yc < yb + 4)))
    grey, hatch = is_grey_patch(px), is_hatch(px)
    assert inside.sum() > 10_000
    assert grey[inside].mean() > 0.85           # filled grey (the rest: its label) ...
    assert hatch[inside].mean() > 0.15          # ... and hatched
    assert not grey[ring].any()                 # and not beyond its walls
    # Each wall (the dark outline) within 2 px of its metres, mid-side.
    xm, ym = int((xa + xb) / 2), int((ya + yb) / 2)
    for x, y in ((xa, ym), (xb, ym), (xm, ya), (xm, yb)):
        assert L[int(y) - 2:int(y) + 3, int(x) - 2:int(x) + 3].min() < 100, (x, y)

    # Nothing at all: an empty map, still framed, north-arrowed and scaled.
    for size, im in (((1600, 1600), plan_figure()),
                     (PLAN, plan(obstacles=(), cells=())[0])):
        assert im.size == size and im.mode == "RGB"
        px = np.asarray(im).astype(np.int32)
        L = lum(px)
        lay = plan_layout(size=size)
        f = lay.frame
        u = size[0] / 1000.0
        # A bare plan is still at least 10 m across both ways.
        assert (f.right - f.left) / f.px_per_m >= 10.0
        assert (f.bottom - f.top) / f.px_per_m >= 10.0
        # The map's rim on all four sides.
        for t in np.linspace(0.05, 0.95, 10):
            x, y = f.left + t * (f.right - f.left), f.top + t * (f.bottom - f.top)
            assert L[int(f.top) - 2:int(f.top) + 3, int(x)].min() < 90, (size, t)
            assert L[int(f.bottom) - 2:int(f.bottom) + 3, int(x)].min() < 90, (size, t)
            assert L[int(y), int(f.left) - 2:int(f.left) + 3].min() < 90, (size, t)
            assert L[int(y), int(f.right) - 2:int(f.right) + 3].min() < 90, (size, t)
        inner = px[int(f.top) + 5:int(f.bottom) - 5, int(f.left) + 5:int(f.right) - 5]
        assert not is_blocked(inner).any()
        assert np.count_nonzero(inner[..., 1] - inner[..., 0] > 40) == 0    # no tree green
        assert not is_grey_patch(inner).any()                             # no obstruction fill
        # The site point's black cross at the frame origin (east 0, north 0).
        for d in (0, 4, -4):
            assert L[int(f.oy), int(f.ox + d * u)] < 100        # east-west arm
            assert L[int(f.oy + d * u), int(f.ox)] < 100        # north-south arm
        # The north arrow in the top-right corner, nothing in the top-left.
        top_band = L[int(f.top + 18 * u):int(f.top + 100 * u)]
        ne = top_band[:, int(f.right - 56 * u):int(f.right - 12 * u)]
        nw = top_band[:, int(f.left + 12 * u):int(f.left + 56 * u)]
        assert np.count_nonzero(ne < 90) > 100 * u * u and np.count_nonzero(nw < 90) == 0
        # The scale bar: as long as its round length at the frame's scale.
        x0, run = scale_bar_run(L, lay)
        assert run == pytest.approx(lay.scale_m * f.px_per_m, abs=2.5)
        assert x0 == pytest.approx(lay.scale_x, abs=2.0)


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
