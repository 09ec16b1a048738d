"""The horizon panorama: the measured horizon unrolled, azimuth 0..360 along
x and elevation 0..90 up y (both linear, so a skyline reads true to its
angles), over the satellite track density, with the measured points marked
and labelled."""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
from PIL import Image

from ..palette import (
    BLACK,
    GRID_RGBA,
    OBSTRUCTION_EDGE,
    OBSTRUCTION_FILL,
    RIM,
    TERRAIN_LINE,
    TEXT,
    TEXT_SOFT,
    WHITE,
)
from .canvas import SS, Sheet, blend_hatch, caption, check_size, clean, dashed_hline, font, header, text
from .density import Density, paint_tracks, track_density, unrolled_density, upsample
from .labels import boxed_label, deg_label, label_box, label_text, overlaps, place_label
from .legend import density_caption, legend_flow, mask_items, track_items
from .samples import mask_arrays, sample_weight, samples

PANO_SIZE = (2400, 800)


class PanoramaFrame(NamedTuple):
    """Where the unrolled horizon plot sits in the final image, in pixels.

    left, top: top-left corner (azimuth 0, elevation 90); width spans azimuth
    0..360 deg, height spans elevation 90..0 deg (linear in both).
    """

    left: float
    top: float
    width: float
    height: float

    @property
    def right(self) -> float:
        return self.left + self.width

    @property
    def bottom(self) -> float:
        return self.top + self.height


def _unit(w: int, h: int) -> float:
    # Text scales with the printed width (1/1000 of it); a short image scales
    # it down so the layout still fits.
    return min(w / 1000.0, h / 333.3)


def panorama_frame(size=PANO_SIZE) -> PanoramaFrame:
    """Pixel frame of the plot area of :func:`horizon_panorama` at ``size``."""
    w, h = check_size(size, 400, 160)
    u = _unit(w, h)
    left, right = 66 * u, w - 30 * u
    top, bottom = 80 * u, h - 100 * u
    return PanoramaFrame(left, top, right - left, bottom - top)


def panorama_xy(az_deg, el_deg, frame: PanoramaFrame):
    """Pixel (x, y) of azimuth/elevation in degrees: x linear in azimuth (0 at
    the left edge, 360 at the right), y linear in elevation (0 at the bottom)."""
    az = np.asarray(az_deg, dtype=np.float64)
    el = np.asarray(el_deg, dtype=np.float64)
    return (frame.left + frame.width * az / 360.0,
            frame.top + frame.height * (90.0 - el) / 90.0)


def _points(points) -> list[tuple[float, float, str]]:
    """Finite measured points (az in [0, 360), el in [0, 90], label), by azimuth."""
    pts = []
    for p in points or ():
        a, e = float(p[0]), float(p[1])
        if math.isfinite(a) and math.isfinite(e):
            pts.append((a % 360.0, min(max(e, 0.0), 90.0), str(p[2]) if len(p) > 2 and p[2] else ""))
    pts.sort(key=lambda p: p[0])
    return pts


def _point_groups(points):
    """Measured points sorted by azimuth, with runs of consecutive equal labels
    grouped: [(indices, label)], the run wrapping through north joined."""
    if not points:
        return []
    groups = []
    for i, (_a, _e, lab) in enumerate(points):
        if groups and lab and groups[-1][1] == lab:
            groups[-1][0].append(i)
        else:
            groups.append(([i], lab))
    if len(groups) > 1 and groups[0][1] and groups[0][1] == groups[-1][1]:
        last = groups.pop()
        groups[0] = (last[0] + groups[0][0], groups[0][1])
    return groups


