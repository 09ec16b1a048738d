"""The by-heading bars of a vehicle or vessel in character cells: the blocked
fraction with the platform held in each of the 36 heading sectors (README,
"Moving installs"), one column of cells a sector, heading 0° at the left.

Each column is a bar ``height - 2`` cells tall at most, scaled so the tallest
sector fills it; the top cell of a bar is one of ``▁`` .. ``█`` (eighths), so
the length reads without colour.  Row ``height - 2`` labels N, E, S, W under
their sectors; the last row says the scale and the worst sector.  Sector j
(centre 10 j + 5 degrees) is drawn in columns ``j * w`` .. ``j * w + w - 1``
with ``w = width // 36`` (at least 1; 36 columns are the narrowest).
"""

from __future__ import annotations

from rich.text import Text

from survey.api import pct

from .drawing import VERMILLION

LEVELS = "\u2581\u2582\u2583\u2584\u2585\u2586\u2587\u2588"
MIN_WIDTH, MIN_HEIGHT = 36, 4


def heading_bars(blocked: list, width: int, height: int, colour: bool = True) -> Text:
    """``blocked``: 36 fractions (None: no usable sky in that sector)."""
    width, height = max(width, MIN_WIDTH), max(height, MIN_HEIGHT)
    w = max(1, width // len(blocked))
    bars = height - 2
    top = max((b for b in blocked if b is not None), default=0.0)
    grid = [[" "] * width for _ in range(height)]
    for j, b in enumerate(blocked):
        eighths = 0 if not b or top <= 0 else max(1, round(8 * bars * b / top))
        for row in range(bars):
            fill = min(max(eighths - 8 * row, 0), 8)
            if fill:
                for c in range(j * w, j * w + w):
                    grid[bars - 1 - row][c] = LEVELS[fill - 1]
    for name, deg in (("N", 0), ("E", 90), ("S", 180), ("W", 270)):
        grid[bars][min(deg // 10 * w, width - 1)] = name
    worst = max(range(len(blocked)), key=lambda j: -1 if blocked[j] is None else blocked[j])
    foot = f"tallest {pct(top)}; worst heading {worst * 10}°–{worst * 10 + 10}°"[:width]
    grid[height - 1][:len(foot)] = list(foot)
    out = Text()
    for r, row in enumerate(grid):
        line = "".join(row)
        out.append(line, style=VERMILLION if colour and r < bars else None)
        if r < height - 1:
            out.append("\n")
    return out
