"""The site-plan figure for spot search: the site from above, obstacles to
scale with their heights, candidate cells coloured by blocked fraction, poles
and fixed points, the best spot, the site point, a north arrow, a scale bar
and the colour scale.  Metres east and north of the site point (a local
tangent plane, north up, equal scale on both axes)."""

from __future__ import annotations

import math

import numpy as np
from PIL import Image, ImageDraw

from ..geometry import nice_ceil, nice_step
from ..palette import (
    BLACK,
    BLOCKED_FRACTION_LUT,
    HATCH_BLEND,
    OBSTRUCTION_EDGE,
    OBSTRUCTION_FILL,
    PLAN_GRID,
    RIM,
    RULE,
    TEXT,
    TEXT_SOFT,
    TREE_EDGE,
    TREE_FILL,
    TREE_HATCH,
    WALL,
    WHITE,
    lut_colour,
)
from ..safety import short_note
from .canvas import (
    SS,
    Sheet,
    caption,
    check_size,
    dashed_hline,
    fmt_num,
    font,
    hatch_pattern,
    header,
    text,
)
from .legend import legend_flow, sw_hatch
from .plan_labels import labels_layer
from .plan_layout import PlanFrame, PlanLayout, layout, plan_unit, plan_xy
from .plan_shapes import ObstacleShape, check_markers, obstacle_shapes, plan_cells


class PlanMap:
    """A plan figure being drawn: its sheet, the map frame in supersampled
    pixels, the top of the colour scale, and the marks its layers share."""

    def __init__(self, sheet: Sheet, frame: PlanFrame, vmax: float):
        self.sheet = sheet
        self.fr = frame
        self.k = frame.px_per_m
        self.vmax = vmax
        self.u = sheet.u
        self.lw = sheet.px(1.2)
        self.w_edge = sheet.px(2.2)
        self.r_mk = 9 * sheet.u
        self.r_star = 19 * sheet.u

    @property
    def draw(self) -> ImageDraw.ImageDraw:
        return self.sheet.draw

    def xy(self, e, n) -> tuple[float, float]:
        """Pixel (x, y) of a point in metres east and north."""
        x, y = plan_xy(e, n, self.fr)
        return float(x), float(y)

    def poly(self, a) -> list[tuple[float, float]]:
        """Pixel vertices of an (k, 2) array of metres."""
        x, y = plan_xy(a[:, 0], a[:, 1], self.fr)
        return list(zip(x.tolist(), y.tolist()))

    def ramp(self, f):
        """The colour of a blocked fraction (light grey: not assessed)."""
        if f is None or not np.isfinite(f):
            return PLAN_GRID
        return lut_colour(BLOCKED_FRACTION_LUT, int(np.clip(f / self.vmax, 0.0, 1.0) * 255))

    def marker(self, x, y, kind, fill) -> None:
        """A pole (disc) or fixed point (square)."""
        r = self.r_mk
        if kind == "pole":
            self.draw.ellipse((x - r, y - r, x + r, y + r), fill=fill, outline=BLACK, width=self.w_edge)
        else:
            q = r * 0.88
            self.draw.rectangle((x - q, y - q, x + q, y + q), fill=fill, outline=BLACK, width=self.w_edge)

    def site_symbol(self, x, y, r) -> None:
        """The site point: a white ring with a black cross."""
        d, w = self.draw, self.w_edge
        d.ellipse((x - r, y - r, x + r, y + r), fill=WHITE, outline=BLACK, width=w)
        d.line((x - r * 1.5, y, x + r * 1.5, y), fill=BLACK, width=w)
        d.line((x, y - r * 1.5, x, y + r * 1.5), fill=BLACK, width=w)

    def card(self, box) -> None:
        """A white card with a light edge, under the north arrow or scale bar."""
        self.draw.rounded_rectangle(box, radius=5 * self.u, fill=WHITE, outline=RULE, width=self.lw)


