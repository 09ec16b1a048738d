"""The horizon photo unrolled: the photo resampled to azimuth 0..360 (true)
along x and elevation 0..90 up y, as the horizon panorama lays out its axes,
with the sky tracks over it (clear and blocked on the sky plot's ramps), the
detected skyline, the measured points and the minimum elevation: the picture
to show a customer (README, "Horizon from a photo").

Layers, in order: the photo (lightened a little so the tracks read), the
tracks, the grid, the skyline (yellow on a black halo, so it reads on sky and
on leaves alike), the measured points, the minimum elevation, axes and legend."""

from __future__ import annotations

import numpy as np
from PIL import Image

from ..palette import BLACK, RIM, WHITE, YELLOW
from ..words import elevation
from .canvas import SS, Sheet, caption, check_size, dashed_hline, encode_png, font, header
from .density import paint_tracks, track_density, unrolled_density, upsample
from .legend import legend_flow, sw_dashed, sw_line, track_items
from .panorama import PanoramaFrame, _axes, _grid_layer, _point_ring, _unit, panorama_frame, panorama_xy
from .samples import sample_weight, samples

PHOTO_SIZE = (2400, 860)
LIGHTEN = 0.18  # the photo mixed this far toward white, so the tracks and lines stand out


def photo_panorama(*, photo_rgb: np.ndarray, skyline_az_deg, skyline_el_deg, points=(), az_deg=(), el_deg=(),
                   blocked=None, weight_s=15.0, min_elevation_deg=25.0, title="", subtitle="", notes=(),
                   size=PHOTO_SIZE) -> Image.Image:
    """The unrolled photo figure.  ``photo_rgb``: (rows, cols, 3) uint8, azimuth
    0..360 along the columns, elevation 90..0 down the rows; ``skyline_*``: the
    detected skyline (NaN where the photo does not show it); ``points``:
    measured points (azimuth, elevation[, label]) in true azimuths; the track
    samples as for the panorama."""
    W, H = check_size(size, 400, 160)
    weight_s = sample_weight(weight_s)
    az, el, blk = samples(az_deg, el_deg, blocked)
    sheet = Sheet((W, H), _unit(W, H))
    fr = PanoramaFrame(*(v * SS for v in panorama_frame((W, H - 60))))
    dens = _photo_and_tracks(sheet, fr, photo_rgb, az, el, blk, weight_s)
    _grid_layer(sheet, fr)
    _skyline(sheet, fr, np.asarray(skyline_az_deg, float), np.asarray(skyline_el_deg, float))
    draw, U = sheet.draw, sheet.u
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))
    y_me = fr.bottom - fr.height * me / 90.0
    dashed_hline(draw, fr.left, fr.right, y_me, 5.0 * U, 11 * U, 7 * U, WHITE)
    dashed_hline(draw, fr.left, fr.right, y_me, 2.6 * U, 11 * U, 7 * U, BLACK)
    for p in points:
        x, y = panorama_xy(float(p[0]) % 360.0, min(max(float(p[1]), 0.0), 90.0), fr)
        _point_ring(draw, float(x), float(y), 5.0 * U, U)
    draw.rectangle((fr.left, fr.top, fr.right, fr.bottom), outline=RIM, width=int(round(2.0 * U)))
    _axes(sheet, fr)
    m = 20 * U
    header(draw, m, 12 * U, sheet.width - 2 * m, title, subtitle, U)
    items = track_items(dens, "Clear tracks", "Blocked tracks", " {}")
    items += [(sw_line(YELLOW, 5.0), "Skyline (photo)"),
              (sw_dashed, f"Min. elevation {elevation(me)}")]
    if len(points):
        items.append((lambda d, x, y, w, h, u: _point_ring(d, x + w / 2, y + h / 2, 5.0 * U, u), "Measured point"))
    legend_flow(draw, items, m, fr.bottom + 45 * U, sheet.width - m, font(16 * U), U, sw_w=40.0, gap=22.0)
    caps = ["Azimuth clockwise from true north, elevation above the horizontal; both axes linear. "
            "Percentages: share of track time."] + list(notes)
    caption(draw, m, [fr.bottom + (61 + 17 * i) * U for i in range(len(caps))], caps, font(14 * U),
            sheet.width - 2 * m)
    return sheet.finish()


