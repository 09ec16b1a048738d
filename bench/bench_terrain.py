"""Benchmark: a terrain horizon at 1 degree over 30 km from a 1-arc-second tile
(target: under 0.5 s), and what re-assessing costs once it is cached.

One run on this machine.  The tile is a bench-only SRTM .hgt (3601 x 3601
nodes, 26 MB) of invented hills written to a temporary folder; the site is the
Larchwater Hollow demo moved onto it.  Prints:
  - reading the heights within 30 km (rasterio, a window of the tile),
  - the rays: 360 azimuths x every half cell to 30 km, bilinear, vectorised,
  - the two together, cold (what a first run costs), against the 0.5 s target,
  - site_terrain again with the cache warm (what each text UI re-assessment costs),
  - run_site twice with a TrackCache: the first (tracks and terrain computed) and
    a horizon edit after it (tracks and terrain reused).

Usage: python bench/bench_terrain.py
"""

from __future__ import annotations

import platform
import sys
import tempfile
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "bench"))

from timing import timed  # noqa: E402

from survey.horizon import HorizonPoint  # noqa: E402
from survey.pipeline import TrackCache, run_site  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.terrain import TerrainSpec, read_dem, site_terrain, terrain_horizon  # noqa: E402

LAT, LON = 46.45, 8.55  # inside N46E008
TARGET_S = 0.5


def write_tile(folder: Path) -> Path:
    step = 1.0 / 3600.0
    lat = 47.0 - step * np.arange(3601)
    lon = 8.0 + step * np.arange(3601)
    y = (lat[:, None] - LAT) * 111_195.0
    x = (lon[None, :] - LON) * 111_195.0 * np.cos(np.radians(LAT))
    z = (900.0 + 1200.0 * np.exp(-((x - 2500.0) / 1200.0) ** 2) + 400.0 * np.sin(x / 3100.0) * np.cos(y / 2700.0)
         + 150.0 * np.sin(x / 610.0 + y / 830.0))
    path = folder / "N46E008.hgt"
    path.write_bytes(np.rint(z).astype(">i2").tobytes())
    return path


def main() -> None:
    print(f"python {platform.python_version()}, numpy {np.__version__}, {platform.machine()}")
    with tempfile.TemporaryDirectory() as d:
        tile = write_tile(Path(d))
        t_read, dem = timed(lambda: read_dem(tile, LAT, LON, 30_000.0))
        t_rays, th = timed(lambda: terrain_horizon(dem, LAT, LON, 4.0, 30_000.0))
        t_both, _ = timed(lambda: terrain_horizon(read_dem(tile, LAT, LON, 30_000.0), LAT, LON, 4.0, 30_000.0))
        rows, cols = dem.heights.shape
        print(f"tile                          : {tile.name}, 1 arc-second, {tile.stat().st_size / 1e6:.1f} MB; "
              f"{rows:,} x {cols:,} nodes read within 30 km")
        print(f"read the heights (rasterio)   : {t_read * 1000:7.1f} ms")
        samples = 360 * int(np.ceil(30_000.0 / (dem.dlon * 111_195.0 * np.cos(np.radians(LAT)) / 2)))
        print(f"rays, 360 az x 30 km          : {t_rays * 1000:7.1f} ms  (~{samples:,} bilinear samples)")
        print(f"terrain horizon, cold         : {t_both * 1000:7.1f} ms  -> {TARGET_S / t_both:.1f}x under the "
              f"{TARGET_S:g} s target (best of 3)")
        print(f"highest terrain               : {np.nanmax(th.elevation_deg):.1f} deg")

        site = load_site(ROOT / "demo_sites" / "larchwater-hollow" / "site.toml")
        site = replace(site, latitude_deg=LAT, longitude_deg=LON, elevation_m=th.ground_m,
                       terrain=TerrainSpec(Path(d), d, 30.0))
        t0 = time.perf_counter()
        site_terrain(site)
        t_first = time.perf_counter() - t0
        t_warm, _ = timed(lambda: site_terrain(site), repeat=20)
        print(f"site_terrain first / cached   : {t_first * 1000:7.1f} ms / {t_warm * 1000:.3f} ms")
        cache = TrackCache()
        t0 = time.perf_counter()
        run_site(site, cache=cache)
        t_run = time.perf_counter() - t0
        edited = replace(site, horizon=replace(site.horizon, points=site.horizon.points + (HorizonPoint(10.0, 30.0),)))
        t0 = time.perf_counter()
        run_site(edited, cache=cache)
        t_edit = time.perf_counter() - t0
        print(f"run_site with terrain         : {t_run:7.2f} s (tracks computed, 24 h at 15 s; terrain cached)")
        print(f"  after a horizon edit        : {t_edit * 1000:7.1f} ms (tracks and terrain reused)")


if __name__ == "__main__":
    main()
