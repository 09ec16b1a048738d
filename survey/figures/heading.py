"""The by-heading chart of a vehicle or vessel: a polar chart, the platform's
heading clockwise from north at the top, each 10° sector a wedge whose length
is the blocked fraction with the platform held at that sector's centre
(README, "Moving installs: figures").  Layers: header, rings, wedges, spokes
and labels, the heading used, caption."""

from __future__ import annotations

import math

import numpy as np
from PIL import Image

from ..geometry import nice_ceil
from ..palette import BLACK, GRID, RULE, TEXT, TEXT_SOFT, VERMILLION
from ..words import pct
from .canvas import SS, Sheet, caption, check_size, dashed_circle, font, header, text
from .legend import legend_flow, sw_box, sw_line


def heading_chart(*, headings_deg, blocked_fraction, title: str, subtitle: str, heading_used_deg=None,
                  notes=(), size_px: int = 1000) -> Image.Image:
    """Wedges of ``blocked_fraction`` (0..1, None/NaN: no usable sky) at sector
    centres ``headings_deg``; ``heading_used_deg`` marks a fixed heading."""
    w, h = check_size((size_px, int(size_px * 1.12)), 300, 300)
    u = w / 1000.0
    sheet = Sheet((w, h), u)
    U, d = sheet.u, sheet.draw
    m = 40 * U
    header(d, m, m, sheet.width - 2 * m, title, subtitle, U)
    bf = np.array([np.nan if v is None else v for v in blocked_fraction], dtype=np.float64)
    top = nice_ceil(float(np.nanmax(bf)) if np.any(np.isfinite(bf)) and np.nanmax(bf) > 0 else 0.01)
    cx, cy, R = sheet.width / 2, 560 * U, 360 * U
    # Rings at a quarter of the scale each, labelled.
    f_small = font(15 * U)
    for k in (1, 2, 3, 4):
        r = R * k / 4
        dashed_circle(d, cx, cy, r, max(1, int(U)), 6 * U, 6 * U, RULE)
        text(d, (cx + 4 * U, cy - r), pct(top * k / 4), f_small, TEXT_SOFT, anchor="lb", halo=int(2 * U))
    # Wedges.
    width = 360.0 / max(len(bf), 1)
    for hd, v in zip(headings_deg, bf):
        if not np.isfinite(v) or v <= 0:
            continue
        r = R * min(v / top, 1.0)
        a0, a1 = hd - width / 2 - 90.0, hd + width / 2 - 90.0  # Pillow's angles: from east, clockwise
        d.pieslice((cx - r, cy - r, cx + r, cy + r), a0, a1, fill=VERMILLION, outline=BLACK, width=max(1, int(U)))
    # Spokes every 30 degrees, labelled with the heading.
    f_lab = font(18 * U)
    for a in range(0, 360, 30):
        t = math.radians(a)
        x1, y1 = cx + R * math.sin(t), cy - R * math.cos(t)
        d.line((cx, cy, x1, y1), fill=GRID, width=max(1, int(U)))
        lx, ly = cx + (R + 30 * U) * math.sin(t), cy - (R + 30 * U) * math.cos(t)
        text(d, (lx, ly), f"{a}°" + (" N" if a == 0 else " E" if a == 90 else " S" if a == 180 else
                                      " W" if a == 270 else ""), f_lab, TEXT, anchor="mm")
    d.ellipse((cx - R, cy - R, cx + R, cy + R), outline=TEXT, width=max(1, int(1.5 * U)))
    items = [(sw_box(VERMILLION, BLACK), "Blocked fraction, platform held in the sector")]
    if heading_used_deg is not None:
        t = math.radians(heading_used_deg)
        d.line((cx, cy, cx + (R + 10 * U) * math.sin(t), cy - (R + 10 * U) * math.cos(t)), fill=BLACK,
               width=max(2, int(4 * U)))
        items.append((sw_line(BLACK, 4.0), f"Heading assessed ({heading_used_deg:g}°)"))
    legend_flow(d, items, m, 975 * U, sheet.width - m, font(16 * U), U, sw_w=40.0)
    caption(d, m, [1010 * U + i * 24 * U for i in range(len(notes) + 1)],
            [f"Direction the bow or front points, clockwise from true north; rings at {pct(top / 4)} steps."]
            + list(notes), font(16 * U), sheet.width - 2 * m)
    return sheet.img.resize((w, h), Image.Resampling.LANCZOS) if SS != 1 else sheet.img
