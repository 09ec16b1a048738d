"""The sky chart: survey/render.py's polar sky plot in character cells.

Zenith at the centre, the horizon (0 deg elevation) at the rim, north up, east
to the right, azimuth clockwise; radius linear in zenith distance (90 - el), so
elevation 45 deg lies at half the radius.  Cells are taken as twice as tall as
wide: the rim is ``n`` rows above and below the centre and ``2n`` columns
either side of it, so the circle is round on screen.  Lines (rim, dashed
minimum-elevation ring, silhouette edge) are drawn in braille dots, 2 x 4 to a
cell, which are square at that aspect.

Each cell shows one thing, chosen in this order (later wins); the glyph
alone carries the meaning, the colour is render.py's for the same thing:

- below the minimum elevation: ``·`` on every other cell, faint grey;
- obstructed sky without tracks: hatch ``╱``, grey;
- clear track density: ``░ ▒ ▓ █`` sparse to dense, sky blue to blue;
- blocked track density: ``x X`` sparse to dense, orange to vermillion;
- silhouette edge (where the cell shows no tracks): braille dots, grey;
- field of view outline: ``o`` (boresight ``◎``), reddish purple;
- minimum-elevation ring: dashed braille dots, the terminal's foreground;
- rim (the horizon): braille dots, grey; zenith ``+``; N E S W outside the
  rim; 30 and 60 deg written where their rings cross the north axis.

Density is the number of samples per cell (cells are equal areas of the chart,
as render.py's 1 deg plot cells), on one log scale for clear and blocked
samples anchored at one sample per cell; a cell with both shows whichever has
more.  A cell is obstructed when the sky at its centre is below the mask.
"""

from __future__ import annotations

import math

import numpy as np
from rich.text import Text

from survey.api import cone_edge, pct

from .drawing import (
    BLUE,
    BRAILLE_BITS,
    GREY,
    GREY_FAINT,
    ORANGE,
    REDDISH_PURPLE,
    SKY_BLUE,
    VERMILLION,
    Canvas,
    DrawingWidget,
    braille_chars,
    fit,
    too_small,
)
from .frames import COMPASS, axis_names

__all__ = ["sky_chart", "sky_chart_from", "sky_layout", "SkyChart", "SkyLayout",
           "MIN_WIDTH", "MIN_HEIGHT"]

CLEAR_GLYPHS = "\u2591\u2592\u2593\u2588"  # ░▒▓█
BLOCKED_GLYPHS = "xxXX"
HATCH = "\u2571"  # ╱
BELOW = "\u00b7"  # ·
FOV_GLYPH = "o"
BORESIGHT = "\u25ce"  # ◎, not "+": that is the zenith
ZENITH = "+"

_N_MIN = 3  # rim 3 rows from the centre: the smallest chart that still reads
MIN_WIDTH = 4 * _N_MIN + 3
MIN_HEIGHT = 2 * _N_MIN + 3
_SIDE_LEGEND_W = 24  # columns a legend beside the chart needs

_STYLE = {
    "below": GREY_FAINT,
    "hatch": GREY,
    "clear1": SKY_BLUE, "clear2": SKY_BLUE, "clear3": BLUE, "clear4": BLUE,
    "blocked1": ORANGE, "blocked2": ORANGE, "blocked3": VERMILLION, "blocked4": VERMILLION,
    "edge": GREY,
    "fov": REDDISH_PURPLE,
    "ring": None,  # render.py draws it black: the terminal's own foreground
    "rim": GREY,
    "label": "bold",
    "soft": GREY,
}


