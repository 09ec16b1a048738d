"""The plan chart: survey/render.py's site plan for spot search in character cells.

The site from above, north up, one scale east and north: a column spans s
metres and a row 2 s (cells are twice as tall as wide).  s is chosen so that
the data fit and the scale bar, a round 1, 2 or 5 x 10^k metres, is a whole
number of columns long; the site point sits at a cell centre.  Cell (r, c) shows
what is at its centre, east (c - c0) s and north (r0 - r) 2 s of the site point.

========================  ===============  ==================================
what                      glyph            colour (render.py's meaning)
========================  ===============  ==================================
building, other solid     ``▓``            grey (obstruction)
roof ridge                ``┄`` / ``┆``    grey, dashed as in the figure
tree crown                ``♣``            bluish green
wall or fence             ``─ │ ╱ ╲``      grey
candidate cells           ``· ○ ◐ ●``      light to dark: clear to blocked
pole / fixed point        ``1 2 ..`` / ``A B ..``  bold
best spot                 ``★``            bold
site point (0, 0)         ``⊕``
selected candidate        ``[`` x ``]``    reverse video too, in colour
========================  ===============  ==================================

Candidate cells are shaded by the mean blocked fraction of the candidates whose
centres fall in the cell (NaN, not assessed: ``?``), on a 4-step scale from 0
to a round top at or above the largest shown (at least 5 %), as render.py's
colour bar.  ``N`` over ``↑`` in the top right corner; the scale bar
(``├───┤ 10 m``) on the row under the map; the legend on the rows below.
"""

from __future__ import annotations

import math

import numpy as np
from rich.text import Text

from survey.api import (
    centroid,
    compact_pct,
    nice_ceil,
    nice_floor,
    obstacle_shapes,
    palette,
    plan_cells,
    plan_extent_points,
    points_in_polygon,
    spots_plan_inputs,
)

from .drawing import (
    BLUISH_GREEN,
    GREY,
    ORANGE,
    SKY_BLUE,
    VERMILLION,
    Canvas,
    DrawingWidget,
    hex_colour,
    too_small,
)

__all__ = ["plan_chart", "plan_chart_for", "plan_inputs", "plan_geometry", "PlanGeometry", "PlanChart",
           "MIN_WIDTH", "MIN_HEIGHT"]

BUILDING = "\u2593"  # ▓
TREE = "\u2663"  # ♣
RAMP = "\u00b7\u25cb\u25d0\u25cf"  # · ○ ◐ ●
NOT_ASSESSED = "?"
BEST = "\u2605"  # ★
SITE = "\u2295"  # ⊕
MIN_WIDTH = 20
MIN_HEIGHT = 8

_RAMP_COLOURS = (SKY_BLUE, hex_colour(palette.YELLOW), ORANGE, VERMILLION)
_STYLE = {
    "building": GREY, "ridge": GREY, "tree": BLUISH_GREEN, "wall": GREY,
    "ramp0": _RAMP_COLOURS[0], "ramp1": _RAMP_COLOURS[1], "ramp2": _RAMP_COLOURS[2],
    "ramp3": _RAMP_COLOURS[3], "nan": GREY,
    "marker": "bold", "best": "bold", "site": None, "selected": "reverse bold",
    "north": "bold", "scale": None, "soft": GREY, "label": "bold",
}


def _fmt_num(v: float) -> str:
    return f"{v:.0f}" if abs(v - round(v)) < 1e-6 else f"{v:g}"


class PlanGeometry:
    """Map frame of :func:`plan_chart`: ``rows`` x ``width`` map cells, metres a
    column ``s`` (a row is 2 s), site point at cell (``r0``, ``c0``); the scale
    bar is ``scale_m`` metres = ``scale_cols`` columns on row ``rows``."""

    def __init__(self, rows, width, s, r0, c0, scale_m, scale_cols):
        self.rows, self.width, self.s = rows, width, s
        self.r0, self.c0, self.scale_m, self.scale_cols = r0, c0, scale_m, scale_cols

    def cell(self, east_m, north_m):
        """(row, col) of the cell holding a point, as integer arrays."""
        c = np.floor(np.asarray(east_m, dtype=np.float64) / self.s + self.c0 + 0.5)
        r = np.floor(self.r0 - np.asarray(north_m, dtype=np.float64) / (2 * self.s) + 0.5)
        return r.astype(np.int64), c.astype(np.int64)


def _legend_rows(height: int) -> int:
    """Legend rows the chart keeps at this height however short the legend."""
    return 2 if height >= 16 else (1 if height >= 10 else 0)


