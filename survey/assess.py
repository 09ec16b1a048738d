"""Assessment: sky tracks x horizon mask x scheduling model -> the site's figures.

Definitions (DESIGN.md, "Metrics"): a stored sample is *usable sky*; it is
*blocked* when its elevation is below the mask at its azimuth.

- blocked_fraction: blocked usable samples / usable samples;
- availability: share of sample times with at least one usable, unblocked satellite;
- interruption: share of sample times the link is down under the scheduling model
  (every ``reassign_s`` seconds the highest usable satellite is assigned, blind to
  obstructions; once the assigned satellite is blocked, the link stays down until
  the next reassignment);
- outages: runs of consecutive down samples;
- sectors: azimuth intervals where the mask rises above the minimum elevation,
  with the share of blocked samples each causes;
- verdict: from the site's criteria.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .horizon import HorizonMask, in_sector
from .site import Criteria, Schedule
from .tracks import SkyTracks, sample_time


@dataclass(frozen=True)
class Outage:
    start_index: int
    samples: int

    def as_dict(self, tracks: SkyTracks) -> dict:
        return {
            "start": sample_time(tracks.window, self.start_index).strftime("%Y-%m-%dT%H:%M:%SZ"),
            "duration_s": self.samples * tracks.window.step_s,
        }


@dataclass(frozen=True)
class Sector:
    from_deg: float
    to_deg: float
    peak_elevation_deg: float
    labels: tuple[str, ...]
    blocked_samples: int
    blocked_share: float  # of all blocked samples
    blocked_fraction_if_cleared: float | None  # blocked_fraction with this sector's mask at 0

    def as_dict(self) -> dict:
        return {
            "from_deg": round(float(self.from_deg), 2), "to_deg": round(float(self.to_deg), 2),
            "peak_elevation_deg": round(float(self.peak_elevation_deg), 2), "labels": list(self.labels),
            "blocked_share": self.blocked_share,
            "blocked_fraction_if_cleared": self.blocked_fraction_if_cleared,
        }


@dataclass
class Assessment:
    usable_samples: int
    blocked_samples: int
    blocked_fraction: float | None
    availability: float
    interruption: float
    down: np.ndarray  # bool per sample time, link down under the scheduling model
    outages: list[Outage]
    sectors: list[Sector]
    verdict: str
    verdict_reason: str
    blocked: np.ndarray = field(repr=False, default=None)  # bool per stored sample
    warnings: list[str] = field(default_factory=list)

    def outage_summary(self, tracks: SkyTracks) -> dict:
        days = tracks.window.count * tracks.window.step_s / 86400.0
        longest = max((o.samples for o in self.outages), default=0) * tracks.window.step_s
        return {
            "count_per_day": len(self.outages) / days,
            "minutes_per_day": float(self.down.sum()) * tracks.window.step_s / 60.0 / days,
            "longest_s": longest,
            "events": [o.as_dict(tracks) for o in self.outages],
        }


def blocked_samples(tracks: SkyTracks, mask: HorizonMask) -> np.ndarray:
    """True for each stored sample whose elevation is below the mask at its azimuth."""
    if mask.is_clear:
        return np.zeros(len(tracks), dtype=bool)
    return tracks.el_deg < mask.elevation_at(tracks.az_deg)


@dataclass(frozen=True)
class Assignment:
    """The scheduling model's choices, which do not depend on the mask: computed
    once per set of tracks and reused for every mask (a horizon edit, or each of
    many candidate spots).

    ``first`` marks the reassignment instants (bool per sample time); ``sample``
    is, per sample time, the index into the tracks of the assigned satellite's
    sample at that time, or -1 where it has none (not assigned, or set below the
    minimum elevation since it was assigned)."""

    first: np.ndarray
    sample: np.ndarray


def schedule_assignment(tracks: SkyTracks, reassign_s: float) -> Assignment:
    """Which satellite is assigned at each sample time, and its sample there: every
    ``reassign_s`` seconds (at the first sample at or after each multiple from the
    window start) the highest usable satellite, held until the next instant."""
    n, step = tracks.count, tracks.window.step_s
    k = np.arange(n)
    slot = np.floor(k * step / reassign_s + 1e-9).astype(np.int64)
    first = np.concatenate([[True], slot[1:] != slot[:-1]])  # reassignment instants
    t, sat, el = tracks.time_index, tracks.sat, tracks.el_deg
    # Highest usable satellite at each time: samples are sorted by time, so a
    # lexsort by (elevation, time) puts each time's highest last.
    order = np.lexsort((el, t))
    last_of_time = np.concatenate([t[order][1:] != t[order][:-1], [True]]) if t.size else np.zeros(0, bool)
    best_sat = np.full(n, -1, dtype=np.int64)
    best_sat[t[order][last_of_time]] = sat[order][last_of_time]
    assigned = best_sat[k[first]][np.cumsum(first) - 1]  # held until the next instant
    # Is (assigned, k) a stored sample?  Look up by key time*S + sat.
    S = max(len(tracks.fleet), 1)
    keys = t.astype(np.int64) * S + sat
    want = k * S + np.maximum(assigned, 0)
    pos = np.clip(np.searchsorted(keys, want), 0, max(keys.size - 1, 0))
    found = (keys.size > 0) & (assigned >= 0)
    if keys.size:
        found &= keys[pos] == want
    return Assignment(first, np.where(found, pos, -1))


def down_under(assignment: Assignment, blocked: np.ndarray) -> np.ndarray:
    """Per sample time: is the link down under the reassignment model, given which
    stored samples are blocked?  Cheap: the mask-free part is in ``assignment``."""
    first, sample = assignment.first, assignment.sample
    n = first.size
    if blocked.size:
        up = (sample >= 0) & ~blocked[np.maximum(sample, 0)]
    else:
        up = np.zeros(n, dtype=bool)
    down = ~up
    # Once down within a slot, down until the slot ends.
    cs = np.cumsum(down)
    slot_start = np.flatnonzero(first)
    before = np.repeat(cs[slot_start] - down[slot_start], np.diff(np.append(slot_start, n)))
    return (cs - before) > 0


def schedule_down(tracks: SkyTracks, blocked: np.ndarray, reassign_s: float) -> np.ndarray:
    """Per sample time: is the link down under the reassignment model?"""
    return down_under(schedule_assignment(tracks, reassign_s), blocked)


def availability_of(tracks: SkyTracks, blocked: np.ndarray) -> float:
    """Share of sample times with at least one usable, unblocked satellite."""
    n = tracks.count
    clear_times = np.bincount(tracks.time_index[~blocked], minlength=n) > 0
    return float(clear_times.mean()) if n else 0.0


def interruption_of(down: np.ndarray) -> float:
    """Share of sample times the link is down (1.0 for an empty window)."""
    return float(down.mean()) if down.size else 1.0


def runs(flags: np.ndarray) -> list[Outage]:
    """Runs of consecutive True values as (start index, length)."""
    if flags.size == 0:
        return []
    d = np.diff(np.concatenate([[0], flags.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    return [Outage(int(a), int(b - a)) for a, b in zip(starts, ends)]


def obstruction_sectors(tracks: SkyTracks, mask: HorizonMask, blocked: np.ndarray,
                        min_elevation_deg: float) -> list[Sector]:
    """Azimuth sectors where the mask rises above the minimum elevation (only there
    can it block usable samples), costliest first."""
    total_blocked = int(blocked.sum())
    usable = len(tracks)
    out = []
    for a, b in mask.sectors_above(min_elevation_deg):
        inside = in_sector(tracks.az_deg, a, b if b != 360.0 else a)
        n_blk = int(np.count_nonzero(blocked & inside))
        knots = in_sector(mask.az_deg, a, b if b != 360.0 else a)
        peak = float(max(mask.el_deg[knots].max() if knots.any() else 0.0, min_elevation_deg))
        labels = tuple(dict.fromkeys(lbl for lbl, k in zip(mask.labels, knots) if k and lbl))
        out.append(Sector(a, b, peak, labels, n_blk,
                          n_blk / total_blocked if total_blocked else 0.0,
                          (total_blocked - n_blk) / usable if usable else None))
    out.sort(key=lambda s: -s.blocked_samples)
    return out


GRADES = ("qualified", "marginal", "not-qualified")


def verdict_for(blocked_fraction: float | None, interruption: float, availability: float,
                criteria: Criteria) -> tuple[str, str]:
    """Verdict and the plain-words reason for it (see Criteria)."""
    if availability < criteria.min_availability:
        return "not-qualified", (f"an unblocked satellite is in view only {availability:.1%} of the time "
                                 f"(at least {criteria.min_availability:.1%} needed)")
    grades = []
    for label, value, q, m in (
        ("blocked", blocked_fraction or 0.0, criteria.qualified_max_blocked, criteria.marginal_max_blocked),
        ("interruption", interruption, criteria.qualified_max_interruption, criteria.marginal_max_interruption),
    ):
        if value <= q:
            grades.append((0, f"{label} {value:.1%} is within the {q:.1%} limit"))
        elif value <= m:
            grades.append((1, f"{label} {value:.1%} is above {q:.1%} but within {m:.1%}"))
        else:
            grades.append((2, f"{label} {value:.1%} is above the {m:.1%} limit"))
    worst = max(g for g, _ in grades)
    reasons = [r for g, r in grades if g == worst]
    return GRADES[worst], "; ".join(reasons)


def assess(tracks: SkyTracks, mask: HorizonMask, criteria: Criteria = Criteria(),
           schedule: Schedule = Schedule()) -> Assessment:
    """All figures for one site.  Cheap: tracks are reused across horizon edits."""
    blocked = blocked_samples(tracks, mask)
    usable = len(tracks)
    n_blocked = int(blocked.sum())
    availability = availability_of(tracks, blocked)
    down = schedule_down(tracks, blocked, schedule.reassign_s)
    interruption = interruption_of(down)
    warnings = []
    if usable == 0:
        warnings.append("no satellite rises above the minimum elevation in this window: "
                        "the shells do not cover this latitude, or the window is too short")
    verdict, reason = verdict_for(n_blocked / usable if usable else None, interruption, availability, criteria)
    return Assessment(
        usable, n_blocked, (n_blocked / usable) if usable else None, availability, interruption,
        down, runs(down), obstruction_sectors(tracks, mask, blocked, tracks.terminal.min_elevation_deg),
        verdict, reason, blocked, warnings,
    )
