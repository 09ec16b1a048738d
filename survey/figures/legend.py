"""Legends: the swatches that stand for a figure's marks, a row of legend
entries, and the caption line that explains the track-density shading.

A swatch is ``swatch(draw, x, y, w, h, u)``: it draws itself in the box
(x, y, x + w, y + h), with line weights in units ``u``.
"""

from __future__ import annotations

from ..palette import (
    BLACK,
    BLOCKED_LUT,
    CLEAR_LUT,
    HATCH_BLEND,
    OBSTRUCTION_EDGE,
    OBSTRUCTION_FILL,
    SWATCH_EDGE,
    TEXT,
    lut_colour,
)
from ..words import duration, elevation
from .canvas import clean, dashed_hline, fit, hatch_lines, text
from .labels import share_pct


def sw_gradient(lut):
    """A ramp's swatch: its colours left (0) to right (1)."""
    def sw(draw, x, y, w, h, u):
        steps = max(2, int(w))
        for i in range(steps):
            draw.line((x + i, y, x + i, y + h), fill=lut_colour(lut, int(i * 255 / (steps - 1))))
        draw.rectangle((x, y, x + w, y + h), outline=SWATCH_EDGE, width=max(1, int(round(u))))
    return sw


def sw_hatch(fill=OBSTRUCTION_FILL, hatch=HATCH_BLEND, edge=OBSTRUCTION_EDGE):
    """The obstruction's swatch: grey fill, hatched, outlined."""
    def sw(draw, x, y, w, h, u):
        draw.rectangle((x, y, x + w, y + h), fill=fill)
        hatch_lines(draw, (x, y, x + w, y + h), u, hatch)
        draw.rectangle((x, y, x + w, y + h), outline=edge, width=max(1, int(round(2 * u))))
    return sw


def sw_dashed(draw, x, y, w, h, u):
    """The minimum elevation's swatch: a black dashed line."""
    dashed_hline(draw, x, x + w, y + h / 2, 2.6 * u, 11 * u, 7 * u, BLACK)


def sw_line(fill, width_u):
    """A solid line's swatch."""
    def sw(draw, x, y, w, h, u):
        draw.line((x, y + h / 2, x + w, y + h / 2), fill=fill, width=int(round(width_u * u)))
    return sw


def sw_box(fill, edge=None, width_u=1.4):
    """A filled box's swatch."""
    def sw(draw, x, y, w, h, u):
        draw.rectangle((x, y, x + w, y + h), fill=fill, outline=edge or fill,
                       width=max(1, int(round(width_u * u))))
    return sw


def legend_flow(draw, items, x0, y, x_max, fnt, u, sw_w=50.0, sw_h=14.0, gap=26.0):
    """Legend entries (swatch, label) in one row from ``x0``, centred on ``y``;
    if they do not fit before ``x_max`` the gaps close up first, then the
    labels are cut."""
    gap_txt = 9 * u
    widths = [sw_w * u + gap_txt + draw.textlength(clean(t), font=fnt) for _, t in items]
    g = gap * u
    total = sum(widths) + g * (len(items) - 1)
    if total > x_max - x0 and len(items) > 1:
        g = max(10 * u, (x_max - x0 - sum(widths)) / (len(items) - 1))
    x = x0
    for (swatch, label), wd in zip(items, widths):
        swatch(draw, x, y - sw_h * u / 2, sw_w * u, sw_h * u, u)
        room = max(20 * u, x_max - (x + sw_w * u + gap_txt))
        text(draw, (x + sw_w * u + gap_txt, y), fit(draw, label, fnt, room), fnt, TEXT, anchor="lm")
        x += wd + g


def track_items(dens, clear: str, blocked: str, share: str) -> list:
    """Legend entries for the clear and blocked track ramps, each label
    followed by its share of track time put into ``share`` ("" with no tracks)."""
    total = dens.t_clear + dens.t_block

    def label(name, t):
        pct = share_pct(t, total)
        return name + (share.format(pct) if pct else "")

    return [(sw_gradient(CLEAR_LUT), label(clear, dens.t_clear)),
            (sw_gradient(BLOCKED_LUT), label(blocked, dens.t_block))]


def mask_items(has_mask: bool, me: float, obstruction: str = "Obstruction") -> list:
    """Legend entries for the obstruction and the minimum elevation ``me`` (deg)."""
    return [(sw_hatch(), obstruction if has_mask else "Obstruction (none in mask)"),
            (sw_dashed, f"Minimum elevation {elevation(me)}")]


def density_caption(d_max: float) -> str:
    """What the track shading means, with the densest cell's time."""
    return ("Track density: time-weighted, log scale, light = rare, dark = dense; "
            f"darkest \u2248 {duration(d_max)} per 1\u00b0 cell.")