def star(cx, cy, r_out, r_in, n=5):
    """Vertices of an ``n``-pointed star, point up."""
    pts = []
    for i in range(2 * n):
        r = r_out if i % 2 == 0 else r_in
        a = math.pi * i / n
        pts.append((cx + r * math.sin(a), cy - r * math.cos(a)))
    return pts


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
    W, H = check_size(size, 400, 400)
    obs = obstacle_shapes(obstacles)
    cl = plan_cells(cells)
    markers = check_markers(markers)
    lay = layout(obs, cl, markers, best, W, H)
    mp = PlanMap(Sheet((W, H), plan_unit(W, H)), PlanFrame(*(v * SS for v in lay.frame)), lay.blocked_max)
    e_ticks, n_ticks = _grid_layer(mp)
    _fills_layer(mp, obs, cl)
    _outlines_layer(mp, obs)
    occupied = []
    mk_xy, best_xy = _symbol_places(mp, obs, markers, best, occupied)
    _north_arrow(mp, occupied)
    _scale_bar(mp, lay, occupied)
    labels_layer(mp, obs, markers, best, mk_xy, best_xy, occupied)
    _symbols_layer(mp, markers, mk_xy, best_xy)
    _axes(mp, e_ticks, n_ticks)
    _colour_bar(mp)
    U = mp.u
    m = 24 * U
    header(mp.draw, m, 22 * U, mp.sheet.width - 2 * m, title, subtitle, U)
    _legend(mp, obs, markers, best, cl.size > 0)
    return mp.sheet.finish()


# ---------------------------------------------------------------------------
# Layers (supersampled pixels)
# ---------------------------------------------------------------------------
def _grid_layer(mp: PlanMap):
    """Grid lines at a round step in metres; the (east, north) ticks."""
    fr, k = mp.fr, mp.k
    e_lo, e_hi = (fr.left - fr.ox) / k, (fr.right - fr.ox) / k
    n_lo, n_hi = (fr.oy - fr.bottom) / k, (fr.oy - fr.top) / k
    step = nice_step(max(e_hi - e_lo, n_hi - n_lo), 8)
    e_ticks = np.arange(math.ceil(e_lo / step) * step, e_hi + 1e-9, step)
    n_ticks = np.arange(math.ceil(n_lo / step) * step, n_hi + 1e-9, step)
    for e in e_ticks:
        x = mp.xy(e, 0)[0]
        mp.draw.line((x, fr.top, x, fr.bottom), fill=PLAN_GRID, width=mp.lw)
    for n in n_ticks:
        y = mp.xy(0, n)[1]
        mp.draw.line((fr.left, y, fr.right, y), fill=PLAN_GRID, width=mp.lw)
    return e_ticks, n_ticks


def _fills_layer(mp: PlanMap, obs: list[ObstacleShape], cl: np.ndarray) -> None:
    """Obstacle fills with hatching (cells on roofs cover the hatch), then the
    cells in their blocked-fraction colours."""
    SW, SH = mp.sheet.img.size
    masks = {kind: Image.new("L", (SW, SH), 0) for kind in ("obs", "tree", "cell")}
    do, dt, dc = (ImageDraw.Draw(masks[kind]) for kind in ("obs", "tree", "cell"))
    for o in obs:
        if o.kind in ("building", "prism"):
            do.polygon(mp.poly(o.xy), fill=255)
        elif o.kind == "tree":
            cx, cy = mp.xy(*o.xy[0])
            r = o.radius_m * mp.k
            dt.ellipse((cx - r, cy - r, cx + r, cy + r), fill=255)
    cell_rects = []
    for e, n, s_m, f in cl.tolist():
        x0, y0 = mp.xy(e - s_m / 2, n + s_m / 2)
        x1, y1 = mp.xy(e + s_m / 2, n - s_m / 2)
        cell_rects.append(((x0, y0, x1, y1), f))
        dc.rectangle((x0, y0, x1, y1), fill=255)
    arr = mp.sheet.pixels()
    a_obs, a_tree, a_cell = (np.asarray(masks[kind]) > 127 for kind in ("obs", "tree", "cell"))
    yy, xx = np.ogrid[0:SH, 0:SW]
    hatch = hatch_pattern(xx, yy, mp.u) & ~a_cell
    arr[a_tree] = TREE_FILL
    arr[a_tree & hatch] = TREE_HATCH
    arr[a_obs] = OBSTRUCTION_FILL
    arr[a_obs & hatch] = HATCH_BLEND
    mp.sheet.set_pixels(arr)
    # A hairline of white between cells big enough to afford it: a grey print
    # then still tells a grid of candidate squares from a flat fill.
    gap = 1.0 if cl.size and float(cl[:, 2].min()) * mp.k >= 16 * SS else 0.0
    for (x0, y0, x1, y1), f in cell_rects:
        mp.draw.rectangle((x0 + gap, y0 + gap, x1 - gap, y1 - gap), fill=mp.ramp(f))