def _photo_and_tracks(sheet: Sheet, fr: PanoramaFrame, photo_rgb, az, el, blk, weight_s):
    canvas = sheet.pixels()
    xa, xb, ya, yb = int(round(fr.left)), int(round(fr.right)), int(round(fr.top)), int(round(fr.bottom))
    w, h = xb - xa, yb - ya
    pic = np.asarray(Image.fromarray(np.ascontiguousarray(photo_rgb)).resize((w, h), Image.Resampling.BILINEAR),
                     dtype=np.float32)
    pic = pic + (255.0 - pic) * LIGHTEN
    block = np.clip(np.rint(pic), 0, 255).astype(np.uint8)
    dens = track_density(az, el, blk, weight_s, unrolled_density)
    if dens.d_max > 0:
        paint_tracks(block, upsample(dens.clear, w, h), upsample(dens.blocked, w, h), dens.d_max, weight_s)
    canvas[ya:yb, xa:xb] = block
    sheet.set_pixels(canvas)
    return dens


def _skyline(sheet: Sheet, fr: PanoramaFrame, az, el) -> None:
    """The skyline as runs of a line (broken where the photo does not show it)."""
    draw, U = sheet.draw, sheet.u
    order = np.argsort(np.mod(az, 360.0))
    az, el = np.mod(az, 360.0)[order], el[order]
    ok = np.isfinite(el)
    runs, cur = [], []
    for a, e, k in zip(az, el, ok):
        if k:
            cur.append((a, min(max(e, 0.0), 90.0)))
        elif cur:
            runs.append(cur)
            cur = []
    if cur:
        runs.append(cur)
    for colour, width in ((BLACK, 6.0), (YELLOW, 3.0)):
        for run in runs:
            xs, ys = panorama_xy([a for a, _ in run], [e for _, e in run], fr)
            pts = list(zip(xs.tolist(), ys.tolist()))
            if len(pts) > 1:
                draw.line(pts, fill=colour, width=int(round(width * U)), joint="curve")


def photo_panorama_for_run(run, size=PHOTO_SIZE) -> Image.Image:
    """:func:`photo_panorama` of an assessed site with a horizon photo."""
    from ..mask import photo_declination, site_photo_skyline
    from ..photo import unrolled_photo

    s, w, t = run.site, run.window, run.tracks
    sky = site_photo_skyline(s, run.declination)
    dec = photo_declination(s, run.declination)
    pic = unrolled_photo(s.photo, dec)
    cell_az = (np.arange(sky.cell_el_deg.size) + 0.5) * (360.0 / sky.cell_el_deg.size)
    true = s.horizon.to_true(run.declination.declination_deg)
    points = [(p.azimuth_deg, p.elevation_deg, p.label) for p in true.points]
    sub = f"{s.photo.describe(s.horizon.reference)}; Otsu threshold {sky.threshold} on the blue channel"
    notes = ["Blocked: behind the higher of the measured points and the photo's skyline."]
    if s.horizon.reference == "magnetic":
        notes.append(f"Compass bearings rotated {run.declination.declination_deg:+.2f}\u00b0 to true north (WMM2025).")
    return photo_panorama(photo_rgb=pic, skyline_az_deg=cell_az, skyline_el_deg=sky.cell_el_deg, points=points,
                          az_deg=t.az_deg, el_deg=t.el_deg, blocked=run.assessment.blocked, weight_s=w.step_s,
                          min_elevation_deg=s.terminal.min_elevation_deg, title=f"{s.name}: the sky from the photo",
                          subtitle=sub, notes=notes, size=size)


def photo_panorama_png(run, size=PHOTO_SIZE) -> bytes:
    """:func:`photo_panorama_for_run` as PNG bytes."""
    return encode_png(photo_panorama_for_run(run, size))


__all__ = ["PHOTO_SIZE", "photo_panorama", "photo_panorama_for_run", "photo_panorama_png"]