def horizon_panorama(*, mask_az_deg=(), mask_el_deg=(), points=(), az_deg=(), el_deg=(),
                     blocked=None, weight_s=15.0, min_elevation_deg=25.0, title="",
                     subtitle="", size=PANO_SIZE, show_tracks=True, terrain_az_deg=(),
                     terrain_el_deg=()) -> Image.Image:
    """The horizon profile unrolled, over the satellite track density
    (``show_tracks=False``: the skyline alone, no track legend or caption).

    Azimuth 0..360 deg clockwise from true north along x (N, E, S, W and every
    30 deg labelled), elevation 0..90 deg up y, both linear (a skyline reads
    true to its angles; nothing is compressed).

    Parameters (angles in degrees):
      mask_az_deg, mask_el_deg: the horizon mask sampled densely (include the
        measured knots so peaks stay sharp); periodic in azimuth; drawn filled
        grey, hatched at 45 deg and outlined.
      points: measured points as (azimuth_deg, elevation_deg[, label]) in TRUE
        azimuths; marked with rings.  A run of consecutive points with the same
        label is labelled once, above its highest point; labels that cannot be
        placed without overlapping are left off (the points stay marked).
      az_deg, el_deg, blocked: usable track samples (may be empty) and whether
        each is behind the mask; weight_s: seconds each sample stands for.
        Density is time-weighted seconds per 1 x 1 deg cell on a log scale
        shared by the clear (blue) and blocked (orange) ramps of the sky plot.
      min_elevation_deg: dashed, labelled line.
      title, subtitle: header lines.  size: (width_px, height_px), about 3:1.
      terrain_az_deg, terrain_el_deg: the terrain horizon from an elevation
        model (survey/terrain/), drawn as a solid line over the mask.

    Returns an RGB ``PIL.Image``; :func:`panorama_frame` gives the plot area.
    """
    W, H = check_size(size, 400, 160)
    weight_s = sample_weight(weight_s)
    az, el, blk = samples(az_deg, el_deg, blocked)
    m_az, m_el = mask_arrays(mask_az_deg, mask_el_deg)
    pts = _points(points)
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))

    sheet = Sheet((W, H), _unit(W, H))
    fr = PanoramaFrame(*(v * SS for v in panorama_frame((W, H))))
    dens = _tracks_layer(sheet, fr, az, el, blk, weight_s, m_az, m_el)
    _grid_layer(sheet, fr)
    has_mask = _skyline_layer(sheet, fr, m_az, m_el, me)
    has_terrain = _terrain_layer(sheet, fr, terrain_az_deg, terrain_el_deg)
    r_pt = 5.0 * sheet.u
    pxy = [tuple(float(v) for v in panorama_xy(a, e, fr)) for a, e, _ in pts]
    keep = r_pt + 3 * sheet.u  # labels keep clear of every point's ring
    occupied = [(x - keep, y - keep, x + keep, y + keep) for x, y in pxy]
    _min_label(sheet, fr, m_az, m_el, me, occupied)
    _points_layer(sheet, fr, pts, pxy, occupied, r_pt, keep)
    _axes(sheet, fr)
    U = sheet.u
    m = 20 * U
    header(sheet.draw, m, 12 * U, sheet.width - 2 * m, title, subtitle, U)
    _legend(sheet, fr, dens, has_mask, me, bool(pts), r_pt, show_tracks, has_terrain)
    return sheet.finish()


# ---------------------------------------------------------------------------
# Layers (supersampled pixels)
# ---------------------------------------------------------------------------
def _tracks_layer(sheet: Sheet, fr: PanoramaFrame, az, el, blk, weight_s, m_az, m_el) -> Density:
    """Obstruction fill under the skyline, track density, the hatch over both."""
    canvas = sheet.pixels()
    L, T, PW, PH = fr
    xa, xb, ya, yb = int(round(L)), int(round(fr.right)), int(round(T)), int(round(fr.bottom))
    col_az = (np.arange(xa, xb) + 0.5 - L) / PW * 360.0
    row_el = (fr.bottom - (np.arange(ya, yb) + 0.5)) / PH * 90.0
    mask_col = np.interp(np.mod(col_az, 360.0), m_az, m_el, period=360.0)
    obstructed = row_el[:, None] < mask_col[None, :]
    block = canvas[ya:yb, xa:xb]
    block[obstructed] = OBSTRUCTION_FILL
    dens = track_density(az, el, blk, weight_s, unrolled_density)
    if dens.d_max > 0:
        h, w = yb - ya, xb - xa
        paint_tracks(block, upsample(dens.clear, w, h), upsample(dens.blocked, w, h), dens.d_max, weight_s)
    xx = np.arange(xa, xb, dtype=np.float32)[None, :]
    yy = np.arange(ya, yb, dtype=np.float32)[:, None]
    blend_hatch(block, obstructed, xx, yy, sheet.u)
    sheet.set_pixels(canvas)
    return dens


def _grid_layer(sheet: Sheet, fr: PanoramaFrame) -> None:
    """Azimuth and elevation grid lines, translucent over the tracks."""
    L, T, PW, PH = fr
    R, B = fr.right, fr.bottom
    gw = sheet.px(1.2)

    def paint(od):
        for a in range(30, 360, 30):
            x = L + PW * a / 360.0
            od.line((x, T, x, B), fill=GRID_RGBA, width=gw)
        for e in range(15, 90, 15):
            y = B - PH * e / 90.0
            od.line((L, y, R, y), fill=GRID_RGBA, width=gw)

    sheet.translucent(paint)


