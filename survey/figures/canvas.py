"""The drawing surface every figure is made on, and the marks they share:
fonts and text (glyph fallback, halo, fitting to a width, the header and
caption lines), dashed lines, hatching, nice-number ticks and PNG encoding.

A figure is drawn on a :class:`Sheet` at ``SS`` times its final size and
reduced with a Lanczos filter at the end.  Text and line weights are in layout
units ``u`` (1/1000 of the image width, or less when the image is short), so a
figure prints legibly at about 150 mm wide.
"""

from __future__ import annotations

import io
import math
from functools import lru_cache

import numpy as np
from PIL import Image, ImageDraw, ImageFont

from ..palette import HATCH_ALPHA, OBSTRUCTION_HATCH, TEXT, TEXT_SOFT, WHITE

SS = 2  # supersampling factor; drawn at SS x size, then LANCZOS down

# Glyphs missing from the built-in font, replaced so they do not print as
# boxes; the no-break space of survey/words.py becomes a plain space.
GLYPH_FALLBACK = {
    "\u2192": "->", "\u2190": "<-", "\u00d7": "x", "\u2013": "-", "\u2014": "-",
    "\u2212": "-", "\u2248": "~", "\u00b2": "2", "\u00b5": "u", "\u00a0": " ",
}


def clean(s) -> str:
    """``s`` as the built-in font can print it (see ``GLYPH_FALLBACK``)."""
    return "".join(GLYPH_FALLBACK.get(ch, ch) for ch in str(s))


@lru_cache(maxsize=64)
def font(px: int) -> ImageFont.FreeTypeFont:
    """Pillow's built-in font at ``px`` pixels (at least 6)."""
    return ImageFont.load_default(size=max(6, int(px)))


def check_size(size, min_w: int, min_h: int) -> tuple[int, int]:
    """(width_px, height_px) of ``size``; ValueError when it is not a pair of
    whole numbers at least ``min_w`` x ``min_h``."""
    try:
        w, h = (int(v) for v in size)
    except (TypeError, ValueError):
        raise ValueError("size must be (width_px, height_px)") from None
    if w < min_w or h < min_h:
        raise ValueError(f"size must be at least {min_w} x {min_h} pixels")
    return w, h


class Sheet:
    """One figure being drawn: a white RGB image at ``SS`` x ``size``, its
    ``draw`` handle, and ``u``, the layout unit in supersampled pixels
    (``unit`` is the unit in final pixels)."""

    def __init__(self, size: tuple[int, int], unit: float):
        self.size = (int(size[0]), int(size[1]))
        self.u = unit * SS
        self.img = Image.new("RGB", (self.size[0] * SS, self.size[1] * SS), WHITE)
        self.draw = ImageDraw.Draw(self.img)

    @property
    def width(self) -> int:
        return self.img.size[0]

    def px(self, k: float) -> int:
        """A line width of ``k`` units, at least one pixel."""
        return max(1, int(round(k * self.u)))

    def pixels(self) -> np.ndarray:
        """A writable (h, w, 3) uint8 copy of the sheet, for raster layers."""
        return np.asarray(self.img).copy()

    def set_pixels(self, arr: np.ndarray) -> None:
        """Replace the sheet by ``arr`` (as returned by :meth:`pixels`)."""
        self.img = Image.fromarray(arr)
        self.draw = ImageDraw.Draw(self.img)

    def translucent(self, paint) -> None:
        """Composite what ``paint(draw)`` draws in RGBA over the sheet."""
        overlay = Image.new("RGBA", self.img.size, (0, 0, 0, 0))
        paint(ImageDraw.Draw(overlay))
        self.img = Image.alpha_composite(self.img.convert("RGBA"), overlay).convert("RGB")
        self.draw = ImageDraw.Draw(self.img)

    def finish(self) -> Image.Image:
        """The figure at its final size (Lanczos reduction)."""
        return self.img.resize(self.size, Image.Resampling.LANCZOS)


def indexed_for_print(image: Image.Image) -> Image.Image:
    """``image`` as an indexed-colour image for embedding in a report (PDF, HTML): exact when it holds at
    most 256 colours, else an adaptive 256-colour palette (octree, no dithering:
    flat areas stay flat and compress, lines keep their colour)."""
    rgb = image.convert("RGB")
    colours = rgb.getcolors(256)
    if colours is not None:  # exact: a palette of the image's own colours
        palette = Image.new("P", (1, 1))
        palette.putpalette([channel for _, rgb_value in colours for channel in rgb_value])
        return rgb.quantize(palette=palette, dither=Image.Dither.NONE)
    return rgb.quantize(256, method=Image.Quantize.FASTOCTREE, dither=Image.Dither.NONE)


