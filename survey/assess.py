"""Assessment: sky tracks x horizon mask x scheduling model -> the site's figures.

Definitions (README, "What the figures mean"): a stored sample is *usable sky*; it is
*blocked* when its elevation is below the mask at its azimuth.

- blocked_fraction: blocked usable samples / usable samples;
- availability: share of sample times with at least one usable, unblocked satellite;
- interruption: share of sample times the link is down under the scheduling model
  (at each reassignment instant, every ``reassign_s`` seconds, the highest usable
  satellite is assigned, blind to obstructions; one that leaves usable sky is
  replaced at once by the highest usable one; once the assigned satellite is
  blocked, the link stays down until the next assignment);
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
from .words import pct


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

    ``first`` marks the assignment instants (bool per sample time): each
    reassignment instant, and each handover where the assigned satellite left
    usable sky; ``sample`` is, per sample time, the index into the tracks of the
    assigned satellite's sample at that time, or -1 where none is assigned (no
    usable satellite since the last assignment instant)."""

    first: np.ndarray
    sample: np.ndarray


def reassignment_instants(count: int, step_s: float, reassign_s: float) -> np.ndarray:
    """Bool per sample time: the first sample at or after each multiple of
    ``reassign_s`` from the window start."""
    slot = np.floor(np.arange(count) * step_s / reassign_s + 1e-9).astype(np.int64)
    return np.concatenate([[True], slot[1:] != slot[:-1]])[:count]


def schedule_assignment(tracks: SkyTracks, reassign_s: float) -> Assignment:
    """Which satellite is assigned at each sample time, and its sample there, under
    the scheduling model (README, "What the figures mean"):

    - at each reassignment instant the highest usable satellite is assigned (none:
      the link is down until one is usable, which is then assigned);
    - when the assigned satellite leaves usable sky it is replaced at that sample
      by the highest usable satellite: a new assignment.

    Vectorised over slots: each round follows every slot's current assignment to
    its end (the slot's end, the satellite's last usable sample, or the first
    usable sample after an empty spell) and starts the next assignment there; the
    rounds needed are the most handovers in one slot."""
    n = tracks.count
    t, sat, el = tracks.time_index.astype(np.int64), tracks.sat.astype(np.int64), tracks.el_deg
    instants = reassignment_instants(n, tracks.window.step_s, reassign_s)
    if n == 0 or t.size == 0:  # no usable satellite at all: never assigned
        return Assignment(instants, np.full(n, -1, dtype=np.int64))
    # Highest usable sample at each time (samples are sorted by time, so a lexsort
    # by (elevation, time) puts each time's highest last).
    best = np.full(n, -1, dtype=np.int64)
    order = np.lexsort((el, t))
    last_of_time = np.concatenate([t[order][1:] != t[order][:-1], [True]])
    best[t[order][last_of_time]] = order[last_of_time]
    # For each sample, the time its satellite's run of consecutive usable samples ends.
    run_end = np.zeros(t.size, dtype=np.int64)
    by_sat = np.lexsort((t, sat))
    ts, ss = t[by_sat], sat[by_sat]
    breaks = np.concatenate([(ss[1:] != ss[:-1]) | (ts[1:] != ts[:-1] + 1), [True]])
    ends = np.flatnonzero(breaks)
    run_of = np.searchsorted(ends, np.arange(t.size))
    run_end[by_sat] = ts[ends[run_of]] + 1
    # First time at or after k with a usable satellite (n when none).
    has = best >= 0
    next_usable = np.where(has, np.arange(n), n)
    next_usable = np.minimum.accumulate(next_usable[::-1])[::-1]
    slot_end = np.append(np.flatnonzero(instants)[1:], n)
    slot_end = np.repeat(slot_end, np.diff(np.append(np.flatnonzero(instants), n)))

    first = instants.copy()
    starts = np.flatnonzero(instants)
    while starts.size:
        b = best[starts]
        ends = np.where(b >= 0, run_end[np.maximum(b, 0)], next_usable[starts])
        ends = np.maximum(ends, starts + 1)
        starts = ends[ends < slot_end[starts]]
        first[starts] = True
    seg = np.cumsum(first) - 1
    sample = best[np.flatnonzero(first)][seg]
    # ``sample`` holds the assigned satellite's sample at its assignment instant;
    # within the assignment the same satellite's sample at time k is that index
    # moved on by the samples stored between (found by key time*S + sat).
    S = max(len(tracks.fleet), 1)
    keys = t * S + sat
    assigned_sat = np.where(sample >= 0, sat[np.maximum(sample, 0)], -1)
    want = np.arange(n) * S + np.maximum(assigned_sat, 0)
    pos = np.clip(np.searchsorted(keys, want), 0, keys.size - 1)
    found = (assigned_sat >= 0) & (keys[pos] == want)
    return Assignment(first, np.where(found, pos, -1))


