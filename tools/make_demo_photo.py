"""Make the invented demo photo of demo_sites/fernbank-paddock: a 360° x 180°
equirectangular panorama drawn from a skyline of our own (a ragged tree line,
a gabled shed, a thin aerial mast, a white cloud, a sky gradient and grass),
the kind of picture a phone's panorama mode writes.  Nothing in it is a real
place.

    python tools/make_demo_photo.py            # writes demo_sites/fernbank-paddock/panorama.jpg

The centre column looks toward bearing CENTRE_BEARING (compass, as the demo
site's [horizon] reference says).  Deterministic: the same bytes every run."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from PIL import Image

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "demo_sites" / "fernbank-paddock" / "panorama.jpg"
WIDTH = 2048
CENTRE_BEARING = 180.0  # compass bearing of the centre column


def skyline(bearing: np.ndarray) -> np.ndarray:
    """The scene's skyline (deg) at compass bearings (deg)."""
    b = np.mod(bearing, 360.0)
    rng = np.random.default_rng(18)
    wobble = np.interp(b, np.linspace(0, 360, 181), rng.normal(0.0, 1.6, 181))
    trees = np.where((b > 190) & (b < 285), 17.0 + 7.0 * np.sin(np.radians((b - 190) * 1.9)) + wobble, 0.0)
    hedge = 3.0 + 0.8 * np.sin(np.radians(b * 9.0))
    shed = np.where((b > 70) & (b < 110), 22.0 - np.abs(b - 90.0) * 0.45, 0.0)
    mast = np.where(np.abs(b - 335.0) < 0.75, 48.0, 0.0)
    oak = np.where((b > 140) & (b < 162), 30.0 - 0.12 * (b - 151.0) ** 2, 0.0)
    return np.maximum.reduce([trees, hedge, shed, mast, oak])


def panorama(width: int = WIDTH) -> np.ndarray:
    h = width // 2
    x = (np.arange(width) + 0.5)[None, :]
    y = (np.arange(h) + 0.5)[:, None]
    bearing = CENTRE_BEARING + (x / width - 0.5) * 360.0 + 0.0 * y
    el = 90.0 - y / h * 180.0 + 0.0 * x
    t = np.clip(el / 90.0, 0.0, 1.0)[..., None]
    img = (1 - t) * np.array([186.0, 210.0, 238.0]) + t * np.array([52.0, 110.0, 200.0])
    b = np.mod(bearing, 360.0)
    cloud = (((b - 120.0) / 14.0) ** 2 + ((el - 34.0) / 5.0) ** 2) < 1.0
    img[cloud] = (246.0, 246.0, 248.0)
    line = skyline(bearing)
    below = el < line
    rng = np.random.default_rng(7)
    leaves = np.array([38.0, 66.0, 34.0]) + rng.normal(0.0, 9.0, img.shape)
    img[below] = leaves[below]
    shed = below & (b > 70) & (b < 110) & (el > 3.5)
    img[shed] = (128.0, 72.0, 58.0)
    mast = below & (np.abs(b - 335.0) < 0.75) & (el > 3.5)
    img[mast] = (70.0, 70.0, 74.0)
    img[el < 0] = (84.0, 112.0, 52.0)  # grass
    return np.clip(np.rint(img), 0, 255).astype(np.uint8)


def main() -> int:
    Image.fromarray(panorama()).save(OUT, format="JPEG", quality=82, optimize=True)
    print(f"{OUT.relative_to(ROOT)}: {OUT.stat().st_size / 1024:.0f} KiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
