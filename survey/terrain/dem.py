"""Elevation tiles: SRTM ``.hgt`` and GeoTIFF, one file or a folder of tiles,
read with rasterio (the optional ``leosite[terrain]`` extra; README, "Terrain
horizons") into one grid of heights around a site.

Every tile is taken as pixel-is-point: a height belongs to a grid node, the
centre of rasterio's pixel (rasterio gives an ``.hgt`` and a point GeoTIFF the
half-cell-shifted transform that makes this so).  Heights are metres; no-data
cells (SRTM voids, -32768, or the file's own no-data value) become NaN.  Only
the cells within the distance asked for are read, so a country-sized GeoTIFF
costs no more than a tile.
"""

from __future__ import annotations

import contextlib
import math
import re
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError

METRES_PER_DEG = 111_195.0  # one degree of a great circle on the sphere of radius EARTH_RADIUS_M (rays.py)
MAX_CELLS = 60_000_000  # cells read for one site (README, "Limits"): 30 km of 1-arc-second data is ~6 million
MIN_HEIGHT_M, MAX_HEIGHT_M = -500.0, 9000.0  # ground heights on Earth; outside is no data
HGT_NAME = re.compile(r"^([NS])(\d{2})([EW])(\d{3})\.hgt$", re.IGNORECASE)
HGT_SIDES = {1201: "3 arc-second", 3601: "1 arc-second"}  # samples a side (SRTM documentation)
TIFF_SUFFIXES = (".tif", ".tiff")
EXTRA_MESSAGE = ("reading elevation tiles needs the terrain extra: pip install 'leosite[terrain]' "
                 "(it brings rasterio)")


