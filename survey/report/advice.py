"""Plain-words advice: each costly obstruction sector cleared and the site
re-assessed (the scheduling assignment reused: evaluate.Evaluator), said the
way an installer would say it (trim a tree, clear or mount above a building);
terrain from an elevation model is said to be terrain, which cannot be
cleared (survey/terrain/advice.py), never something to trim."""

from __future__ import annotations

import re
from dataclasses import replace

from ..assess import Assessment, Sector
from ..evaluate import Evaluator
from ..pipeline import SiteRun
from ..terrain.advice import TERRAIN_LABEL, only_terrain, terrain_advice, terrain_part, terrain_words
from ..words import azimuth_span, elevation, pct

RECOMMEND_MIN_SHARE = 0.05  # sectors causing less than this share of blocked time get no advice line
MAX_RECOMMENDATIONS = 3

def _sector_name(sec: Sector) -> str:
    labels = ", ".join(sec.labels)
    span = azimuth_span(sec.from_deg, sec.to_deg)
    return f"the {labels} at {span}" if labels else f"the obstruction at {span}"


def what_if_cleared(run: SiteRun, sector: Sector) -> Assessment:
    """``run`` re-assessed with ``sector``'s mask set to zero (the tracks and the
    scheduling assignment are reused: evaluate.Evaluator)."""
    mask = run.mask.with_sector_cleared(sector.from_deg, sector.to_deg)
    evaluator = run.evaluator or Evaluator(run.tracks, run.site.criteria, run.site.schedule)
    return evaluator.assess(mask)


def recommendations(run: SiteRun) -> list[dict]:
    """Plain-words advice from re-assessing with each costly sector cleared."""
    a = run.assessment
    out = []
    if not a.blocked_samples:
        return out
    for sec in a.sectors[:MAX_RECOMMENDATIONS]:
        if sec.blocked_share < RECOMMEND_MIN_SHARE:
            continue
        terrain = terrain_part(run.mask, sec)
        if terrain is not None and only_terrain(sec):
            out.append(terrain_advice(sec, terrain, a))  # a mountain is not trimmed
            continue
        b = what_if_cleared(run, sec)
        verb = "Trimming or removing" if _looks_like_vegetation(sec.labels) else "Clearing or mounting above"
        name = _sector_name(replace(sec, labels=tuple(lbl for lbl in sec.labels if lbl != TERRAIN_LABEL)))
        text = (f"{verb} {name} (peak {elevation(sec.peak_elevation_deg)}) would cut blocked time "
                f"from {pct(a.blocked_fraction)} to {pct(b.blocked_fraction)}")
        if pct(a.interruption) != pct(b.interruption):
            text += f" and interruption from {pct(a.interruption)} to {pct(b.interruption)}"
        text += f"; the verdict would be {b.verdict}."
        if terrain is not None:
            text += f" The terrain there ({terrain_words(terrain)}) stays: terrain, cannot be cleared."
        out.append({
            "from_deg": round(float(sec.from_deg), 2), "to_deg": round(float(sec.to_deg), 2),
            "labels": list(sec.labels), "blocked_share": sec.blocked_share,
            "blocked_fraction": b.blocked_fraction, "availability": b.availability,
            "interruption": b.interruption, "verdict": b.verdict, "text": text,
        })
    return out


_VEGETATION = {"tree", "alder", "oak", "pine", "spruce", "fir", "birch", "maple", "willow", "poplar",
               "hedge", "bush", "shrub", "wood", "woods", "forest", "canopy", "scrub", "eucalyptus", "gum",
               "hedgerow", "conifer", "cedar", "ash", "beech", "elm", "palm"}


def _looks_like_vegetation(labels) -> bool:
    """Whether a sector's labels name plants (whole words, plurals too: 'alders',
    'hedges'), so the advice says trim rather than clear ('woodshed' is not wood)."""
    words = re.findall(r"[a-z]+", " ".join(labels).lower())
    return any(w in _VEGETATION or w.rstrip("s") in _VEGETATION or w.removesuffix("es") in _VEGETATION
               for w in words)