def _skyline_layer(sheet: Sheet, fr: PanoramaFrame, m_az, m_el, me: float) -> bool:
    """The skyline's outline, the plot's frame and the dashed minimum
    elevation; whether the mask has any obstruction."""
    draw, U = sheet.draw, sheet.u
    has_mask = bool(np.any(m_el > 0))
    if has_mask:
        e0 = float(np.interp(0.0, m_az, m_el, period=360.0))
        oa = np.concatenate([[0.0], m_az, [360.0]])
        oe = np.concatenate([[e0], m_el, [e0]])
        ox, oy = panorama_xy(oa, oe, fr)
        draw.line(list(zip(ox.tolist(), oy.tolist())), fill=OBSTRUCTION_EDGE,
                  width=int(round(2.2 * U)), joint="curve")
    draw.rectangle((fr.left, fr.top, fr.right, fr.bottom), outline=RIM, width=int(round(2.0 * U)))
    dashed_hline(draw, fr.left, fr.right, fr.bottom - fr.height * me / 90.0, 2.6 * U, 11 * U, 7 * U, BLACK)
    return has_mask


def _terrain_layer(sheet: Sheet, fr: PanoramaFrame, t_az, t_el) -> bool:
    """The terrain horizon as a solid line (clipped to the plot: terrain that
    falls away draws along the bottom); whether there is one."""
    t_az, t_el = np.asarray(t_az, dtype=np.float64), np.asarray(t_el, dtype=np.float64)
    if t_az.size == 0:
        return False
    el = np.clip(np.nan_to_num(t_el, nan=0.0), 0.0, 90.0)
    order = np.argsort(t_az % 360.0)
    a, e = t_az[order] % 360.0, el[order]
    e0 = float(np.interp(0.0, a, e, period=360.0))
    xs, ys = panorama_xy(np.concatenate([[0.0], a, [360.0]]), np.concatenate([[e0], e, [e0]]), fr)
    sheet.draw.line(list(zip(xs.tolist(), ys.tolist())), fill=TERRAIN_LINE, width=int(round(3.4 * sheet.u)),
                    joint="curve")
    return True


def _min_label(sheet: Sheet, fr: PanoramaFrame, m_az, m_el, me: float, occupied: list) -> None:
    """The minimum elevation's label on its line where the sky just below it
    is clearest and no measured point sits under it; among equally clear
    places (5 deg of clearance is plenty), the one nearest an end of the plot."""
    draw, U = sheet.draw, sheet.u
    L, PW = fr.left, fr.width
    y_me = fr.bottom - fr.height * me / 90.0
    f_min = font(17 * U)
    min_text = clean(f"min {deg_label(me)}")
    pad = 4 * U
    half_deg = (draw.textlength(min_text, font=f_min) / 2.0 + pad) / PW * 360.0
    cands = np.arange(half_deg + 2.0, 360.0 - half_deg - 2.0, 2.5)
    cands = cands[np.argsort(np.minimum(cands, 360.0 - cands), kind="stable")]
    choice, best_clear = None, -1e9
    for a in cands:
        span = np.linspace(a - half_deg, a + half_deg, 9)
        clear = me - float(np.max(np.interp(np.mod(span, 360), m_az, m_el, period=360.0)))
        lx = L + PW * a / 360.0
        box = label_box(draw, (lx, y_me), min_text, f_min, pad)
        if min(clear, 5.0) > best_clear and not any(overlaps(box, o) for o in occupied):
            choice, best_clear = (lx, box), min(clear, 5.0)
    lx, box = choice or (L + PW * cands[0] / 360.0, None)
    box = box or label_box(draw, (lx, y_me), min_text, f_min, pad)
    boxed_label(draw, (lx, y_me), min_text, f_min, U, box)
    occupied.append(box)


