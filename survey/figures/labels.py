"""Labels on a figure: placing a label where it misses everything already
drawn, drawing it with a white halo or in a white box, and the compact number
forms labels and legends use ("4.6%", "25°").  Captions that state a value
take survey/words.py's forms instead."""

from __future__ import annotations

from ..palette import BLACK, WHITE
from ..words import NBSP, pct
from .canvas import clean, text


def overlaps(a, b, pad=0.0) -> bool:
    """Whether boxes (x0, y0, x1, y1) ``a`` and ``b`` overlap (``pad`` px apart)."""
    return not (a[2] + pad <= b[0] or b[2] + pad <= a[0]
                or a[3] + pad <= b[1] or b[3] + pad <= a[1])


def place_label(draw, s, fnt, candidates, occupied, bounds, pad):
    """First candidate (x, y, anchor) whose text box fits ``bounds`` and misses
    every box in ``occupied``; boxes are nudged sideways into the bounds.
    Appends the box to ``occupied`` and returns (x, y, anchor, box), or None."""
    s = clean(s)
    for x, y, anchor in candidates:
        bb = draw.multiline_textbbox((x, y), s, font=fnt, anchor=anchor, align="center")
        shift = 0.0
        if bb[0] < bounds[0]:
            shift = bounds[0] - bb[0]
        elif bb[2] > bounds[2]:
            shift = bounds[2] - bb[2]
        bb = (bb[0] + shift, bb[1], bb[2] + shift, bb[3])
        if bb[0] < bounds[0] - 0.5 or bb[1] < bounds[1] or bb[3] > bounds[3]:
            continue
        box = (bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad)
        if any(overlaps(box, o) for o in occupied):
            continue
        occupied.append(box)
        return x + shift, y, anchor, box
    return None


def label_text(draw, xy, s, fnt, fill, anchor, halo):
    """A (multi-line, centred) label with ``halo`` px of white round it."""
    draw.multiline_text(xy, clean(s), font=fnt, fill=fill, anchor=anchor,
                        align="center", stroke_width=int(halo), stroke_fill=WHITE)


def label_box(draw, xy, s, fnt, pad):
    """The box of a label centred on ``xy``, ``pad`` px round its text."""
    bb = draw.textbbox(xy, clean(s), font=fnt, anchor="mm")
    return (bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad)


def boxed_label(draw, xy, s, fnt, u, box=None):
    """A label centred on ``xy`` on a white rounded card with a black edge
    (the minimum-elevation label); ``box``: its card, else 4 units round it."""
    box = box or label_box(draw, xy, s, fnt, 4 * u)
    draw.rounded_rectangle(box, radius=4 * u, fill=WHITE, outline=BLACK,
                           width=max(1, int(round(1.4 * u))))
    text(draw, xy, s, fnt, BLACK, anchor="mm")


def compact_pct(f: float) -> str:
    """A percentage on a figure: the one percentage format (words.pct), with a
    plain space (labels are placed whole, never wrapped)."""
    return pct(f).replace(NBSP, " ")


def share_pct(t: float, total: float) -> str:
    """A share of track time for a legend entry ("" with no tracks), in the one
    percentage format: one decimal, so a small but real share never reads 0 %."""
    return compact_pct(t / total) if total > 0 else ""


def deg_label(v: float) -> str:
    """An angle as a label on the plot: "25°", "27.5°"."""
    return f"{v:.0f}\u00b0" if abs(v - round(v)) < 0.05 else f"{v:.1f}\u00b0"
