"""Terrain horizons from elevation data (README, "Terrain horizons"):

- ``spec``: the site file's ``[terrain]`` table;
- ``dem``: SRTM ``.hgt`` and GeoTIFF tiles read with rasterio into one grid;
- ``rays``: the terrain horizon at whole degrees, curvature and refraction in;
- ``combine``: the site's mask raised to it (called from survey/mask.py).

``site_terrain`` computes a site's terrain horizon once and keeps it: the text
UI re-assesses after every edit, and an edit that does not move the site, its
antenna height or its elevation model costs nothing here.
"""

from __future__ import annotations

import os
from collections import OrderedDict
from pathlib import Path

from .combine import TERRAIN_LABEL, TerrainMask, terrain_floor_deg
from .dem import Dem, read_dem
from .rays import REFRACTION_K, TerrainHorizon, curvature_drop_m, terrain_horizon
from .spec import TerrainSpec, terrain_from_site_table

__all__ = ["Dem", "REFRACTION_K", "TERRAIN_LABEL", "TerrainHorizon", "TerrainMask", "TerrainSpec",
           "curvature_drop_m", "ground_warning", "read_dem", "site_terrain", "terrain_floor_deg",
           "terrain_from_site_table", "terrain_horizon", "terrain_of"]

GROUND_TOLERANCE_M = 20.0  # [site] elevation_m this far from the DEM is a GPS height or a typo (issue 17)
_CACHE: OrderedDict = OrderedDict()
_CACHE_SIZE = 8


def _signature(path: Path) -> tuple:
    """What changes when the tiles change: names, sizes and times of the files."""
    def stamp(p: Path) -> tuple:
        try:
            st = p.stat()
        except OSError:
            return (p.name, None)
        return (p.name, st.st_size, st.st_mtime_ns)

    if path.is_dir():
        with os.scandir(path) as it:
            return tuple(sorted(stamp(Path(e.path)) for e in it if e.is_file()))
    return (stamp(path),)


def site_terrain(site) -> TerrainHorizon | None:
    """The terrain horizon at the site point, the antenna ``mount.height_m``
    above the DEM's ground (None without ``[terrain]``).  Kept per site point,
    antenna height, model and distance, and the tiles' sizes and times."""
    spec: TerrainSpec | None = getattr(site, "terrain", None)
    if spec is None:
        return None
    key = (spec.dem, spec.max_distance_m, site.latitude_deg, site.longitude_deg, site.mount.height_m,
           _signature(spec.dem))
    hit = _CACHE.get(key)
    if hit is not None:
        _CACHE.move_to_end(key)
        return hit
    dem = read_dem(spec.dem, site.latitude_deg, site.longitude_deg, spec.max_distance_m, spec.dem_as_written)
    th = terrain_horizon(dem, site.latitude_deg, site.longitude_deg, site.mount.height_m, spec.max_distance_m)
    _CACHE[key] = th
    while len(_CACHE) > _CACHE_SIZE:
        _CACHE.popitem(last=False)
    return th


def ground_warning(site, th: TerrainHorizon) -> list[str]:
    """A warning when ``[site] elevation_m`` is more than GROUND_TOLERANCE_M from
    the DEM's ground at the site (the terrain horizon uses the DEM's)."""
    diff = site.elevation_m - th.ground_m
    if abs(diff) <= GROUND_TOLERANCE_M:
        return []
    return [f"[site] elevation_m {site.elevation_m:g} m is {abs(diff):.0f} m {'above' if diff > 0 else 'below'} "
            f"the elevation model's ground there ({th.ground_m:.0f} m, {th.source}): a GPS height or a typo? "
            "The terrain horizon is seen from the model's ground"]


def terrain_of(mask) -> TerrainHorizon | None:
    """The terrain horizon a site's mask was raised to, or None."""
    return mask.terrain if isinstance(mask, TerrainMask) else None
