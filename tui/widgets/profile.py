"""The horizon profile: survey/render.py's horizon panorama in character cells.

Azimuth 0..360 deg clockwise from true north along x (N E S W labelled, and
every 30 deg when there is room; in a vehicle's or vessel's body frame, clockwise
from the bow or front, labelled with its sides: bow stbd stern port, or front
right rear left, see ``frames.py``), elevation up y from 0 to a ceiling (90 deg,
or the smallest of 10, 15, 20, 30, 45, 60, 90 that leaves a tenth of head room
over the data), both linear.  The obstruction is filled with eighth blocks
(``▁▂▃▄▅▆▇█``), so each column's height is exact to 1/8 of a row; measured
points are ``●``; the minimum elevation is a dashed line ``┄`` (hidden where
the obstruction rises through it); the selected azimuth (the table's row) has
``▲`` under it on the axis, its value beside it, and a dotted column ``┊``
above the obstruction, which all read without colour.

Layout (rows from the top): plot rows 0 .. P-1, the axis row (``└──┬──``,
0 deg at its left), the azimuth label row, and a legend row when the height
is 10 or more: P = height - 3 (height - 2 without the legend).  The first 4
columns hold the elevation labels and the axis; plot column j (0-based, after
them) spans azimuths [j, j + 1) x 360 / (width - 4) deg and shows the highest
obstruction in that span (a peak narrower than a column is not lost).
Plot row r spans elevations [P - 1 - r, P - r] x ceiling / P.
"""

from __future__ import annotations

import math

import numpy as np
from rich.text import Text

from .drawing import GREY, Canvas, DrawingWidget, too_small
from .frames import COMPASS

__all__ = ["horizon_profile", "HorizonProfile", "MIN_WIDTH", "MIN_HEIGHT", "GUTTER"]

EIGHTHS = " \u2581\u2582\u2583\u2584\u2585\u2586\u2587\u2588"  # ' ' ▁ ▂ ▃ ▄ ▅ ▆ ▇ █
POINT = "\u25cf"  # ●
PHOTO = "\u2592"  # ▒ a full cell of obstruction that only the photo's skyline makes
MIN_LINE = "\u2504"  # ┄
CURSOR = "\u25b2"  # ▲
CURSOR_COLUMN = "\u250a"  # ┊
GUTTER = 4
MIN_WIDTH = GUTTER + 16
MIN_HEIGHT = 5
_CEILINGS = (10.0, 15.0, 20.0, 30.0, 45.0, 60.0, 90.0)

_STYLE = {
    "fill": GREY,
    "photo": GREY,
    "point": "bold",
    "min": None,  # render.py draws it black: the terminal's own foreground
    "cursor": "bold",
    "axis": GREY,
    "label": "bold",
    "soft": GREY,
}


def _points(points):
    """(azimuth_deg, elevation_deg, label) from HorizonPoint objects or tuples."""
    out = []
    for p in points or ():
        if hasattr(p, "azimuth_deg"):
            a, e, lab = p.azimuth_deg, p.elevation_deg, getattr(p, "label", "")
        else:
            a, e = p[0], p[1]
            lab = p[2] if len(p) > 2 else ""
        a, e = float(a), float(e)
        if math.isfinite(a) and math.isfinite(e):
            out.append((a % 360.0, min(max(e, 0.0), 90.0), str(lab or "")))
    out.sort(key=lambda p: p[0])
    return out


def _mask_knots(mask_az_deg, mask_el_deg):
    m_az = np.mod(np.asarray(mask_az_deg, dtype=np.float64).ravel(), 360.0)
    m_el = np.clip(np.asarray(mask_el_deg, dtype=np.float64).ravel(), 0.0, 90.0)
    if m_az.shape != m_el.shape:
        raise ValueError("mask_az_deg and mask_el_deg must have the same length")
    ok = np.isfinite(m_az) & np.isfinite(m_el)
    m_az, m_el = m_az[ok], m_el[ok]
    order = np.argsort(m_az, kind="stable")
    return m_az[order], m_el[order]