def _points_layer(sheet: Sheet, fr: PanoramaFrame, pts, pxy, occupied, r_pt, keep) -> None:
    """Each labelled run of points labelled once (higher obstructions first,
    with a leader when the label sits away), then every point's ring."""
    draw, U = sheet.draw, sheet.u
    f_pt = font(16 * U)
    line_h = 22 * U
    halo = max(1, int(round(2.5 * U)))
    bounds = (fr.left + 3 * U, fr.top + 3 * U, fr.right - 3 * U, fr.bottom - 3 * U)
    groups = [(idx, lab) for idx, lab in _point_groups(pts) if lab]
    # Higher obstructions first: they are the ones an installer asks about.
    groups.sort(key=lambda g: -max(pts[i][1] for i in g[0]))
    leaders = []
    for idx, lab in groups:
        x, y = pxy[min(idx, key=lambda i: pxy[i][1])]
        # Directly above, then beside (text starting or ending at the point),
        # one line higher each round; then below, inside the obstruction.
        # (Clear of the point's own keep-out box, padding included.)
        cand = []
        for k in range(4):
            yk = y - keep - 4 * U - k * line_h
            cand += [(x, yk, "md"), (x - 2 * U, yk, "ld"), (x + 2 * U, yk, "rd")]
        for k in range(3):
            yk = y + keep + 4 * U + k * line_h
            cand += [(x, yk, "ma"), (x - 2 * U, yk, "la"), (x + 2 * U, yk, "ra")]
        placed = place_label(draw, lab, f_pt, cand, occupied, bounds, 3 * U)
        if placed is None:
            continue
        px_, py_, anchor, box = placed
        label_text(draw, (px_, py_), lab, f_pt, TEXT, anchor, halo)
        if (box[1] > y + keep + 6 * U) or (box[3] < y - keep - 6 * U):
            leaders.append((x, y, box))
    for x, y, box in leaders:
        ty = box[3] if box[3] < y else box[1]
        sy = y - r_pt if box[3] < y else y + r_pt
        draw.line((x, sy, min(max(x, box[0]), box[2]), ty), fill=TEXT_SOFT, width=sheet.px(1.2))
    for x, y in pxy:
        _point_ring(draw, x, y, r_pt, U)


def _point_ring(draw, x, y, r, u) -> None:
    draw.ellipse((x - r, y - r, x + r, y + r), fill=WHITE, outline=BLACK, width=max(1, int(round(2.0 * u))))


def _axes(sheet: Sheet, fr: PanoramaFrame) -> None:
    """Azimuth ticks (N, E, S, W and every 30 deg) and elevation ticks."""
    draw, U = sheet.draw, sheet.u
    L, PW, B = fr.left, fr.width, fr.bottom
    names = {0: "N", 90: "E", 180: "S", 270: "W", 360: "N"}
    f_card, f_tick = font(19 * U), font(16 * U)
    for a in range(0, 361, 30):
        x = L + PW * a / 360.0
        draw.line((x, B, x, B + 5 * U), fill=RIM, width=sheet.px(1.6))
        if a in names:
            text(draw, (x, B + 8 * U), names[a], f_card, TEXT, anchor="mt")
        else:
            text(draw, (x, B + 9 * U), f"{a}\u00b0", f_tick, TEXT_SOFT, anchor="mt")
    f_y = font(15 * U)
    for e in range(0, 91, 15):
        y = B - fr.height * e / 90.0
        draw.line((L - 5 * U, y, L, y), fill=RIM, width=sheet.px(1.6))
        text(draw, (L - 8 * U, y), f"{e}\u00b0", f_y, TEXT_SOFT, anchor="rm")


def _legend(sheet: Sheet, fr: PanoramaFrame, dens: Density, has_mask, me, has_points, r_pt,
            show_tracks, has_terrain=False) -> None:
    """One legend row under the axis and the caption lines below it."""
    draw, U = sheet.draw, sheet.u
    B, m = fr.bottom, 20 * U
    items = track_items(dens, "Clear tracks", "Blocked tracks", " {}") if show_tracks else []
    items += mask_items(has_mask, me)
    if has_terrain:
        items.append((lambda d, x, y, w, h, u: d.line((x, y + h / 2, x + w, y + h / 2), fill=TERRAIN_LINE,
                                                      width=int(round(3.4 * u))), "Terrain horizon"))
    if has_points:
        items.append((lambda d, x, y, w, h, u: _point_ring(d, x + w / 2, y + h / 2, r_pt, u),
                      "Measured point"))
    legend_flow(draw, items, m, B + 45 * U, sheet.width - m, font(16 * U), U, sw_w=40.0, gap=22.0)
    caps = ["Azimuth clockwise from true north, elevation above the horizontal; both axes "
            "linear." + (" Percentages: share of track time." if show_tracks else "")]
    if show_tracks and dens.d_max > 0:
        caps.append(density_caption(dens.d_max))
    elif show_tracks:
        caps.append("No usable satellite samples in this window.")
    caption(draw, m, [B + (61 + 17 * i) * U for i in range(len(caps))], caps, font(14 * U),
            sheet.width - 2 * m)
