"""The sky plot: satellite sky-track density over a measured horizon profile,
as an installer reads a site map.

Zenith at the centre, the horizon (0 deg elevation) at the rim, north up, east
to the right, azimuth clockwise.  Radius is linear in zenith distance
(90 - elevation), so a point at elevation 45 deg lies at half the radius.
Layout is in 1/1000ths of the image size.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
from PIL import Image

from ..geometry import cone_edge
from ..palette import (
    BLACK,
    GRID_RGBA,
    OBSTRUCTION_EDGE,
    OBSTRUCTION_FILL,
    REDDISH_PURPLE,
    RIM,
    RULE,
    TEXT,
    TEXT_SOFT,
    WHITE,
)
from ..words import azimuth, elevation
from .canvas import SS, Sheet, blend_hatch, clean, dashed_circle, fit, font, header, text
from .density import Density, paint_tracks, polar_density, track_density, upsample
from .labels import boxed_label, deg_label
from .legend import density_caption, mask_items, sw_line, track_items
from .samples import mask_arrays, sample_weight, samples

_GRID_CELLS = 180  # density cells across the plot diameter (1 deg each)
_MAX_NOTES = 4
_RINGS = range(15, 90, 15)  # elevation grid rings, deg


class PlotFrame(NamedTuple):
    """Where the polar plot sits in the final image, in pixels.

    cx, cy: zenith (plot centre), x right / y down from the top-left corner.
    radius: distance from the zenith to the horizon rim.
    """

    cx: float
    cy: float
    radius: float


class _Layout(NamedTuple):
    u: float           # 1/1000 of the image size, px
    margin: float
    header_bottom: float
    legend_top: float
    frame: PlotFrame


def _layout(size_px: int, n_notes: int, has_fov: bool = False) -> _Layout:
    s = float(size_px)
    u = s / 1000.0
    margin = 26 * u
    n_notes = max(0, min(int(n_notes), _MAX_NOTES))
    header_bottom = margin + 40 * u + 28 * u + 24 * u * n_notes
    # Legend: 2 rows of entries (3 with the FOV entry) plus a footnote line.
    legend_top = s - margin - (96 + (30 if has_fov else 0)) * u
    label_gap = 36 * u  # room for the azimuth labels outside the rim
    top = header_bottom + label_gap
    bottom = legend_top - label_gap
    radius = min((bottom - top) / 2.0, s / 2.0 - margin - 44 * u)
    return _Layout(u, margin, header_bottom, legend_top,
                   PlotFrame(s / 2.0, (top + bottom) / 2.0, radius))


def plot_frame(size_px: int = 1000, n_notes: int = 0,
               fov: bool = False) -> PlotFrame:
    """Centre and radius (px, final image) of the polar plot for this layout.

    ``n_notes`` is the number of non-blank note lines passed to
    :func:`sky_plot` (at most 4 are shown); the header grows with it.
    ``fov`` is whether a field of view is drawn (adds a legend row).
    """
    return _layout(size_px, n_notes, bool(fov)).frame


def project(az_deg, el_deg, frame: PlotFrame):
    """Plot pixel coordinates (x, y) for azimuth/elevation in degrees.

    North up, east right, azimuth clockwise; radius = R * (90 - el) / 90.
    """
    az = np.radians(np.asarray(az_deg, dtype=np.float64))
    r = frame.radius * (90.0 - np.asarray(el_deg, dtype=np.float64)) / 90.0
    return frame.cx + r * np.sin(az), frame.cy - r * np.cos(az)


def sky_plot(*, az_deg, el_deg, blocked, weight_s, mask_az_deg, mask_el_deg,
             min_elevation_deg, title, subtitle, notes=(), fov=None,
             size_px=1000) -> Image.Image:
    """Render the sky plot as an RGB image of ``size_px`` x ``size_px`` pixels.

    Parameters (angles in degrees):
      az_deg, el_deg: one entry per visible (satellite, time) sample; azimuth
        clockwise from true north in [0, 360), elevation 0..90.  May be empty.
      blocked: bool per sample, True when hidden behind the horizon mask.
      weight_s: seconds of time each sample represents (density weighting).
      mask_az_deg, mask_el_deg: horizon mask, obstruction elevation at each
        azimuth (0 = clear), sampled densely; treated as periodic in azimuth.
      min_elevation_deg: terminal minimum elevation, drawn as a dashed ring.
      title, subtitle: header lines (site name, time window).
      notes: further short header lines (at most 4 shown).
      fov: None or (boresight_az_deg, boresight_el_deg, half_angle_deg);
        outline of the terminal field-of-view cone.
      size_px: width and height of the returned image in pixels.

    Track density is time-weighted seconds per 1 deg x 1 deg plot cell, on a
    shared log scale for clear and blocked samples.  Returns ``PIL.Image``
    in mode "RGB"; see :func:`plot_frame` for where the plot sits.
    """
    size_px = int(size_px)
    if size_px < 200:
        raise ValueError("size_px must be at least 200")
    az, el, blk = samples(az_deg, el_deg, blocked)
    weight_s = sample_weight(weight_s)
    m_az, m_el = mask_arrays(mask_az_deg, mask_el_deg)
    notes = [n for n in (notes or ()) if str(n).strip()][:_MAX_NOTES]
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))

    lay = _layout(size_px, len(notes), fov is not None)
    sheet = Sheet((size_px, size_px), lay.u)
    fr = PlotFrame(*(v * SS for v in lay.frame))
    dens = _tracks_layer(sheet, fr, az, el, blk, weight_s, m_az, m_el)
    _grid_layer(sheet, fr)
    has_mask = _rings_layer(sheet, fr, m_az, m_el, me)
    if fov is not None:
        _fov_layer(sheet, fr, fov)
    _labels_layer(sheet, fr, m_az, m_el, me)
    m, u = lay.margin * SS, sheet.u
    header(sheet.draw, m, m, sheet.width - 2 * m, title, subtitle, u, title_u=34, sub_u=21, sub_dy=40)
    f_note = font(17 * u)
    y = m + 40 * u + 28 * u
    for note in notes:
        text(sheet.draw, (m, y), fit(sheet.draw, note, f_note, sheet.width - 2 * m), f_note, TEXT_SOFT)
        y += 24 * u
    _legend(sheet, lay, dens, has_mask=has_mask, me=me, fov=fov)
    return sheet.finish()


# ---------------------------------------------------------------------------
# Layers (supersampled pixels)
# ---------------------------------------------------------------------------
def _tracks_layer(sheet: Sheet, fr: PlotFrame, az, el, blk, weight_s, m_az, m_el) -> Density:
    """Obstruction fill, track density and the hatch over both, in the disc."""
    cx, cy, R = fr
    x0 = int(math.floor(cx - R)) - 1
    y0 = int(math.floor(cy - R)) - 1
    n = int(math.ceil(2 * R)) + 3
    canvas = sheet.pixels()
    yy, xx = np.mgrid[y0:y0 + n, x0:x0 + n].astype(np.float32)
    dx = xx + 0.5 - cx
    dy = yy + 0.5 - cy
    rho = np.hypot(dx, dy) / R
    inside = rho <= 1.0
    pix_az = np.degrees(np.arctan2(dx, -dy)) % 360.0
    pix_el = 90.0 * (1.0 - rho)
    mask_here = np.interp(pix_az, m_az, m_el, period=360.0).astype(np.float32)
    obstructed = inside & (pix_el < mask_here)

    block = canvas[y0:y0 + n, x0:x0 + n]
    block[obstructed] = OBSTRUCTION_FILL
    dens = track_density(az, el, blk, weight_s, lambda a, e, w: polar_density(a, e, w, _GRID_CELLS))
    if dens.d_max > 0:
        # The grid spans the plot diameter; map it onto the pixel block.
        grid_px = int(round(2 * R))
        off_x = int(round(cx - R)) - x0
        off_y = int(round(cy - R)) - y0
        h = min(n - off_y, grid_px)
        w = min(n - off_x, grid_px)

        def up(d):
            out = np.zeros((n, n), dtype=np.float32)
            out[off_y:off_y + h, off_x:off_x + w] = upsample(d, grid_px, grid_px)[:h, :w]
            return out

        paint_tracks(block, up(dens.clear), up(dens.blocked), dens.d_max, weight_s, where=inside)
    # 45 deg hatching over fill and tracks alike, so the obstruction still
    # reads where blocked tracks cover it, and without colour.
    blend_hatch(block, obstructed, xx, yy, sheet.u)
    sheet.set_pixels(canvas)
    return dens


def _grid_layer(sheet: Sheet, fr: PlotFrame) -> None:
    """Elevation rings and azimuth spokes, translucent over the tracks."""
    cx, cy, R = fr
    gw = sheet.px(1.2)

    def paint(od):
        for e in _RINGS:
            r = R * (90 - e) / 90.0
            od.ellipse((cx - r, cy - r, cx + r, cy + r), outline=GRID_RGBA, width=gw)
        for a in range(0, 360, 30):
            ar = math.radians(a)
            od.line((cx, cy, cx + R * math.sin(ar), cy - R * math.cos(ar)), fill=GRID_RGBA, width=gw)

    sheet.translucent(paint)


def _rings_layer(sheet: Sheet, fr: PlotFrame, m_az, m_el, me: float) -> bool:
    """The obstruction's outline, the rim and the dashed minimum-elevation
    ring; whether the mask has any obstruction."""
    draw, u = sheet.draw, sheet.u
    cx, cy, R = fr
    ox, oy = project(np.append(m_az, m_az[0] + 360.0), np.append(m_el, m_el[0]), fr)
    has_mask = bool(np.any(m_el > 0))
    if has_mask:
        draw.line(list(zip(ox.tolist(), oy.tolist())), fill=OBSTRUCTION_EDGE,
                  width=int(round(2.2 * u)), joint="curve")
    draw.ellipse((cx - R, cy - R, cx + R, cy + R), outline=RIM, width=int(round(2.4 * u)))
    dashed_circle(draw, cx, cy, R * (90.0 - me) / 90.0, width=2.6 * u, dash=11 * u, gap=7 * u,
                  fill=BLACK)
    return has_mask


def _fov_layer(sheet: Sheet, fr: PlotFrame, fov) -> None:
    """The field-of-view cone's outline above the horizon and its boresight."""
    draw, u = sheet.draw, sheet.u
    b_az, b_el, half = (float(v) for v in fov)
    e_az, e_el = cone_edge(b_az, b_el, half)
    px, py = project(e_az, np.clip(e_el, 0.0, 90.0), fr)
    vis = e_el >= 0.0
    # Split into runs above the horizon; the part below is not drawn.
    runs, cur = [], []
    for i in range(len(vis)):
        if vis[i]:
            cur.append((float(px[i]), float(py[i])))
        elif cur:
            runs.append(cur)
            cur = []
    if cur:
        runs.append(cur)
    if len(runs) > 1 and vis[0] and vis[-1]:
        runs[0] = runs.pop() + runs[0]  # join the run wrapping past 0
    for run in runs:
        if len(run) > 1:
            draw.line(run, fill=WHITE, width=int(round(6.0 * u)), joint="curve")
            draw.line(run, fill=REDDISH_PURPLE, width=int(round(3.2 * u)), joint="curve")
    if b_el >= 0:
        bx, by = project(b_az, min(b_el, 90.0), fr)
        bx, by = float(bx), float(by)
        k = 8 * u
        for w, col in ((int(round(6 * u)), WHITE), (int(round(3 * u)), REDDISH_PURPLE)):
            draw.line((bx - k, by, bx + k, by), fill=col, width=w)
            draw.line((bx, by - k, bx, by + k), fill=col, width=w)