def column_heights(mask_az_deg, mask_el_deg, columns: int) -> np.ndarray:
    """Highest mask elevation (deg) over each of ``columns`` equal azimuth spans
    from 0 to 360: the mask is linear between knots (wrapping through 360), so
    its maximum over a span is at the span's ends or at a knot inside it."""
    m_az, m_el = _mask_knots(mask_az_deg, mask_el_deg)
    if m_az.size == 0:
        return np.zeros(columns)
    if m_az.size == 1:
        return np.full(columns, m_el[0])
    edges = np.arange(columns + 1) * (360.0 / columns)
    at_edges = np.interp(edges, m_az, m_el, period=360.0)
    h = np.maximum(at_edges[:-1], at_edges[1:])
    j = np.clip(np.floor(m_az / (360.0 / columns)).astype(np.int64), 0, columns - 1)
    np.maximum.at(h, j, m_el)
    return h


def _ceiling(values) -> float:
    top = max([10.0] + [float(v) for v in values])
    return next((c for c in _CEILINGS if c >= top * 1.1 - 1e-9), 90.0)


def _fmt_deg(v: float) -> str:
    return f"{v:.0f}\u00b0" if abs(v - round(v)) < 0.05 else f"{v:.1f}\u00b0"


def horizon_profile(mask_az_deg, mask_el_deg, width: int, height: int, points=(),
                    colour: bool = True, cursor_az=None, min_elevation_deg=None,
                    top_deg=None, photo_az_deg=None, photo_el_deg=None, names=None) -> Text:
    """The horizon profile as ``width`` x ``height`` character cells.

    Parameters (degrees, true azimuths):
      mask_az_deg, mask_el_deg: the mask's knots (``HorizonMask.az_deg`` /
        ``el_deg``), linear between them, wrapping through 360; empty = clear.
      points: measured points, ``HorizonPoint`` objects or (azimuth_deg,
        elevation_deg[, label]) tuples; labelled above the highest point of
        each run of equal labels when there is room.
      colour: False gives no style spans at all.
      cursor_az: the highlighted azimuth (the selected table row), or None.
      min_elevation_deg: the terminal's minimum elevation (dashed line), or None.
      top_deg: the elevation axis ceiling; None picks one from the data.
      photo_az_deg, photo_el_deg: a horizon photo's skyline (true azimuths):
        the columns where it rises above ``points_mask`` are drawn in ``▒``
        under the eighth blocks' top, so what the photo adds reads apart from
        what was measured (``mask_*`` is then the combined mask).

    From 20 x 5 cells up (below: a short "enlarge the window" message).  The
    layout is in the module docstring.
    """
    width, height = int(width), int(height)
    if width < MIN_WIDTH or height < MIN_HEIGHT:
        return too_small(width, height, MIN_WIDTH, MIN_HEIGHT)
    pts = _points(points)
    legend = height >= 10
    P = height - (3 if legend else 2)
    pc = width - GUTTER
    heights = column_heights(mask_az_deg, mask_el_deg, pc)
    me = None if min_elevation_deg is None else float(np.clip(min_elevation_deg, 0.0, 90.0))
    if top_deg is None:
        top = _ceiling([heights.max(initial=0.0), me or 0.0] + [p[1] for p in pts])
    else:
        top = float(top_deg)
    cv = Canvas(width, height)
    st = _STYLE.get

    # ---- obstruction in eighth blocks ---------------------------------------
    eighths = np.clip(np.rint(heights / top * P * 8.0), 0, P * 8).astype(np.int64)
    bottom = (P - 1 - np.arange(P))[:, None] * 8  # eighths below each row
    k = np.clip(eighths[None, :] - bottom, 0, 8)
    glyphs = np.array(list(EIGHTHS), dtype="<U1")[k]
    full = np.zeros((height, width), dtype=bool)
    full[:P, GUTTER:] = k > 0
    ch = np.full((height, width), " ", dtype="<U1")
    ch[:P, GUTTER:] = glyphs
    cv.fill(full, ch, st("fill"))
    if photo_az_deg is not None and len(photo_az_deg):
        photo_h = column_heights(photo_az_deg, photo_el_deg, pc)
        by_photo = (photo_h >= heights - 1e-6) & (photo_h > 0)
        shade = np.zeros((height, width), dtype=bool)
        shade[:P, GUTTER:] = (k == 8) & by_photo[None, :]
        cv.fill(shade, np.full((height, width), PHOTO, dtype="<U1"), st("photo"))

    def row_of(el):
        """Plot row whose span holds elevation ``el`` (the top row for the ceiling)."""
        return int(np.clip(P - 1 - math.floor(el / top * P + 1e-9), 0, P - 1))

    def col_of(az):
        return GUTTER + int(np.clip(math.floor((az % 360.0) / 360.0 * pc), 0, pc - 1))

    # ---- minimum elevation: dashed where the sky is open at that height ------
    if me is not None and me <= top:
        r = row_of(me)
        for j in range(pc):
            if k[r, j] == 0:
                cv.put(r, GUTTER + j, MIN_LINE, st("min"))

    # ---- selected azimuth: dotted column over the open sky -------------------
    if cursor_az is not None and math.isfinite(float(cursor_az)):
        cj = col_of(float(cursor_az)) - GUTTER
        for r in range(P):
            if k[r, cj] == 0:
                cv.put(r, GUTTER + cj, CURSOR_COLUMN, st("cursor"))

    # ---- measured points and their labels --------------------------------------
    for a, e, _lab in pts:
        cv.put(row_of(e), col_of(a), POINT, st("point"))
    groups = []
    for i, (_a, _e, lab) in enumerate(pts):
        if groups and lab and groups[-1][1] == lab:
            groups[-1][0].append(i)
        elif lab:
            groups.append(([i], lab))
    if len(groups) > 1 and pts and pts[0][2] and groups[0][1] == groups[-1][1] \
            and groups[0][0][0] == 0 and groups[-1][0][-1] == len(pts) - 1:
        last = groups.pop()
        groups[0] = (last[0] + groups[0][0], groups[0][1])
    groups.sort(key=lambda g: -max(pts[i][1] for i in g[0]))
    for idx, lab in groups if pc >= 40 else ():  # labels only where they have room
        top_i = max(idx, key=lambda i: pts[i][1])
        r0, c = row_of(pts[top_i][1]), col_of(pts[top_i][0])
        for r in (r0 - 1, r0 - 2):
            c0 = min(max(GUTTER, c - len(lab) // 2), width - len(lab))
            if r < 0 or c0 < GUTTER:
                continue
            seg = cv.chars[r, c0:c0 + len(lab)]
            if all(x in (" ", MIN_LINE) for x in seg.tolist()):
                cv.put(r, c0, lab, st("soft"))
                break

    # ---- elevation axis ----------------------------------------------------------
    step = next((s for s in (5.0, 10.0, 15.0, 30.0, 45.0, 90.0) if s / top * P >= 2.0), top)
    tick_rows = {}
    v = step
    while v <= top + 1e-9:
        tick_rows[int(np.clip(round(P - v / top * P - 0.5 + 1e-9), 0, P - 1))] = v
        v += step
    for r in range(P):
        if r in tick_rows:
            cv.put(r, 0, f"{_fmt_deg(tick_rows[r]):>3}"[-3:], st("soft"))
            cv.put(r, 3, "\u2524", st("axis"))  # ┤
        else:
            cv.put(r, 3, "\u2502", st("axis"))  # │
    ax = P
    cv.put(ax, 0, " 0\u00b0", st("soft"))
    cv.put(ax, 3, "\u2514" + "\u2500" * pc, st("axis"))  # └───

    # ---- azimuth ticks and labels ----------------------------------------------
    names = dict(COMPASS if names is None else names)
    names[360] = names[0]
    lab_row = P + 1
    every = 30 if pc / 12.0 >= 4.0 else (90 if pc / 4.0 >= 2.0 else 180)
    ticks = list(range(0, 361, every))
    for a in ticks:
        if a not in (0, 360):
            cv.put(ax, col_of(a) if a < 360 else width - 1, "\u252c", st("axis"))  # ┬

    def free(c0, n):
        return c0 >= GUTTER and c0 + n <= width and all(
            x == " " for x in cv.chars[lab_row, max(0, c0 - 1):c0 + n + 1].tolist())

    # The named directions first: 0 from the left edge, 360 ending at the right
    # edge, the others centred on their tick, else starting or ending there; a
    # word with no room for it is left out (the numbers then fill in).
    for a in sorted((a for a in ticks if a in names), key=lambda a: (a % 360 != 0, a != 0)):
        s, c = names[a], col_of(a)
        tries = [GUTTER] if a == 0 else ([width - len(s)] if a == 360 else
                                         [c - (len(s) - 1) // 2, c, c - len(s) + 1])
        c0 = next((t for t in tries if free(t, len(s))), None)
        if c0 is not None:
            cv.put(lab_row, c0, s, st("label"))
    for a in ticks:  # the numbers where they leave a space either side
        if a in names:
            continue
        s, c = str(a), col_of(a)
        c0 = min(max(GUTTER, c - (len(s) - 1) // 2), width - len(s))
        if all(x == " " for x in cv.chars[lab_row, c0 - 1:c0 + len(s) + 1].tolist()):
            cv.put(lab_row, c0, s, st("soft"))
    if cursor_az is not None and math.isfinite(float(cursor_az)):
        c = col_of(float(cursor_az))
        cv.put(ax, c, CURSOR, st("cursor"))
        s = _fmt_deg(float(cursor_az) % 360.0)
        c0 = c + 1 if c + 1 + len(s) <= width else c - len(s)
        cv.put(ax, c0, s, st("cursor"))

    # ---- legend --------------------------------------------------------------------
    if legend:
        items = [("\u2588", "fill", "obstruction", "obstacle")]  # short forms are whole words too
        if photo_az_deg is not None and len(photo_az_deg):
            items.append((PHOTO, "photo", "photo", "photo"))
        if pts:
            items.append((POINT, "point", "measured", "point"))
        if me is not None:
            items.append((MIN_LINE * 2, "min", f"min {_fmt_deg(me)}", f"min {_fmt_deg(me)}"))
        if cursor_az is not None:
            items.append((CURSOR, "cursor", "selected", "cursor"))

        def span(use_long):
            return sum(len(g) + 1 + len(lo if use_long else sh) for g, _k, lo, sh in items) \
                + 2 * (len(items) - 1)

        use_long = span(True) <= width
        x, r = 0, height - 1
        for i, (g, key, lo, sh) in enumerate(items):
            lab = lo if use_long else sh
            x += 2 if i else 0
            if x + len(g) + 1 + len(lab) > width:
                break
            cv.put(r, x, g, st(key))
            cv.put(r, x + len(g) + 1, lab)
            x += len(g) + 1 + len(lab)
    return cv.to_text(colour)


class HorizonProfile(DrawingWidget):
    """The horizon profile of the horizon being edited, at the widget's size.

    ``show(mask, points=(), min_elevation_deg=None, cursor_az=None)``: a
    ``survey.horizon.HorizonMask`` in true azimuths (None: clear), the measured
    points in true azimuths (``HorizonPoint`` objects or tuples), the minimum
    elevation line and the azimuth of the table's selected row;
    ``select(cursor_az)`` moves only the highlight; ``show_run(run,
    cursor_az=None)`` takes a ``pipeline.SiteRun``."""

    PLACEHOLDER = "Horizon profile: no points yet"

    names = None  # {0, 90, 180, 270: label}; None: N E S W (set for a body frame)

    def show(self, mask, points=(), min_elevation_deg=None, cursor_az=None, photo=None) -> None:
        m_az = np.zeros(0) if mask is None else np.asarray(mask.az_deg, dtype=np.float64)
        m_el = np.zeros(0) if mask is None else np.asarray(mask.el_deg, dtype=np.float64)
        self._set_data({"m_az": m_az, "m_el": m_el, "points": _points(points),
                        "min": min_elevation_deg, "cursor": cursor_az, "photo": photo})

    def show_run(self, run, cursor_az=None) -> None:
        """The horizon of a ``pipeline.SiteRun``: its true-azimuth mask, the
        measured points rotated to true north, its minimum elevation."""
        true = run.site.horizon.to_true(run.declination.declination_deg)
        self.show(run.mask, true.points, run.site.terminal.min_elevation_deg, cursor_az)

    def preferred_height(self, width: int) -> int:
        return 14

    def select(self, cursor_az) -> None:
        if self._data is not None:
            self._set_data({**self._data, "cursor": cursor_az})

    def _draw(self, width, height, colour):
        d = self._data
        return horizon_profile(d["m_az"], d["m_el"], width, height, points=d["points"],
                               colour=colour, cursor_az=d["cursor"],
                               min_elevation_deg=d["min"],
                               photo_az_deg=None if d.get("photo") is None else d["photo"][0],
                               photo_el_deg=None if d.get("photo") is None else d["photo"][1],
                               names=self.names)