def down_under(assignment: Assignment, blocked: np.ndarray) -> np.ndarray:
    """Per sample time: is the link down under the scheduling model, given which
    stored samples are blocked?  Down with no satellite assigned, and from a
    blocked sample of the assigned one until the next assignment instant.  Cheap:
    the mask-free part is in ``assignment``."""
    first, sample = assignment.first, assignment.sample
    n = first.size
    if blocked.size:
        up = (sample >= 0) & ~blocked[np.maximum(sample, 0)]
    else:
        up = np.zeros(n, dtype=bool)
    down = ~up
    # Once down within an assignment, down until the assignment ends.
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


def sector_of(azimuth_deg: np.ndarray, sectors: list[tuple[float, float]]) -> np.ndarray:
    """Index into ``sectors`` of the sector holding each azimuth, or of the nearest
    one (so a blocked sample a rounding error outside the exact crossing still
    counts for the sector that blocks it); -1 with no sectors."""
    a = np.asarray(azimuth_deg, dtype=np.float64) % 360.0
    if not sectors:
        return np.full(a.shape, -1, dtype=np.int64)
    dist = np.empty((len(sectors),) + a.shape)
    for i, (s, e) in enumerate(sectors):
        width = 360.0 if e - s >= 360.0 else (e - s) % 360.0
        past = (a - s) % 360.0  # clockwise from the sector's start
        dist[i] = np.where(past < width, 0.0, np.minimum(past - width, 360.0 - past))
    return np.argmin(dist, axis=0)


def obstruction_sectors(tracks: SkyTracks, mask: HorizonMask, blocked: np.ndarray,
                        min_elevation_deg: float) -> list[Sector]:
    """Azimuth sectors where the mask rises above the minimum elevation (only there
    can it block usable samples), costliest first.  Every blocked sample counts
    for exactly one sector, so the shares sum to 1 (0 with nothing blocked)."""
    total_blocked = int(blocked.sum())
    usable = len(tracks)
    bounds = mask.sectors_above(min_elevation_deg)
    owner = sector_of(tracks.az_deg[blocked], bounds)
    per_sector = np.bincount(owner, minlength=len(bounds)) if bounds else np.zeros(0, np.int64)
    out = []
    for i, (a, b) in enumerate(bounds):
        n_blk = int(per_sector[i])
        knots = in_sector(mask.az_deg, a, b)
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
        return "not-qualified", (f"an unblocked satellite is in view only {pct(availability)} of the time "
                                 f"(at least {pct(criteria.min_availability)} needed)")
    grades = []
    for label, value, q, m in (
        ("blocked", blocked_fraction or 0.0, criteria.qualified_max_blocked, criteria.marginal_max_blocked),
        ("interruption", interruption, criteria.qualified_max_interruption, criteria.marginal_max_interruption),
    ):
        if value <= q:
            grades.append((0, f"{label} {pct(value)} is within the {pct(q)} limit"))
        elif value <= m:
            grades.append((1, f"{label} {pct(value)} is above {pct(q)} but within {pct(m)}"))
        else:
            grades.append((2, f"{label} {pct(value)} is above the {pct(m)} limit"))
    worst = max(g for g, _ in grades)
    reasons = [r for g, r in grades if g == worst]
    return GRADES[worst], "; ".join(reasons)


def assess(tracks: SkyTracks, mask: HorizonMask, criteria: Criteria = Criteria(),
           schedule: Schedule = Schedule(), assignment: Assignment | None = None) -> Assessment:
    """All figures for one site.  Cheap: tracks are reused across horizon edits;
    ``assignment`` (schedule_assignment of these tracks and period) is reused when
    given (evaluate.Evaluator)."""
    blocked = blocked_samples(tracks, mask)
    usable = len(tracks)
    n_blocked = int(blocked.sum())
    availability = availability_of(tracks, blocked)
    if assignment is None:
        assignment = schedule_assignment(tracks, schedule.reassign_s)
    down = down_under(assignment, blocked)
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
