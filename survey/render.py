"""Sky plot figure: satellite sky-track density over a measured horizon profile.

The figure is a polar view of the sky as an installer reads a site map:
zenith at the centre, the horizon (0 deg elevation) at the rim, north up,
east to the right, azimuth clockwise.  Radius is linear in zenith distance
(90 - elevation), so a point at elevation 45 deg lies at half the radius.

Everything here is pure: :func:`sky_plot` returns a ``PIL.Image.Image`` and
:func:`encode_png` returns bytes; writing files is left to the caller.

Colours are the Okabe & Ito (2008) colour-blind-safe palette, chosen for
meaning: blue for clear sky tracks, vermillion/orange for tracks hidden by the
obstruction, neutral grey (plus hatching, so it survives black-and-white
print) for the obstruction, black dashed for the minimum-elevation ring and
reddish purple for the terminal field of view.
"""

from __future__ import annotations

import io
import math
from functools import lru_cache
from typing import NamedTuple, Sequence

import numpy as np
from PIL import Image, ImageDraw, ImageFont

__all__ = ["sky_plot", "encode_png", "plot_frame", "PlotFrame", "project"]

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
    "\u2212": "-", "\u2248": "~", "\u00b2": "2", "\u00b5": "u",
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


def _fmt_duration(seconds: float) -> str:
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
    period = 14.0 * u
    hatch = obstructed & (((xx + yy) % period) < (2.2 * u))
    block[hatch] = (block[hatch].astype(np.float32) * (1.0 - HATCH_ALPHA)
                    + np.float32(HATCH_ALPHA) * np.array(OBSTRUCTION_HATCH,
                                                         np.float32)
                    ).astype(np.uint8)

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
                f"dark = dense; darkest \u2248 {_fmt_duration(d_max)} per 1\u00b0 cell.")
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
