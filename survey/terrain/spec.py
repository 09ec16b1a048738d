"""The site file's ``[terrain]`` table (README, "Terrain horizons"): which
elevation model, and how far to look.

Parsed at the input edge with the rest of the site file; the heights are read
only when a run needs the terrain horizon (``survey.terrain.site_terrain``).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..errors import Problems
from ..tables import Table

DEFAULT_DISTANCE_KM = 30.0
MIN_DISTANCE_KM, MAX_DISTANCE_KM = 0.5, 150.0  # README, "Limits": past 150 km no terrain stands above a few degrees


@dataclass(frozen=True)
class TerrainSpec:
    """``dem``: the file or folder, resolved against the site file's folder;
    ``dem_as_written``: as the site file gives it (the site writer keeps it);
    ``max_distance_km``: how far the rays go."""

    dem: Path
    dem_as_written: str
    max_distance_km: float = DEFAULT_DISTANCE_KM

    @property
    def max_distance_m(self) -> float:
        return self.max_distance_km * 1000.0

    def as_table(self) -> dict:
        """The table as the site writer saves it."""
        out: dict = {"dem": self.dem_as_written}
        if self.max_distance_km != DEFAULT_DISTANCE_KM:
            out["max_distance_km"] = self.max_distance_km
        return out


def terrain_from_site_table(raw, path: Path, problems: Problems) -> TerrainSpec | None:
    """The ``[terrain]`` table, checked: ``dem`` must name a file or folder that
    exists (relative to the site file's folder), ``max_distance_km`` within
    MIN_DISTANCE_KM to MAX_DISTANCE_KM."""
    t = Table(raw, "terrain", problems, ("dem", "max_distance_km"))
    dem = t.text("dem", required=True)
    dist = t.number("max_distance_km", DEFAULT_DISTANCE_KM, MIN_DISTANCE_KM, MAX_DISTANCE_KM)
    if not dem:
        if "dem" in t.data and isinstance(t.data["dem"], str):
            problems.add("terrain.dem", "empty: give an SRTM .hgt or GeoTIFF file, or a folder of tiles")
        return None
    if "\x00" in dem:
        problems.add("terrain.dem", "holds a NUL character: not a file name")
        return None
    where = (path.parent / dem) if str(path.parent) else Path(dem)
    try:
        exists = where.exists()
    except OSError as exc:  # a name too long for the file system
        problems.add("terrain.dem", f"{dem}: cannot be looked up: {exc.strerror}")
        return None
    if not exists:
        problems.add("terrain.dem", f"{where}: no such file or folder")
        return None
    return TerrainSpec(where, dem, dist)