class SkyLayout:
    """Where the chart sits in the cells: centre (row ``rc``, column ``cc``),
    rim ``n`` rows above/below and ``2n`` columns either side; ``legend`` is
    "side", "bottom" or "" and ``legend_col`` / ``legend_row`` where it starts.

    In braille-dot units (2 dots a column, 4 a row; square at a 1:2 cell
    aspect) the zenith is at (``cx``, ``cy``) = (2 cc + 1, 4 rc + 2) and the
    rim has radius ``R`` = 4 n."""

    def __init__(self, width: int, height: int):
        self.width, self.height = int(width), int(height)
        n_full = min((self.height - 3) // 2, (self.width - 3) // 4)
        self.legend = ""
        n = n_full
        if n_full >= _N_MIN and self.width - (4 * n_full + 3) >= _SIDE_LEGEND_W + 1:
            self.legend = "side"
        elif self.height >= 2 * _N_MIN + 4 and self.width >= 20:
            n = min((self.height - 4) // 2, (self.width - 3) // 4)
            self.legend = "bottom"
        self.n = n
        self.ok = n >= _N_MIN
        chart_rows = self.height - (1 if self.legend == "bottom" else 0)
        block_w = 4 * n + 3
        if self.legend == "side":
            # The chart and its legend centred together, 2 columns apart.
            left = max(0, (self.width - block_w - 2 - _SIDE_LEGEND_W) // 2)
            self.legend_col = left + block_w + 2
        else:
            left = max(0, (self.width - block_w) // 2)
            self.legend_col = 0
        top = max(0, (chart_rows - (2 * n + 3)) // 2)
        self.rc = top + n + 1
        self.cc = left + 2 * n + 1
        self.legend_row = self.height - 1 if self.legend == "bottom" else max(0, self.rc - n)
        self.cx, self.cy, self.R = 2 * self.cc + 1, 4 * self.rc + 2, 4 * n


def sky_layout(width: int, height: int) -> SkyLayout:
    """The layout :func:`sky_chart_from` uses at this size."""
    return SkyLayout(width, height)


def _mask_fn(mask_az_deg, mask_el_deg):
    """Mask elevation (deg) as a function of azimuth: linear between the knots,
    wrapping through 360 (the HorizonMask rule); clear with no knots."""
    m_az = np.mod(np.asarray(mask_az_deg, dtype=np.float64).ravel(), 360.0)
    m_el = np.clip(np.asarray(mask_el_deg, dtype=np.float64).ravel(), 0.0, 90.0)
    ok = np.isfinite(m_az) & np.isfinite(m_el)
    m_az, m_el = m_az[ok], m_el[ok]
    if m_az.size == 0:
        return lambda a: np.zeros(np.shape(a)), False
    if m_az.size == 1:
        return lambda a: np.full(np.shape(a), m_el[0]), bool(m_el[0] > 0)
    order = np.argsort(m_az, kind="stable")
    m_az, m_el = m_az[order], m_el[order]
    return (lambda a: np.interp(np.mod(a, 360.0), m_az, m_el, period=360.0)), bool(np.any(m_el > 0))


def _circle_dots(cx, cy, r, dash=None):
    """Braille-dot coordinates (ix, iy) on a circle of radius r dots about
    (cx, cy); ``dash`` = (on, period) in dots of arc keeps only the dashes."""
    if r <= 0:
        return np.array([int(cx)]), np.array([int(cy)])
    n = max(16, int(math.ceil(2 * math.pi * r * 3)))
    t = np.arange(n) / n * 2.0 * math.pi
    if dash is not None:
        on, period = dash
        s = t * r  # arc length, dots, clockwise from north
        t = t[(s % period) < on]
    x = cx + r * np.sin(t)
    y = cy - r * np.cos(t)
    return np.floor(x).astype(np.int64), np.floor(y).astype(np.int64)


def _legend_entries(me, has_mask, fov, share_clear, share_blocked):
    """(glyphs, style key, long label, short label) per legend entry, most
    important first."""
    me_txt = f"{me:.0f}\u00b0" if abs(me - round(me)) < 0.05 else f"{me:.1f}\u00b0"
    out = [
        (CLEAR_GLYPHS, "clear", "clear tracks" + share_clear, "clear"),
        ("xX", "blocked", "blocked tracks" + share_blocked, "blocked"),
        (HATCH * 2, "hatch", "obstruction" if has_mask else "obstruction (none)", "obstr"),
        ("\u2812\u2812\u2800\u2812", "ring", f"min elevation {me_txt}", f"min {me_txt}"),
        (BELOW * 2, "below", "below the minimum", "below"),
    ]
    if fov is not None:
        out.append((FOV_GLYPH, "fov", f"field of view ({BORESIGHT} centre)", "fov"))
    return out


def _draw_legend_glyphs(cv: Canvas, row, col, glyphs, key, colour_of):
    if key == "clear":
        for i, ch in enumerate(glyphs):
            cv.put(row, col + i, ch, colour_of(f"clear{i + 1}"))
    elif key == "blocked":
        cv.put(row, col, glyphs[0], colour_of("blocked1"))
        cv.put(row, col + 1, glyphs[1], colour_of("blocked4"))
    else:
        cv.put(row, col, glyphs, colour_of(key))


def sky_chart_from(az_deg, el_deg, blocked, mask_az_deg, mask_el_deg, min_elevation_deg,
                   width: int, height: int, colour: bool = True, fov=None, names=None) -> Text:
    """The sky chart as ``width`` x ``height`` character cells.

    Parameters (angles in degrees):
      az_deg, el_deg: one entry per usable (satellite, time) sample, azimuth
        clockwise from true north, elevation 0..90 (``SkyTracks.az_deg`` /
        ``el_deg``); may be empty.
      blocked: bool per sample, True when behind the mask
        (``Assessment.blocked``); None: none blocked.
      mask_az_deg, mask_el_deg: the horizon mask's knots (or a dense sampling),
        linear in azimuth between them and wrapping through 360; empty = clear.
      min_elevation_deg: the terminal's minimum elevation (dashed ring).
      colour: False gives no style spans at all (shapes carry every meaning).
      fov: None or (boresight_az_deg, boresight_el_deg, half_angle_deg).
      names: {0, 90, 180, 270: label} for the top, right, bottom and left
        (``frames.axis_names``; None: N E S W).  A vehicle's or vessel's tracks
        come in its body frame (azimuth from the bow or front), so its chart
        is labelled bow/stbd/stern/port or front/right/rear/left.

    From 15 x 9 cells up (below that: a short "enlarge the window" message).
    A legend goes beside the chart when the width leaves room, else on the
    bottom line when the height does.  Vectorised: one histogram of the
    samples per cell (``np.bincount``), so a day of samples draws in
    milliseconds.
    """
    width, height = int(width), int(height)
    lay = SkyLayout(width, height)
    if not lay.ok:
        return too_small(width, height, MIN_WIDTH, MIN_HEIGHT)
    cv = Canvas(width, height)

    def colour_of(key):
        return _STYLE.get(key)

    n, rc, cc, cx, cy, R = lay.n, lay.rc, lay.cc, lay.cx, lay.cy, float(lay.R)
    mask_at, has_mask = _mask_fn(mask_az_deg, mask_el_deg)
    me = float(np.clip(min_elevation_deg, 0.0, 90.0))

    # ---- cell centres in the chart block -----------------------------------
    r0, r1 = rc - n, rc + n + 1
    c0, c1 = cc - 2 * n, cc + 2 * n + 1
    rows = np.arange(r0, r1)
    cols = np.arange(c0, c1)
    dx = (2 * cols[None, :] + 1 - cx) / R
    dy = (4 * rows[:, None] + 2 - cy) / R
    rho = np.hypot(dx, dy)
    inside = rho <= 1.0 + 1e-9
    cell_az = np.degrees(np.arctan2(dx, -dy)) % 360.0
    cell_el = 90.0 * (1.0 - rho)
    obstructed = inside & (cell_el < mask_at(cell_az))
    below = inside & (cell_el < me)

    block = (slice(r0, r1), slice(c0, c1))

    def at(m):
        full = np.zeros((height, width), dtype=bool)
        full[block] = m
        return full

    # Below the minimum elevation: a sparse stipple (every other cell), light
    # enough to read as "no usable sky here" rather than as data.
    stipple = ((rows[:, None] + cols[None, :]) % 2) == 0
    cv.fill(at(below & ~obstructed & stipple), BELOW, colour_of("below"))
    cv.fill(at(obstructed), HATCH, colour_of("hatch"))

    # ---- track density: one 2D histogram per layer ---------------------------
    az = np.asarray(az_deg, dtype=np.float32).ravel()
    el = np.asarray(el_deg, dtype=np.float32).ravel()
    blk = (np.zeros(az.shape, dtype=bool) if blocked is None
           else np.asarray(blocked, dtype=bool).ravel())
    if not (az.shape == el.shape == blk.shape):
        raise ValueError("az_deg, el_deg and blocked must have the same length")
    nr, nc = r1 - r0, c1 - c0
    counts = np.zeros((2, nr * nc), dtype=np.int64)
    if az.size:
        fin = np.isfinite(az) & np.isfinite(el)
        if not fin.all():
            az, el, blk = az[fin], el[fin], blk[fin]
        # Cell of each sample, column floor(x / 2) and row floor(y / 4) in dots,
        # relative to the block.  Every sample at 0..90 deg falls inside the
        # block (the rim is 2n columns and n rows out), so there is nothing to
        # cull.  float32 throughout, in place: with a day of samples the time
        # goes to allocating and touching temporaries, not to arithmetic.
        rr = np.clip(el, np.float32(0.0), np.float32(90.0))
        np.subtract(np.float32(90.0), rr, out=rr)
        rr *= np.float32(R / 90.0)  # distance from the zenith, dots
        a = np.radians(az)
        x = np.sin(a)
        x *= rr
        x *= np.float32(0.5)
        x += np.float32(cx * 0.5 - c0)
        np.floor(x, out=x)  # column in the block
        np.cos(a, out=a)
        a *= rr
        a *= np.float32(-0.25)
        a += np.float32(cy * 0.25 - r0)
        np.floor(a, out=a)  # row in the block
        a *= np.float32(nc)
        a += x  # linear cell index: whole numbers, exact in float32
        idx = a.astype(np.int32)
        np.clip(idx, 0, nr * nc - 1, out=idx)  # rounding at the rim never leaves it
        np.add(idx, np.int32(nr * nc), out=idx, where=blk)  # blocked: the second layer
        counts = np.bincount(idx, minlength=2 * nr * nc).reshape(2, nr * nc)
    n_clear = counts[0].reshape(nr, nc)
    n_block = counts[1].reshape(nr, nc)
    c_max = int(max(n_clear.max(initial=0), n_block.max(initial=0)))
    if c_max > 0:
        denom = math.log1p(c_max)
        for layer, glyphs, key in ((0, CLEAR_GLYPHS, "clear"), (1, BLOCKED_GLYPHS, "blocked")):
            mine, other = (n_clear, n_block) if layer == 0 else (n_block, n_clear)
            show = (mine > 0) & ((mine > other) if layer == 1 else (mine >= other))
            level = np.clip(np.ceil(np.log1p(mine) / denom * 4.0 - 1e-9).astype(np.int64), 1, 4)
            for lv in range(1, 5):
                sel = show & (level == lv)
                if sel.any():
                    cv.fill(at(sel), glyphs[lv - 1], colour_of(f"{key}{lv}"))
    t_clear, t_block = int(n_clear.sum()), int(n_block.sum())

    # ---- braille line layers (dot level) --------------------------------------
    # Dot grid over the chart block: dot (i, j) has its centre at
    # (2 c0 + i + 0.5, 4 r0 + j + 0.5) in dot units.
    dw, dh = 2 * nc, 4 * nr

    def dots_to_cells(ix, iy):
        """Per-cell braille bit masks (nr, nc) of the given dot coordinates."""
        ix = ix - 2 * c0
        iy = iy - 4 * r0
        ok = (ix >= 0) & (ix < dw) & (iy >= 0) & (iy < dh)
        ix, iy = ix[ok], iy[ok]
        bits = np.zeros(nr * nc, dtype=np.int32)
        np.bitwise_or.at(bits, (iy // 4) * nc + ix // 2, BRAILLE_BITS[ix % 2, iy % 4])
        return bits.reshape(nr, nc)

    def draw_bits(bits, key):
        sel = bits > 0
        if sel.any():
            cv.fill(at(sel), at_chars(braille_chars(bits)), colour_of(key))

    def at_chars(ch):
        full = np.full((height, width), " ", dtype="<U1")
        full[block] = ch
        return full

    if has_mask:
        # Silhouette edge: obstructed dots next to an open one, inside the disc,
        # drawn only where the cell shows no tracks (elsewhere the change from
        # track glyphs to blocked glyphs already draws it).
        jj, ii = np.mgrid[0:dh, 0:dw]
        ddx = (2 * c0 + ii + 0.5 - cx) / R
        ddy = (4 * r0 + jj + 0.5 - cy) / R
        drho = np.hypot(ddx, ddy)
        d_in = drho <= 1.0
        d_obs = d_in & (90.0 * (1.0 - drho) < mask_at(np.degrees(np.arctan2(ddx, -ddy)) % 360.0))
        open_ = d_in & ~d_obs
        nb = np.zeros_like(open_)
        nb[1:, :] |= open_[:-1, :]
        nb[:-1, :] |= open_[1:, :]
        nb[:, 1:] |= open_[:, :-1]
        nb[:, :-1] |= open_[:, 1:]
        edge = d_obs & nb
        ey, ex = np.nonzero(edge)
        bits = dots_to_cells(ex + 2 * c0, ey + 4 * r0)
        bits[(n_clear + n_block) > 0] = 0
        draw_bits(bits, "edge")

    if fov is not None:
        b_az, b_el, half = (float(v) for v in fov)
        e_az, e_el = cone_edge(b_az, b_el, half)
        vis = e_el >= 0.0
        rr = R * (90.0 - np.clip(e_el[vis], 0.0, 90.0)) / 90.0
        fx = cx + rr * np.sin(np.radians(e_az[vis]))
        fy = cy - rr * np.cos(np.radians(e_az[vis]))
        fc = np.floor(fx / 2).astype(np.int64)
        fr = np.floor(fy / 4).astype(np.int64)
        okf = (fr >= 0) & (fr < height) & (fc >= 0) & (fc < width)
        sel = np.zeros((height, width), dtype=bool)
        sel[fr[okf], fc[okf]] = True
        cv.fill(sel, FOV_GLYPH, colour_of("fov"))
        if b_el >= 0:
            rb = R * (90.0 - min(b_el, 90.0)) / 90.0
            bc = int(math.floor((cx + rb * math.sin(math.radians(b_az))) / 2))
            br = int(math.floor((cy - rb * math.cos(math.radians(b_az))) / 4))
            cv.put(br, bc, BORESIGHT, colour_of("fov"))

    # Minimum-elevation ring, dashed (render.py: 11 on, 7 off at its scale).
    r_min = R * (90.0 - me) / 90.0
    if 0 < me < 90:
        draw_bits(dots_to_cells(*_circle_dots(cx, cy, r_min - 0.5, dash=(6.0, 11.0))), "ring")
    draw_bits(dots_to_cells(*_circle_dots(cx, cy, R - 0.5)), "rim")

    # ---- labels ------------------------------------------------------------------
    cv.put(rc, cc, ZENITH, colour_of("soft"))
    names = COMPASS if names is None else names
    for a, row in ((0, rc - n - 1), (180, rc + n + 1)):  # over and under the rim, centred
        cv.put(row, cc - (len(names[a]) - 1) // 2, names[a], colour_of("label"))
    right_room = (lay.legend_col - 1 if lay.legend == "side" else width) - (cc + 2 * n + 1)
    for a, col, room in ((90, cc + 2 * n + 1, right_room), (270, cc - 2 * n - 1, cc - 2 * n)):
        word = names[a]
        if len(word) <= room:  # beside the rim, reading away from it
            cv.put(rc, col if a == 90 else col - len(word) + 1, word, colour_of("label"))
        else:  # no room across: down the margin column, centred on the row
            for i, ch in enumerate(word):
                cv.put(rc - (len(word) - 1) // 2 + i, col, ch, colour_of("label"))
    if n >= 6:
        # Elevation rings labelled where they cross the north axis, just east
        # of it (the rings themselves are not drawn: they would hide tracks).
        for e in (30, 60):
            if abs(e - me) < 90.0 / n:  # the min ring sits there: its legend says it
                continue
            row = int(math.floor((cy - R * (90 - e) / 90.0) / 4))
            cv.put(row, cc + 1, f"{e}\u00b0", colour_of("soft"))

    # ---- legend ----------------------------------------------------------------
    total = t_clear + t_block

    def share(t):
        if total <= 0:
            return ""
        return " " + pct(t / total).replace("\u00a0", " ")  # the one percentage format (words.pct)

    entries = _legend_entries(me, has_mask, fov, share(t_clear), share(t_block))
    if lay.legend == "side":
        col = lay.legend_col
        row = lay.legend_row
        room = width - col
        for glyphs, key, long, _short in entries:
            if row >= height:
                break
            _draw_legend_glyphs(cv, row, col, glyphs, key, colour_of)
            cv.put(row, col + 5, fit(long, room - 5))
            row += 1
        for extra in ("", "density: light = sparse,", "dark = dense (log scale)",
                      "" if total else "no usable samples"):
            if row < height and extra:
                cv.put(row, col, fit(extra, room), colour_of("soft"))
            row += 1
    elif lay.legend == "bottom":
        row = lay.legend_row
        for use_long in (True, False):
            parts, x = [], 0
            for glyphs, key, long, short in entries:
                label = long if use_long else short
                need = len(glyphs) + 1 + len(label) + (2 if parts else 0)
                if x + need > width:
                    break
                parts.append((glyphs, key, label))
                x += need
            if len(parts) == len(entries) or not use_long:
                break
        x = max(0, (width - x) // 2)
        for i, (glyphs, key, label) in enumerate(parts):
            if i:
                x += 2
            _draw_legend_glyphs(cv, row, x, glyphs, key, colour_of)
            x += len(glyphs) + 1
            cv.put(row, x, label)
            x += len(label)
    return cv.to_text(colour)


def _fov_of(site):
    t = site.terminal
    if t.scan_half_angle_deg is None:
        return None
    return (t.tilt_azimuth_deg, 90.0 - t.tilt_deg, t.scan_half_angle_deg)


def sky_chart(run, width: int, height: int, colour: bool = True) -> Text:
    """:func:`sky_chart_from` of an assessed site (a ``pipeline.SiteRun``):
    its usable samples, which are blocked, its true-azimuth mask, minimum
    elevation and field of view."""
    t, s = run.tracks, run.site
    return sky_chart_from(t.az_deg, t.el_deg, run.assessment.blocked, run.mask.az_deg,
                          run.mask.el_deg, s.terminal.min_elevation_deg, width, height,
                          colour=colour, fov=_fov_of(s), names=axis_names(s))


class SkyChart(DrawingWidget):
    """The sky chart of the latest run, at the widget's size.

    ``show(run)`` with a ``pipeline.SiteRun`` (after a horizon edit, pass the
    run with its new mask and assessment); ``show_samples(...)`` with plain
    arrays (the arguments of :func:`sky_chart_from`)."""

    PLACEHOLDER = "Sky chart: no assessment yet"

    def show(self, run) -> None:
        t, s = run.tracks, run.site
        self.show_samples(t.az_deg, t.el_deg, run.assessment.blocked, run.mask.az_deg,
                          run.mask.el_deg, s.terminal.min_elevation_deg, fov=_fov_of(s), names=axis_names(s))

    show_run = show

    def preferred_height(self, width: int) -> int:
        n = max(_N_MIN, min((width - 3) // 4, 12))
        return 2 * n + 4

    def show_samples(self, az_deg, el_deg, blocked, mask_az_deg, mask_el_deg,
                     min_elevation_deg, fov=None, names=None) -> None:
        self._set_data((az_deg, el_deg, blocked, mask_az_deg, mask_el_deg,
                        float(min_elevation_deg), fov, names))

    def _draw(self, width, height, colour):
        az, el, blk, m_az, m_el, me, fov, names = self._data
        return sky_chart_from(az, el, blk, m_az, m_el, me, width, height, colour=colour, fov=fov, names=names)
