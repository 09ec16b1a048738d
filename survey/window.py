"""The assessment window and its one precedence rule.

A value given on the command line (or by the text UI's session) wins; else the
site file's ``[window]``; else the default: today 00:00 UTC, 24 h, 15 s steps.
Everything that needs the window's start (the declination for compass bearings,
the horizon at another point, the sky tracks) takes it from here, so they never
disagree (README, "Using it from the command line").
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone

from .errors import InputError

DEFAULT_HOURS = 24.0
DEFAULT_STEP_S = 15.0
MAX_SAMPLES = 2_000_000  # sample times per satellite
MAX_HOURS = 24.0 * 366  # a window of at most a year (README, "Limits")
LAST_YEAR = 9998  # a window must end before the calendar does
MIN_STEP_S, MAX_STEP_S = 0.1, 3600.0  # a tenth of a second to an hour between samples (README, "Limits")


@dataclass(frozen=True)
class WindowSpec:
    """Times ``start + k*step_s`` for k = 0..N-1, N = floor(hours*3600/step_s)."""

    start: datetime
    hours: float = DEFAULT_HOURS
    step_s: float = DEFAULT_STEP_S

    @property
    def count(self) -> int:
        return int(math.floor(self.hours * 3600.0 / self.step_s + 1e-9))


def window_start(site, start: datetime | None = None, now: datetime | None = None) -> datetime:
    """The window's start: ``start``, else the site's [window] start, else today
    00:00 UTC (``now`` stands in for the clock in tests)."""
    if start is not None:
        return start
    if site is not None and site.window.get("start"):
        return site.window["start"]
    now = now or datetime.now(timezone.utc)
    return now.replace(hour=0, minute=0, second=0, microsecond=0)


def resolve_window(site, start: datetime | None = None, hours: float | None = None,
                   step_s: float | None = None, now: datetime | None = None) -> WindowSpec:
    """The window to assess, each value by the rule above, checked against the
    limits (README, "Limits")."""
    spec = WindowSpec(
        window_start(site, start, now),
        hours if hours is not None else site.window.get("hours", DEFAULT_HOURS),
        step_s if step_s is not None else site.window.get("step_s", DEFAULT_STEP_S),
    )
    if not (math.isfinite(spec.hours) and 0 < spec.hours <= MAX_HOURS):
        raise InputError(f"window: {spec.hours:g} h is outside 0 to {MAX_HOURS:g} h (a year): "
                         "assess a shorter window")
    if not (math.isfinite(spec.step_s) and MIN_STEP_S <= spec.step_s <= MAX_STEP_S):
        raise InputError(f"window: step {spec.step_s:g} s is outside {MIN_STEP_S:g} to {MAX_STEP_S:g} s")
    try:
        ends = spec.start + timedelta(hours=spec.hours)
    except OverflowError:
        ends = datetime.max.replace(tzinfo=timezone.utc)
    if ends.year > LAST_YEAR:
        raise InputError(f"window: {spec.start:%Y-%m-%d} plus {spec.hours:g} h ends after the year {LAST_YEAR}")
    if spec.count < 1:
        raise InputError(f"window: {spec.hours} h at {spec.step_s} s steps holds no sample")
    if spec.count > MAX_SAMPLES:
        raise InputError(f"window: {spec.count} samples per satellite is too many; use a longer step or fewer hours")
    return spec
