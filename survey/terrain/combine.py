"""The measured (or plan-derived) mask raised to the terrain horizon:
max(measured, terrain), exactly, as one HorizonMask (survey/mask.py owns the
site's mask and calls this).

Both masks are piecewise-linear in azimuth, so their maximum is too: its knots
are both sets of knots and the crossings between them.  A knot where the
terrain sets the mask is labelled TERRAIN_LABEL, so the obstruction sectors
say which part is terrain; clearing a sector (the report's what-if) clears the
measured part only: terrain cannot be cleared.
"""

from __future__ import annotations

import numpy as np

from ..horizon import HorizonMask, in_sector
from .rays import AZIMUTHS_DEG, TerrainHorizon

TERRAIN_LABEL = "terrain"


def terrain_floor_deg(th: TerrainHorizon) -> np.ndarray:
    """The terrain horizon as a mask at azimuths 0..359: below the horizontal
    (terrain falling away) and degrees with no height at all count as 0."""
    return np.clip(np.nan_to_num(th.elevation_deg, nan=0.0), 0.0, 90.0)


class TerrainMask(HorizonMask):
    """max(``base``, terrain) with the terrain horizon kept (``terrain``)."""

    def __init__(self, base: HorizonMask, terrain: TerrainHorizon):
        self.base, self.terrain = base, terrain
        floor = terrain_floor_deg(terrain)
        az, el, labels = _maximum(base, floor)
        super().__init__(az, el, labels)

    def with_sector_cleared(self, start_deg: float, end_deg: float) -> HorizonMask:
        """The measured part of the sector cleared; the terrain stays."""
        return TerrainMask(self.base.with_sector_cleared(start_deg, end_deg), self.terrain)

    def terrain_in(self, start_deg: float, end_deg: float) -> tuple[float, float] | None:
        """(peak elevation, its distance in metres) of the terrain horizon in a
        sector, where the terrain sets the mask there; None if it sets none."""
        inside = in_sector(self.az_deg, start_deg, end_deg) & (np.asarray(self.labels) == TERRAIN_LABEL)
        if not inside.any():
            return None
        floor = terrain_floor_deg(self.terrain)
        deg = in_sector(AZIMUTHS_DEG, start_deg, end_deg)
        if not deg.any():  # a sector narrower than a degree: the nearest whole degree
            deg = AZIMUTHS_DEG == np.round(self.az_deg[inside][0]) % 360
        k = np.flatnonzero(deg)[np.argmax(floor[deg])]
        return float(floor[k]), float(np.nan_to_num(self.terrain.distance_m[k]))


def _maximum(base: HorizonMask, floor: np.ndarray) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Knots, elevations and labels of max(base, floor) (floor at whole degrees)."""
    terrain = HorizonMask(AZIMUTHS_DEG, floor)
    knots = np.union1d(base.az_deg % 360.0, AZIMUTHS_DEG)
    b, t = base.elevation_at(knots), terrain.elevation_at(knots)
    # Crossings inside each interval between knots (both are linear there).
    nxt = np.append(knots[1:], knots[0] + 360.0)
    b1, t1 = base.elevation_at(nxt), terrain.elevation_at(nxt)
    d0, d1 = b - t, b1 - t1
    cross = (d0 * d1) < 0
    frac = d0[cross] / (d0[cross] - d1[cross])
    extra = (knots[cross] + frac * (nxt[cross] - knots[cross])) % 360.0
    az = np.concatenate([knots, extra])
    el = np.maximum(base.elevation_at(az), terrain.elevation_at(az))
    by_terrain = (terrain.elevation_at(az) >= base.elevation_at(az)) & (terrain.elevation_at(az) > 0)
    base_labels = _nearest_base_labels(base, az)
    labels = tuple(TERRAIN_LABEL if tt else lbl for tt, lbl in zip(by_terrain, base_labels))
    return az, el, labels


def _nearest_base_labels(base: HorizonMask, az: np.ndarray) -> list[str]:
    """The label of the base knot nearest each azimuth (through north too)."""
    n = base.az_deg.size
    if n == 0:
        return [""] * az.size
    right = np.searchsorted(base.az_deg, az) % n  # knots are sorted by azimuth (HorizonMask)
    left = (right - 1) % n
    gap_r = (base.az_deg[right] - az) % 360.0
    gap_l = (az - base.az_deg[left]) % 360.0
    pick = np.where(gap_l <= gap_r, left, right)
    return [base.labels[i] for i in pick]
