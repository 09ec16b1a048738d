"""Track density: seconds of sample time per plot cell (polar cells for the
sky plot, 1 x 1 degree cells for the unrolled horizon) and how it is painted:
one log scale shared by the clear and blocked ramps, anchored at one sample
per cell, each pixel showing whichever layer holds more time there."""

from __future__ import annotations

import math
from functools import lru_cache
from typing import NamedTuple

import numpy as np
from PIL import Image

from ..palette import BLOCKED_LUT, CLEAR_LUT


class Density(NamedTuple):
    """Clear and blocked density grids (seconds per cell), their total track
    times (s) and the densest cell of either (s)."""

    clear: np.ndarray
    blocked: np.ndarray
    t_clear: float
    t_block: float
    d_max: float


def track_density(az, el, blk, weight_s: float, grid) -> Density:
    """:class:`Density` of the samples, ``grid(az, el, weight_s)`` making a layer."""
    d_clear = grid(az[~blk], el[~blk], weight_s)
    d_block = grid(az[blk], el[blk], weight_s)
    return Density(d_clear, d_block, float(np.count_nonzero(~blk)) * weight_s,
                   float(np.count_nonzero(blk)) * weight_s,
                   max(float(d_clear.max()), float(d_block.max())))


def paint_tracks(block, u_clear, u_block, d_max, weight_s, where=None) -> None:
    """Colour ``block`` (in place) from the clear and blocked densities resized
    to it (``u_clear``, ``u_block``), within ``where`` when given."""
    # Each pixel shows whichever layer holds more time there, so the blurred
    # fringe of one layer never paints over the other's core (e.g. at the edge
    # of the obstruction).
    floor_s = weight_s / 16.0  # drops bilinear fringe beyond the blur
    # Log scale anchored at one sample per cell, so a single pass is
    # distinctly tinted while the densest cell gets the darkest shade.
    d0 = weight_s
    denom = math.log1p(d_max / d0)
    use_block = u_block > u_clear
    for sel, dens, lut in ((~use_block, u_clear, CLEAR_LUT),
                           (use_block, u_block, BLOCKED_LUT)):
        show = sel & (dens >= floor_s)
        if where is not None:
            show = where & show
        t = np.log1p(dens[show] / d0) / denom
        block[show] = lut[np.clip((t * 255.0).astype(np.int32), 0, 255)]


def upsample(grid: np.ndarray, w: int, h: int) -> np.ndarray:
    """Bilinear resize of a float grid to (h, w) float32; zeros when empty."""
    if grid.max() <= 0:
        return np.zeros((h, w), np.float32)
    im = Image.fromarray(grid.astype(np.float32))
    return np.asarray(im.resize((w, h), Image.Resampling.BILINEAR))


# ---------------------------------------------------------------------------
# Polar cells (sky plot)
# ---------------------------------------------------------------------------
def _blur121(grid: np.ndarray) -> np.ndarray:
    """Separable [1 2 1]/4 blur with zero padding."""
    p = np.pad(grid, ((1, 1), (0, 0)))
    grid = 0.25 * p[:-2] + 0.5 * p[1:-1] + 0.25 * p[2:]
    p = np.pad(grid, ((0, 0), (1, 1)))
    return 0.25 * p[:, :-2] + 0.5 * p[:, 1:-1] + 0.25 * p[:, 2:]


@lru_cache(maxsize=8)
def _disc_coverage(g: int) -> np.ndarray:
    """Blurred fraction of each plot cell inside the horizon disc, (g, g)."""
    sub = 4
    c = (np.arange(g * sub) + 0.5) / (g * sub) * 2.0 - 1.0
    inside = (c[None, :] ** 2 + c[:, None] ** 2) <= 1.0
    cov = inside.reshape(g, sub, g, sub).mean(axis=(1, 3))
    out = _blur121(cov)
    out.setflags(write=False)
    return out


def polar_density(az, el, weight_s: float, g: int) -> np.ndarray:
    """Seconds of sample time per plot cell, (g, g) float64, rows = +y down,
    over the polar plot's diameter (north up, radius linear in 90 - el).

    Cells are square in plot space (not in az/el), so a track crossing near
    the zenith is not diluted over shrinking azimuth cells.
    """
    out = np.zeros(g * g, dtype=np.float64)
    if az.size:
        a = np.radians(az.astype(np.float64))
        rho = (90.0 - el.astype(np.float64)) / 90.0
        x = rho * np.sin(a)
        y = -rho * np.cos(a)
        ix = np.clip(((x + 1.0) * 0.5 * g).astype(np.int64), 0, g - 1)
        iy = np.clip(((y + 1.0) * 0.5 * g).astype(np.int64), 0, g - 1)
        out += np.bincount(iy * g + ix, minlength=g * g) * float(weight_s)
    # A light blur: with a 15 s step a fast overhead pass leaves isolated
    # samples; the blur turns them into readable blobs.  Dividing by the
    # blurred disc coverage keeps cells cut by the rim from fading out.
    cov = _disc_coverage(g)
    return _blur121(out.reshape(g, g)) / np.maximum(cov, 0.25)


# ---------------------------------------------------------------------------
# Azimuth x elevation cells (horizon panorama)
# ---------------------------------------------------------------------------
def unrolled_density(az, el, weight_s: float) -> np.ndarray:
    """Seconds of sample time per 1 x 1 deg cell, (90, 360), row 0 = el 89..90."""
    out = np.zeros(90 * 360, dtype=np.float64)
    if az.size:
        ix = np.clip(np.floor(az).astype(np.int64), 0, 359)
        iy = np.clip(np.floor(90.0 - el).astype(np.int64), 0, 89)
        out += np.bincount(iy * 360 + ix, minlength=90 * 360) * float(weight_s)
    g = out.reshape(90, 360)
    # A 1 deg azimuth cell shrinks on the sky as cos(elevation): average each
    # row over about 1 deg of sky (1/cos(el) cells), so fast passes near the
    # zenith, a few degrees of azimuth apart between samples, do not break up
    # into speckle.  Mass-preserving per row.
    el_mid = np.radians(89.5 - np.arange(90))
    widths = np.clip(np.rint(1.0 / np.cos(el_mid)), 1, 359).astype(np.int64)
    for i in np.flatnonzero(widths > 1):
        k = int(widths[i])
        c = np.concatenate([[0.0], np.cumsum(np.concatenate([g[i, -(k // 2):], g[i],
                                                             g[i, :k - k // 2]]))])
        g[i] = (c[k:k + 360] - c[:360]) / k
    p = np.pad(g, ((1, 1), (0, 0)), mode="edge")
    g = 0.25 * p[:-2] + 0.5 * p[1:-1] + 0.25 * p[2:]
    p = np.pad(g, ((0, 0), (1, 1)), mode="wrap")
    return 0.25 * p[:, :-2] + 0.5 * p[:, 1:-1] + 0.25 * p[:, 2:]