def _outlines_layer(mp: PlanMap, obs: list[ObstacleShape]) -> None:
    """Footprint outlines, dashed ridges, crown edges and trunks, walls, the
    map's rim."""
    draw, U, fr = mp.draw, mp.u, mp.fr
    for o in obs:
        if o.kind in ("building", "prism"):
            pp = mp.poly(o.xy)
            draw.line(pp + pp[:1], fill=OBSTRUCTION_EDGE, width=mp.w_edge, joint="curve")
            if o.ridge is not None:
                rp = mp.poly(o.ridge)
                for a, b in zip(rp[:-1], rp[1:]):
                    seg = math.hypot(b[0] - a[0], b[1] - a[1])
                    nd = max(1, int(seg / (16 * U)))
                    for j in range(nd):
                        t0, t1 = j / nd, (j + 0.6) / nd
                        draw.line((a[0] + (b[0] - a[0]) * t0, a[1] + (b[1] - a[1]) * t0,
                                   a[0] + (b[0] - a[0]) * t1, a[1] + (b[1] - a[1]) * t1),
                                  fill=OBSTRUCTION_EDGE, width=mp.sheet.px(3))
        elif o.kind == "tree":
            cx, cy = mp.xy(*o.xy[0])
            r = o.radius_m * mp.k
            draw.ellipse((cx - r, cy - r, cx + r, cy + r), outline=TREE_EDGE, width=mp.w_edge)
            t = 3 * U
            draw.ellipse((cx - t, cy - t, cx + t, cy + t), fill=TREE_EDGE)
        elif o.kind == "wall":
            draw.line(mp.poly(o.xy), fill=WALL, width=int(round(6 * U)), joint="curve")
    draw.rectangle((fr.left, fr.top, fr.right, fr.bottom), outline=RIM, width=int(round(2.0 * U)))


def _symbol_places(mp: PlanMap, obs, markers, best, occupied: list):
    """Where the symbols go (drawn after the labels, so always on top): their
    boxes, and the walls', join ``occupied``; returns the markers' and the
    best spot's pixel positions."""
    U = mp.u
    sx, sy = mp.xy(0.0, 0.0)
    occupied.append((sx - 13 * U, sy - 13 * U, sx + 13 * U, sy + 13 * U))
    mk_xy = []
    for mk in markers:
        x, y = mp.xy(float(mk["east_m"]), float(mk["north_m"]))
        mk_xy.append((x, y))
        r = mp.r_mk
        occupied.append((x - r - 2 * U, y - r - 2 * U, x + r + 2 * U, y + r + 2 * U))
    best_xy = None
    if best:
        bx, by = best_xy = mp.xy(float(best["east_m"]), float(best["north_m"]))
        occupied.append((bx - mp.r_star, by - mp.r_star, bx + mp.r_star, by + mp.r_star))
    # Walls are thin: keep labels off them.
    for o in obs:
        if o.kind == "wall":
            pp = mp.poly(o.xy)
            for (xa, ya), (xb, yb) in zip(pp[:-1], pp[1:]):
                occupied.append((min(xa, xb) - 3 * U, min(ya, yb) - 3 * U,
                                 max(xa, xb) + 3 * U, max(ya, yb) + 3 * U))
    return mk_xy, best_xy


