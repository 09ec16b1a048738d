"""Pillow figures: the sky plot, the horizon panorama, the outage timeline and
the site plan for spot search.

- :func:`sky_plot`: satellite sky-track density over a measured horizon profile
  (polar, described below);
- :func:`horizon_panorama`: the same horizon unrolled, azimuth 0..360 along x,
  elevation 0..90 up y, over the track density;
- :func:`outage_timeline`: when in the (UTC) day the link drops, one row a day,
  with down minutes per hour of day;
- :func:`plan_figure`: the site from above, obstacles to scale with heights,
  candidate cells coloured by blocked fraction, best spot, north arrow, scale bar.

Each takes plain arrays and values; the ``*_for_run`` adapters take a
``pipeline.SiteRun``.  All are drawn at twice the size and reduced with a
Lanczos filter, and share one visual language: hatched grey obstructions
(readable in black-and-white print), Okabe & Ito hues chosen for meaning, text
sized in 1/1000ths of the image width so it prints legibly at about 150 mm.

The sky plot is a polar view of the sky as an installer reads a site map:
zenith at the centre, the horizon (0 deg elevation) at the rim, north up,
east to the right, azimuth clockwise.  Radius is linear in zenith distance
(90 - elevation), so a point at elevation 45 deg lies at half the radius.

Everything here is pure: the figures return ``PIL.Image.Image`` objects and
:func:`encode_png` returns bytes; writing files is left to the caller.

Colours are the Okabe & Ito (2008) colour-blind-safe palette, chosen for
meaning: blue for clear sky tracks, vermillion/orange for tracks hidden by the
obstruction, neutral grey (plus hatching, so it survives black-and-white
print) for the obstruction, black dashed for the minimum-elevation ring and
reddish purple for the terminal field of view; dark vermillion for link-down
time; bluish green for tree crowns; a light-to-dark ramp (pale blue, yellow,
orange, vermillion) for a candidate spot's blocked fraction.
"""

from __future__ import annotations

import io
import math
from datetime import datetime, timedelta, timezone
from functools import lru_cache
from typing import NamedTuple, Sequence

import numpy as np
from PIL import Image, ImageDraw, ImageFont

from .safety import short_note

__all__ = [
    "sky_plot", "sky_plot_for_run", "encode_png", "plot_frame", "PlotFrame", "project",
    "horizon_panorama", "horizon_panorama_for_run", "panorama_frame", "panorama_xy",
    "PanoramaFrame", "outage_timeline", "outage_timeline_for_run", "outage_timeline_frame",
    "TimelineFrame", "plan_figure", "plan_layout", "plan_xy", "PlanFrame", "PlanLayout",
]

# ---------------------------------------------------------------------------
# Palette: Okabe & Ito (2008)
# ---------------------------------------------------------------------------
BLUE = (0x00, 0x72, 0xB2)
SKY_BLUE = (0x56, 0xB4, 0xE9)
VERMILLION = (0xD5, 0x5E, 0x00)
ORANGE = (0xE6, 0x9F, 0x00)
REDDISH_PURPLE = (0xCC, 0x79, 0xA7)
BLACK = (0x00, 0x00, 0x00)
WHITE = (0xFF, 0xFF, 0xFF)

# Neutral greys for structure (not part of the palette; chosen by lightness).
OBSTRUCTION_FILL = (0xDE, 0xDE, 0xDE)
OBSTRUCTION_HATCH = (0x3A, 0x3A, 0x3A)
HATCH_ALPHA = 0.55  # hatch lines are blended, so tracks show through
OBSTRUCTION_EDGE = (0x3C, 0x3C, 0x3C)
GRID = (0x28, 0x28, 0x28)
GRID_ALPHA = 120  # grid sits over the tracks, so keep it faint but present
RIM = (0x30, 0x30, 0x30)
TEXT = (0x1A, 0x1A, 0x1A)
TEXT_SOFT = (0x55, 0x55, 0x55)

_SS = 2  # supersampling factor; drawn at _SS x size, then LANCZOS down
_GRID_CELLS = 180  # density cells across the plot diameter (1 deg each)
_MAX_NOTES = 4


def _mix(a, b, t):
    """Linear mix of two RGB tuples, t=0 -> a, t=1 -> b."""
    return tuple(a[i] + (b[i] - a[i]) * t for i in range(3))


def _ramp(stops: Sequence[tuple[float, tuple]], n: int = 256) -> np.ndarray:
    """Piecewise-linear RGB lookup table of shape (n, 3), uint8."""
    pos = np.array([p for p, _ in stops], dtype=np.float64)
    cols = np.array([c for _, c in stops], dtype=np.float64)
    t = np.linspace(0.0, 1.0, n)
    lut = np.stack([np.interp(t, pos, cols[:, k]) for k in range(3)], axis=1)
    return np.clip(np.rint(lut), 0, 255).astype(np.uint8)


# Lightness ramps (light = rare, dark = dense).  The lightest stop is still a
# clear tint so a single pass stays visible on white.
CLEAR_LUT = _ramp([
    (0.00, _mix(SKY_BLUE, WHITE, 0.62)),
    (0.35, SKY_BLUE),
    (0.72, BLUE),
    (1.00, _mix(BLUE, BLACK, 0.45)),
])
BLOCKED_LUT = _ramp([
    (0.00, _mix(ORANGE, WHITE, 0.55)),
    (0.35, ORANGE),
    (0.72, VERMILLION),
    (1.00, _mix(VERMILLION, BLACK, 0.40)),
])

# Glyphs missing from the built-in font, replaced so they do not print as boxes.
_GLYPH_FALLBACK = {
    "\u2192": "->", "\u2190": "<-", "\u00d7": "x", "\u2013": "-", "\u2014": "-",
    "\u2212": "-", "\u2248": "~", "\u00b2": "2", "\u00b5": "u", "\u00a0": " ",
}


def _clean(s: str) -> str:
    return "".join(_GLYPH_FALLBACK.get(ch, ch) for ch in str(s))


@lru_cache(maxsize=64)
def _font(px: int) -> ImageFont.FreeTypeFont:
    return ImageFont.load_default(size=max(6, int(px)))


# ---------------------------------------------------------------------------
# Geometry
# ---------------------------------------------------------------------------
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


def _cone_edge(az0_deg: float, el0_deg: float, half_deg: float, n: int = 721):
    """Az/el (deg) of points on a cone of half-angle ``half_deg`` about a boresight.

    Treats elevation as latitude and azimuth as longitude on the unit sphere
    and steps the spherical "destination point" formula round all bearings.
    """
    lat1 = math.radians(el0_deg)
    lon1 = math.radians(az0_deg)
    d = math.radians(half_deg)
    th = np.linspace(0.0, 2.0 * math.pi, n)
    sin_lat2 = np.sin(lat1) * np.cos(d) + np.cos(lat1) * np.sin(d) * np.cos(th)
    lat2 = np.arcsin(np.clip(sin_lat2, -1.0, 1.0))
    lon2 = lon1 + np.arctan2(np.sin(th) * np.sin(d) * np.cos(lat1),
                             np.cos(d) - np.sin(lat1) * sin_lat2)
    return np.degrees(lon2) % 360.0, np.degrees(lat2)


# ---------------------------------------------------------------------------
# Density
# ---------------------------------------------------------------------------
def _blur121(grid: np.ndarray) -> np.ndarray:
    """Separable [1 2 1]/4 blur with zero padding."""
    p = np.pad(grid, ((1, 1), (0, 0)))
    grid = 0.25 * p[:-2] + 0.5 * p[1:-1] + 0.25 * p[2:]
    p = np.pad(grid, ((0, 0), (1, 1)))
    return 0.25 * p[:, :-2] + 0.5 * p[:, 1:-1] + 0.25 * p[:, 2:]


@lru_cache(maxsize=8)
def _disc_coverage(g: int) -> np.ndarray:
    """Blurred fraction of each plot cell inside the horizon disc, (g, g)."""
    sub = 4
    c = (np.arange(g * sub) + 0.5) / (g * sub) * 2.0 - 1.0
    inside = (c[None, :] ** 2 + c[:, None] ** 2) <= 1.0
    cov = inside.reshape(g, sub, g, sub).mean(axis=(1, 3))
    out = _blur121(cov)
    out.setflags(write=False)
    return out


def _density_grid(az, el, weight_s: float, g: int) -> np.ndarray:
    """Seconds of sample time per plot cell, (g, g) float64, rows = +y down.

    Cells are square in plot space (not in az/el), so a track crossing near
    the zenith is not diluted over shrinking azimuth cells.
    """
    out = np.zeros(g * g, dtype=np.float64)
    if az.size:
        a = np.radians(az.astype(np.float64))
        rho = (90.0 - el.astype(np.float64)) / 90.0
        x = rho * np.sin(a)
        y = -rho * np.cos(a)
        ix = np.clip(((x + 1.0) * 0.5 * g).astype(np.int64), 0, g - 1)
        iy = np.clip(((y + 1.0) * 0.5 * g).astype(np.int64), 0, g - 1)
        out += np.bincount(iy * g + ix, minlength=g * g) * float(weight_s)
    # A light blur: with a 15 s step a fast overhead pass leaves isolated
    # samples; the blur turns them into readable blobs.  Dividing by the
    # blurred disc coverage keeps cells cut by the rim from fading out.
    cov = _disc_coverage(g)
    return _blur121(out.reshape(g, g)) / np.maximum(cov, 0.25)


def _upsample(grid: np.ndarray, n_px: int) -> np.ndarray:
    """Bilinear resize of a square float grid to (n_px, n_px) float32."""
    im = Image.fromarray(grid.astype(np.float32))
    return np.asarray(im.resize((n_px, n_px), Image.Resampling.BILINEAR))


# ---------------------------------------------------------------------------
# Drawing helpers (all coordinates already in supersampled pixels)
# ---------------------------------------------------------------------------
def _blend_hatch(block, obstructed, xx, yy, u) -> None:
    """45-degree hatch lines blended into ``block`` (in place) where ``obstructed``:
    the obstruction's pattern, which survives black-and-white printing."""
    hatch = obstructed & (((xx + yy) % (14.0 * u)) < (2.2 * u))
    block[hatch] = (block[hatch].astype(np.float32) * (1.0 - HATCH_ALPHA)
                    + np.float32(HATCH_ALPHA) * np.array(OBSTRUCTION_HATCH, np.float32)).astype(np.uint8)


def _dashed_circle(draw, cx, cy, r, width, dash, gap, fill):
    circ = 2.0 * math.pi * r
    n = max(8, int(round(circ / (dash + gap))))
    step = 360.0 / n
    on = step * dash / (dash + gap)
    box = (cx - r, cy - r, cx + r, cy + r)
    for i in range(n):
        a0 = i * step - 90.0
        draw.arc(box, a0, a0 + on, fill=fill, width=int(round(width)))


def _text(draw, xy, s, font, fill, anchor="la", halo=0):
    kw = {}
    if halo:
        kw = dict(stroke_width=int(halo), stroke_fill=WHITE)
    draw.text(xy, _clean(s), font=font, fill=fill, anchor=anchor, **kw)


def _fit(draw, s, font, max_w):
    """Truncate ``s`` with an ellipsis so it fits in ``max_w`` px."""
    s = _clean(s)
    if draw.textlength(s, font=font) <= max_w:
        return s
    while s and draw.textlength(s + "\u2026", font=font) > max_w:
        s = s[:-1]
    return s.rstrip() + "\u2026"


def _fmt_deg(v: float) -> str:
    return f"{v:.0f}\u00b0" if abs(v - round(v)) < 0.05 else f"{v:.1f}\u00b0"


def fmt_duration(seconds: float) -> str:
    """A duration as captions show it: s below 90 s, min below 90 min, else h."""
    if seconds < 90:
        return f"{seconds:.0f} s"
    if seconds < 90 * 60:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