def encode_png(image: Image.Image) -> bytes:
    """PNG-encoded bytes of ``image`` (no file is written)."""
    buf = io.BytesIO()
    image.save(buf, format="PNG", optimize=False, compress_level=6)
    return buf.getvalue()


# ---------------------------------------------------------------------------
# Text
# ---------------------------------------------------------------------------
def text(draw, xy, s, fnt, fill, anchor="la", halo=0):
    """One line of text; ``halo`` px of white stroke round it when given."""
    kw = {}
    if halo:
        kw = dict(stroke_width=int(halo), stroke_fill=WHITE)
    draw.text(xy, clean(s), font=fnt, fill=fill, anchor=anchor, **kw)


def fit(draw, s, fnt, max_w):
    """Truncate ``s`` with an ellipsis so it fits in ``max_w`` px."""
    s = clean(s)
    if draw.textlength(s, font=fnt) <= max_w:
        return s
    while s and draw.textlength(s + "\u2026", font=fnt) > max_w:
        s = s[:-1]
    return s.rstrip() + "\u2026"


def header(draw, x, y, max_w, title, subtitle, u, title_u=28.0, sub_u=18.0, sub_dy=36.0):
    """Title (faux bold) and subtitle lines from (x, y), each cut to ``max_w``."""
    f_title = font(title_u * u)
    draw.text((x, y), fit(draw, title, f_title, max_w), font=f_title, fill=TEXT,
              anchor="la", stroke_width=max(0, int(round(0.6 * u))), stroke_fill=TEXT)
    if subtitle:
        f_sub = font(sub_u * u)
        text(draw, (x, y + sub_dy * u), fit(draw, subtitle, f_sub, max_w), f_sub, TEXT)


def caption(draw, x, ys, lines, fnt, max_w, fill=TEXT_SOFT):
    """Caption lines at (x, ys[i]), each cut to ``max_w``."""
    for y, line in zip(ys, lines):
        text(draw, (x, y), fit(draw, line, fnt, max_w), fnt, fill)


# ---------------------------------------------------------------------------
# Lines and hatching
# ---------------------------------------------------------------------------
def dashed_circle(draw, cx, cy, r, width, dash, gap, fill):
    """A circle of radius ``r`` in dashes ``dash`` long, ``gap`` apart (px)."""
    circ = 2.0 * math.pi * r
    n = max(8, int(round(circ / (dash + gap))))
    step = 360.0 / n
    on = step * dash / (dash + gap)
    box = (cx - r, cy - r, cx + r, cy + r)
    for i in range(n):
        a0 = i * step - 90.0
        draw.arc(box, a0, a0 + on, fill=fill, width=int(round(width)))


def dashed_hline(draw, x0, x1, y, width, dash, gap, fill):
    """A horizontal line from ``x0`` to ``x1`` in dashes (px)."""
    xs = x0
    while xs < x1:
        draw.line((xs, y, min(xs + dash, x1), y), fill=fill, width=int(round(width)))
        xs += dash + gap


def hatch_pattern(xx, yy, u):
    """Where the obstruction's 45 degree hatch lines fall (bool, broadcast of
    pixel columns ``xx`` and rows ``yy``): lines 2.2 units wide, 14 apart."""
    return ((xx + yy) % (14.0 * u)) < (2.2 * u)


def blend_hatch(block, obstructed, xx, yy, u) -> None:
    """The hatch blended into ``block`` (in place) where ``obstructed``: the
    obstruction's pattern, which survives black-and-white printing."""
    hatch = obstructed & hatch_pattern(xx, yy, u)
    block[hatch] = (block[hatch].astype(np.float32) * (1.0 - HATCH_ALPHA)
                    + np.float32(HATCH_ALPHA) * np.array(OBSTRUCTION_HATCH, np.float32)).astype(np.uint8)


def hatch_lines(draw, box, u, fill, width_u=2.2, period_u=14.0):
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


# ---------------------------------------------------------------------------
# Nice numbers for ticks and scales
# ---------------------------------------------------------------------------
def fmt_num(v: float) -> str:
    """A tick value: whole numbers without a decimal point."""
    return f"{v:.0f}" if abs(v - round(v)) < 1e-6 else f"{v:g}"
