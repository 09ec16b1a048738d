"""The site plan's labels: the best spot, each marker, the site point and
every obstacle with its height, each placed clear of the symbols and of each
other, with a thin leader when a label sits away from what it names."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from ..palette import TEXT, TEXT_SOFT, WHITE
from .canvas import clean, font
from .labels import compact_pct, label_text, place_label
from .plan_shapes import ObstacleShape, centroid

if TYPE_CHECKING:
    from .plan import PlanMap


def _fmt_h(h) -> str:
    return f"{round(float(h), 1):g} m"


def _around(x, y, d):
    """Label places round (x, y) at distance ``d``: right, left, above, below,
    then the diagonals."""
    return [(x + d, y, "lm"), (x - d, y, "rm"), (x, y - d, "md"), (x, y + d, "ma"),
            (x + d * 0.8, y - d * 0.8, "ld"), (x - d * 0.8, y - d * 0.8, "rd"),
            (x + d * 0.8, y + d * 0.8, "la"), (x - d * 0.8, y + d * 0.8, "ra")]


def labels_layer(mp: PlanMap, obs, markers, best, mk_xy, best_xy, occupied: list) -> None:
    """Every label on the map, then their leaders."""
    draw, U, fr = mp.draw, mp.u, mp.fr
    halo = max(1, int(round(3 * U)))
    bounds = (fr.left + 4 * U, fr.top + 4 * U, fr.right - 4 * U, fr.bottom - 4 * U)
    f_mk = font(16 * U)
    leaders = []

    def leader_to(x, y, box, near_px):
        """A thin line from (x, y) to the label box when the label sits away."""
        bx_ = min(max(x, box[0]), box[2])
        by_ = min(max(y, box[1]), box[3])
        if math.hypot(bx_ - x, by_ - y) > near_px:
            leaders.append((x, y, bx_, by_))

    if best:
        _best_label(mp, best, best_xy, occupied, bounds, halo, leader_to)
    for mk, (x, y) in zip(markers, mk_xy):
        if best and mk.get("name") == best.get("name") and math.hypot(
                x - best_xy[0], y - best_xy[1]) < mp.r_star:
            continue  # the best spot's own label says it
        s = str(mk.get("name") or "")
        if mk.get("height_m") is not None:
            s += f" {_fmt_h(mk['height_m'])}"
        if mk.get("blocked_fraction") is not None:
            s += f", {compact_pct(mk['blocked_fraction'])} blocked"
        s = s.strip(", ")
        if s:
            cands = _around(x, y, mp.r_mk + 5 * U) + _around(x, y, mp.r_mk + 40 * U)
            pl = place_label(draw, s, f_mk, cands, occupied, bounds, 3 * U)
            if pl is not None:
                label_text(draw, pl[:2], s, f_mk, TEXT, pl[2], halo)
                leader_to(x, y, pl[3], mp.r_mk + 12 * U)
    sx, sy = mp.xy(0.0, 0.0)
    pl = place_label(draw, "site point", f_mk, _around(sx, sy, 15 * U), occupied, bounds, 3 * U)
    if pl is not None:
        label_text(draw, pl[:2], "site point", f_mk, TEXT_SOFT, pl[2], halo)
    f_ob = font(16 * U)
    for o in obs:
        s, cands, anchor_pt, near_px = _obstacle_places(mp, o, f_ob)
        pl = place_label(draw, s, f_ob, cands, occupied, bounds, 2 * U)
        # Heights belong on the plan: when every place is taken, overlap.
        x, y, anchor = pl[:3] if pl is not None else cands[0]
        label_text(draw, (x, y), s, f_ob, TEXT, anchor, halo)
        if pl is not None:
            leader_to(*anchor_pt, pl[3], near_px)
    for x0, y0, x1, y1 in leaders:
        draw.line((x0, y0, x1, y1), fill=TEXT_SOFT, width=max(1, int(round(1.4 * U))))


def _best_label(mp: PlanMap, best, best_xy, occupied, bounds, halo, leader_to) -> None:
    """"Best: name, height, blocked" beside the star, in faux bold."""
    draw, U = mp.draw, mp.u
    bits = [str(best.get("name") or "best spot")]
    if best.get("height_m") is not None:
        bits.append(_fmt_h(best["height_m"]))
    if best.get("blocked_fraction") is not None:
        bits.append(f"{compact_pct(best['blocked_fraction'])} blocked")
    s = "Best: " + ", ".join(bits)
    bx, by = best_xy
    f_best = font(19 * U)
    cands = _around(bx, by, mp.r_star + 6 * U) + _around(bx, by, mp.r_star + 40 * U)
    pl = place_label(draw, s, f_best, cands, occupied, bounds, 3 * U)
    if pl is not None:
        draw.multiline_text(pl[:2], clean(s), font=f_best, fill=TEXT, anchor=pl[2],
                            stroke_width=halo, stroke_fill=WHITE)
        draw.multiline_text(pl[:2], clean(s), font=f_best, fill=TEXT, anchor=pl[2],
                            stroke_width=max(0, int(round(0.5 * U))), stroke_fill=TEXT)
        leader_to(bx, by, pl[3], mp.r_star + 12 * U)


def _obstacle_places(mp: PlanMap, o: ObstacleShape, f_ob):
    """An obstacle's label text, its candidate places (inside the shape when
    the text fits, then beside it, then further out), the point a leader
    starts from and how far a label may sit before it gets one."""
    U = mp.u
    h_txt = _fmt_h(o.height_m) if o.height_m is not None else "height ?"
    if o.kind == "wall":
        seg = np.diff(o.xy, axis=0)
        i = int(np.argmax(np.hypot(seg[:, 0], seg[:, 1])))
        cx, cy = mp.xy(*((o.xy[i] + o.xy[i + 1]) / 2.0))
        d = 8 * U
        if abs(seg[i, 0]) >= abs(seg[i, 1]):   # east-west: above or below it
            cands = [(cx, cy - d, "md"), (cx, cy + d, "ma")]
        else:                                  # north-south: beside it
            cands = [(cx + d, cy, "lm"), (cx - d, cy, "rm")]
        cands += _around(cx, cy, 40 * U)
        return f"{o.name or 'wall'} {h_txt}", cands, (cx, cy), 14 * U
    if o.kind == "tree":
        c = o.xy[0]
        ext = o.radius_m * mp.k
        xs_ = [mp.xy(*c)[0] - ext, mp.xy(*c)[0] + ext]
        ys = [mp.xy(*c)[1] - ext, mp.xy(*c)[1] + ext]
    else:
        c = np.array(centroid(o.xy))
        pp = mp.poly(o.xy)
        xs_, ys = [p[0] for p in pp], [p[1] for p in pp]
        ext = 0.5 * max(max(xs_) - min(xs_), max(ys) - min(ys))
    cx, cy = mp.xy(*c)
    s = (o.name + "\n" if o.name else "") + h_txt
    if o.ridge_height_m is not None:
        s += f", ridge {_fmt_h(o.ridge_height_m)}"
    tb = mp.draw.multiline_textbbox((cx, cy), clean(s), font=f_ob, anchor="mm", align="center")
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
    cands += _around(cx, cy, ext + 30 * U) + _around(cx, cy, ext + 60 * U)
    return s, cands, (cx, cy), ext + 14 * U