# ---------------------------------------------------------------------------
# Public API
# ---------------------------------------------------------------------------
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
    az = np.asarray(az_deg, dtype=np.float32).ravel()
    el = np.asarray(el_deg, dtype=np.float32).ravel()
    blk = np.asarray(blocked, dtype=bool).ravel()
    if not (az.shape == el.shape == blk.shape):
        raise ValueError("az_deg, el_deg and blocked must have the same length")
    weight_s = float(weight_s)
    if not weight_s > 0:
        raise ValueError("weight_s must be positive")
    ok = np.isfinite(az) & np.isfinite(el)
    if not ok.all():
        az, el, blk = az[ok], el[ok], blk[ok]
    az = np.mod(az, 360.0)
    el = np.clip(el, 0.0, 90.0)

    m_az = np.asarray(mask_az_deg, dtype=np.float64).ravel()
    m_el = np.clip(np.asarray(mask_el_deg, dtype=np.float64).ravel(), 0.0, 90.0)
    if m_az.shape != m_el.shape:
        raise ValueError("mask_az_deg and mask_el_deg must have the same length")
    if m_az.size == 0:
        m_az, m_el = np.array([0.0, 180.0]), np.zeros(2)
    m_order = np.argsort(np.mod(m_az, 360.0), kind="stable")
    m_az, m_el = np.mod(m_az, 360.0)[m_order], m_el[m_order]

    notes = [n for n in (notes or ()) if str(n).strip()][:_MAX_NOTES]
    lay = _layout(size_px, len(notes), fov is not None)
    ss = _SS
    S = size_px * ss
    u = lay.u * ss
    cx, cy, R = (v * ss for v in lay.frame)

    # ---- raster layer: obstruction fill/hatch and track density ----------
    x0 = int(math.floor(cx - R)) - 1
    y0 = int(math.floor(cy - R)) - 1
    n = int(math.ceil(2 * R)) + 3
    canvas = np.full((S, S, 3), 255, dtype=np.uint8)
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

    g = _GRID_CELLS
    d_clear = _density_grid(az[~blk], el[~blk], weight_s, g)
    d_block = _density_grid(az[blk], el[blk], weight_s, g)
    t_clear = float(np.count_nonzero(~blk)) * weight_s
    t_block = float(np.count_nonzero(blk)) * weight_s
    d_max = max(float(d_clear.max()), float(d_block.max()))
    if d_max > 0:
        # The grid spans the plot diameter; map it onto the pixel block.
        grid_px = int(round(2 * R))
        off_x = int(round(cx - R)) - x0
        off_y = int(round(cy - R)) - y0
        h = min(n - off_y, grid_px)
        w = min(n - off_x, grid_px)

        def up(dens):
            out = np.zeros((n, n), dtype=np.float32)
            if dens.max() > 0:
                out[off_y:off_y + h, off_x:off_x + w] = _upsample(dens, grid_px)[:h, :w]
            return out

        u_clear, u_block = up(d_clear), up(d_block)
        # Each pixel shows whichever layer holds more time there, so the
        # blurred fringe of one layer never paints over the other's core
        # (e.g. at the edge of the obstruction).
        floor_s = weight_s / 16.0  # drops bilinear fringe beyond the blur
        # Log scale anchored at one sample per cell, so a single pass is
        # distinctly tinted while the densest cell gets the darkest shade.
        d0 = weight_s
        denom = math.log1p(d_max / d0)
        use_block = u_block > u_clear
        for sel, dens, lut in ((~use_block, u_clear, CLEAR_LUT),
                               (use_block, u_block, BLOCKED_LUT)):
            show = inside & sel & (dens >= floor_s)
            t = np.log1p(dens[show] / d0) / denom
            idx = np.clip((t * 255.0).astype(np.int32), 0, 255)
            block[show] = lut[idx]

    # 45 deg hatching over fill and tracks alike, so the obstruction still
    # reads where blocked tracks cover it, and without colour.
    _blend_hatch(block, obstructed, xx, yy, u)

    img = Image.fromarray(canvas)

    # ---- grid (translucent, over the tracks) ------------------------------
    overlay = Image.new("RGBA", (S, S), (0, 0, 0, 0))
    od = ImageDraw.Draw(overlay)
    grid_rgba = GRID + (GRID_ALPHA,)
    gw = max(1, int(round(1.2 * u)))
    rings = list(range(15, 90, 15))
    for e in rings:
        r = R * (90 - e) / 90.0
        od.ellipse((cx - r, cy - r, cx + r, cy + r), outline=grid_rgba, width=gw)
    for a in range(0, 360, 30):
        ar = math.radians(a)
        od.line((cx, cy, cx + R * math.sin(ar), cy - R * math.cos(ar)),
                fill=grid_rgba, width=gw)
    img = Image.alpha_composite(img.convert("RGBA"), overlay).convert("RGB")
    draw = ImageDraw.Draw(img)

    # ---- obstruction outline ----------------------------------------------
    ox, oy = project(np.append(m_az, m_az[0] + 360.0),
                     np.append(m_el, m_el[0]),
                     PlotFrame(cx, cy, R))
    has_mask = bool(np.any(m_el > 0))
    if has_mask:
        draw.line(list(zip(ox.tolist(), oy.tolist())), fill=OBSTRUCTION_EDGE,
                  width=int(round(2.2 * u)), joint="curve")

    # ---- rim --------------------------------------------------------------
    draw.ellipse((cx - R, cy - R, cx + R, cy + R), outline=RIM,
                 width=int(round(2.4 * u)))

    # ---- minimum-elevation ring -------------------------------------------
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))
    r_min = R * (90.0 - me) / 90.0
    _dashed_circle(draw, cx, cy, r_min, width=2.6 * u, dash=11 * u, gap=7 * u,
                   fill=BLACK)

    # ---- field of view ------------------------------------------------------
    if fov is not None:
        b_az, b_el, half = (float(v) for v in fov)
        e_az, e_el = _cone_edge(b_az, b_el, half)
        px, py = project(e_az, np.clip(e_el, 0.0, 90.0), PlotFrame(cx, cy, R))
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
                draw.line(run, fill=REDDISH_PURPLE, width=int(round(3.2 * u)),
                          joint="curve")
        if b_el >= 0:
            bx, by = project(b_az, min(b_el, 90.0), PlotFrame(cx, cy, R))
            bx, by = float(bx), float(by)
            k = 8 * u
            for w, col in ((int(round(6 * u)), WHITE),
                           (int(round(3 * u)), REDDISH_PURPLE)):
                draw.line((bx - k, by, bx + k, by), fill=col, width=w)
                draw.line((bx, by - k, bx, by + k), fill=col, width=w)

    # ---- labels -------------------------------------------------------------
    f_lab = _font(19 * u)
    f_ring = _font(16 * u)
    halo = max(1, int(round(2.5 * u)))
    names = {0: "N", 90: "E", 180: "S", 270: "W"}
    for a in range(0, 360, 30):
        ar = math.radians(a)
        rr = R + 20 * u
        s = names.get(a, f"{a}\u00b0")
        font = _font(22 * u) if a in names else f_lab
        _text(draw, (cx + rr * math.sin(ar), cy - rr * math.cos(ar)), s, font,
              TEXT if a in names else TEXT_SOFT, anchor="mm")

    # Elevation ring labels along azimuth 15 deg (between the N and 30 spokes).
    lab_az = math.radians(15.0)
    for e in rings:
        if abs(e - me) < 4.0:
            continue  # the minimum-elevation label covers this ring
        r = R * (90 - e) / 90.0
        _text(draw, (cx + r * math.sin(lab_az), cy - r * math.cos(lab_az)),
              f"{e}\u00b0", f_ring, TEXT_SOFT, anchor="mm", halo=halo)
    _text(draw, (cx, cy + 3 * u), "90\u00b0", f_ring, TEXT_SOFT, anchor="mt",
          halo=halo)

    # Minimum-elevation label: on the ring where the sky is clearest below it,
    # so it does not sit inside the obstruction fill.
    cands = np.array([195.0, 165.0, 225.0, 135.0, 255.0, 105.0, 285.0, 75.0,
                      315.0, 45.0, 345.0])
    clearance = me - np.interp(cands, m_az, m_el, period=360.0)
    # Prefer the first (south-most) candidate that is clear; else the best.
    good = np.flatnonzero(clearance > 2.0)
    la = float(cands[good[0]] if good.size else cands[int(np.argmax(clearance))])
    lx = cx + r_min * math.sin(math.radians(la))
    ly = cy - r_min * math.cos(math.radians(la))
    f_min = _font(18 * u)
    min_text = _clean(f"min {_fmt_deg(me)}")
    bb = draw.textbbox((lx, ly), min_text, font=f_min, anchor="mm")
    pad = 4 * u
    draw.rounded_rectangle((bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad),
                           radius=4 * u, fill=WHITE, outline=BLACK,
                           width=max(1, int(round(1.4 * u))))
    _text(draw, (lx, ly), min_text, f_min, BLACK, anchor="mm")

    # ---- header -------------------------------------------------------------
    m = lay.margin * ss
    max_w = S - 2 * m
    f_title = _font(34 * u)
    f_sub = _font(21 * u)
    f_note = _font(17 * u)
    y = m
    draw.text((m, y), _fit(draw, title, f_title, max_w), font=f_title,
              fill=TEXT, anchor="la", stroke_width=max(0, int(round(0.6 * u))),
              stroke_fill=TEXT)
    y += 40 * u
    _text(draw, (m, y), _fit(draw, subtitle, f_sub, max_w), f_sub, TEXT)
    y += 28 * u
    for note in notes:
        _text(draw, (m, y), _fit(draw, note, f_note, max_w), f_note, TEXT_SOFT)
        y += 24 * u

    # ---- legend -------------------------------------------------------------
    _legend(draw, lay, ss, t_clear=t_clear, t_block=t_block, d_max=d_max,
            has_mask=has_mask, me=me, fov=fov)

    return img.resize((size_px, size_px), Image.Resampling.LANCZOS)


def _legend(draw, lay: _Layout, ss: int, *, t_clear, t_block, d_max, has_mask,
            me, fov):
    u = lay.u * ss
    S = int(round(1000 * u))
    m = lay.margin * ss
    top = lay.legend_top * ss
    draw.line((m, top, S - m, top), fill=(0xC8, 0xC8, 0xC8),
              width=max(1, int(round(1.2 * u))))
    f = _font(18 * u)
    f_small = _font(15 * u)
    sw_w, sw_h = 58 * u, 16 * u
    row_h = 30 * u
    y1 = top + 14 * u
    total = t_clear + t_block

    def share(t):
        if total <= 0:
            return ""
        pct = 100.0 * t / total
        # One decimal below 10 %, so a small but real obstruction never reads "0%".
        text = f"{pct:.1f}" if 0 < pct < 10 or 90 < pct < 100 else f"{pct:.0f}"
        return f" ({text}% of track time)"

    def gradient(x, y, lut):
        steps = int(sw_w)
        for i in range(steps):
            c = tuple(int(v) for v in lut[int(i * 255 / max(1, steps - 1))])
            draw.line((x + i, y, x + i, y + sw_h), fill=c)
        draw.rectangle((x, y, x + sw_w, y + sw_h), outline=(0x90, 0x90, 0x90),
                       width=max(1, int(round(1 * u))))

    hatch_col = tuple(int(v) for v in _mix(OBSTRUCTION_FILL, OBSTRUCTION_HATCH,
                                            HATCH_ALPHA))

    def hatch_swatch(x, y):
        draw.rectangle((x, y, x + sw_w, y + sw_h), fill=OBSTRUCTION_FILL)
        period = 14.0 * u
        k = -sw_h
        while k < sw_w:
            # Lines of x + y = const, clipped to the swatch.
            xa = x + max(k, 0.0)
            ya = y + sw_h - max(0.0, -k)
            xb = x + min(k + sw_h, sw_w)
            yb = y + sw_h - (xb - x - k)
            draw.line((xa, ya, xb, yb), fill=hatch_col,
                      width=max(1, int(round(2.2 * u))))
            k += period
        draw.rectangle((x, y, x + sw_w, y + sw_h), outline=OBSTRUCTION_EDGE,
                       width=max(1, int(round(2 * u))))

    def dashed_swatch(x, y):
        yc = y + sw_h / 2
        seg, gap = 11 * u, 7 * u
        xs = x
        while xs < x + sw_w:
            draw.line((xs, yc, min(xs + seg, x + sw_w), yc), fill=BLACK,
                      width=int(round(2.6 * u)))
            xs += seg + gap

    def fov_swatch(x, y):
        yc = y + sw_h / 2
        draw.line((x, yc, x + sw_w, yc), fill=REDDISH_PURPLE,
                  width=int(round(3.2 * u)))

    items = [
        (lambda x, y: gradient(x, y, CLEAR_LUT), "Clear track density" + share(t_clear)),
        (lambda x, y: gradient(x, y, BLOCKED_LUT), "Blocked track density" + share(t_block)),
        (hatch_swatch, "Obstruction (horizon mask)" if has_mask
         else "Obstruction (none in mask)"),
        (dashed_swatch, f"Minimum elevation {_fmt_deg(me)}"),
    ]
    if fov is not None:
        b_az, b_el, half = (float(v) for v in fov)
        items.append((fov_swatch, f"Field of view \u00b1{_fmt_deg(half)} "
                      f"(az {_fmt_deg(b_az % 360)}, el {_fmt_deg(b_el)})"))

    # Two columns; the second starts where the longest first-column label ends.
    col_items = [items[0::2], items[1::2]]
    gap_txt = 10 * u
    col0_w = sw_w + gap_txt + max(draw.textlength(_clean(t), font=f)
                                  for _, t in col_items[0])
    x_cols = [m, max(m + col0_w + 40 * u, S / 2 - 20 * u)]
    n_rows = max(len(c) for c in col_items)
    rh = row_h
    for ci, col in enumerate(col_items):
        for ri, (swatch, label) in enumerate(col):
            x = x_cols[ci]
            y = y1 + ri * rh
            swatch(x, y)
            _text(draw, (x + sw_w + gap_txt, y + sw_h / 2),
                  _fit(draw, label, f, S - m - (x + sw_w + gap_txt)), f, TEXT,
                  anchor="lm")
    foot_y = y1 + n_rows * rh + 2 * u
    if d_max > 0:
        foot = ("Track density: time-weighted, log scale, light = rare, "
                f"dark = dense; darkest \u2248 {fmt_duration(d_max)} per 1\u00b0 cell.")
    else:
        foot = "No visible satellite samples in this window."
    _text(draw, (m, foot_y), _fit(draw, foot, f_small, S - 2 * m), f_small,
          TEXT_SOFT)


def encode_png(image: Image.Image) -> bytes:
    """PNG-encoded bytes of ``image`` (no file is written)."""
    buf = io.BytesIO()
    image.save(buf, format="PNG", optimize=False, compress_level=6)
    return buf.getvalue()