def _north_arrow(mp: PlanMap, occupied: list) -> None:
    """The north arrow on its card, top right."""
    draw, U, fr = mp.draw, mp.u, mp.fr
    ax, ay = fr.right - 34 * U, fr.top + 22 * U
    card = (ax - 22 * U, ay - 4 * U, ax + 22 * U, ay + 78 * U)
    mp.card(card)
    text(draw, (ax, ay + 2 * U), "N", font(20 * U), TEXT, anchor="mt")
    draw.polygon([(ax, ay + 26 * U), (ax + 11 * U, ay + 60 * U), (ax, ay + 52 * U),
                  (ax - 11 * U, ay + 60 * U)], fill=BLACK)
    draw.line((ax, ay + 52 * U, ax, ay + 72 * U), fill=BLACK, width=int(round(3 * U)))
    occupied.append(card)


def _scale_bar(mp: PlanMap, lay: PlanLayout, occupied: list) -> None:
    """The scale bar on its card, in the corner the layout chose."""
    draw, U = mp.draw, mp.u
    s_x0, s_y, s_len = lay.scale_x * SS, lay.scale_y * SS, lay.scale_px * SS
    card = (s_x0 - 12 * U, s_y - 36 * U, s_x0 + s_len + 12 * U, s_y + 12 * U)
    mp.card(card)
    bar_h = 3.5 * U
    draw.rectangle((s_x0, s_y - bar_h, s_x0 + s_len, s_y + bar_h), fill=BLACK)
    for x in (s_x0, s_x0 + s_len):
        draw.line((x, s_y - 8 * U, x, s_y + bar_h), fill=BLACK, width=mp.sheet.px(2))
    text(draw, (s_x0 + s_len / 2, s_y - 10 * U), f"{fmt_num(lay.scale_m)} m", font(17 * U), TEXT, anchor="md")
    occupied.append(card)


def _symbols_layer(mp: PlanMap, markers, mk_xy, best_xy) -> None:
    """The site point, the markers in their colours and the best spot's star."""
    U = mp.u
    mp.site_symbol(*mp.xy(0.0, 0.0), 8 * U)
    for mk, (x, y) in zip(markers, mk_xy):
        mp.marker(x, y, mk.get("kind", "point"), mp.ramp(mk.get("blocked_fraction")))
    if best_xy is not None:
        bx, by = best_xy
        r = mp.r_star
        mp.draw.polygon(star(bx, by, r + 4 * U, (r + 4 * U) * 0.45), fill=WHITE)
        mp.draw.polygon(star(bx, by, r, r * 0.42), fill=BLACK)


def _axes(mp: PlanMap, e_ticks, n_ticks) -> None:
    """Metre ticks east along the bottom and north up the left, and their names."""
    draw, U, fr = mp.draw, mp.u, mp.fr
    f_tick = font(15 * U)
    for e in e_ticks:
        x = mp.xy(e, 0)[0]
        draw.line((x, fr.bottom, x, fr.bottom + 5 * U), fill=RIM, width=mp.lw)
        text(draw, (x, fr.bottom + 8 * U), fmt_num(round(e, 6)), f_tick, TEXT_SOFT, anchor="mt")
    for n in n_ticks:
        y = mp.xy(0, n)[1]
        draw.line((fr.left - 5 * U, y, fr.left, y), fill=RIM, width=mp.lw)
        text(draw, (fr.left - 8 * U, y), fmt_num(round(n, 6)), f_tick, TEXT_SOFT, anchor="rm")
    f_ax = font(16 * U)
    text(draw, ((fr.left + fr.right) / 2, fr.bottom + 32 * U), "metres east of the site point", f_ax, TEXT,
         anchor="mt")
    text(draw, (fr.left - 8 * U, fr.top - 8 * U), "m north", f_ax, TEXT, anchor="rd")