@dataclass(frozen=True)
class Dem:
    """Heights on a regular latitude/longitude grid of nodes.

    ``heights[i, j]`` (metres, NaN where the tile has no data) is at latitude
    ``lat_north - i * dlat`` and longitude ``lon_west + j * dlon`` (degrees;
    rows run north to south, as in the files).  ``covered`` is False where no
    tile lies (a gap between the tiles of a folder)."""

    heights: np.ndarray
    covered: np.ndarray
    lat_north: float
    lon_west: float
    dlat: float
    dlon: float
    name: str  # the file or folder as the site file gives it
    files: tuple[str, ...]  # the tiles read

    @property
    def resolution_text(self) -> str:
        """The grid spacing in words: arc-seconds, and metres north-south."""
        arcsec = self.dlat * 3600.0
        return f"{arcsec:.3g} arc-second ({self.dlat * METRES_PER_DEG:.0f} m)"

    def sample(self, lat_deg: np.ndarray, lon_deg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(heights, outside): bilinear heights (NaN at a void: any of the four
        nodes around a point without data) and True where a point lies outside
        the grid or in a gap between tiles."""
        r = (self.lat_north - np.asarray(lat_deg, dtype=np.float64)) / self.dlat
        c = ((np.asarray(lon_deg, dtype=np.float64) - self.lon_west) % 360.0) / self.dlon
        rows, cols = self.heights.shape
        outside = ~((r >= 0) & (r <= rows - 1) & (c >= 0) & (c <= cols - 1))
        r0 = np.clip(np.floor(r), 0, max(rows - 2, 0)).astype(np.intp)
        c0 = np.clip(np.floor(c), 0, max(cols - 2, 0)).astype(np.intp)
        r1, c1 = np.minimum(r0 + 1, rows - 1), np.minimum(c0 + 1, cols - 1)
        fr, fc = np.clip(r - r0, 0.0, 1.0), np.clip(c - c0, 0.0, 1.0)
        h = self.heights
        z = ((h[r0, c0] * (1 - fc) + h[r0, c1] * fc) * (1 - fr)
             + (h[r1, c0] * (1 - fc) + h[r1, c1] * fc) * fr)
        cov = self.covered
        gap = ~(cov[r0, c0] & cov[r0, c1] & cov[r1, c0] & cov[r1, c1])
        outside = outside | gap
        return np.where(outside, np.nan, z), outside


def _rasterio():
    try:
        import rasterio
    except ImportError:
        return None
    return rasterio


@dataclass(frozen=True)
class _Tile:
    path: Path
    lat_north: float  # first row's node latitude
    lon_west: float  # first column's node longitude
    dlat: float
    dlon: float
    rows: int
    cols: int

    @property
    def lat_south(self) -> float:
        return self.lat_north - (self.rows - 1) * self.dlat

    @property
    def lon_east(self) -> float:
        return self.lon_west + (self.cols - 1) * self.dlon


def _hgt_size_problem(path: Path) -> str | None:
    """Why an ``.hgt`` is not one (its size or its name), or None."""
    size = path.stat().st_size
    sides = [n for n in HGT_SIDES if size == 2 * n * n]
    if not sides:
        return (f"{size:,} bytes: not an SRTM tile (a 3 arc-second .hgt has {2 * 1201 * 1201:,} bytes, "
                f"a 1 arc-second one {2 * 3601 * 3601:,}): truncated or not elevation data")
    if not HGT_NAME.match(path.name):
        return "the name must give the tile's south-west corner, like N46E008.hgt"
    return None


def _open_tile(path: Path) -> _Tile:
    """A tile's grid from its header (the heights are read later, only where needed)."""
    rio = _rasterio()
    if rio is None:
        raise InputError(f"{path}: terrain.dem: {EXTRA_MESSAGE}")
    if path.suffix.lower() == ".hgt":
        why = _hgt_size_problem(path)
        if why:
            raise InputError(f"{path}: terrain.dem: {why}")
    try:
        with _quiet_open(rio, path) as ds:
            if ds.driver not in ("GTiff", "SRTMHGT"):
                raise InputError(f"{path}: terrain.dem: a {ds.driver} raster, not a GeoTIFF or an SRTM .hgt")
            if ds.count < 1 or np.dtype(ds.dtypes[0]).kind not in "iuf":
                raise InputError(f"{path}: terrain.dem: not a band of heights (type {ds.dtypes[0] if ds.count else 'none'})")
            if ds.crs is None:
                raise InputError(f"{path}: terrain.dem: no coordinate reference system: expected latitude and "
                                 "longitude (EPSG:4326)")
            if not ds.crs.is_geographic:
                raise InputError(f"{path}: terrain.dem: in projected coordinates ({ds.crs.to_string()}): "
                                 "reproject it to latitude and longitude (EPSG:4326)")
            t = ds.transform
            if t.is_identity:
                raise InputError(f"{path}: terrain.dem: not georeferenced (no grid coordinates in the file)")
            if t.b != 0 or t.d != 0 or t.a <= 0 or t.e >= 0:
                raise InputError(f"{path}: terrain.dem: a rotated or flipped grid: expected rows north to "
                                 "south and columns west to east")
            tile = _Tile(path, t.f + 0.5 * t.e, t.c + 0.5 * t.a, -t.e, t.a, ds.height, ds.width)
    except InputError:
        raise
    except Exception as exc:  # rasterio and GDAL say "not recognized", "TIFFReadDirectory", ...
        raise InputError(f"{path}: terrain.dem: not an elevation raster rasterio can read "
                         f"({_short(exc)})") from None
    if not (all(math.isfinite(v) for v in (tile.lat_north, tile.lon_west, tile.dlat, tile.dlon))
            and -91 < tile.lat_south <= tile.lat_north < 91 and tile.rows >= 2 and tile.cols >= 2
            and tile.dlat < 1 and tile.dlon < 1):
        raise InputError(f"{path}: terrain.dem: its grid is not a latitude/longitude elevation grid")
    return tile


@contextlib.contextmanager
def _quiet_open(rio, path: Path):
    """rasterio's dataset, with its Python warnings and GDAL's log quiet: what
    is wrong is said in our words (a "not georeferenced" warning becomes an error)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with rio.Env(CPL_LOG="/dev/null"), rio.open(path) as ds:
            yield ds


def _short(exc: Exception) -> str:
    text = " ".join(str(exc).split())
    return text if len(text) <= 160 else text[:157] + "..."


def _tiles_in(folder: Path) -> list[Path]:
    return sorted(p for p in folder.iterdir()
                  if p.is_file() and (p.suffix.lower() == ".hgt" or p.suffix.lower() in TIFF_SUFFIXES))


def _hgt_corner(path: Path) -> tuple[float, float] | None:
    """The south-west corner (lat, lon) an .hgt's name gives, or None."""
    m = HGT_NAME.match(path.name)
    if not m:
        return None
    lat = int(m.group(2)) * (1 if m.group(1).upper() == "N" else -1)
    lon = int(m.group(4)) * (1 if m.group(3).upper() == "E" else -1)
    return float(lat), float(lon)


def read_dem(path: Path, lat_deg: float, lon_deg: float, radius_m: float, name: str = "") -> Dem:
    """The heights within ``radius_m`` of the site (a box a little larger), from
    one tile or the tiles of a folder that the box needs (.hgt by their names,
    GeoTIFF by their bounds).  InputError, naming the file, for anything that is
    not an elevation tile, tiles on different grids, or no tile at the site."""
    path = Path(path)
    name = name or str(path)
    if not path.exists():
        raise InputError(f"{path}: terrain.dem: no such file or folder")
    dlat_box = radius_m / METRES_PER_DEG * 1.02
    dlon_box = min(dlat_box / max(math.cos(math.radians(lat_deg)), 1e-6), 180.0)
    box = (lat_deg - dlat_box, lat_deg + dlat_box, lon_deg - dlon_box, lon_deg + dlon_box)
    if path.is_dir():
        candidates = _tiles_in(path)
        if not candidates:
            raise InputError(f"{path}: terrain.dem: no .hgt or GeoTIFF (.tif) tiles in this folder")
        chosen = []
        for p in candidates:
            corner = _hgt_corner(p) if p.suffix.lower() == ".hgt" else None
            if corner is not None and not _overlaps(corner[0], corner[0] + 1, corner[1], corner[1] + 1, box):
                continue  # a tile the site does not need: not even opened
            tile = _open_tile(p)
            if _overlaps(tile.lat_south, tile.lat_north, tile.lon_west, tile.lon_east, box):
                chosen.append(tile)
        if not chosen:
            raise InputError(f"{path}: terrain.dem: none of its {len(candidates)} tiles covers the site at "
                             f"{lat_deg:.5f}, {lon_deg:.5f} (an .hgt is named after its south-west corner, "
                             f"like {_hgt_name_for(lat_deg, lon_deg)})")
    else:
        chosen = [_open_tile(path)]
    return _mosaic(chosen, box, name, lat_deg, lon_deg)


def _hgt_name_for(lat: float, lon: float) -> str:
    la, lo = math.floor(lat), math.floor(lon)
    return f"{'N' if la >= 0 else 'S'}{abs(la):02d}{'E' if lo >= 0 else 'W'}{abs(lo):03d}.hgt"


def _overlaps(south, north, west, east, box) -> bool:
    s, n, w, e = box
    return south <= n and north >= s and west <= e and east >= w


def _mosaic(tiles: list[_Tile], box, name: str, lat_deg: float, lon_deg: float) -> Dem:
    """One grid over ``box`` from tiles on one grid (same spacing, nodes aligned)."""
    ref = tiles[0]
    for t in tiles[1:]:
        if not (math.isclose(t.dlat, ref.dlat, rel_tol=1e-6) and math.isclose(t.dlon, ref.dlon, rel_tol=1e-6)):
            raise InputError(f"{t.path}: terrain.dem: grid spacing differs from {ref.path.name}'s: keep tiles of "
                             "one resolution in the folder")
    s, n, w, e = box
    north = min(max(t.lat_north for t in tiles), n + ref.dlat)
    south = max(min(t.lat_south for t in tiles), s - ref.dlat)
    west = max(min(t.lon_west for t in tiles), w - ref.dlon)
    east = min(max(t.lon_east for t in tiles), e + ref.dlon)
    # Snap the box to the reference tile's nodes.
    i0 = math.floor((ref.lat_north - north) / ref.dlat)
    i1 = math.ceil((ref.lat_north - south) / ref.dlat)
    j0 = math.floor((west - ref.lon_west) / ref.dlon)
    j1 = math.ceil((east - ref.lon_west) / ref.dlon)
    rows, cols = i1 - i0 + 1, j1 - j0 + 1
    if rows < 2 or cols < 2:
        raise InputError(f"{ref.path}: terrain.dem: does not cover the site at {lat_deg:.5f}, {lon_deg:.5f}")
    if rows * cols > MAX_CELLS:
        raise InputError(f"{ref.path}: terrain.dem: {rows * cols:,} cells within the distance, more than the "
                         f"limit of {MAX_CELLS:,}: use a coarser elevation model or a shorter max_distance_km")
    lat_north = ref.lat_north - i0 * ref.dlat
    lon_west = ref.lon_west + j0 * ref.dlon
    heights = np.full((rows, cols), np.nan, dtype=np.float32)
    covered = np.zeros((rows, cols), dtype=bool)
    rio = _rasterio()
    read = []
    for t in tiles:
        fi = (lat_north - t.lat_north) / ref.dlat
        fj = (t.lon_west - lon_west) / ref.dlon
        oi, oj = round(fi), round(fj)
        if abs(fi - oi) > 1e-3 or abs(fj - oj) > 1e-3:
            raise InputError(f"{t.path}: terrain.dem: its nodes are not on {ref.path.name}'s grid: keep tiles of "
                             "one elevation model in the folder")
        # The tile's rows/columns inside the mosaic.
        a0, a1 = max(oi, 0), min(oi + t.rows, rows)
        b0, b1 = max(oj, 0), min(oj + t.cols, cols)
        if a0 >= a1 or b0 >= b1:
            continue
        window = ((a0 - oi, a1 - oi), (b0 - oj, b1 - oj))
        try:
            with _quiet_open(rio, t.path) as ds:
                band = ds.read(1, window=window, masked=True)
        except Exception as exc:
            raise InputError(f"{t.path}: terrain.dem: cannot read its heights ({_short(exc)})") from None
        z = np.ma.filled(band.astype(np.float32), np.nan)
        # The SRTM void value whatever the file's no-data tag says, and heights no
        # ground has (an untagged -9999): voids, warned about, never a low horizon.
        z[~np.isfinite(z) | (z < MIN_HEIGHT_M) | (z > MAX_HEIGHT_M)] = np.nan
        heights[a0:a1, b0:b1] = np.where(np.isnan(z) & covered[a0:a1, b0:b1], heights[a0:a1, b0:b1], z)
        covered[a0:a1, b0:b1] = True
        read.append(str(t.path))
    return Dem(heights, covered, lat_north, lon_west, ref.dlat, ref.dlon, name, tuple(read))