def sky_plot_for_run(run, size_px: int = 1000) -> Image.Image:
    """The sky plot of an assessed site (a ``pipeline.SiteRun``)."""
    s, w, t = run.site, run.window, run.tracks
    mask_az = np.arange(0.0, 360.0, 0.5)
    fov = None
    if s.terminal.scan_half_angle_deg is not None:
        fov = (s.terminal.tilt_azimuth_deg, 90.0 - s.terminal.tilt_deg, s.terminal.scan_half_angle_deg)
    fleet_note = (f"{len(run.fleet)} satellites: " + ", ".join(f"{k} {v}" for k, v in run.fleet.groups.items()))
    notes = [("Illustrative shells (not a real constellation) - " if run.fleet.illustrative else "")
             + fleet_note,
             f"Verdict {run.assessment.verdict}: blocked "
             + ("n/a" if run.assessment.blocked_fraction is None else f"{100 * run.assessment.blocked_fraction:.1f}%")
             + f", interruption {100 * run.assessment.interruption:.1f}%"]
    if s.horizon.reference == "magnetic":
        notes.append(f"Compass bearings rotated to true north: declination {run.declination.declination_deg:+.2f} deg (WMM2025)")
    return sky_plot(
        az_deg=t.az_deg, el_deg=t.el_deg, blocked=run.assessment.blocked, weight_s=w.step_s,
        mask_az_deg=mask_az, mask_el_deg=run.mask.elevation_at(mask_az),
        min_elevation_deg=s.terminal.min_elevation_deg, title=s.name,
        subtitle=f"{w.start:%Y-%m-%d %H:%M} UTC, {w.hours:g} h at {w.step_s:g} s steps",
        notes=notes, fov=fov, size_px=size_px,
    )


def sky_plot_png(run, size_px: int = 1000) -> bytes:
    return encode_png(sky_plot_for_run(run, size_px))


# ===========================================================================
# Shared pieces for the report figures (panorama, outage timeline, site plan)
# ===========================================================================
BLUISH_GREEN = (0x00, 0x9E, 0x73)
YELLOW = (0xF0, 0xE4, 0x42)


def _rgb(c) -> tuple[int, int, int]:
    return tuple(int(round(v)) for v in c)


HATCH_BLEND = _rgb(_mix(OBSTRUCTION_FILL, OBSTRUCTION_HATCH, HATCH_ALPHA))
# Link down: vermillion darkened so a thin bar still reads in grey print
# (luminance ~90 against ~220 for the link-up row).
DOWN_BAR = _rgb(_mix(VERMILLION, BLACK, 0.25))
LINK_UP = _rgb(_mix(SKY_BLUE, WHITE, 0.68))
LINK_UP_GRID = _rgb(_mix(SKY_BLUE, WHITE, 0.40))
OUTSIDE_EDGE = (0xB4, 0xB4, 0xB4)
TREE_FILL = _rgb(_mix(BLUISH_GREEN, WHITE, 0.72))
TREE_EDGE = _rgb(_mix(BLUISH_GREEN, BLACK, 0.45))
TREE_HATCH = _rgb(_mix(TREE_FILL, TREE_EDGE, HATCH_ALPHA))
WALL = (0x4A, 0x4A, 0x4A)
PLAN_GRID = (0xE2, 0xE2, 0xE2)
RULE = (0xC8, 0xC8, 0xC8)

# Blocked fraction of a candidate spot, light = clear, dark = blocked: a
# sequential ramp built from Okabe & Ito hues whose lightness falls
# monotonically (grey levels ~231, 213, 162, 119, 70), so it stays ordered in
# greyscale and for the common colour-vision deficiencies.
BLOCKED_FRACTION_LUT = _ramp([
    (0.00, _mix(SKY_BLUE, WHITE, 0.75)),
    (0.25, YELLOW),
    (0.50, ORANGE),
    (0.75, VERMILLION),
    (1.00, _mix(VERMILLION, BLACK, 0.45)),
])


def _check_size(size, min_w: int, min_h: int) -> tuple[int, int]:
    try:
        w, h = (int(v) for v in size)
    except (TypeError, ValueError):
        raise ValueError("size must be (width_px, height_px)") from None
    if w < min_w or h < min_h:
        raise ValueError(f"size must be at least {min_w} x {min_h} pixels")
    return w, h


def _samples(az_deg, el_deg, blocked):
    """Finite (az, el, blocked) sample arrays, az in [0, 360), el in [0, 90]."""
    az = np.asarray(az_deg, dtype=np.float32).ravel()
    el = np.asarray(el_deg, dtype=np.float32).ravel()
    blk = (np.zeros(az.shape, bool) if blocked is None
           else np.asarray(blocked, dtype=bool).ravel())
    if not (az.shape == el.shape == blk.shape):
        raise ValueError("az_deg, el_deg and blocked must have the same length")
    ok = np.isfinite(az) & np.isfinite(el)
    if not ok.all():
        az, el, blk = az[ok], el[ok], blk[ok]
    return np.mod(az, 360.0), np.clip(el, 0.0, 90.0), blk


def _mask_arrays(mask_az_deg, mask_el_deg):
    """Mask samples sorted by azimuth in [0, 360), elevations clipped to 0..90."""
    m_az = np.asarray(mask_az_deg, dtype=np.float64).ravel()
    m_el = np.clip(np.asarray(mask_el_deg, dtype=np.float64).ravel(), 0.0, 90.0)
    if m_az.shape != m_el.shape:
        raise ValueError("mask_az_deg and mask_el_deg must have the same length")
    ok = np.isfinite(m_az) & np.isfinite(m_el)
    m_az, m_el = m_az[ok], m_el[ok]
    if m_az.size == 0:
        return np.array([0.0, 180.0]), np.zeros(2)
    order = np.argsort(np.mod(m_az, 360.0), kind="stable")
    return np.mod(m_az, 360.0)[order], m_el[order]


def _share_pct(t: float, total: float) -> str:
    """" 6.8%": share of track time for a legend entry ("" with no tracks)."""
    if total <= 0:
        return ""
    pct = 100.0 * t / total
    # One decimal near 0 and 100 %, so a small but real share never reads "0%".
    return f" {pct:.1f}%" if 0 < pct < 10 or 90 < pct < 100 else f" {pct:.0f}%"


def compact_pct(f: float) -> str:
    """A percentage for a figure's legend: 4.6%, 12%."""
    v = 100.0 * float(f)
    return f"{v:.1f}%" if v < 9.95 else f"{v:.0f}%"


def _nice_step(span: float, target: int) -> float:
    """A 1, 2 or 5 x 10^k step giving about ``target`` intervals over ``span``."""
    if not span > 0:
        return 1.0
    raw = span / max(1, target)
    k = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * k >= raw * 0.999:
            return m * k
    return 10.0 * k


def _nice_floor(v: float) -> float:
    """Largest 1, 2 or 5 x 10^k not above ``v`` (v > 0)."""
    k = 10.0 ** math.floor(math.log10(v))
    for m in (5.0, 2.0, 1.0):
        if m * k <= v * 1.0000001:
            return m * k
    return k


def _nice_ceil(v: float) -> float:
    """Smallest 1, 2, 2.5, 5 x 10^k not below ``v`` (v > 0)."""
    k = 10.0 ** math.floor(math.log10(v))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * k >= v * 0.9999999:
            return m * k
    return 10.0 * k


def _fmt_num(v: float) -> str:
    return f"{v:.0f}" if abs(v - round(v)) < 1e-6 else f"{v:g}"


def _overlaps(a, b, pad=0.0) -> bool:
    return not (a[2] + pad <= b[0] or b[2] + pad <= a[0]
                or a[3] + pad <= b[1] or b[3] + pad <= a[1])


def _place_label(draw, text, font, candidates, occupied, bounds, pad):
    """First candidate (x, y, anchor) whose text box fits ``bounds`` and misses
    every box in ``occupied``; boxes are nudged sideways into the bounds.
    Appends the box to ``occupied`` and returns (x, y, anchor, box), or None."""
    text = _clean(text)
    for x, y, anchor in candidates:
        bb = draw.multiline_textbbox((x, y), text, font=font, anchor=anchor,
                                     align="center")
        shift = 0.0
        if bb[0] < bounds[0]:
            shift = bounds[0] - bb[0]
        elif bb[2] > bounds[2]:
            shift = bounds[2] - bb[2]
        bb = (bb[0] + shift, bb[1], bb[2] + shift, bb[3])
        if bb[0] < bounds[0] - 0.5 or bb[1] < bounds[1] or bb[3] > bounds[3]:
            continue
        box = (bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad)
        if any(_overlaps(box, o) for o in occupied):
            continue
        occupied.append(box)
        return x + shift, y, anchor, box
    return None


def _label_text(draw, xy, s, font, fill, anchor, halo):
    draw.multiline_text(xy, _clean(s), font=font, fill=fill, anchor=anchor,
                        align="center", stroke_width=int(halo), stroke_fill=WHITE)


def _dashed_hline(draw, x0, x1, y, width, dash, gap, fill):
    xs = x0
    while xs < x1:
        draw.line((xs, y, min(xs + dash, x1), y), fill=fill, width=int(round(width)))
        xs += dash + gap


def _hatch_lines(draw, box, u, fill, width_u=2.2, period_u=14.0):
    """45 degree hatch lines (x + y = const) clipped to an axis-aligned box."""
    x, y, x2, y2 = box
    w, h = x2 - x, y2 - y
    k = -h
    while k < w:
        xa = x + max(k, 0.0)
        ya = y + h - max(0.0, -k)
        xb = x + min(k + h, w)
        yb = y + h - (xb - x - k)
        draw.line((xa, ya, xb, yb), fill=fill, width=max(1, int(round(width_u * u))))
        k += period_u * u


def _sw_gradient(lut):
    def sw(draw, x, y, w, h, u):
        steps = max(2, int(w))
        for i in range(steps):
            c = tuple(int(v) for v in lut[int(i * 255 / (steps - 1))])
            draw.line((x + i, y, x + i, y + h), fill=c)
        draw.rectangle((x, y, x + w, y + h), outline=(0x90, 0x90, 0x90),
                       width=max(1, int(round(u))))
    return sw


def _sw_hatch(fill=OBSTRUCTION_FILL, hatch=HATCH_BLEND, edge=OBSTRUCTION_EDGE):
    def sw(draw, x, y, w, h, u):
        draw.rectangle((x, y, x + w, y + h), fill=fill)
        _hatch_lines(draw, (x, y, x + w, y + h), u, hatch)
        draw.rectangle((x, y, x + w, y + h), outline=edge, width=max(1, int(round(2 * u))))
    return sw


def _sw_dashed(draw, x, y, w, h, u):
    _dashed_hline(draw, x, x + w, y + h / 2, 2.6 * u, 11 * u, 7 * u, BLACK)


def _sw_box(fill, edge=None, width_u=1.4):
    def sw(draw, x, y, w, h, u):
        draw.rectangle((x, y, x + w, y + h), fill=fill, outline=edge or fill,
                       width=max(1, int(round(width_u * u))))
    return sw


def _legend_flow(draw, items, x0, y, x_max, font, u, sw_w=50.0, sw_h=14.0, gap=26.0):
    """Legend entries (swatch, label) in one row from ``x0``; if they do not
    fit before ``x_max`` the gaps close up first, then the labels are cut."""
    gap_txt = 9 * u
    widths = [sw_w * u + gap_txt + draw.textlength(_clean(t), font=font) for _, t in items]
    g = gap * u
    total = sum(widths) + g * (len(items) - 1)
    if total > x_max - x0 and len(items) > 1:
        g = max(10 * u, (x_max - x0 - sum(widths)) / (len(items) - 1))
    x = x0
    for (swatch, label), wd in zip(items, widths):
        swatch(draw, x, y - sw_h * u / 2, sw_w * u, sw_h * u, u)
        room = max(20 * u, x_max - (x + sw_w * u + gap_txt))
        _text(draw, (x + sw_w * u + gap_txt, y), _fit(draw, label, font, room), font,
              TEXT, anchor="lm")
        x += wd + g


def _header(draw, m, y, max_w, title, subtitle, u):
    """Title (30u, faux bold as in the sky plot) and subtitle (18u) lines."""
    f_title = _font(28 * u)
    draw.text((m, y), _fit(draw, title, f_title, max_w), font=f_title, fill=TEXT,
              anchor="la", stroke_width=max(0, int(round(0.6 * u))), stroke_fill=TEXT)
    if subtitle:
        f_sub = _font(18 * u)
        _text(draw, (m, y + 36 * u), _fit(draw, subtitle, f_sub, max_w), f_sub, TEXT)


# ===========================================================================
# Horizon panorama
# ===========================================================================
class PanoramaFrame(NamedTuple):
    """Where the unrolled horizon plot sits in the final image, in pixels.

    left, top: top-left corner (azimuth 0, elevation 90); width spans azimuth
    0..360 deg, height spans elevation 90..0 deg (linear in both).
    """

    left: float
    top: float
    width: float
    height: float


_PANO_SIZE = (2400, 800)


def _pano_unit(w: int, h: int) -> float:
    # Text scales with the printed width (1/1000 of it); a short image scales
    # it down so the layout still fits.
    return min(w / 1000.0, h / 333.3)


def panorama_frame(size=_PANO_SIZE) -> PanoramaFrame:
    """Pixel frame of the plot area of :func:`horizon_panorama` at ``size``."""
    w, h = _check_size(size, 400, 160)
    u = _pano_unit(w, h)
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


