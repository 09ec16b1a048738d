"""Make the invented elevation tile of the demo site ``demo_sites/larchwater-hollow``.

The valley is ours: a floor at about 850 m running north-south, a steep ridge
about 1,300 m above it some 2.4 km to the east (it stands above the terminal's
25 degrees of minimum elevation, so the demo shows terrain that cannot be
cleared), a gentler slope to the west and a peak to the north.  The tile is a
GeoTIFF of 6 arc-second nodes (pixel-is-point, EPSG:4326, int16 metres,
DEFLATE), 0.6 x 0.84 degrees round the site, under 200 kB.

    python tools/make_demo_dem.py            # writes demo_sites/larchwater-hollow/larchwater-6s.tif

Needs the terrain extra (rasterio): pip install -e '.[terrain]'.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "demo_sites" / "larchwater-hollow" / "larchwater-6s.tif"
SITE_LAT, SITE_LON = 45.6180, -110.9020  # the site's [site] latitude and longitude
STEP_DEG = 6.0 / 3600.0
HALF_LAT, HALF_LON = 0.30, 0.42  # degrees either side of the site: 30 km and more every way
M_PER_DEG = 111_195.0


def heights(east_m: np.ndarray, north_m: np.ndarray) -> np.ndarray:
    """The invented valley, metres, at metres east and north of the site."""
    x, y = east_m + 100.0, north_m  # the valley's axis runs 100 m east of the site
    floor = 850.0 + 0.004 * y
    crest = 1.0 + 0.12 * np.sin(y / 4000.0)
    east_ridge = 1300.0 * crest * np.exp(-(((x - 2400.0) / 900.0) ** 2))
    beyond = 700.0 / (1.0 + np.exp(-(x - 6000.0) / 1500.0))  # high ground east of the ridge
    west_slope = 800.0 / (1.0 + np.exp((x + 3500.0) / 900.0))
    north_peak = 1500.0 * np.exp(-((x - 500.0) ** 2 + (y - 7000.0) ** 2) / (2 * 1500.0 ** 2))
    texture = 25.0 * np.sin(x / 700.0) * np.cos(y / 900.0)
    return floor + east_ridge + beyond + west_slope + north_peak + texture


def make(out: Path = OUT) -> Path:
    import rasterio
    from rasterio.transform import Affine

    lat0 = round((SITE_LAT + HALF_LAT) / STEP_DEG) * STEP_DEG  # the north row's nodes, on the 6" grid
    lon0 = round((SITE_LON - HALF_LON) / STEP_DEG) * STEP_DEG
    rows, cols = int(2 * HALF_LAT / STEP_DEG) + 1, int(2 * HALF_LON / STEP_DEG) + 1
    lat = lat0 - STEP_DEG * np.arange(rows)
    lon = lon0 + STEP_DEG * np.arange(cols)
    north = (lat[:, None] - SITE_LAT) * M_PER_DEG
    east = (lon[None, :] - SITE_LON) * M_PER_DEG * math.cos(math.radians(SITE_LAT))
    z = np.rint(heights(east, north)).astype(np.int16)
    out.parent.mkdir(parents=True, exist_ok=True)
    # GDAL's transform is the corner of the first cell: half a step north-west of the node.
    transform = Affine(STEP_DEG, 0.0, lon0 - STEP_DEG / 2, 0.0, -STEP_DEG, lat0 + STEP_DEG / 2)
    with rasterio.open(out, "w", driver="GTiff", width=cols, height=rows, count=1, dtype="int16",
                       crs="EPSG:4326", transform=transform, nodata=-32768, compress="deflate", predictor=2,
                       tiled=True, blockxsize=256, blockysize=256) as ds:
        ds.update_tags(AREA_OR_POINT="Point")
        ds.write(z, 1)
    return out


if __name__ == "__main__":
    path = make(Path(sys.argv[1]) if len(sys.argv) > 1 else OUT)
    print(f"{path}: {path.stat().st_size:,} bytes")