def _legend_budget(height: int) -> int:
    """The most legend rows at this height: a third of it, and the map keeps the rest."""
    return max(_legend_rows(height), height // 3) if height >= 10 else 0


def plan_geometry(points_m: np.ndarray, width: int, height: int, legend_rows: int | None = None) -> PlanGeometry:
    """The frame for data spanning ``points_m`` ((k, 2) east, north metres; the
    site point is always included) at this size, with ``legend_rows`` under the
    scale bar (default: as few as the chart keeps at this height)."""
    rows = height - 1 - (_legend_rows(height) if legend_rows is None else legend_rows)
    pts = np.concatenate([np.zeros((1, 2)), np.asarray(points_m, dtype=np.float64).reshape(-1, 2)])
    e0, n0 = pts.min(axis=0)
    e1, n1 = pts.max(axis=0)
    span = max(e1 - e0, n1 - n0, 10.0)
    pad = max(0.06 * span, 2.0)  # as render.py's plan
    ec, nc = (e0 + e1) / 2.0, (n0 + n1) / 2.0
    half_e = max((e1 - e0) / 2.0, 5.0) + pad
    half_n = max((n1 - n0) / 2.0, 5.0) + pad
    s_fit = max(2 * half_e / width, 2 * half_n / (2 * rows))
    # A round scale bar about a fifth of the width, a whole number of columns:
    # coarsen s slightly so that scale_m / s is an integer.
    scale_m = nice_floor(max(0.2 * width * s_fit, 1e-3))
    k = max(1, int(math.floor(scale_m / s_fit + 1e-9)))
    s = scale_m / k
    c0 = int(round((width - 1) / 2.0 - ec / s))
    r0 = int(round((rows - 1) / 2.0 + nc / (2 * s)))
    return PlanGeometry(rows, width, s, r0, c0, scale_m, k)


def _line_glyph(de_m: float, dn_m: float, dashed: bool = False) -> str:
    """A line glyph for a segment's direction on the ground (north up)."""
    ang = math.degrees(math.atan2(dn_m, de_m)) % 180.0
    if ang < 22.5 or ang >= 157.5:
        return "\u2504" if dashed else "\u2500"  # ┄ ─
    if 67.5 <= ang < 112.5:
        return "\u2506" if dashed else "\u2502"  # ┆ │
    if dashed:
        return "\u2504"
    return "\u2571" if ang < 90 else "\u2572"  # ╱ ╲


def _segment_cells(geo: PlanGeometry, a, b):
    """Cells along a segment (sampled every quarter column)."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    n = max(2, int(math.ceil(np.hypot(*(b - a)) / (geo.s / 4.0))) + 1)
    t = np.linspace(0.0, 1.0, n)[:, None]
    p = a + (b - a) * t
    return geo.cell(p[:, 0], p[:, 1])


def plan_chart(obstacles, cells, markers, best, width: int, height: int, colour: bool = True,
               selected=None) -> Text:
    """The plan chart as ``width`` x ``height`` character cells.

    The plain inputs of ``render.plan_figure`` (metres east, north of the site
    point): ``obstacles`` (dicts: kind building | prism with "polygon" or
    "footprint" and optional "ridge"; tree with "at" and "radius_m" or
    "crown_radius_m"; wall with "line"), ``cells`` ((east_m, north_m, size_m,
    blocked_fraction) per candidate square), ``markers`` (dicts: name, east_m,
    north_m, kind pole | point, optional blocked_fraction, height_m) and
    ``best`` (None or a dict: name, east_m, north_m, height_m,
    blocked_fraction).  ``selected``: None or (east_m, north_m) of the
    candidate to highlight.  colour: False gives no style spans at all.

    From 20 x 8 cells up (below: a short "enlarge the window" message).
    """
    width, height = int(width), int(height)
    if width < MIN_WIDTH or height < MIN_HEIGHT:
        return too_small(width, height, MIN_WIDTH, MIN_HEIGHT)
    obs = obstacle_shapes(obstacles)  # the figure's own validation of the dicts
    cl = plan_cells(cells)
    markers = list(markers or ())
    st = _STYLE.get

    keys = _marker_keys(markers)
    vmax = _ramp_top(cl, markers, best)
    legend = _legend(obs, cl, markers, keys, best, selected, vmax, width, height)

    pts = [plan_extent_points(obs, cl, markers, best)]  # the figure's own extent, site point included
    if selected is not None:
        pts.append(np.array([[float(selected[0]), float(selected[1])]]))
    geo = plan_geometry(np.concatenate(pts), width, height, legend_rows=len(legend))
    M, s = geo.rows, geo.s
    cv = Canvas(width, height)
    rr, cc = np.mgrid[0:M, 0:width]
    E = (cc - geo.c0) * s
    N = (geo.r0 - rr) * 2.0 * s

    def full(m):
        out = np.zeros((height, width), dtype=bool)
        out[:M] = m
        return out

    def put_cells(r, c, ch, style):
        ok = (r >= 0) & (r < M) & (c >= 0) & (c < width)
        for ri, ci in zip(r[ok].tolist(), c[ok].tolist()):
            cv.put(ri, ci, ch, style)

    # ---- obstacles -------------------------------------------------------------
    for o in obs:
        if o.kind in ("building", "prism"):
            m = points_in_polygon(o.xy, E, N)
            if not m.any():  # smaller than a cell: still show it
                r, c = geo.cell(*centroid(o.xy))
                put_cells(np.atleast_1d(r), np.atleast_1d(c), BUILDING, st("building"))
            cv.fill(full(m), BUILDING, st("building"))
        elif o.kind == "tree":
            cx, cy = o.xy[0]
            m = np.hypot(E - cx, N - cy) <= o.radius_m
            if not m.any():
                r, c = geo.cell(cx, cy)
                put_cells(np.atleast_1d(r), np.atleast_1d(c), TREE, st("tree"))
            cv.fill(full(m), TREE, st("tree"))
    for o in obs:
        if o.kind == "wall":
            for a, b in zip(o.xy[:-1], o.xy[1:]):
                r, c = _segment_cells(geo, a, b)
                put_cells(r, c, _line_glyph(*(b - a)), st("wall"))

    # ---- candidate cells ---------------------------------------------------------
    if cl.size:
        tot = np.zeros(M * width)
        cnt = np.zeros(M * width)
        nan_cnt = np.zeros(M * width)
        e, n, size, f = cl[:, 0], cl[:, 1], cl[:, 2], cl[:, 3]
        half = size / 2.0
        # Cells whose centre lies in each candidate square; at least the cell
        # holding the candidate's centre.
        c_lo = np.ceil((e - half) / s + geo.c0 - 1e-9).astype(np.int64)
        c_hi = np.ceil((e + half) / s + geo.c0 - 1e-9).astype(np.int64) - 1
        r_lo = np.ceil(geo.r0 - (n + half) / (2 * s) - 1e-9).astype(np.int64)
        r_hi = np.ceil(geo.r0 - (n - half) / (2 * s) - 1e-9).astype(np.int64) - 1
        rc_, cc_ = geo.cell(e, n)
        small_c, small_r = c_hi < c_lo, r_hi < r_lo
        c_lo = np.where(small_c, cc_, c_lo)
        c_hi = np.where(small_c, cc_, c_hi)
        r_lo = np.where(small_r, rc_, r_lo)
        r_hi = np.where(small_r, rc_, r_hi)
        finite = np.isfinite(f)
        for dr in range(int((r_hi - r_lo).max()) + 1):
            for dc in range(int((c_hi - c_lo).max()) + 1):
                r, c = r_lo + dr, c_lo + dc
                ok = (r <= r_hi) & (c <= c_hi) & (r >= 0) & (r < M) & (c >= 0) & (c < width)
                idx = r[ok] * width + c[ok]
                fin = finite[ok]
                np.add.at(tot, idx[fin], f[ok][fin])
                np.add.at(cnt, idx[fin], 1.0)
                np.add.at(nan_cnt, idx[~fin], 1.0)
        mean = np.where(cnt > 0, tot / np.maximum(cnt, 1), np.nan).reshape(M, width)
        step = np.clip(np.floor(np.nan_to_num(mean) / vmax * 4.0), 0, 3).astype(np.int64)
        has = (cnt > 0).reshape(M, width)
        for q in range(4):
            cv.fill(full(has & (step == q)), RAMP[q], st(f"ramp{q}"))
        cv.fill(full((nan_cnt > 0).reshape(M, width) & ~has), NOT_ASSESSED, st("nan"))

    # Ridges over the roof and its candidate cells, so the roof's shape reads.
    for o in obs:
        if o.kind in ("building", "prism") and o.ridge is not None:
            for a, b in zip(o.ridge[:-1], o.ridge[1:]):
                r, c = _segment_cells(geo, a, b)
                ok = (r >= 0) & (r < M) & (c >= 0) & (c < width)
                g = _line_glyph(*(b - a), dashed=True)
                for ri, ci in zip(r[ok].tolist(), c[ok].tolist()):
                    if cv.chars[ri, ci] == BUILDING:
                        cv.put(ri, ci, g, st("ridge"))

    # Obstacle names and heights written inside their shapes, where they fit on
    # cells of the shape's own fill (never over candidate cells or ridges).
    for o in obs:
        if o.kind == "wall" or o.height_m is None:
            continue
        h_txt = f"{round(o.height_m, 1):g}"
        if o.ridge_height_m is not None:
            h_txt += f"-{round(o.ridge_height_m, 1):g}"
        h_txt += " m"
        texts = ([f"{o.name} {h_txt}"] if o.name else []) + [h_txt]
        fill_glyph = TREE if o.kind == "tree" else BUILDING
        centre = o.xy[0] if o.kind == "tree" else centroid(o.xy)
        r_c, c_c = (int(v) for v in geo.cell(*centre))
        done = False
        for text in texts:
            for dr in (0, 1, -1, 2, -2):
                r = r_c + dr
                c = c_c - len(text) // 2
                # Strictly inside: a cell of the fill on either side of the text.
                if not (0 <= r < M and 1 <= c and c + len(text) < width):
                    continue
                if all(ch == fill_glyph for ch in cv.chars[r, c - 1:c + len(text) + 1].tolist()):
                    cv.put(r, c, text, st("label"))
                    done = True
                    break
            if done:
                break

    # ---- symbols -------------------------------------------------------------------
    for key, mk in zip(keys, markers):
        r, c = geo.cell(float(mk["east_m"]), float(mk["north_m"]))
        put_cells(np.atleast_1d(r), np.atleast_1d(c), key, st("marker"))
    r, c = geo.cell(0.0, 0.0)
    put_cells(np.atleast_1d(r), np.atleast_1d(c), SITE, st("site"))
    if best:
        r, c = geo.cell(float(best["east_m"]), float(best["north_m"]))
        put_cells(np.atleast_1d(r), np.atleast_1d(c), BEST, st("best"))
    if selected is not None:
        r, c = (int(v) for v in geo.cell(float(selected[0]), float(selected[1])))
        if 0 <= r < M and 0 <= c < width:
            cv.put(r, c, cv.chars[r, c], st("selected"))
            cv.put(r, c - 1, "[", st("selected"))
            cv.put(r, c + 1, "]", st("selected"))
    cv.put(0, width - 1, "N", st("north"))
    cv.put(1, width - 1, "\u2191", st("north"))  # ↑

    # ---- scale bar -----------------------------------------------------------------
    k = geo.scale_cols
    bar = "\u251c" + "\u2500" * (k - 1) + "\u2524" if k >= 1 else ""  # ├───┤
    label = f" {_fmt_num(geo.scale_m)} m"
    cv.put(M, 0, bar, st("scale"))
    cv.put(M, len(bar), label, st("scale"))
    x = len(bar) + len(label) + 3
    note = f"1 column = {_fmt_num(round(s, 3))} m, 1 row = {_fmt_num(round(2 * s, 3))} m"
    if x + len(note) <= width:
        cv.put(M, x, note, st("soft"))

    # ---- legend: whole items, packed row by row ------------------------------------
    for row, items in enumerate(legend, start=M + 1):
        x = 0
        for item in items:
            for text, key in item:
                x += cv.put(row, x, text, st(key)) + 1
            x += 1
    return cv.to_text(colour)


def _marker_keys(markers) -> list[str]:
    """The map key of each marker: poles 1, 2, .. and fixed points A, B, .."""
    keys = []
    n_pole = n_point = 0
    for mk in markers:
        if mk.get("kind", "point") == "pole":
            n_pole += 1
            keys.append(str(n_pole) if n_pole < 10 else "#")
        else:
            n_point += 1
            keys.append(chr(ord("A") + n_point - 1) if n_point <= 26 else "#")
    return keys


def _ramp_top(cl, markers, best) -> float:
    """The top of the 4-step shading: a round value at or above the largest
    blocked fraction shown, at least 5 %."""
    fr_all = [float(f) for f in (cl[:, 3] if cl.size else []) if np.isfinite(f)]
    fr_all += [float(mk["blocked_fraction"]) for mk in markers + ([best] if best else [])
               if mk.get("blocked_fraction") is not None]
    top_f = max(fr_all, default=0.0)
    return min(1.0, max(0.05, nice_ceil(top_f) if top_f > 0 else 0.05))


def _legend(obs, cl, markers, keys, best, selected, vmax, width: int, height: int) -> list[list[list]]:
    """The legend as rows of items, each item a list of (text, style key)
    pieces written a space apart; at most a third of ``height`` in rows of
    ``width`` cells.  Items are never cut: a row takes whole items; markers and
    the best spot lose their figures (height, blocked) when the long labels
    would need more rows; what still does not fit is left off whole, from the end."""
    budget = _legend_budget(height)
    if budget <= 0:
        return []
    pct = compact_pct
    items = []  # each: its forms, longest first
    if cl.size:
        q = vmax / 4.0
        ramp = [[(RAMP[i], f"ramp{i}"), (f"<{pct((i + 1) * q)}" if i < 3 else f"\u2264{pct(vmax)}", None)]
                for i in range(4)]
        ramp[0] = [("blocked", "soft")] + ramp[0]
        items += [(r,) for r in ramp]
    for key, mk in zip(keys, markers):
        name = str(mk.get("name") or "")
        figures = name
        if mk.get("height_m") is not None:
            figures += f" {round(float(mk['height_m']), 1):g} m"
        if mk.get("blocked_fraction") is not None:
            figures += f" {pct(mk['blocked_fraction'])}"
        items.append(([(key, "marker"), (figures.strip(), None)], [(key, "marker"), (name, None)]))
    kinds = {o.kind for o in obs}
    plain = []
    if kinds & {"building", "prism"}:
        plain.append((BUILDING, "building", "building"))
    if any(o.ridge is not None for o in obs):
        plain.append(("\u2504", "ridge", "ridge"))
    if "tree" in kinds:
        plain.append((TREE, "tree", "tree"))
    if "wall" in kinds:
        plain.append(("\u2500", "wall", "wall"))
    plain.append((SITE, "site", "site point"))
    items += [([(g, key), (label, None)],) for g, key, label in plain]
    if best:
        bits = [str(best.get("name") or "best")]
        if best.get("height_m") is not None:
            bits.append(f"{round(float(best['height_m']), 1):g} m")
        if best.get("blocked_fraction") is not None:
            bits.append(pct(best["blocked_fraction"]))
        items.append(([(BEST, "best"), ("best: " + " ".join(bits), None)], [(BEST, "best"), ("best", None)]))
    if selected is not None:
        items.append(([("[ ]", "selected"), ("selected", None)],))

    def cells(item) -> int:
        return sum(len(t) for t, _ in item) + len(item) - 1

    def rows_at(level: int) -> list[list[list]]:
        rows, row, x = [], [], 0
        for forms in items:
            item = forms[min(level, len(forms) - 1)]
            need = cells(item)
            if need > width:
                continue  # wider than the chart even alone: left off whole
            if row and x + 2 + need > width:
                rows.append(row)
                row, x = [], 0
            x += need + (2 if row else 0)
            row.append(item)
        return rows + ([row] if row else [])

    long, short = rows_at(0), rows_at(1)
    chosen = long if len(long) <= max(len(short), _legend_rows(height)) else short
    return chosen[:budget]


def plan_inputs(run, ranking) -> tuple[list, list, list, dict]:
    """(obstacles, cells, markers, best) of a spot ranking: the report figure's own."""
    return spots_plan_inputs(run, ranking)


def plan_chart_for(run, ranking, width: int, height: int, colour: bool = True,
                   selected=None) -> Text:
    """:func:`plan_chart` of a spot ranking (``spots.rank_spots`` of ``run``)."""
    obstacles, cells, markers, best = plan_inputs(run, ranking)
    return plan_chart(obstacles, cells, markers, best, width, height, colour=colour,
                      selected=selected)


class PlanChart(DrawingWidget):
    """The plan chart of the latest spot ranking, at the widget's size.

    ``show(run, ranking, selected=None)`` with a ``pipeline.SiteRun`` and its
    ``spots.SpotRanking``; ``show_plain(obstacles, cells, markers, best,
    selected=None)`` with :func:`plan_chart`'s plain inputs;
    ``select((east_m, north_m))`` (or None) moves only the highlight."""

    PLACEHOLDER = "Site plan: no spot search yet"

    def show(self, run, ranking, selected=None) -> None:
        self.show_plain(*plan_inputs(run, ranking), selected=selected)

    show_run = show

    def preferred_height(self, width: int) -> int:
        return max(MIN_HEIGHT, min(40, width // 3))

    def show_plain(self, obstacles, cells, markers, best, selected=None) -> None:
        self._set_data({"obstacles": list(obstacles or ()), "cells": list(cells or ()),
                        "markers": list(markers or ()), "best": best, "selected": selected})

    def select(self, selected) -> None:
        if self._data is not None:
            self._set_data({**self._data, "selected": selected})

    def _draw(self, width, height, colour):
        d = self._data
        return plan_chart(d["obstacles"], d["cells"], d["markers"], d["best"], width, height,
                          colour=colour, selected=d["selected"])