def _colour_bar(mp: PlanMap) -> None:
    """The blocked-fraction scale right of the map, 0 at the bottom."""
    draw, U, fr, vmax = mp.draw, mp.u, mp.fr, mp.vmax
    cb_x0, cb_x1 = fr.right + 24 * U, fr.right + 50 * U
    cb_top, cb_bot = fr.top + 60 * U, fr.top + 60 * U + 0.55 * (fr.bottom - fr.top)
    f_cb = font(15 * U)
    text(draw, (cb_x0 - 4 * U, fr.top + 14 * U), "Blocked\nfraction", f_cb, TEXT, anchor="la")
    steps = int(cb_bot - cb_top)
    for i in range(steps):
        c = lut_colour(BLOCKED_FRACTION_LUT, int((steps - 1 - i) * 255 / max(1, steps - 1)))
        draw.line((cb_x0, cb_top + i, cb_x1, cb_top + i), fill=c)
    draw.rectangle((cb_x0, cb_top, cb_x1, cb_bot), outline=RIM, width=mp.lw)
    # Ticks that land on the top of the scale: vmax/5 or vmax/4 when round.
    t_step = next((vmax / n for n in (5, 4, 2) if abs(nice_ceil(vmax / n) - vmax / n) < 1e-12), vmax)
    for t in np.arange(0.0, vmax + 1e-9, t_step):
        y = cb_bot - (cb_bot - cb_top) * t / vmax
        draw.line((cb_x1, y, cb_x1 + 5 * U, y), fill=RIM, width=mp.lw)
        text(draw, (cb_x1 + 8 * U, y), f"{100 * t:g}%", f_cb, TEXT_SOFT, anchor="lm")


def _legend(mp: PlanMap, obs, markers, best, has_cells: bool) -> None:
    """Legend rows for what the map shows (obstacles; spots and the site
    point) and the caption lines under them."""
    U, fr = mp.u, mp.fr
    SW = mp.sheet.width
    m = 24 * U

    def sw_symbol(fn):
        return lambda d, x, y, w, h, u: fn(x + w / 2, y + h / 2)

    def sw_tree(d, x, y, w, h, u):
        r = h * 0.75
        cx, cy = x + w / 2, y + h / 2
        d.ellipse((cx - r, cy - r, cx + r, cy + r), fill=TREE_FILL, outline=TREE_EDGE, width=mp.w_edge)

    def sw_wall(d, x, y, w, h, u):
        d.line((x, y + h / 2, x + w, y + h / 2), fill=WALL, width=int(round(6 * u)))

    def sw_star(d, x, y, w, h, u):
        d.polygon(star(x + w / 2, y + h / 2, 13 * u, 5.5 * u), fill=BLACK)

    def sw_ridge(d, x, y, w, h, u):
        dashed_hline(d, x, x + w, y + h / 2, 3 * u, 9.6 * u, 6.4 * u, OBSTRUCTION_EDGE)

    kinds = {o.kind for o in obs}
    mk_kinds = {mk.get("kind", "point") for mk in markers}
    row1 = []
    if kinds & {"building", "prism"}:
        row1.append((sw_hatch(), "Building or other obstacle, height written on it"))
    if "tree" in kinds:
        row1.append((sw_tree, "Tree crown"))
    if "wall" in kinds:
        row1.append((sw_wall, "Wall or fence"))
    if any(o.ridge is not None for o in obs):
        row1.append((sw_ridge, "Roof ridge"))
    row2 = []
    if "pole" in mk_kinds:
        row2.append((sw_symbol(lambda x, y: mp.marker(x, y, "pole", WHITE)), "Pole"))
    if "point" in mk_kinds:
        row2.append((sw_symbol(lambda x, y: mp.marker(x, y, "point", WHITE)), "Fixed point"))
    if best:
        row2.append((sw_star, "Best spot"))
    row2.append((sw_symbol(lambda x, y: mp.site_symbol(x, y, 7 * U)), "Site point (0, 0)"))
    y_leg = fr.bottom + 80 * U
    rows = [r for r in (row1, row2) if r]
    f_leg = font(16 * U)
    for i, row in enumerate(rows):
        legend_flow(mp.draw, row, m, y_leg + (30 * i + (15 if len(rows) == 1 else 0)) * U, SW - m, f_leg, U,
                    sw_w=40.0)
    caps = [("Squares: candidate spots coloured by blocked fraction (scale at right), "
             "light = clear sky, dark = blocked. " if has_cells else "No candidate cells given. ")
            + "North up; equal scale east and north.", short_note("fixed")]
    caption(mp.draw, m, [y_leg + (56 + 19 * i) * U for i in range(len(caps))], caps, font(14 * U), SW - 2 * m)