def _labels_layer(sheet: Sheet, fr: PlotFrame, m_az, m_el, me: float) -> None:
    """Azimuth labels outside the rim, elevation ring labels, and the
    minimum-elevation label on its ring where the sky below it is clearest."""
    draw, u = sheet.draw, sheet.u
    cx, cy, R = fr
    f_lab = font(19 * u)
    f_ring = font(16 * u)
    halo = max(1, int(round(2.5 * u)))
    names = {0: "N", 90: "E", 180: "S", 270: "W"}
    for a in range(0, 360, 30):
        ar = math.radians(a)
        rr = R + 20 * u
        s = names.get(a, f"{a}\u00b0")
        fnt = font(22 * u) if a in names else f_lab
        text(draw, (cx + rr * math.sin(ar), cy - rr * math.cos(ar)), s, fnt,
             TEXT if a in names else TEXT_SOFT, anchor="mm")
    # Elevation ring labels along azimuth 15 deg (between the N and 30 spokes).
    lab_az = math.radians(15.0)
    for e in _RINGS:
        if abs(e - me) < 4.0:
            continue  # the minimum-elevation label covers this ring
        r = R * (90 - e) / 90.0
        text(draw, (cx + r * math.sin(lab_az), cy - r * math.cos(lab_az)),
             f"{e}\u00b0", f_ring, TEXT_SOFT, anchor="mm", halo=halo)
    text(draw, (cx, cy + 3 * u), "90\u00b0", f_ring, TEXT_SOFT, anchor="mt", halo=halo)
    # Prefer the first (south-most) candidate that is clear; else the best.
    cands = np.array([195.0, 165.0, 225.0, 135.0, 255.0, 105.0, 285.0, 75.0, 315.0, 45.0, 345.0])
    clearance = me - np.interp(cands, m_az, m_el, period=360.0)
    good = np.flatnonzero(clearance > 2.0)
    la = float(cands[good[0]] if good.size else cands[int(np.argmax(clearance))])
    r_min = R * (90.0 - me) / 90.0
    xy = (cx + r_min * math.sin(math.radians(la)), cy - r_min * math.cos(math.radians(la)))
    boxed_label(draw, xy, f"min {deg_label(me)}", font(18 * u), u)