def _pano_density(az, el, weight_s: float) -> np.ndarray:
    """Seconds of sample time per 1 x 1 deg cell, (90, 360), row 0 = el 89..90."""
    out = np.zeros(90 * 360, dtype=np.float64)
    if az.size:
        ix = np.clip(np.floor(az).astype(np.int64), 0, 359)
        iy = np.clip(np.floor(90.0 - el).astype(np.int64), 0, 89)
        out += np.bincount(iy * 360 + ix, minlength=90 * 360) * float(weight_s)
    g = out.reshape(90, 360)
    # A 1 deg azimuth cell shrinks on the sky as cos(elevation): average each
    # row over about 1 deg of sky (1/cos(el) cells), so fast passes near the
    # zenith, a few degrees of azimuth apart between samples, do not break up
    # into speckle.  Mass-preserving per row.
    el_mid = np.radians(89.5 - np.arange(90))
    widths = np.clip(np.rint(1.0 / np.cos(el_mid)), 1, 359).astype(np.int64)
    for i in np.flatnonzero(widths > 1):
        k = int(widths[i])
        c = np.concatenate([[0.0], np.cumsum(np.concatenate([g[i, -(k // 2):], g[i],
                                                             g[i, :k - k // 2]]))])
        g[i] = (c[k:k + 360] - c[:360]) / k
    p = np.pad(g, ((1, 1), (0, 0)), mode="edge")
    g = 0.25 * p[:-2] + 0.5 * p[1:-1] + 0.25 * p[2:]
    p = np.pad(g, ((0, 0), (1, 1)), mode="wrap")
    return 0.25 * p[:, :-2] + 0.5 * p[:, 1:-1] + 0.25 * p[:, 2:]


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
                     subtitle="", size=_PANO_SIZE, show_tracks=True) -> Image.Image:
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
        shared by the clear (blue) and blocked (orange) ramps of :func:`sky_plot`.
      min_elevation_deg: dashed, labelled line.
      title, subtitle: header lines.  size: (width_px, height_px), about 3:1.

    Returns an RGB ``PIL.Image``; :func:`panorama_frame` gives the plot area.
    """
    W, H = _check_size(size, 400, 160)
    weight_s = float(weight_s)
    if not weight_s > 0:
        raise ValueError("weight_s must be positive")
    az, el, blk = _samples(az_deg, el_deg, blocked)
    m_az, m_el = _mask_arrays(mask_az_deg, mask_el_deg)
    pts = []
    for p in points or ():
        a, e = float(p[0]), float(p[1])
        if math.isfinite(a) and math.isfinite(e):
            pts.append((a % 360.0, min(max(e, 0.0), 90.0), str(p[2]) if len(p) > 2 and p[2] else ""))
    pts.sort(key=lambda p: p[0])
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))

    fr = panorama_frame((W, H))
    ss = _SS
    SW, SH = W * ss, H * ss
    U = _pano_unit(W, H) * ss
    L, T, PW, PH = (v * ss for v in fr)
    R, B = L + PW, T + PH
    sframe = PanoramaFrame(L, T, PW, PH)

    # ---- raster: obstruction fill, track density, hatch ------------------
    canvas = np.full((SH, SW, 3), 255, dtype=np.uint8)
    xa, xb, ya, yb = int(round(L)), int(round(R)), int(round(T)), int(round(B))
    col_az = (np.arange(xa, xb) + 0.5 - L) / PW * 360.0
    row_el = (B - (np.arange(ya, yb) + 0.5)) / PH * 90.0
    mask_col = np.interp(np.mod(col_az, 360.0), m_az, m_el, period=360.0)
    obstructed = row_el[:, None] < mask_col[None, :]
    block = canvas[ya:yb, xa:xb]
    block[obstructed] = OBSTRUCTION_FILL

    d_clear = _pano_density(az[~blk], el[~blk], weight_s)
    d_block = _pano_density(az[blk], el[blk], weight_s)
    t_clear = float(np.count_nonzero(~blk)) * weight_s
    t_block = float(np.count_nonzero(blk)) * weight_s
    d_max = max(float(d_clear.max()), float(d_block.max()))
    if d_max > 0:
        h, w = yb - ya, xb - xa

        def up(d):
            if d.max() <= 0:
                return np.zeros((h, w), np.float32)
            im = Image.fromarray(d.astype(np.float32))
            return np.asarray(im.resize((w, h), Image.Resampling.BILINEAR))

        u_clear, u_block = up(d_clear), up(d_block)
        floor_s = weight_s / 16.0  # as in the sky plot: drop the far fringe
        denom = math.log1p(d_max / weight_s)
        use_block = u_block > u_clear
        for sel, dens, lut in ((~use_block, u_clear, CLEAR_LUT),
                               (use_block, u_block, BLOCKED_LUT)):
            show = sel & (dens >= floor_s)
            t = np.log1p(dens[show] / weight_s) / denom
            block[show] = lut[np.clip((t * 255.0).astype(np.int32), 0, 255)]

    xx = np.arange(xa, xb, dtype=np.float32)[None, :]
    yy = np.arange(ya, yb, dtype=np.float32)[:, None]
    _blend_hatch(block, obstructed, xx, yy, U)
    img = Image.fromarray(canvas)

    # ---- grid (translucent, over the tracks) ------------------------------
    overlay = Image.new("RGBA", (SW, SH), (0, 0, 0, 0))
    od = ImageDraw.Draw(overlay)
    grid_rgba = GRID + (GRID_ALPHA,)
    gw = max(1, int(round(1.2 * U)))
    for a in range(30, 360, 30):
        x = L + PW * a / 360.0
        od.line((x, T, x, B), fill=grid_rgba, width=gw)
    for e in range(15, 90, 15):
        y = B - PH * e / 90.0
        od.line((L, y, R, y), fill=grid_rgba, width=gw)
    img = Image.alpha_composite(img.convert("RGBA"), overlay).convert("RGB")
    draw = ImageDraw.Draw(img)

    # ---- skyline outline, frame, minimum elevation -------------------------
    has_mask = bool(np.any(m_el > 0))
    if has_mask:
        e0 = float(np.interp(0.0, m_az, m_el, period=360.0))
        oa = np.concatenate([[0.0], m_az, [360.0]])
        oe = np.concatenate([[e0], m_el, [e0]])
        ox, oy = panorama_xy(oa, oe, sframe)
        draw.line(list(zip(ox.tolist(), oy.tolist())), fill=OBSTRUCTION_EDGE,
                  width=int(round(2.2 * U)), joint="curve")
    draw.rectangle((L, T, R, B), outline=RIM, width=int(round(2.0 * U)))
    y_me = B - PH * me / 90.0
    _dashed_hline(draw, L, R, y_me, 2.6 * U, 11 * U, 7 * U, BLACK)

    halo = max(1, int(round(2.5 * U)))
    r_pt = 5.0 * U
    pxy = [tuple(float(v) for v in panorama_xy(a, e, sframe)) for a, e, _ in pts]
    keep = r_pt + 3 * U  # labels keep clear of every point's ring
    occupied = [(x - keep, y - keep, x + keep, y + keep) for x, y in pxy]
    f_min = _font(17 * U)
    min_text = _clean(f"min {_fmt_deg(me)}")
    pad = 4 * U
    half_deg = (draw.textlength(min_text, font=f_min) / 2.0 + pad) / PW * 360.0
    # The label goes on the line where the sky just below it is clearest and
    # no measured point sits under it; among equally clear places (5 deg of
    # clearance is plenty), the one nearest an end of the plot.
    cands = np.arange(half_deg + 2.0, 360.0 - half_deg - 2.0, 2.5)
    cands = cands[np.argsort(np.minimum(cands, 360.0 - cands), kind="stable")]
    choice, best_clear = None, -1e9
    for a in cands:
        span = np.linspace(a - half_deg, a + half_deg, 9)
        clear = me - float(np.max(np.interp(np.mod(span, 360), m_az, m_el, period=360.0)))
        lx = L + PW * a / 360.0
        bb = draw.textbbox((lx, y_me), min_text, font=f_min, anchor="mm")
        box = (bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad)
        if min(clear, 5.0) > best_clear and not any(_overlaps(box, o) for o in occupied):
            choice, best_clear = (lx, box), min(clear, 5.0)
    choice = choice or (L + PW * cands[0] / 360.0, None)
    lx, box = choice
    if box is None:
        bb = draw.textbbox((lx, y_me), min_text, font=f_min, anchor="mm")
        box = (bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad)
    draw.rounded_rectangle(box, radius=4 * U, fill=WHITE, outline=BLACK,
                           width=max(1, int(round(1.4 * U))))
    _text(draw, (lx, y_me), min_text, f_min, BLACK, anchor="mm")
    occupied.append(box)

    # ---- measured points and their labels ----------------------------------
    f_pt = _font(16 * U)
    line_h = 22 * U
    bounds = (L + 3 * U, T + 3 * U, R - 3 * U, B - 3 * U)
    groups = [(idx, lab) for idx, lab in _point_groups(pts) if lab]
    # Higher obstructions first: they are the ones an installer asks about.
    groups.sort(key=lambda g: -max(pts[i][1] for i in g[0]))
    leaders = []
    for idx, lab in groups:
        top = min(idx, key=lambda i: pxy[i][1])
        x, y = pxy[top]
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
        placed = _place_label(draw, lab, f_pt, cand, occupied, bounds, 3 * U)
        if placed is None:
            continue
        px_, py_, anchor, box = placed
        _label_text(draw, (px_, py_), lab, f_pt, TEXT, anchor, halo)
        far = (box[1] > y + keep + 6 * U) or (box[3] < y - keep - 6 * U)
        if far:
            leaders.append((x, y, box))
    for x, y, box in leaders:
        ty = box[3] if box[3] < y else box[1]
        sy = y - r_pt if box[3] < y else y + r_pt
        draw.line((x, sy, min(max(x, box[0]), box[2]), ty), fill=TEXT_SOFT,
                  width=max(1, int(round(1.2 * U))))
    for x, y in pxy:
        draw.ellipse((x - r_pt, y - r_pt, x + r_pt, y + r_pt), fill=WHITE, outline=BLACK,
                     width=max(1, int(round(2.0 * U))))

    # ---- axes labels --------------------------------------------------------
    names = {0: "N", 90: "E", 180: "S", 270: "W", 360: "N"}
    f_card, f_tick = _font(19 * U), _font(16 * U)
    for a in range(0, 361, 30):
        x = L + PW * a / 360.0
        draw.line((x, B, x, B + 5 * U), fill=RIM, width=max(1, int(round(1.6 * U))))
        if a in names:
            _text(draw, (x, B + 8 * U), names[a], f_card, TEXT, anchor="mt")
        else:
            _text(draw, (x, B + 9 * U), f"{a}\u00b0", f_tick, TEXT_SOFT, anchor="mt")
    f_y = _font(15 * U)
    for e in range(0, 91, 15):
        y = B - PH * e / 90.0
        draw.line((L - 5 * U, y, L, y), fill=RIM, width=max(1, int(round(1.6 * U))))
        _text(draw, (L - 8 * U, y), f"{e}\u00b0", f_y, TEXT_SOFT, anchor="rm")

    # ---- header, legend, caption --------------------------------------------
    m = 20 * U
    _header(draw, m, 12 * U, SW - 2 * m, title, subtitle, U)
    total = t_clear + t_block
    items = [
        (_sw_gradient(CLEAR_LUT), "Clear tracks" + _share_pct(t_clear, total)),
        (_sw_gradient(BLOCKED_LUT), "Blocked tracks" + _share_pct(t_block, total)),
    ] if show_tracks else []
    items += [
        (_sw_hatch(), "Obstruction" if has_mask else "Obstruction (none in mask)"),
        (_sw_dashed, f"Minimum elevation {_fmt_deg(me)}"),
    ]
    if pts:
        def sw_point(d, x, y, w, h, u):
            c = (x + w / 2, y + h / 2)
            d.ellipse((c[0] - r_pt, c[1] - r_pt, c[0] + r_pt, c[1] + r_pt), fill=WHITE,
                      outline=BLACK, width=max(1, int(round(2.0 * u))))
        items.append((sw_point, "Measured point"))
    _legend_flow(draw, items, m, B + 45 * U, SW - m, _font(16 * U), U, sw_w=40.0, gap=22.0)
    caps = ["Azimuth clockwise from true north, elevation above the horizontal; both axes "
            "linear." + (" Percentages: share of track time." if show_tracks else "")]
    if show_tracks and d_max > 0:
        caps.append("Track density: time-weighted, log scale, light = rare, dark = dense; "
                    f"darkest \u2248 {fmt_duration(d_max)} per 1\u00b0 cell.")
    elif show_tracks:
        caps.append("No usable satellite samples in this window.")
    f_cap = _font(14 * U)
    for i, cap in enumerate(caps):
        _text(draw, (m, B + (61 + 17 * i) * U), _fit(draw, cap, f_cap, SW - 2 * m), f_cap,
              TEXT_SOFT)
    return img.resize((W, H), Image.Resampling.LANCZOS)


def _dense_mask(mask) -> tuple[np.ndarray, np.ndarray]:
    """A HorizonMask sampled every 0.25 deg plus at its knots (peaks stay sharp)."""
    a = np.union1d(np.arange(0.0, 360.0, 0.25), np.mod(mask.az_deg, 360.0))
    return a, mask.elevation_at(a)


def _window_text(w) -> str:
    return f"{w.start:%Y-%m-%d %H:%M} UTC, {w.hours:g} h at {w.step_s:g} s steps"


def horizon_panorama_for_run(run, size=_PANO_SIZE) -> Image.Image:
    """:func:`horizon_panorama` of an assessed site (a ``pipeline.SiteRun``)."""
    s, w, t = run.site, run.window, run.tracks
    m_az, m_el = _dense_mask(run.mask)
    true = s.horizon.to_true(run.declination.declination_deg)
    points = [(p.azimuth_deg, p.elevation_deg, p.label) for p in true.points]
    sub = _window_text(w)
    if s.horizon.reference == "magnetic":
        sub += (f"; compass bearings rotated {run.declination.declination_deg:+.2f}\u00b0 "
                "to true north (WMM2025)")
    return horizon_panorama(
        mask_az_deg=m_az, mask_el_deg=m_el, points=points, az_deg=t.az_deg, el_deg=t.el_deg,
        blocked=run.assessment.blocked, weight_s=w.step_s,
        min_elevation_deg=s.terminal.min_elevation_deg,
        title=f"{s.name}: horizon profile", subtitle=sub, size=size)


# ===========================================================================
# Outage timeline
# ===========================================================================
class TimelineFrame(NamedTuple):
    """Where the outage rows sit in the final image, in pixels, and what the
    time axis spans.

    left, width: the time axis, from ``axis_start_s`` to ``axis_start_s +
    axis_span_s`` (seconds after 00:00 UTC of ``day0``, the first row's day).
    Row r (r = 0 .. rows-1) is UTC day ``day0 + r`` (one row only for a short
    window, whose axis is zoomed in); its bar runs from ``row_top(r)`` for
    ``row_height`` pixels, rows ``row_pitch`` apart from ``rows_top``.
    ``tick_s`` is the tick and summary-bin interval (3600 s for whole days).
    """

    left: float
    width: float
    rows_top: float
    row_pitch: float
    row_height: float
    rows: int
    axis_start_s: float
    axis_span_s: float
    tick_s: float
    day0: datetime

    def row_top(self, r: int) -> float:
        return self.rows_top + r * self.row_pitch + (self.row_pitch - self.row_height) / 2.0

    def x(self, seconds_of_day):
        """Pixel x of a time given in seconds after 00:00 UTC of its row's day."""
        s = np.asarray(seconds_of_day, dtype=np.float64)
        return self.left + (s - self.axis_start_s) / self.axis_span_s * self.width


_ZOOM_MAX_S = 6 * 3600.0  # windows up to this long get one zoomed-in row
_TL_WIDTH = 2400
_TL_FIXED_U = 256.0  # header + axis + summary + legend, in layout units
_TL_PITCH_U = 40.0


class _TimelineGeometry(NamedTuple):
    n: int
    day0: datetime
    start_s: float  # window start, seconds after day0 00:00 UTC
    span_s: float
    rows: int
    axis_start_s: float
    axis_span_s: float
    tick_s: float
    zoom: bool


def _timeline_geometry(start: datetime, hours: float, step_s: float) -> _TimelineGeometry:
    if not step_s > 0 or not hours > 0:
        raise ValueError("hours and step_s must be positive")
    n = int(math.floor(hours * 3600.0 / step_s + 1e-9))  # as WindowSpec.count
    if start.tzinfo is None:
        start = start.replace(tzinfo=timezone.utc)
    start = start.astimezone(timezone.utc)
    day0 = start.replace(hour=0, minute=0, second=0, microsecond=0)
    start_s = (start - day0).total_seconds()
    span_s = max(n, 1) * float(step_s)
    end_s = start_s + span_s
    if span_s <= _ZOOM_MAX_S:
        tick = next(t for t in (60, 120, 300, 600, 900, 1800, 3600)
                    if span_s / t <= 12)
        a = math.floor(start_s / tick + 1e-9) * tick
        b = math.ceil(end_s / tick - 1e-9) * tick
        return _TimelineGeometry(n, day0, start_s, span_s, 1, a, max(b - a, tick), tick, True)
    rows = int(math.ceil(end_s / 86400.0 - 1e-9))
    return _TimelineGeometry(n, day0, start_s, span_s, rows, 0.0, 86400.0, 3600.0, False)


def _timeline_default_size(rows: int) -> tuple[int, int]:
    """2400 x 700 px for one row, 96 px more a day, at most 2400 px tall."""
    u = _TL_WIDTH / 1000.0
    return _TL_WIDTH, min(700 + int(round(u * _TL_PITCH_U * (rows - 1))), 2400)


def outage_timeline_frame(start: datetime, hours: float, step_s: float,
                          size=None) -> TimelineFrame:
    """Pixel frame of :func:`outage_timeline` for this window at ``size``
    (None: the default size for the window)."""
    geo = _timeline_geometry(start, hours, step_s)
    w, h = _check_size(size or _timeline_default_size(geo.rows), 400, 200)
    return _timeline_frame(geo, w, h)


def _tl_unit(w: int, h: int) -> float:
    return min(w / 1000.0, h / (_TL_FIXED_U + 16.0))


def _timeline_frame(geo: _TimelineGeometry, w: int, h: int) -> TimelineFrame:
    u = _tl_unit(w, h)
    left, right = 120 * u, w - 30 * u
    rows_top = 80 * u
    area = h - _TL_FIXED_U * u
    pitch = min(area / geo.rows, 60 * u)
    # Gaps between rows while they are tall enough to afford them.
    row_h = pitch * (0.72 if pitch >= 12 * u else 0.9)
    return TimelineFrame(left, right - left, rows_top, pitch, row_h, geo.rows,
                         geo.axis_start_s, geo.axis_span_s, geo.tick_s, geo.day0)


def _fmt_minutes(m: float) -> str:
    return f"{m:.1f}" if m < 9.95 else f"{m:.0f}"


def outage_timeline(*, start: datetime, hours: float, step_s: float, down, title="",
                    subtitle="", size=None) -> Image.Image:
    """When in the day the link drops, over the window.

    Parameters:
      start: window start (UTC; a naive datetime is taken as UTC); hours,
        step_s: window length (h) and sample step (s), as ``WindowSpec``.
      down: bool per sample time k (time ``start + k * step_s``, standing for
        the step that follows), True when the link is down under the scheduling
        model (``Assessment.down``); length floor(hours * 3600 / step_s).
      title, subtitle: header lines.
      size: (width_px, height_px); None gives 2400 px wide and a height that
        grows with the number of days (700 px for one day, at most 2400 px).

    Layout: one row per UTC day, hour of day 00..24 UTC along x (a window of
    at most 6 h gets a single row with the axis zoomed to the window); the
    link-up part of the window is light blue, time outside the window is
    white, down time is a dark vermillion bar (drawn at least 1/1000 of the
    width, so a 15 s drop-out is still visible; the caption says when it
    widened any).  Below: down minutes per hour of day summed over all days
    (per tick interval when zoomed).  Caption: number of drop-outs (runs of
    down samples), total down minutes, longest.  Returns an RGB ``PIL.Image``;
    :func:`outage_timeline_frame` gives the geometry.
    """
    geo = _timeline_geometry(start, hours, step_s)
    down = np.asarray(down, dtype=bool).ravel()
    if down.size != geo.n:
        raise ValueError(f"down has {down.size} samples; the window holds {geo.n}")
    W, H = _check_size(size or _timeline_default_size(geo.rows), 400, 200)
    fr = _timeline_frame(geo, W, H)
    step_s = float(step_s)

    # ---- the numbers ----------------------------------------------------------
    d = np.diff(np.concatenate([[0], down.astype(np.int8), [0]]))
    run_a, run_b = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    n_runs = int(run_a.size)
    total_s = float(down.sum()) * step_s
    longest_s = float((run_b - run_a).max()) * step_s if n_runs else 0.0
    # Down seconds in any interval, exact: the cumulative down time is linear
    # within each sample step, so interpolate it between step boundaries.
    tb = geo.start_s + np.arange(geo.n + 1) * step_s
    cum = np.concatenate([[0.0], np.cumsum(down) * step_s])

    def down_between(edges):
        return np.diff(np.interp(edges, tb, cum))

    if geo.zoom:
        nb = int(round(geo.axis_span_s / geo.tick_s))
        bins_s = down_between(geo.axis_start_s + np.arange(nb + 1) * geo.tick_s)
    else:
        nb = 24
        per = down_between(np.arange(geo.rows * 24 + 1) * 3600.0)
        bins_s = per.reshape(geo.rows, 24).sum(axis=0)
    bins_min = bins_s / 60.0

    # ---- drawing ---------------------------------------------------------------
    ss = _SS
    SW, SH = W * ss, H * ss
    U = _tl_unit(W, H) * ss
    img = Image.new("RGB", (SW, SH), WHITE)
    draw = ImageDraw.Draw(img)
    L, PW = fr.left * ss, fr.width * ss
    R = L + PW

    def xs(sec_of_axis):  # seconds after day0 00:00 of the row -> px (supersampled)
        return L + (sec_of_axis - geo.axis_start_s) / geo.axis_span_s * PW

    def row_y(r):
        y0 = fr.row_top(r) * ss
        return y0, y0 + fr.row_height * ss

    w_start, w_end = geo.start_s, geo.start_s + geo.span_s
    lw = max(1, int(round(1.2 * U)))
    ticks = np.arange(geo.axis_start_s, geo.axis_start_s + geo.axis_span_s + 1e-6, geo.tick_s)
    for r in range(geo.rows):
        y0, y1 = row_y(r)
        off = 0.0 if geo.zoom else r * 86400.0
        a = max(w_start - off, geo.axis_start_s)
        b = min(w_end - off, geo.axis_start_s + geo.axis_span_s)
        draw.rectangle((L, y0, R, y1), fill=WHITE, outline=OUTSIDE_EDGE, width=lw)
        if b > a:
            draw.rectangle((xs(a), y0, xs(b), y1), fill=LINK_UP)
        for t in ticks[1:-1]:
            inside = a <= t <= b
            draw.line((xs(t), y0, xs(t), y1), fill=LINK_UP_GRID if inside else RULE,
                      width=lw)
    # Down bars, split at UTC midnight into their rows.
    min_w = 1.0 * U
    widened = False
    for ka, kb in zip(run_a.tolist(), run_b.tolist()):
        ta, tb_ = geo.start_s + ka * step_s, geo.start_s + kb * step_s
        if geo.zoom:
            pieces = [(0, ta, tb_)]
        else:
            pieces = []
            r = int(ta // 86400)
            while r * 86400.0 < tb_ and r < geo.rows:
                pieces.append((r, max(ta, r * 86400.0) - r * 86400.0,
                               min(tb_, (r + 1) * 86400.0) - r * 86400.0))
                r += 1
        for r, a, b in pieces:
            y0, y1 = row_y(r)
            x0, x1 = xs(a), xs(b)
            if x1 - x0 < min_w:
                c = (x0 + x1) / 2.0
                x0, x1 = c - min_w / 2.0, c + min_w / 2.0
                widened = True
            draw.rectangle((x0, y0, x1, y1), fill=DOWN_BAR)

    # Row labels: every k-th day so the labels never crowd.
    f_row = _font(16 * U)
    label_h = 20 * U
    k_lab = max(1, int(math.ceil(label_h / (fr.row_pitch * ss))))
    for r in range(0, geo.rows, k_lab):
        y0, y1 = row_y(r)
        day = geo.day0 + timedelta(days=r)
        lab = f"{day:%Y-%m-%d}"
        if geo.zoom and w_end > 86400.0:  # a short window across midnight
            lab += f"/{day + timedelta(days=1):%d}"
        _text(draw, (L - 12 * U, (y0 + y1) / 2), lab, f_row, TEXT, anchor="rm")
    rows_bottom = (fr.rows_top + fr.rows * fr.row_pitch) * ss

    # Time axis labels under the rows.
    f_tick = _font(16 * U)
    y_tick = rows_bottom + 6 * U

    def tick_label(t):
        t = t % 86400.0
        if not geo.zoom:
            return f"{int(round(t / 3600)):02d}" if t or t == 0 else ""
        return f"{int(t // 3600):02d}:{int(t % 3600 // 60):02d}"

    lab_w = draw.textlength("00:00" if geo.zoom else "00", font=f_tick) + 10 * U
    tick_px = PW / (len(ticks) - 1)
    every = max(1, int(math.ceil(lab_w / tick_px)))
    for i, t in enumerate(ticks):
        x = xs(t)
        draw.line((x, rows_bottom - 2 * U, x, rows_bottom + 3 * U), fill=RIM, width=lw)
        if i % every == 0:
            s_lab = "24" if (not geo.zoom and i == len(ticks) - 1) else tick_label(t)
            _text(draw, (x, y_tick), s_lab, f_tick, TEXT_SOFT, anchor="mt")
    _text(draw, (L - 30 * U, y_tick), "UTC", f_tick, TEXT_SOFT, anchor="rt")

    # Per-hour (per-bin) summary chart on the same time axis.
    f_small = _font(15 * U)
    c_label_y = rows_bottom + 40 * U
    c_top, c_bot = rows_bottom + 58 * U, rows_bottom + 108 * U
    if geo.zoom:
        what = f"Down minutes per {fmt_duration(geo.tick_s)}"
    else:
        what = "Down minutes per hour of day" + (
            f", summed over the {geo.rows} days" if geo.rows > 1 else "")
    _text(draw, (L, c_label_y), what, f_small, TEXT, anchor="lm")
    # Head room above the tallest bar for its value label.
    top_val = _nice_ceil(max(1.2 * float(bins_min.max()), 0.5)) if bins_min.size else 1.0
    draw.line((L, c_top, R, c_top), fill=RULE, width=lw)
    _text(draw, (L - 8 * U, c_top), f"{_fmt_num(top_val)} min", f_small, TEXT_SOFT, anchor="rm")
    _text(draw, (L - 8 * U, c_bot), "0", f_small, TEXT_SOFT, anchor="rm")
    bin_px = PW / max(nb, 1)
    f_val = _font(13 * U)
    for i, v in enumerate(bins_min.tolist()):
        if v <= 0:
            continue
        x0 = L + i * bin_px + 0.15 * bin_px
        x1 = L + (i + 1) * bin_px - 0.15 * bin_px
        y = c_bot - (c_bot - c_top) * v / top_val
        draw.rectangle((x0, min(y, c_bot - 1.5 * U), x1, c_bot), fill=DOWN_BAR)
        vt = f"{v * 60:.0f} s" if v < 1 else _fmt_minutes(v)
        if draw.textlength(vt, font=f_val) < bin_px - 2 * U:
            _text(draw, ((x0 + x1) / 2, y - 3 * U), vt, f_val, TEXT, anchor="md",
                  halo=max(1, int(round(2 * U))))
    draw.line((L, c_bot, R, c_bot), fill=RIM, width=max(1, int(round(1.6 * U))))

    # No drop-outs: say so on the rows themselves.
    if n_runs == 0:
        # Sized to sit inside a single row.
        f_msg = _font(min(18 * U, max(12 * U, (fr.row_height * ss - 14 * U) / 0.8)))
        msg = "No drop-outs in this window"
        cy = (fr.rows_top + fr.rows * fr.row_pitch / 2.0) * ss
        bb = draw.textbbox(((L + R) / 2, cy), msg, font=f_msg, anchor="mm")
        pad = 6 * U
        _text(draw, ((L + R) / 2, (c_top + c_bot) / 2), "no down time in any hour"
              if not geo.zoom else "no down time", f_small, TEXT_SOFT, anchor="mm")
        draw.rounded_rectangle((bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad),
                               radius=5 * U, fill=WHITE, outline=RIM, width=lw)
        _text(draw, ((L + R) / 2, cy), msg, f_msg, TEXT, anchor="mm")

    # ---- header, legend, caption ------------------------------------------------
    m = 20 * U
    _header(draw, m, 12 * U, SW - 2 * m, title, subtitle, U)
    leg_y = rows_bottom + 128 * U
    items = [
        (_sw_box(LINK_UP, OUTSIDE_EDGE), "Link up"),
        (_sw_box(DOWN_BAR), "Link down (drop-out)"),
        (_sw_box(WHITE, OUTSIDE_EDGE), "Outside the window"),
    ]
    _legend_flow(draw, items, m, leg_y, SW - m, _font(16 * U), U, sw_w=40.0)
    days = geo.span_s / 86400.0
    length = (f"{geo.span_s / 3600:g} h" if geo.span_s < 86400 * 2
              else f"{days:g} days")
    cap = (f"{n_runs} drop-out{'s' if n_runs != 1 else ''}, "
           f"{_fmt_minutes(total_s / 60.0)} min down in {length}" if n_runs
           else f"No drop-outs: the link stays up for all {length} of the window")
    if n_runs:
        cap += f"; longest {fmt_duration(longest_s)}"
        if days >= 1.5:
            per_day = n_runs / days
            cap += f"; {per_day:.1f} a day" if per_day < 10 else f"; {per_day:.0f} a day"
    cap += "."
    if widened:
        cap += (f" Drop-outs shorter than {fmt_duration(min_w / PW * geo.axis_span_s)}"
                " are drawn that wide so they show.")
    _text(draw, (m, leg_y + 20 * U), _fit(draw, cap, f_small, SW - 2 * m), f_small, TEXT)
    return img.resize((W, H), Image.Resampling.LANCZOS)


def outage_timeline_for_run(run, size=None) -> Image.Image:
    """:func:`outage_timeline` of an assessed site (a ``pipeline.SiteRun``)."""
    s, w = run.site, run.window
    sub = (_window_text(w) + "; down = the assigned satellite is blocked "
           f"(reassigned every {s.schedule.reassign_s:g} s)")
    return outage_timeline(start=w.start, hours=w.hours, step_s=w.step_s,
                           down=run.assessment.down, title=f"{s.name}: drop-outs",
                           subtitle=sub, size=size)


# ===========================================================================
# Site plan (spot search)
# ===========================================================================
class PlanFrame(NamedTuple):
    """The plan's map in the final image, pixels.  (ox, oy): the site point
    (east 0, north 0); px_per_m: the same scale east and north (equal aspect);
    left/top/right/bottom: the map box."""

    ox: float
    oy: float
    px_per_m: float
    left: float
    top: float
    right: float
    bottom: float


class PlanLayout(NamedTuple):
    """Everything :func:`plan_figure` places from the data: the map frame, the
    scale bar (a round length in metres, its left end and centre line and its
    length in pixels, final image) and the top of the colour scale (a blocked
    fraction, 0..1)."""

    frame: PlanFrame
    scale_m: float
    scale_x: float
    scale_y: float
    scale_px: float
    blocked_max: float


def plan_xy(east_m, north_m, frame: PlanFrame):
    """Pixel (x, y) of a point east/north of the site point, metres (north up)."""
    e = np.asarray(east_m, dtype=np.float64)
    n = np.asarray(north_m, dtype=np.float64)
    return frame.ox + e * frame.px_per_m, frame.oy - n * frame.px_per_m


class _Obstacle(NamedTuple):
    kind: str
    name: str
    height_m: float | None
    xy: np.ndarray  # polygon / polyline vertices (k, 2), or the tree centre (1, 2)
    radius_m: float
    ridge: np.ndarray | None
    ridge_height_m: float | None


def _xy_array(v, what: str, min_len: int) -> np.ndarray:
    try:
        a = np.asarray(v, dtype=np.float64)
    except (TypeError, ValueError):
        raise ValueError(f"{what}: expected [[east_m, north_m], ...]") from None
    if a.ndim != 2 or a.shape[1] != 2 or a.shape[0] < min_len or not np.isfinite(a).all():
        raise ValueError(f"{what}: expected at least {min_len} [east_m, north_m] pairs")
    return a


def _obstacles(obstacles) -> list[_Obstacle]:
    out = []
    for i, ob in enumerate(obstacles or ()):
        kind = ob.get("kind")
        where = f"obstacles[{i}]"
        name = str(ob.get("name") or "")
        h = ob.get("height_m")
        h = None if h is None else float(h)
        if kind in ("building", "prism"):
            poly = _xy_array(ob.get("polygon", ob.get("footprint")), f"{where}.polygon", 3)
            ridge = ob.get("ridge")
            ridge = None if ridge is None else _xy_array(ridge, f"{where}.ridge", 2)
            rh = ob.get("ridge_height_m")
            out.append(_Obstacle(kind, name, h, poly, 0.0, ridge, None if rh is None else float(rh)))
        elif kind == "tree":
            at = _xy_array([ob.get("at")], f"{where}.at", 1)
            r = ob.get("radius_m", ob.get("crown_radius_m"))
            if r is None or not float(r) > 0:
                raise ValueError(f"{where}.radius_m: expected a positive crown radius in metres")
            out.append(_Obstacle(kind, name, h, at, float(r), None, None))
        elif kind == "wall":
            line = _xy_array(ob.get("line"), f"{where}.line", 2)
            out.append(_Obstacle(kind, name, h, line, 0.0, None, None))
        else:
            raise ValueError(f"{where}.kind: expected building, tree, wall or prism, got {kind!r}")
    return out


def _cells(cells) -> np.ndarray:
    a = np.asarray(list(cells or ()), dtype=np.float64)
    if a.size == 0:
        return np.zeros((0, 4))
    if a.ndim != 2 or a.shape[1] != 4:
        raise ValueError("cells: expected (east_m, north_m, size_m, blocked_fraction) rows")
    return a


def _plan_points(obs, cells, markers, best):
    """Every extreme point of the data, (k, 2) metres, the site point included."""
    pts = [np.zeros((1, 2))]
    for o in obs:
        if o.kind == "tree":
            c = o.xy[0]
            pts.append(np.array([c - o.radius_m, c + o.radius_m]))
        else:
            pts.append(o.xy)
    if cells.size:
        hs = cells[:, 2:3] / 2.0
        pts += [cells[:, :2] - hs, cells[:, :2] + hs]
    for mk in list(markers or ()) + ([best] if best else []):
        pts.append(np.array([[float(mk["east_m"]), float(mk["north_m"])]]))
    return np.concatenate(pts)


def _plan_unit(w: int, h: int) -> float:
    return min(w, h) / 1000.0


def _plan_layout(obs, cells, markers, best, w: int, h: int) -> PlanLayout:
    u = _plan_unit(w, h)
    left, right = 84 * u, w - 130 * u
    top, bottom = 118 * u, h - 200 * u
    pts = _plan_points(obs, cells, markers, best)
    e0, n0 = pts.min(axis=0)
    e1, n1 = pts.max(axis=0)
    span = max(e1 - e0, n1 - n0, 10.0)
    pad = max(0.06 * span, 2.0)
    # At least 10 m across, so a bare plan still shows a sensible scale.
    ec, nc = (e0 + e1) / 2.0, (n0 + n1) / 2.0
    half_e, half_n = max((e1 - e0) / 2.0, 5.0) + pad, max((n1 - n0) / 2.0, 5.0) + pad
    e0, e1, n0, n1 = ec - half_e, ec + half_e, nc - half_n, nc + half_n
    bw, bh = right - left, bottom - top
    k = min(bw / (e1 - e0), bh / (n1 - n0))
    # Fill the box: widen the shorter extent about its centre.
    e0 = ec - bw / k / 2.0
    n1 = nc + bh / k / 2.0
    frame = PlanFrame(*(float(v) for v in (left - e0 * k, top + n1 * k, k, left, top, right,
                                           bottom)))
    width_m = bw / k
    scale_m = _nice_floor(0.22 * width_m)
    scale_px = float(scale_m * k)
    # The scale bar takes the free corner (the north arrow has the top right):
    # the one whose card covers the least of the drawn things' boxes.
    boxes = _plan_boxes(obs, cells, markers, best, frame)
    corners = [(left + 22 * u, bottom - 22 * u), (right - 22 * u - scale_px, bottom - 22 * u),
               (left + 22 * u, top + 58 * u)]

    def covered(c):
        x0, y = c
        card = np.array([x0 - 12 * u, y - 36 * u, x0 + scale_px + 12 * u, y + 12 * u])
        if boxes.size == 0:
            return 0.0
        w_ = np.clip(np.minimum(boxes[:, 2], card[2]) - np.maximum(boxes[:, 0], card[0]), 0, None)
        h_ = np.clip(np.minimum(boxes[:, 3], card[3]) - np.maximum(boxes[:, 1], card[1]), 0, None)
        return float((w_ * h_).sum())

    cover = [covered(c) for c in corners]
    scale_x, scale_y = (float(v) for v in corners[int(np.argmin(cover))])
    fracs = [c for c in cells[:, 3] if np.isfinite(c)] if cells.size else []
    fracs += [float(mk["blocked_fraction"]) for mk in list(markers or ()) + ([best] if best else [])
              if mk.get("blocked_fraction") is not None]
    top_f = max(fracs, default=0.0)
    blocked_max = min(1.0, max(0.05, _nice_ceil(top_f) if top_f > 0 else 0.05))
    return PlanLayout(frame, scale_m, scale_x, scale_y, scale_px, blocked_max)


def _plan_boxes(obs, cells, markers, best, frame: PlanFrame) -> np.ndarray:
    """Pixel boxes (x0, y0, x1, y1) of everything the map draws, (k, 4)."""
    out = []
    for o in obs:
        if o.kind == "tree":
            c, r = o.xy[0], o.radius_m
            pts = np.array([c - r, c + r])
        else:
            pts = o.xy
        x, y = plan_xy(pts[:, 0], pts[:, 1], frame)
        out.append([x.min(), y.min(), x.max(), y.max()])
    if cells.size:
        h = cells[:, 2] / 2.0
        x0, y0 = plan_xy(cells[:, 0] - h, cells[:, 1] + h, frame)
        x1, y1 = plan_xy(cells[:, 0] + h, cells[:, 1] - h, frame)
        out.extend(np.stack([x0, y0, x1, y1], axis=1).tolist())
    r = 12.0  # a symbol and its label's near edge, px
    for mk in list(markers or ()) + ([best] if best else []):
        x, y = plan_xy(float(mk["east_m"]), float(mk["north_m"]), frame)
        out.append([x - r, y - r, x + r, y + r])
    return np.array(out, dtype=np.float64).reshape(-1, 4)


def plan_layout(obstacles=(), cells=(), markers=(), best=None, size=(1600, 1600)) -> PlanLayout:
    """Where :func:`plan_figure` draws the map, scale bar and colour scale for
    these inputs (same arguments)."""
    w, h = _check_size(size, 400, 400)
    return _plan_layout(_obstacles(obstacles), _cells(cells), markers, best, w, h)


def _star(cx, cy, r_out, r_in, n=5):
    pts = []
    for i in range(2 * n):
        r = r_out if i % 2 == 0 else r_in
        a = math.pi * i / n
        pts.append((cx + r * math.sin(a), cy - r * math.cos(a)))
    return pts


def _fmt_h(h) -> str:
    return f"{round(float(h), 1):g} m"


def _centroid(poly: np.ndarray) -> tuple[float, float]:
    """Area centroid of a simple polygon (shoelace formula); vertex mean if degenerate."""
    x, y = poly[:, 0], poly[:, 1]
    x1, y1 = np.roll(x, -1), np.roll(y, -1)
    cross = x * y1 - x1 * y
    a = cross.sum() / 2.0
    if abs(a) < 1e-9:
        return float(x.mean()), float(y.mean())
    return (float(((x + x1) * cross).sum() / (6 * a)), float(((y + y1) * cross).sum() / (6 * a)))


def plan_figure(*, obstacles=(), cells=(), markers=(), best=None, title="", subtitle="",
                size=(1600, 1600)) -> Image.Image:
    """The site from above for spot search: obstacles to scale with their
    heights, candidate cells coloured by blocked fraction, poles and fixed
    points, the best spot, the site point, a north arrow and a scale bar.

    Coordinates are metres east and north of the site point (a local tangent
    plane, north up, equal scale on both axes).  Inputs are plain data:

      obstacles: list of dicts, each with "kind", optional "name" and
        "height_m" (top above ground, metres):
          {"kind": "building" | "prism", "polygon": [[e, n], ...]}  (footprint;
            "footprint" is accepted too), optional "ridge": [[e, n], [e, n]]
            and "ridge_height_m" for a pitched roof;
          {"kind": "tree", "at": [e, n], "radius_m": r}  (crown radius;
            "crown_radius_m" is accepted too);
          {"kind": "wall", "line": [[e, n], ...]}  (wall or fence polyline).
      cells: (east_m, north_m, size_m, blocked_fraction) per candidate cell:
        a square of side size_m centred there, coloured by blocked_fraction
        (0..1; NaN = not assessed, drawn light grey).
      markers: list of dicts {"name", "east_m", "north_m", "kind": "pole" |
        "point", optional "blocked_fraction", optional "height_m"}.
      best: None or a dict {"name", "east_m", "north_m", "height_m",
        "blocked_fraction"}: marked with a star and labelled.
      title, subtitle: header lines.  size: (width_px, height_px).

    The colour scale runs from 0 to a round blocked fraction at or above the
    largest shown (at least 5 %), labelled at the right.  Returns an RGB
    ``PIL.Image``; :func:`plan_layout` gives the frame and the scale bar.
    """
    W, H = _check_size(size, 400, 400)
    obs = _obstacles(obstacles)
    cl = _cells(cells)
    markers = list(markers or ())
    for i, mk in enumerate(markers):
        if mk.get("kind", "point") not in ("pole", "point"):
            raise ValueError(f"markers[{i}].kind: expected pole or point, got {mk.get('kind')!r}")
    lay = _plan_layout(obs, cl, markers, best, W, H)
    ss = _SS
    SW, SH = W * ss, H * ss
    U = _plan_unit(W, H) * ss
    f0 = lay.frame
    fr = PlanFrame(*(v * ss for v in f0))
    k = fr.px_per_m
    vmax = lay.blocked_max

    def P(e, n):
        x, y = plan_xy(e, n, fr)
        return float(x), float(y)

    def poly_px(a):
        x, y = plan_xy(a[:, 0], a[:, 1], fr)
        return list(zip(x.tolist(), y.tolist()))

    def ramp(f):
        if f is None or not np.isfinite(f):
            return PLAN_GRID
        i = int(np.clip(f / vmax, 0.0, 1.0) * 255)
        return tuple(int(v) for v in BLOCKED_FRACTION_LUT[i])

    img = Image.new("RGB", (SW, SH), WHITE)
    draw = ImageDraw.Draw(img)
    lw = max(1, int(round(1.2 * U)))
    box = (fr.left, fr.top, fr.right, fr.bottom)

    # ---- grid ---------------------------------------------------------------
    e_lo = (fr.left - fr.ox) / k
    e_hi = (fr.right - fr.ox) / k
    n_lo = (fr.oy - fr.bottom) / k
    n_hi = (fr.oy - fr.top) / k
    step = _nice_step(max(e_hi - e_lo, n_hi - n_lo), 8)
    e_ticks = np.arange(math.ceil(e_lo / step) * step, e_hi + 1e-9, step)
    n_ticks = np.arange(math.ceil(n_lo / step) * step, n_hi + 1e-9, step)
    for e in e_ticks:
        x = P(e, 0)[0]
        draw.line((x, fr.top, x, fr.bottom), fill=PLAN_GRID, width=lw)
    for n in n_ticks:
        y = P(0, n)[1]
        draw.line((fr.left, y, fr.right, y), fill=PLAN_GRID, width=lw)

    # ---- obstacle fills with hatching (cells on roofs cover the hatch) ------
    m_obs = Image.new("L", (SW, SH), 0)
    m_tree = Image.new("L", (SW, SH), 0)
    m_cell = Image.new("L", (SW, SH), 0)
    do, dt, dc = ImageDraw.Draw(m_obs), ImageDraw.Draw(m_tree), ImageDraw.Draw(m_cell)
    for o in obs:
        if o.kind in ("building", "prism"):
            do.polygon(poly_px(o.xy), fill=255)
        elif o.kind == "tree":
            cx, cy = P(*o.xy[0])
            r = o.radius_m * k
            dt.ellipse((cx - r, cy - r, cx + r, cy + r), fill=255)
    cell_rects = []
    for e, n, s_m, f in cl.tolist():
        x0, y0 = P(e - s_m / 2, n + s_m / 2)
        x1, y1 = P(e + s_m / 2, n - s_m / 2)
        cell_rects.append(((x0, y0, x1, y1), f))
        dc.rectangle((x0, y0, x1, y1), fill=255)
    arr = np.asarray(img).copy()
    a_obs, a_tree, a_cell = (np.asarray(m) > 127 for m in (m_obs, m_tree, m_cell))
    yy, xx = np.ogrid[0:SH, 0:SW]
    hatch = (((xx + yy) % (14.0 * U)) < (2.2 * U)) & ~a_cell
    arr[a_tree] = TREE_FILL
    arr[a_tree & hatch] = TREE_HATCH
    arr[a_obs] = OBSTRUCTION_FILL
    arr[a_obs & hatch] = HATCH_BLEND
    img = Image.fromarray(arr)
    draw = ImageDraw.Draw(img)
    # A hairline of white between cells big enough to afford it: a grey print
    # then still tells a grid of candidate squares from a flat fill.
    gap = 1.0 if cl.size and float(cl[:, 2].min()) * k >= 16 * ss else 0.0
    for (x0, y0, x1, y1), f in cell_rects:
        draw.rectangle((x0 + gap, y0 + gap, x1 - gap, y1 - gap), fill=ramp(f))

    # ---- outlines, ridges, walls ---------------------------------------------
    w_edge = max(1, int(round(2.2 * U)))
    for o in obs:
        if o.kind in ("building", "prism"):
            pp = poly_px(o.xy)
            draw.line(pp + pp[:1], fill=OBSTRUCTION_EDGE, width=w_edge, joint="curve")
            if o.ridge is not None:
                rp = poly_px(o.ridge)
                for a, b in zip(rp[:-1], rp[1:]):
                    seg = math.hypot(b[0] - a[0], b[1] - a[1])
                    nd = max(1, int(seg / (16 * U)))
                    for j in range(nd):
                        t0, t1 = j / nd, (j + 0.6) / nd
                        draw.line((a[0] + (b[0] - a[0]) * t0, a[1] + (b[1] - a[1]) * t0,
                                   a[0] + (b[0] - a[0]) * t1, a[1] + (b[1] - a[1]) * t1),
                                  fill=OBSTRUCTION_EDGE, width=max(1, int(round(3 * U))))
        elif o.kind == "tree":
            cx, cy = P(*o.xy[0])
            r = o.radius_m * k
            draw.ellipse((cx - r, cy - r, cx + r, cy + r), outline=TREE_EDGE, width=w_edge)
            t = 3 * U
            draw.ellipse((cx - t, cy - t, cx + t, cy + t), fill=TREE_EDGE)
        elif o.kind == "wall":
            draw.line(poly_px(o.xy), fill=WALL, width=int(round(6 * U)), joint="curve")
    draw.rectangle(box, outline=RIM, width=int(round(2.0 * U)))

    # ---- symbols: positions first; drawn after the labels, so always on top ------
    occupied = []
    r_mk = 9 * U
    r_star = 19 * U

    def marker(x, y, kind, fill):
        if kind == "pole":
            draw.ellipse((x - r_mk, y - r_mk, x + r_mk, y + r_mk), fill=fill, outline=BLACK,
                         width=w_edge)
        else:
            q = r_mk * 0.88
            draw.rectangle((x - q, y - q, x + q, y + q), fill=fill, outline=BLACK, width=w_edge)

    def site_symbol(x, y, r):
        draw.ellipse((x - r, y - r, x + r, y + r), fill=WHITE, outline=BLACK, width=w_edge)
        draw.line((x - r * 1.5, y, x + r * 1.5, y), fill=BLACK, width=w_edge)
        draw.line((x, y - r * 1.5, x, y + r * 1.5), fill=BLACK, width=w_edge)

    sx, sy = P(0.0, 0.0)
    occupied.append((sx - 13 * U, sy - 13 * U, sx + 13 * U, sy + 13 * U))
    mk_xy = []
    for mk in markers:
        x, y = P(float(mk["east_m"]), float(mk["north_m"]))
        mk_xy.append((x, y))
        occupied.append((x - r_mk - 2 * U, y - r_mk - 2 * U, x + r_mk + 2 * U, y + r_mk + 2 * U))
    if best:
        bx, by = P(float(best["east_m"]), float(best["north_m"]))
        occupied.append((bx - r_star, by - r_star, bx + r_star, by + r_star))
    # Walls are thin: keep labels off them.
    for o in obs:
        if o.kind == "wall":
            for (xa, ya), (xb, yb) in zip(poly_px(o.xy)[:-1], poly_px(o.xy)[1:]):
                occupied.append((min(xa, xb) - 3 * U, min(ya, yb) - 3 * U,
                                 max(xa, xb) + 3 * U, max(ya, yb) + 3 * U))

    # North arrow (top right) and scale bar (bottom left), each on a white card.
    ax, ay = fr.right - 34 * U, fr.top + 22 * U
    f_n = _font(20 * U)
    card = (ax - 22 * U, ay - 4 * U, ax + 22 * U, ay + 78 * U)
    draw.rounded_rectangle(card, radius=5 * U, fill=WHITE, outline=RULE, width=lw)
    _text(draw, (ax, ay + 2 * U), "N", f_n, TEXT, anchor="mt")
    draw.polygon([(ax, ay + 26 * U), (ax + 11 * U, ay + 60 * U), (ax, ay + 52 * U),
                  (ax - 11 * U, ay + 60 * U)], fill=BLACK)
    draw.line((ax, ay + 52 * U, ax, ay + 72 * U), fill=BLACK, width=int(round(3 * U)))
    occupied.append(card)
    s_x0, s_y, s_len = lay.scale_x * ss, lay.scale_y * ss, lay.scale_px * ss
    f_sc = _font(17 * U)
    s_text = f"{_fmt_num(lay.scale_m)} m"
    card = (s_x0 - 12 * U, s_y - 36 * U, s_x0 + s_len + 12 * U, s_y + 12 * U)
    draw.rounded_rectangle(card, radius=5 * U, fill=WHITE, outline=RULE, width=lw)
    bar_h = 3.5 * U
    draw.rectangle((s_x0, s_y - bar_h, s_x0 + s_len, s_y + bar_h), fill=BLACK)
    for x in (s_x0, s_x0 + s_len):
        draw.line((x, s_y - 8 * U, x, s_y + bar_h), fill=BLACK, width=max(1, int(round(2 * U))))
    _text(draw, (s_x0 + s_len / 2, s_y - 10 * U), s_text, f_sc, TEXT, anchor="md")
    occupied.append(card)

    # ---- labels -------------------------------------------------------------------
    halo = max(1, int(round(3 * U)))
    bounds = (fr.left + 4 * U, fr.top + 4 * U, fr.right - 4 * U, fr.bottom - 4 * U)
    f_best, f_mk, f_ob = _font(19 * U), _font(16 * U), _font(16 * U)
    leaders = []

    def around(x, y, d):
        return [(x + d, y, "lm"), (x - d, y, "rm"), (x, y - d, "md"), (x, y + d, "ma"),
                (x + d * 0.8, y - d * 0.8, "ld"), (x - d * 0.8, y - d * 0.8, "rd"),
                (x + d * 0.8, y + d * 0.8, "la"), (x - d * 0.8, y + d * 0.8, "ra")]

    def leader_to(x, y, box, near_px):
        """A thin line from (x, y) to the label box when the label sits away."""
        bx_ = min(max(x, box[0]), box[2])
        by_ = min(max(y, box[1]), box[3])
        if math.hypot(bx_ - x, by_ - y) > near_px:
            leaders.append((x, y, bx_, by_))

    if best:
        bits = [str(best.get("name") or "best spot")]
        if best.get("height_m") is not None:
            bits.append(_fmt_h(best["height_m"]))
        if best.get("blocked_fraction") is not None:
            bits.append(f"{compact_pct(best['blocked_fraction'])} blocked")
        text = "Best: " + ", ".join(bits)
        cands = around(bx, by, r_star + 6 * U) + around(bx, by, r_star + 40 * U)
        pl = _place_label(draw, text, f_best, cands, occupied, bounds, 3 * U)
        if pl is not None:
            draw.multiline_text(pl[:2], _clean(text), font=f_best, fill=TEXT, anchor=pl[2],
                                stroke_width=halo, stroke_fill=WHITE)
            draw.multiline_text(pl[:2], _clean(text), font=f_best, fill=TEXT, anchor=pl[2],
                                stroke_width=max(0, int(round(0.5 * U))), stroke_fill=TEXT)
            leader_to(bx, by, pl[3], r_star + 12 * U)
    for mk, (x, y) in zip(markers, mk_xy):
        if best and mk.get("name") == best.get("name") and math.hypot(
                x - bx, y - by) < r_star:
            continue  # the best spot's own label says it
        text = str(mk.get("name") or "")
        if mk.get("height_m") is not None:
            text += f" {_fmt_h(mk['height_m'])}"
        if mk.get("blocked_fraction") is not None:
            text += f", {compact_pct(mk['blocked_fraction'])} blocked"
        text = text.strip(", ")
        if text:
            cands = around(x, y, r_mk + 5 * U) + around(x, y, r_mk + 40 * U)
            pl = _place_label(draw, text, f_mk, cands, occupied, bounds, 3 * U)
            if pl is not None:
                _label_text(draw, pl[:2], text, f_mk, TEXT, pl[2], halo)
                leader_to(x, y, pl[3], r_mk + 12 * U)
    pl = _place_label(draw, "site point", f_mk, around(sx, sy, 15 * U), occupied, bounds, 3 * U)
    if pl is not None:
        _label_text(draw, pl[:2], "site point", f_mk, TEXT_SOFT, pl[2], halo)
    for o in obs:
        h_txt = _fmt_h(o.height_m) if o.height_m is not None else "height ?"
        if o.kind == "wall":
            seg = np.diff(o.xy, axis=0)
            i = int(np.argmax(np.hypot(seg[:, 0], seg[:, 1])))
            cx, cy = P(*((o.xy[i] + o.xy[i + 1]) / 2.0))
            text = f"{o.name or 'wall'} {h_txt}"
            d = 8 * U
            if abs(seg[i, 0]) >= abs(seg[i, 1]):   # east-west: above or below it
                cands = [(cx, cy - d, "md"), (cx, cy + d, "ma")]
            else:                                  # north-south: beside it
                cands = [(cx + d, cy, "lm"), (cx - d, cy, "rm")]
            cands += around(cx, cy, 40 * U)
            anchor_pt, near_px = (cx, cy), 14 * U
        else:
            if o.kind == "tree":
                c = o.xy[0]
                ext = o.radius_m * k
                xs_ = [P(*c)[0] - ext, P(*c)[0] + ext]
                ys = [P(*c)[1] - ext, P(*c)[1] + ext]
            else:
                c = np.array(_centroid(o.xy))
                pp = poly_px(o.xy)
                xs_, ys = [p[0] for p in pp], [p[1] for p in pp]
                ext = 0.5 * max(max(xs_) - min(xs_), max(ys) - min(ys))
            cx, cy = P(*c)
            text = (o.name + "\n" if o.name else "") + h_txt
            if o.ridge_height_m is not None:
                text += f", ridge {_fmt_h(o.ridge_height_m)}"
            tb = draw.multiline_textbbox((cx, cy), _clean(text), font=f_ob, anchor="mm",
                                         align="center")
            tw, th = tb[2] - tb[0], tb[3] - tb[1]
            if o.kind == "tree":  # below the trunk dot, inside the crown
                fits = tw < 1.3 * ext and th < 0.8 * ext - 6 * U
            elif o.ridge is not None:  # on one side of the ridge line
                fits = tw < max(xs_) - min(xs_) - 4 * U and th < (max(ys) - min(ys)) / 2 - 8 * U
            else:
                fits = tw < max(xs_) - min(xs_) - 4 * U and th < max(ys) - min(ys) - 4 * U
            cands = []
            if fits:  # inside the shape, off the trunk dot or the ridge line
                if o.kind == "tree" or o.ridge is not None:
                    cands = [(cx, cy + 6 * U, "ma"), (cx, cy - 6 * U, "md")]
                else:
                    cands = [(cx, cy, "mm")]
            cands += [(cx, min(ys) - 6 * U, "md"), (cx, max(ys) + 6 * U, "ma"),
                      (max(xs_) + 6 * U, cy, "lm"), (min(xs_) - 6 * U, cy, "rm")]
            cands += around(cx, cy, ext + 30 * U) + around(cx, cy, ext + 60 * U)
            anchor_pt, near_px = (cx, cy), ext + 14 * U
        pl = _place_label(draw, text, f_ob, cands, occupied, bounds, 2 * U)
        # Heights belong on the plan: when every place is taken, overlap.
        x, y, anchor = pl[:3] if pl is not None else cands[0]
        _label_text(draw, (x, y), text, f_ob, TEXT, anchor, halo)
        if pl is not None:
            leader_to(*anchor_pt, pl[3], near_px)
    for x0, y0, x1, y1 in leaders:
        draw.line((x0, y0, x1, y1), fill=TEXT_SOFT, width=max(1, int(round(1.4 * U))))

    # Symbols on top of everything drawn in the map.
    site_symbol(sx, sy, 8 * U)
    for mk, (x, y) in zip(markers, mk_xy):
        marker(x, y, mk.get("kind", "point"), ramp(mk.get("blocked_fraction")))
    if best:
        draw.polygon(_star(bx, by, r_star + 4 * U, (r_star + 4 * U) * 0.45), fill=WHITE)
        draw.polygon(_star(bx, by, r_star, r_star * 0.42), fill=BLACK)

    # ---- axes ------------------------------------------------------------------------
    f_tick = _font(15 * U)
    for e in e_ticks:
        x = P(e, 0)[0]
        draw.line((x, fr.bottom, x, fr.bottom + 5 * U), fill=RIM, width=lw)
        _text(draw, (x, fr.bottom + 8 * U), _fmt_num(round(e, 6)), f_tick, TEXT_SOFT, anchor="mt")
    for n in n_ticks:
        y = P(0, n)[1]
        draw.line((fr.left - 5 * U, y, fr.left, y), fill=RIM, width=lw)
        _text(draw, (fr.left - 8 * U, y), _fmt_num(round(n, 6)), f_tick, TEXT_SOFT, anchor="rm")
    f_ax = _font(16 * U)
    _text(draw, ((fr.left + fr.right) / 2, fr.bottom + 32 * U),
          "metres east of the site point", f_ax, TEXT, anchor="mt")
    _text(draw, (fr.left - 8 * U, fr.top - 8 * U), "m north", f_ax, TEXT, anchor="rd")

    # ---- colour bar ------------------------------------------------------------------
    cb_x0, cb_x1 = fr.right + 24 * U, fr.right + 50 * U
    cb_top, cb_bot = fr.top + 60 * U, fr.top + 60 * U + 0.55 * (fr.bottom - fr.top)
    f_cb = _font(15 * U)
    _text(draw, (cb_x0 - 4 * U, fr.top + 14 * U), "Blocked\nfraction", f_cb, TEXT, anchor="la")
    steps = int(cb_bot - cb_top)
    for i in range(steps):
        c = tuple(int(v) for v in BLOCKED_FRACTION_LUT[int((steps - 1 - i) * 255 / max(1, steps - 1))])
        draw.line((cb_x0, cb_top + i, cb_x1, cb_top + i), fill=c)
    draw.rectangle((cb_x0, cb_top, cb_x1, cb_bot), outline=RIM, width=lw)
    # Ticks that land on the top of the scale: vmax/5 or vmax/4 when round.
    t_step = next((vmax / n for n in (5, 4, 2) if abs(_nice_ceil(vmax / n) - vmax / n) < 1e-12),
                  vmax)
    for t in np.arange(0.0, vmax + 1e-9, t_step):
        y = cb_bot - (cb_bot - cb_top) * t / vmax
        draw.line((cb_x1, y, cb_x1 + 5 * U, y), fill=RIM, width=lw)
        _text(draw, (cb_x1 + 8 * U, y), f"{100 * t:g}%", f_cb, TEXT_SOFT, anchor="lm")

    # ---- header, legend, caption -------------------------------------------------------
    m = 24 * U
    _header(draw, m, 22 * U, SW - 2 * m, title, subtitle, U)

    def sw_symbol(fn):
        def sw(d, x, y, w, h, u):
            fn(x + w / 2, y + h / 2)
        return sw

    def sw_tree(d, x, y, w, h, u):
        r = h * 0.75
        cx, cy = x + w / 2, y + h / 2
        d.ellipse((cx - r, cy - r, cx + r, cy + r), fill=TREE_FILL, outline=TREE_EDGE, width=w_edge)

    def sw_wall(d, x, y, w, h, u):
        d.line((x, y + h / 2, x + w, y + h / 2), fill=WALL, width=int(round(6 * u)))

    def sw_star(d, x, y, w, h, u):
        d.polygon(_star(x + w / 2, y + h / 2, 13 * u, 5.5 * u), fill=BLACK)

    f_leg = _font(16 * U)
    kinds = {o.kind for o in obs}
    mk_kinds = {mk.get("kind", "point") for mk in markers}
    row1 = []
    if kinds & {"building", "prism"}:
        row1.append((_sw_hatch(), "Building or other obstacle, height written on it"))
    if "tree" in kinds:
        row1.append((sw_tree, "Tree crown"))
    if "wall" in kinds:
        row1.append((sw_wall, "Wall or fence"))
    row2 = []
    if "pole" in mk_kinds:
        row2.append((sw_symbol(lambda x, y: marker(x, y, "pole", WHITE)), "Pole"))
    if "point" in mk_kinds:
        row2.append((sw_symbol(lambda x, y: marker(x, y, "point", WHITE)), "Fixed point"))
    if best:
        row2.append((sw_star, "Best spot"))
    row2.append((sw_symbol(lambda x, y: site_symbol(x, y, 7 * U)), "Site point (0, 0)"))
    if any(o.ridge is not None for o in obs):
        row1.append((lambda d, x, y, w, h, u: _dashed_hline(d, x, x + w, y + h / 2, 3 * u,
                                                            9.6 * u, 6.4 * u, OBSTRUCTION_EDGE),
                     "Roof ridge"))
    y_leg = fr.bottom + 80 * U
    rows = [r for r in (row1, row2) if r]
    for i, row in enumerate(rows):
        _legend_flow(draw, row, m, y_leg + (30 * i + (15 if len(rows) == 1 else 0)) * U,
                     SW - m, f_leg, U, sw_w=40.0)
    f_cap = _font(14 * U)
    caps = [("Squares: candidate spots coloured by blocked fraction (scale at right), "
             "light = clear sky, dark = blocked. " if cl.size else "No candidate cells given. ")
            + "North up; equal scale east and north."]
    caps.append(short_note("fixed"))
    for i, cap in enumerate(caps):
        _text(draw, (m, y_leg + (56 + 19 * i) * U), _fit(draw, cap, f_cap, SW - 2 * m), f_cap,
              TEXT_SOFT)
    return img.resize((W, H), Image.Resampling.LANCZOS)


# ---------------------------------------------------------------------------
# Adapters for spot search (survey/spots.py results, survey/plan.py plans)
# ---------------------------------------------------------------------------
def plan_obstacles(plan) -> list[dict]:
    """A ``plan.Plan``'s drawn obstacles as :func:`plan_figure`'s plain dicts."""
    obs = [dict(kind="building", name=b.name, height_m=b.height_m, polygon=b.footprint, ridge=b.ridge,
                ridge_height_m=b.ridge_height_m) for b in plan.buildings]
    obs += [dict(kind="prism", name=p.name, height_m=p.height_m, polygon=p.polygon) for p in plan.prisms]
    obs += [dict(kind="tree", name=t.name, height_m=t.height_m, at=t.at, radius_m=t.crown_radius_m)
            for t in plan.trees]
    obs += [dict(kind="wall", name=w.name, height_m=w.height_m, line=w.line) for w in plan.walls]
    return obs


def spots_plan_inputs(run, ranking) -> tuple[list, list, list, dict]:
    """(obstacles, cells, markers, best) of a spot ranking (``spots.rank_spots``)
    as :func:`plan_figure` takes them: area grid points as cells, each pole and
    fixed point at its best height, the best spot.  The text UI's plan chart
    takes the same."""
    plan = run.site.plan
    cells = [(r.candidate.east_m, r.candidate.north_m, ranking.spacing_m,
              float("nan") if r.blocked_fraction is None else r.blocked_fraction)
             for r in ranking.results if r.candidate.kind == "area"]
    markers = []
    for r in ranking.best_of_each():  # a pole at its best height
        c = r.candidate
        if c.kind != "area":
            markers.append(dict(name=c.name, east_m=c.east_m, north_m=c.north_m, kind=c.kind,
                                blocked_fraction=r.blocked_fraction, height_m=c.height_m))
    b = ranking.best
    best = dict(name=b.candidate.name, east_m=b.candidate.east_m, north_m=b.candidate.north_m,
                height_m=b.candidate.height_m, blocked_fraction=b.blocked_fraction)
    return (plan_obstacles(plan) if plan is not None else []), cells, markers, best


def spots_plan_figure(run, ranking, size=(1600, 1600)) -> Image.Image:
    """:func:`plan_figure` of a spot ranking (``spots.rank_spots``)."""
    obstacles, cells, markers, best = spots_plan_inputs(run, ranking)
    grown = f"; trees grown {ranking.years:g} years" if ranking.years else ""
    return plan_figure(obstacles=obstacles, cells=cells, markers=markers,
                       best=best, title=f"{run.site.name}: mounting spots",
                       subtitle=f"{len(ranking.results):,} candidates, {_window_text(run.window)}{grown}",
                       size=size)


def derived_horizon_png(site, derived: dict, size=_PANO_SIZE) -> bytes:
    """The horizon derived at a point (``spots.horizon_at``) as a panorama PNG,
    with no satellite tracks (nothing is propagated for it)."""
    az = np.asarray(derived["azimuth_deg"], dtype=np.float64)
    el = np.asarray(derived["elevation_deg"], dtype=np.float64)
    grown = f", trees grown {derived['years']:g} years" if derived.get("years") else ""
    return encode_png(horizon_panorama(
        mask_az_deg=az, mask_el_deg=el, min_elevation_deg=site.terminal.min_elevation_deg,
        title=f"{site.name}: horizon derived at {derived['east_m']:g} m E, {derived['north_m']:g} m N, "
              f"{derived['height_m']:g} m up",
        subtitle=f"from the site plan and the measured distances{grown}; true azimuths", size=size,
        show_tracks=False))
