"""Elevation tiles written by the tests (terrain tests and the hostile-input
harness): GeoTIFF through rasterio, SRTM .hgt as raw big-endian bytes by hand
(the format: SRTM documentation, from memory: int16 big-endian, rows north to
south, the name gives the south-west corner, nodes on whole arc-seconds)."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

M_PER_DEG = 111_195.0  # one degree of the 6,371 km sphere


def grid(lat_north: float, lon_west: float, step_deg: float, rows: int, cols: int):
    """Node latitudes (rows) and longitudes (cols), pixel-is-point."""
    return lat_north - step_deg * np.arange(rows), lon_west + step_deg * np.arange(cols)


def local_metres(lat, lon, lat0: float, lon0: float):
    """(east, north) metres of nodes from (lat0, lon0), equirectangular (fine to
    a metre over a few kilometres; the tests' tolerances are wider)."""
    north = (np.asarray(lat)[:, None] - lat0) * M_PER_DEG
    east = (np.asarray(lon)[None, :] - lon0) * M_PER_DEG * math.cos(math.radians(lat0))
    return np.broadcast_arrays(east, north)


def write_tif(path: Path, heights: np.ndarray, lat_north: float, lon_west: float, step_deg: float,
              dtype: str = "float32", nodata=None, crs: str = "EPSG:4326") -> Path:
    """A pixel-is-point GeoTIFF of ``heights`` whose first node is at (lat_north, lon_west)."""
    import rasterio
    from rasterio.transform import Affine

    rows, cols = heights.shape
    with rasterio.open(path, "w", driver="GTiff", width=cols, height=rows, count=1, dtype=dtype, crs=crs,
                       transform=Affine(step_deg, 0.0, lon_west - step_deg / 2, 0.0, -step_deg, lat_north + step_deg / 2),
                       nodata=nodata) as ds:
        ds.update_tags(AREA_OR_POINT="Point")
        ds.write(heights.astype(dtype), 1)
    return path


def hgt_name(lat_sw: int, lon_sw: int) -> str:
    return f"{'N' if lat_sw >= 0 else 'S'}{abs(lat_sw):02d}{'E' if lon_sw >= 0 else 'W'}{abs(lon_sw):03d}.hgt"


def write_hgt(folder: Path, lat_sw: int, lon_sw: int, heights: np.ndarray) -> Path:
    """An SRTM tile written by hand: big-endian int16, rows north to south."""
    path = Path(folder) / hgt_name(lat_sw, lon_sw)
    path.write_bytes(np.asarray(heights).astype(">i2").tobytes())
    return path
