"""The figures' colours, the one place they live: the Okabe & Ito (2008)
colour-blind-safe palette, the neutral greys for structure, and the ramps
built from them.

Chosen for meaning (DEVELOPERS.md, "Conventions"): blue for clear sky tracks,
vermillion/orange for tracks hidden by the obstruction, neutral grey (plus
hatching, so it survives black-and-white print) for the obstruction, black
dashed for the minimum elevation, reddish purple for the terminal field of
view, dark vermillion for link-down time, bluish green for tree crowns, and a
light-to-dark ramp (pale blue, yellow, orange, vermillion) for a candidate
spot's blocked fraction.  Colours are (r, g, b) tuples of 0..255; a ramp is a
(256, 3) uint8 lookup table.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

# Okabe & Ito (2008)
BLUE = (0x00, 0x72, 0xB2)
SKY_BLUE = (0x56, 0xB4, 0xE9)
VERMILLION = (0xD5, 0x5E, 0x00)
ORANGE = (0xE6, 0x9F, 0x00)
REDDISH_PURPLE = (0xCC, 0x79, 0xA7)
BLUISH_GREEN = (0x00, 0x9E, 0x73)
YELLOW = (0xF0, 0xE4, 0x42)
BLACK = (0x00, 0x00, 0x00)
WHITE = (0xFF, 0xFF, 0xFF)

# Neutral greys for structure (not part of the palette; chosen by lightness).
OBSTRUCTION_FILL = (0xDE, 0xDE, 0xDE)
OBSTRUCTION_HATCH = (0x3A, 0x3A, 0x3A)
HATCH_ALPHA = 0.55  # hatch lines are blended, so tracks show through
OBSTRUCTION_EDGE = (0x3C, 0x3C, 0x3C)
GRID = (0x28, 0x28, 0x28)
GRID_ALPHA = 120  # grid sits over the tracks, so keep it faint but present
GRID_RGBA = GRID + (GRID_ALPHA,)
RIM = (0x30, 0x30, 0x30)
TEXT = (0x1A, 0x1A, 0x1A)
TEXT_SOFT = (0x55, 0x55, 0x55)
SWATCH_EDGE = (0x90, 0x90, 0x90)
OUTSIDE_EDGE = (0xB4, 0xB4, 0xB4)
WALL = (0x4A, 0x4A, 0x4A)
PLAN_GRID = (0xE2, 0xE2, 0xE2)
RULE = (0xC8, 0xC8, 0xC8)
TERRAIN_LINE = (0x8C, 0x3D, 0x6E)  # Okabe & Ito reddish purple, darkened to read as dark grey in print


def mix(a, b, t):
    """Linear mix of two RGB tuples, t=0 -> a, t=1 -> b (floats)."""
    return tuple(a[i] + (b[i] - a[i]) * t for i in range(3))


def rgb(c) -> tuple[int, int, int]:
    """A mixed colour rounded to whole 0..255 levels."""
    return tuple(int(round(v)) for v in c)


def ramp(stops: Sequence[tuple[float, tuple]], n: int = 256) -> np.ndarray:
    """Piecewise-linear RGB lookup table of shape (n, 3), uint8."""
    pos = np.array([p for p, _ in stops], dtype=np.float64)
    cols = np.array([c for _, c in stops], dtype=np.float64)
    t = np.linspace(0.0, 1.0, n)
    lut = np.stack([np.interp(t, pos, cols[:, k]) for k in range(3)], axis=1)
    return np.clip(np.rint(lut), 0, 255).astype(np.uint8)


def lut_colour(lut: np.ndarray, i: int) -> tuple[int, int, int]:
    """Entry ``i`` of a lookup table as a colour tuple."""
    return tuple(int(v) for v in lut[i])


HATCH_BLEND = rgb(mix(OBSTRUCTION_FILL, OBSTRUCTION_HATCH, HATCH_ALPHA))
# Link down: vermillion darkened so a thin bar still reads in grey print
# (luminance ~90 against ~220 for the link-up row).
DOWN_BAR = rgb(mix(VERMILLION, BLACK, 0.25))
LINK_UP = rgb(mix(SKY_BLUE, WHITE, 0.68))
LINK_UP_GRID = rgb(mix(SKY_BLUE, WHITE, 0.40))
TREE_FILL = rgb(mix(BLUISH_GREEN, WHITE, 0.72))
TREE_EDGE = rgb(mix(BLUISH_GREEN, BLACK, 0.45))
TREE_HATCH = rgb(mix(TREE_FILL, TREE_EDGE, HATCH_ALPHA))

# Track density, lightness ramps (light = rare, dark = dense).  The lightest
# stop is still a clear tint so a single pass stays visible on white.
CLEAR_LUT = ramp([
    (0.00, mix(SKY_BLUE, WHITE, 0.62)),
    (0.35, SKY_BLUE),
    (0.72, BLUE),
    (1.00, mix(BLUE, BLACK, 0.45)),
])
BLOCKED_LUT = ramp([
    (0.00, mix(ORANGE, WHITE, 0.55)),
    (0.35, ORANGE),
    (0.72, VERMILLION),
    (1.00, mix(VERMILLION, BLACK, 0.40)),
])

# Blocked fraction of a candidate spot, light = clear, dark = blocked: a
# sequential ramp built from Okabe & Ito hues whose lightness falls
# monotonically (grey levels ~231, 213, 162, 119, 70), so it stays ordered in
# greyscale and for the common colour-vision deficiencies.
BLOCKED_FRACTION_LUT = ramp([
    (0.00, mix(SKY_BLUE, WHITE, 0.75)),
    (0.25, YELLOW),
    (0.50, ORANGE),
    (0.75, VERMILLION),
    (1.00, mix(VERMILLION, BLACK, 0.45)),
])


# The verdict's hue, the same in the report, the figures and the text UI; on a
# light background the same hues darkened (about 5:1 contrast on white, WCAG 2.1 AA).
VERDICT = {"qualified": BLUISH_GREEN, "marginal": ORANGE, "not-qualified": VERMILLION}
VERDICT_ON_LIGHT = {"qualified": (0x00, 0x66, 0x4A), "marginal": (0x8A, 0x5A, 0x00),
                    "not-qualified": (0xA3, 0x3C, 0x00)}


def hex_code(colour) -> str:
    """``#RRGGBB`` of an (r, g, b) colour, for stylesheets."""
    r, g, b = (int(c) for c in colour[:3])
    return f"#{r:02X}{g:02X}{b:02X}"
