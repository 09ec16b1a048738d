"""What the site report says about the terrain horizon: the elevation model,
its resolution and the distance limit under "What was assessed", and the
method in one paragraph (README, "Terrain horizons")."""

from __future__ import annotations

from ..words import NBSP
from .combine import TerrainMask
from .rays import EARTH_RADIUS_M, REFRACTION_K


def terrain_setup(mask) -> list[tuple[str, str]]:
    """Rows for "What was assessed" (none without a terrain horizon)."""
    if not isinstance(mask, TerrainMask):
        return []
    th = mask.terrain
    files = ", ".join(f.rsplit("/", 1)[-1] for f in th.files)
    source = th.source if files in ("", th.source.rsplit("/", 1)[-1]) else f"{th.source} ({files})"
    return [
        ("Terrain", f"{source}, {th.resolution}"),
        ("Terrain distance", f"to {th.max_distance_m / 1000:g}{NBSP}km; ground {th.ground_m:.0f}{NBSP}m from the "
                             f"model, antenna {th.eye_m - th.ground_m:g}{NBSP}m above it"),
    ]


def terrain_method(mask) -> list[str]:
    """The method paragraph (none without a terrain horizon)."""
    if not isinstance(mask, TerrainMask):
        return []
    return [
        "Terrain horizon: for each whole degree of true azimuth, the highest elevation angle "
        "atan((z - z0 - drop) / d) of the elevation model's terrain along the ray, sampled bilinearly every half "
        "grid cell out to the distance limit, seen from the model's ground plus the antenna height; the drop "
        f"d²(1 - k)/(2R) is the Earth's curvature less standard refraction (k = {REFRACTION_K:g}, "
        f"R = {EARTH_RADIUS_M / 1000:,.0f}{NBSP}km). The mask is the higher of the measured horizon and the "
        "terrain horizon; terrain sectors are not cleared in the what-if figures.",
    ]
