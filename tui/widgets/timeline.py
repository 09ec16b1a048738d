"""The outage strip: survey/render.py's outage timeline in character cells.

One row per UTC day (as many as fit; the total line says how many were left
off), time of day 00..24 h UTC across the width, the hours labelled under the
rows.  Each cell is marked by the share of its in-window time the link was
down: ``·`` link up all the time, ``▁`` .. ``█`` down for up to 1/8 .. 8/8 of
it (any down time shows at least ``▁``, so a 15 s drop-out is never lost),
blank outside the window.  The last line totals the window: drop-outs (runs of
consecutive down samples), down minutes a day, the longest.

Layout: rows 0 .. D-1 are days ``day0 + r`` (day0 = the UTC date of the window
start), then the hour label row, then the total line (any rows left
over stay blank).  The first G columns hold
the date (G = 11 from 60 columns, 6 from 30, else 3); column j after them spans
seconds [j, j + 1) x 86400 / (width - G) of its day.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
from rich.text import Text

from survey.api import duration as fmt_duration

from .drawing import DOWN_BAR, GREY, SKY_BLUE, Canvas, DrawingWidget, fit, too_small

__all__ = ["outage_strip", "OutageStrip", "strip_counts", "MIN_WIDTH", "MIN_HEIGHT"]

LEVELS = "\u00b7\u2581\u2582\u2583\u2584\u2585\u2586\u2587\u2588"  # · ▁ ▂ ▃ ▄ ▅ ▆ ▇ █
MIN_WIDTH = 20
MIN_HEIGHT = 3

_STYLE = {"up": SKY_BLUE, "down": DOWN_BAR, "soft": GREY, "label": None}


def _gutter(width: int) -> int:
    return 11 if width >= 60 else (6 if width >= 30 else 3)


def strip_counts(down, step_s: float) -> tuple[int, float, float]:
    """(drop-outs, total down seconds, longest drop-out seconds) of a ``down``
    array: a drop-out is a run of consecutive down samples (README, "What the figures mean")."""
    d = np.diff(np.concatenate([[0], np.asarray(down, dtype=np.int8), [0]]))
    a, b = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    total = float(np.count_nonzero(down)) * step_s
    longest = float((b - a).max()) * step_s if a.size else 0.0
    return int(a.size), total, longest


def outage_strip(start: datetime, hours: float, step_s: float, down, width: int, height: int,
                 colour: bool = True) -> Text:
    """The outage strip as ``width`` x ``height`` character cells.

    Parameters:
      start: window start (UTC; a naive datetime is taken as UTC); hours,
        step_s: window length (h) and sample step (s), as ``WindowSpec``.
      down: bool per sample time k (``start + k * step_s``, standing for the
        step that follows), True when the link is down (``Assessment.down``);
        length floor(hours * 3600 / step_s).
      colour: False gives no style spans at all.

    From 20 x 3 cells up (below: a short "enlarge the window" message).  The
    layout is in the module docstring.
    """
    width, height = int(width), int(height)
    if width < MIN_WIDTH or height < MIN_HEIGHT:
        return too_small(width, height, MIN_WIDTH, MIN_HEIGHT)
    step_s, hours = float(step_s), float(hours)
    if not step_s > 0 or not hours > 0:
        raise ValueError("hours and step_s must be positive")
    n = int(math.floor(hours * 3600.0 / step_s + 1e-9))  # as WindowSpec.count
    down = np.asarray(down, dtype=bool).ravel()
    if down.size != n:
        raise ValueError(f"down has {down.size} samples; the window holds {n}")
    if start.tzinfo is None:
        start = start.replace(tzinfo=timezone.utc)
    start = start.astimezone(timezone.utc)
    day0 = start.replace(hour=0, minute=0, second=0, microsecond=0)
    start_s = (start - day0).total_seconds()
    end_s = start_s + n * step_s
    days = max(1, int(math.ceil(end_s / 86400.0 - 1e-9)))
    G = _gutter(width)
    pc = width - G
    D = min(days, height - 2)
    cv = Canvas(width, height)
    st = _STYLE.get

    # Down seconds and window seconds in each cell, exact: the cumulative down
    # time is linear within each sample step, so interpolate it at the cell edges.
    edges = (np.arange(D)[:, None] * 86400.0 + np.arange(pc + 1)[None, :] * (86400.0 / pc))
    tb = start_s + np.arange(n + 1) * step_s
    cum = np.concatenate([[0.0], np.cumsum(down) * step_s])
    down_s = np.diff(np.interp(edges, tb, cum, left=0.0, right=cum[-1]), axis=1)
    in_s = np.diff(np.clip(edges, start_s, end_s), axis=1)
    frac = np.where(in_s > 1e-9, down_s / np.maximum(in_s, 1e-9), 0.0)
    level = np.where(frac > 1e-12, np.clip(np.ceil(frac * 8.0 - 1e-9), 1, 8), 0).astype(np.int64)
    inside = in_s > 1e-9
    glyphs = np.array(list(LEVELS), dtype="<U1")[level]
    for r in range(D):
        up = np.zeros((height, width), dtype=bool)
        dn = np.zeros((height, width), dtype=bool)
        up[r, G:] = inside[r] & (level[r] == 0)
        dn[r, G:] = inside[r] & (level[r] > 0)
        ch = np.full((height, width), " ", dtype="<U1")
        ch[r, G:] = glyphs[r]
        cv.fill(up, ch, st("up"))
        cv.fill(dn, ch, st("down"))
        day = day0 + timedelta(days=r)
        lab = f"{day:%Y-%m-%d}" if G == 11 else (f"{day:%m-%d}" if G == 6 else f"{day:%d}")
        cv.put(r, 0, lab, st("label"))

    # Hour labels: every 3 h when they have room, else 6 h, else 12 h.
    lab_row = D
    every = next((h for h in (3, 6, 12) if pc * h / 24.0 >= 4), 24)
    cv.put(lab_row, 0, "UTC" if G >= 6 else "h", st("soft"))
    last_end = G - 1
    for h in range(0, 25, every):
        c = min(G + int(round(h / 24.0 * pc)), width - 2)
        if c > last_end:  # a label never touches the one before it
            cv.put(lab_row, c, f"{h:02d}", st("soft"))
            last_end = c + 2

    # Totals.
    n_runs, total_s, longest_s = strip_counts(down, step_s)
    span_days = n * step_s / 86400.0
    per_day = total_s / 60.0 / span_days if span_days > 0 else 0.0
    left_off = days - D
    more = f"; {left_off} more day{'s' if left_off != 1 else ''} not shown" if left_off else ""
    plus = f" +{left_off}d" if left_off else ""
    if n_runs:
        pd = f"{per_day:.1f}" if per_day < 9.95 else f"{per_day:.0f}"
        drops = f"{n_runs} drop-out{'s' if n_runs != 1 else ''}"
        lines = [f"{drops}, {pd} min/day, longest {fmt_duration(longest_s)}{more}",
                 f"{n_runs} drops, {pd} min/d, max {fmt_duration(longest_s)}{plus}",
                 f"{n_runs} drops, {pd} min/d{plus}", f"{n_runs} drops{plus}"]
    else:
        length = f"{hours:g} h" if hours < 48 else f"{hours / 24:g} days"
        lines = [f"no drop-outs in {length}{more}", f"no drop-outs{plus}"]
    line = next((s for s in lines if len(s) <= width), lines[-1])
    cv.put(D + 1, 0, fit(line, width))
    return cv.to_text(colour)


class OutageStrip(DrawingWidget):
    """The outage strip of the latest assessment, at the widget's size.

    ``show(start, hours, step_s, down)`` with the window and
    ``Assessment.down``; ``show_run(run)`` with a ``pipeline.SiteRun``."""

    PLACEHOLDER = "Drop-outs: no assessment yet"

    def show(self, start, hours, step_s, down) -> None:
        self._set_data((start, float(hours), float(step_s), np.asarray(down, dtype=bool)))

    def show_run(self, run) -> None:
        w = run.window
        self.show(w.start, w.hours, w.step_s, run.assessment.down)

    def preferred_height(self, width: int) -> int:
        if self._data is None:
            return 3
        start, hours, step_s, _down = self._data
        if start.tzinfo is None:
            start = start.replace(tzinfo=timezone.utc)
        start = start.astimezone(timezone.utc)
        start_s = start.hour * 3600 + start.minute * 60 + start.second
        days = max(1, math.ceil((start_s + hours * 3600.0) / 86400.0 - 1e-9))
        return min(days, 14) + 2

    def _draw(self, width, height, colour):
        start, hours, step_s, down = self._data
        return outage_strip(start, hours, step_s, down, width, height, colour=colour)