# ---------------------------------------------------------------------------
# Legend
# ---------------------------------------------------------------------------
def _legend(sheet: Sheet, lay: _Layout, dens: Density, *, has_mask, me, fov) -> None:
    """Two columns of swatches under a rule, and the density footnote."""
    draw, u = sheet.draw, sheet.u
    S = sheet.width
    m = lay.margin * SS
    top = lay.legend_top * SS
    draw.line((m, top, S - m, top), fill=RULE, width=sheet.px(1.2))
    f = font(18 * u)
    sw_w, sw_h = 58 * u, 16 * u
    row_h = 30 * u
    y1 = top + 14 * u
    items = (track_items(dens, "Clear track density", "Blocked track density", " ({} of track time)")
             + mask_items(has_mask, me, "Obstruction (horizon mask)"))
    if fov is not None:
        b_az, b_el, half = (float(v) for v in fov)
        items.append((sw_line(REDDISH_PURPLE, 3.2), f"Field of view \u00b1{elevation(half)} "
                      f"(az {azimuth(b_az)}, el {elevation(b_el)})"))
    # Two columns; the second starts where the longest first-column label ends.
    col_items = [items[0::2], items[1::2]]
    gap_txt = 10 * u
    col0_w = sw_w + gap_txt + max(draw.textlength(clean(t), font=f) for _, t in col_items[0])
    x_cols = [m, max(m + col0_w + 40 * u, S / 2 - 20 * u)]
    for ci, col in enumerate(col_items):
        for ri, (swatch, label) in enumerate(col):
            x, y = x_cols[ci], y1 + ri * row_h
            swatch(draw, x, y, sw_w, sw_h, u)
            text(draw, (x + sw_w + gap_txt, y + sw_h / 2),
                 fit(draw, label, f, S - m - (x + sw_w + gap_txt)), f, TEXT, anchor="lm")
    n_rows = max(len(c) for c in col_items)
    foot = density_caption(dens.d_max) if dens.d_max > 0 else "No visible satellite samples in this window."
    f_small = font(15 * u)
    text(draw, (m, y1 + n_rows * row_h + 2 * u), fit(draw, foot, f_small, S - 2 * m), f_small, TEXT_SOFT)
