"""What the advice says about terrain (README, "Terrain horizons"): a sector the
terrain horizon sets is named with its distance and said to be terrain, which
cannot be cleared; no what-if is computed for it, and no trimming suggested."""

from __future__ import annotations

from ..words import azimuth_span, elevation, pct
from .combine import TERRAIN_LABEL, TerrainMask

__all__ = ["TERRAIN_LABEL", "only_terrain", "terrain_advice", "terrain_part", "terrain_words"]


def only_terrain(sector) -> bool:
    """Whether only terrain sets ``sector`` (its figure "if cleared" cannot happen)."""
    return bool(sector.labels) and set(sector.labels) <= {TERRAIN_LABEL}


def terrain_part(mask, sector) -> tuple[float, float] | None:
    """(peak elevation, distance in metres) of the terrain that sets part of
    ``sector`` (an assess.Sector), or None where no terrain does."""
    if not isinstance(mask, TerrainMask) or TERRAIN_LABEL not in sector.labels:
        return None
    return mask.terrain_in(sector.from_deg, sector.to_deg)


def terrain_words(part: tuple[float, float]) -> str:
    """"peak 27.0°, 2.4 km away"."""
    peak, dist = part
    return f"peak {elevation(peak)}, {dist / 1000:.1f}\u00a0km away"


def terrain_advice(sector, part: tuple[float, float], assessment) -> dict:
    """The advice line of a sector that only terrain sets."""
    span = azimuth_span(sector.from_deg, sector.to_deg)
    text = (f"The terrain at {span}, {part[1] / 1000:.1f}\u00a0km away (peak {elevation(part[0])}): terrain, "
            f"cannot be cleared. It causes {pct(sector.blocked_share)} of the blocked time; only another "
            "site changes it.")
    return {"from_deg": round(float(sector.from_deg), 2), "to_deg": round(float(sector.to_deg), 2),
            "labels": list(sector.labels), "blocked_share": sector.blocked_share,
            "blocked_fraction": assessment.blocked_fraction, "availability": assessment.availability,
            "interruption": assessment.interruption, "verdict": assessment.verdict, "text": text,
            "terrain": True}
