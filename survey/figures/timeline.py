"""The outage timeline: when in the (UTC) day the link drops over the window,
one row a day (one zoomed-in row for a short window), with the down minutes
per hour of day summed below and the drop-outs counted in the caption."""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone
from typing import NamedTuple

import numpy as np
from PIL import Image

from ..geometry import nice_ceil
from ..palette import DOWN_BAR, LINK_UP, LINK_UP_GRID, OUTSIDE_EDGE, RIM, RULE, TEXT, TEXT_SOFT, WHITE
from ..words import duration
from .canvas import SS, Sheet, check_size, fit, fmt_num, font, header, text
from .legend import legend_flow, sw_box


class TimelineFrame(NamedTuple):
    """Where the outage rows sit in the final image, in pixels, and what the
    time axis spans.

    left, width: the time axis, from ``axis_start_s`` to ``axis_start_s +
    axis_span_s`` (seconds after 00:00 UTC of ``day0``, the first row's day).
    Row r (r = 0 .. rows-1) is UTC day ``day0 + r`` (one row only for a short
    window, whose axis is zoomed in); its bar runs from ``row_top(r)`` for
    ``row_height`` pixels, rows ``row_pitch`` apart from ``rows_top``.
    ``tick_s`` is the tick and summary-bin interval (3600 s for whole days).
    """

    left: float
    width: float
    rows_top: float
    row_pitch: float
    row_height: float
    rows: int
    axis_start_s: float
    axis_span_s: float
    tick_s: float
    day0: datetime

    def row_top(self, r: int) -> float:
        return self.rows_top + r * self.row_pitch + (self.row_pitch - self.row_height) / 2.0

    def x(self, seconds_of_day):
        """Pixel x of a time given in seconds after 00:00 UTC of its row's day."""
        s = np.asarray(seconds_of_day, dtype=np.float64)
        return self.left + (s - self.axis_start_s) / self.axis_span_s * self.width


_ZOOM_MAX_S = 6 * 3600.0  # windows up to this long get one zoomed-in row
_WIDTH = 2400
_FIXED_U = 256.0  # header + axis + summary + legend, in layout units
_PITCH_U = 40.0


class _Geometry(NamedTuple):
    n: int
    day0: datetime
    start_s: float  # window start, seconds after day0 00:00 UTC
    span_s: float
    rows: int
    axis_start_s: float
    axis_span_s: float
    tick_s: float
    zoom: bool


def _geometry(start: datetime, hours: float, step_s: float) -> _Geometry:
    if not step_s > 0 or not hours > 0:
        raise ValueError("hours and step_s must be positive")
    n = int(math.floor(hours * 3600.0 / step_s + 1e-9))  # as WindowSpec.count
    if start.tzinfo is None:
        start = start.replace(tzinfo=timezone.utc)
    start = start.astimezone(timezone.utc)
    day0 = start.replace(hour=0, minute=0, second=0, microsecond=0)
    start_s = (start - day0).total_seconds()
    span_s = max(n, 1) * float(step_s)
    end_s = start_s + span_s
    if span_s <= _ZOOM_MAX_S:
        tick = next(t for t in (60, 120, 300, 600, 900, 1800, 3600) if span_s / t <= 12)
        a = math.floor(start_s / tick + 1e-9) * tick
        b = math.ceil(end_s / tick - 1e-9) * tick
        return _Geometry(n, day0, start_s, span_s, 1, a, max(b - a, tick), tick, True)
    rows = int(math.ceil(end_s / 86400.0 - 1e-9))
    return _Geometry(n, day0, start_s, span_s, rows, 0.0, 86400.0, 3600.0, False)


def _default_size(rows: int) -> tuple[int, int]:
    """2400 x 700 px for one row, 96 px more a day, at most 2400 px tall."""
    u = _WIDTH / 1000.0
    return _WIDTH, min(700 + int(round(u * _PITCH_U * (rows - 1))), 2400)


def _unit(w: int, h: int) -> float:
    return min(w / 1000.0, h / (_FIXED_U + 16.0))


def _frame(geo: _Geometry, w: int, h: int) -> TimelineFrame:
    u = _unit(w, h)
    left, right = 120 * u, w - 30 * u
    rows_top = 80 * u
    area = h - _FIXED_U * u
    pitch = min(area / geo.rows, 60 * u)
    # Gaps between rows while they are tall enough to afford them.
    row_h = pitch * (0.72 if pitch >= 12 * u else 0.9)
    return TimelineFrame(left, right - left, rows_top, pitch, row_h, geo.rows,
                         geo.axis_start_s, geo.axis_span_s, geo.tick_s, geo.day0)


def outage_timeline_frame(start: datetime, hours: float, step_s: float,
                          size=None) -> TimelineFrame:
    """Pixel frame of :func:`outage_timeline` for this window at ``size``
    (None: the default size for the window)."""
    geo = _geometry(start, hours, step_s)
    w, h = check_size(size or _default_size(geo.rows), 400, 200)
    return _frame(geo, w, h)


class _Outages(NamedTuple):
    """The drop-outs of a window: runs of down samples [run_a, run_b), total
    and longest down time (s), and down minutes per summary bin."""

    run_a: np.ndarray
    run_b: np.ndarray
    total_s: float
    longest_s: float
    bins_min: np.ndarray

    @property
    def count(self) -> int:
        return int(self.run_a.size)


def _outages(geo: _Geometry, down: np.ndarray, step_s: float) -> _Outages:
    d = np.diff(np.concatenate([[0], down.astype(np.int8), [0]]))
    run_a, run_b = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    longest_s = float((run_b - run_a).max()) * step_s if run_a.size else 0.0
    # Down seconds in any interval, exact: the cumulative down time is linear
    # within each sample step, so interpolate it between step boundaries.
    tb = geo.start_s + np.arange(geo.n + 1) * step_s
    cum = np.concatenate([[0.0], np.cumsum(down) * step_s])

    def down_between(edges):
        return np.diff(np.interp(edges, tb, cum))

    if geo.zoom:
        nb = int(round(geo.axis_span_s / geo.tick_s))
        bins_s = down_between(geo.axis_start_s + np.arange(nb + 1) * geo.tick_s)
    else:
        per = down_between(np.arange(geo.rows * 24 + 1) * 3600.0)
        bins_s = per.reshape(geo.rows, 24).sum(axis=0)
    return _Outages(run_a, run_b, float(down.sum()) * step_s, longest_s, bins_s / 60.0)


class _Axis(NamedTuple):
    """The time axis and rows in supersampled pixels."""

    geo: _Geometry
    fr: TimelineFrame
    left: float
    width: float

    @property
    def right(self) -> float:
        return self.left + self.width

    @property
    def rows_bottom(self) -> float:
        return (self.fr.rows_top + self.fr.rows * self.fr.row_pitch) * SS

    def xs(self, sec_of_axis):
        """Seconds after day0 00:00 of the row -> px."""
        return self.left + (sec_of_axis - self.geo.axis_start_s) / self.geo.axis_span_s * self.width

    def row_y(self, r: int) -> tuple[float, float]:
        y0 = self.fr.row_top(r) * SS
        return y0, y0 + self.fr.row_height * SS

    def ticks(self) -> np.ndarray:
        g = self.geo
        return np.arange(g.axis_start_s, g.axis_start_s + g.axis_span_s + 1e-6, g.tick_s)


def outage_timeline(*, start: datetime, hours: float, step_s: float, down, title="",
                    subtitle="", size=None) -> Image.Image:
    """When in the day the link drops, over the window.

    Parameters:
      start: window start (UTC; a naive datetime is taken as UTC); hours,
        step_s: window length (h) and sample step (s), as ``WindowSpec``.
      down: bool per sample time k (time ``start + k * step_s``, standing for
        the step that follows), True when the link is down under the scheduling
        model (``Assessment.down``); length floor(hours * 3600 / step_s).
      title, subtitle: header lines.
      size: (width_px, height_px); None gives 2400 px wide and a height that
        grows with the number of days (700 px for one day, at most 2400 px).

    Layout: one row per UTC day, hour of day 00..24 UTC along x (a window of
    at most 6 h gets a single row with the axis zoomed to the window); the
    link-up part of the window is light blue, time outside the window is
    white, down time is a dark vermillion bar (drawn at least 1/1000 of the
    width, so a 15 s drop-out is still visible; the caption says when it
    widened any).  Below: down minutes per hour of day summed over all days
    (per tick interval when zoomed).  Caption: number of drop-outs (runs of
    down samples), total down time, longest.  Returns an RGB ``PIL.Image``;
    :func:`outage_timeline_frame` gives the geometry.
    """
    geo = _geometry(start, hours, step_s)
    down = np.asarray(down, dtype=bool).ravel()
    if down.size != geo.n:
        raise ValueError(f"down has {down.size} samples; the window holds {geo.n}")
    W, H = check_size(size or _default_size(geo.rows), 400, 200)
    fr = _frame(geo, W, H)
    step_s = float(step_s)
    out = _outages(geo, down, step_s)

    sheet = Sheet((W, H), _unit(W, H))
    ax = _Axis(geo, fr, fr.left * SS, fr.width * SS)
    _rows_layer(sheet, ax)
    min_w = 1.0 * sheet.u
    widened = _down_layer(sheet, ax, out, step_s, min_w)
    _row_labels(sheet, ax)
    _time_axis(sheet, ax)
    _hour_chart(sheet, ax, out)
    U = sheet.u
    m = 20 * U
    header(sheet.draw, m, 12 * U, sheet.width - 2 * m, title, subtitle, U)
    leg_y = ax.rows_bottom + 128 * U
    items = [
        (sw_box(LINK_UP, OUTSIDE_EDGE), "Link up"),
        (sw_box(DOWN_BAR), "Link down (drop-out)"),
        (sw_box(WHITE, OUTSIDE_EDGE), "Outside the window"),
    ]
    legend_flow(sheet.draw, items, m, leg_y, sheet.width - m, font(16 * U), U, sw_w=40.0)
    cap = _caption(geo, out, min_w / ax.width * geo.axis_span_s if widened else None)
    f_small = font(15 * U)
    text(sheet.draw, (m, leg_y + 20 * U), fit(sheet.draw, cap, f_small, sheet.width - 2 * m), f_small, TEXT)
    return sheet.finish()


# ---------------------------------------------------------------------------
# Layers (supersampled pixels)
# ---------------------------------------------------------------------------
def _rows_layer(sheet: Sheet, ax: _Axis) -> None:
    """Each day's row: white outside the window, link-up blue inside, with the
    tick lines."""
    draw, geo = sheet.draw, ax.geo
    lw = sheet.px(1.2)
    w_start, w_end = geo.start_s, geo.start_s + geo.span_s
    ticks = ax.ticks()
    for r in range(geo.rows):
        y0, y1 = ax.row_y(r)
        off = 0.0 if geo.zoom else r * 86400.0
        a = max(w_start - off, geo.axis_start_s)
        b = min(w_end - off, geo.axis_start_s + geo.axis_span_s)
        draw.rectangle((ax.left, y0, ax.right, y1), fill=WHITE, outline=OUTSIDE_EDGE, width=lw)
        if b > a:
            draw.rectangle((ax.xs(a), y0, ax.xs(b), y1), fill=LINK_UP)
        for t in ticks[1:-1]:
            draw.line((ax.xs(t), y0, ax.xs(t), y1), fill=LINK_UP_GRID if a <= t <= b else RULE, width=lw)


def _down_layer(sheet: Sheet, ax: _Axis, out: _Outages, step_s: float, min_w: float) -> bool:
    """The down bars, split at UTC midnight into their rows, at least
    ``min_w`` px wide; whether any was widened."""
    geo = ax.geo
    widened = False
    for ka, kb in zip(out.run_a.tolist(), out.run_b.tolist()):
        ta, tb_ = geo.start_s + ka * step_s, geo.start_s + kb * step_s
        if geo.zoom:
            pieces = [(0, ta, tb_)]
        else:
            pieces = []
            r = int(ta // 86400)
            while r * 86400.0 < tb_ and r < geo.rows:
                pieces.append((r, max(ta, r * 86400.0) - r * 86400.0,
                               min(tb_, (r + 1) * 86400.0) - r * 86400.0))
                r += 1
        for r, a, b in pieces:
            y0, y1 = ax.row_y(r)
            x0, x1 = ax.xs(a), ax.xs(b)
            if x1 - x0 < min_w:
                c = (x0 + x1) / 2.0
                x0, x1 = c - min_w / 2.0, c + min_w / 2.0
                widened = True
            sheet.draw.rectangle((x0, y0, x1, y1), fill=DOWN_BAR)
    return widened


def _row_labels(sheet: Sheet, ax: _Axis) -> None:
    """The day of every k-th row, so the labels never crowd."""
    U, geo = sheet.u, ax.geo
    f_row = font(16 * U)
    k_lab = max(1, int(math.ceil(20 * U / (ax.fr.row_pitch * SS))))
    w_end = geo.start_s + geo.span_s
    for r in range(0, geo.rows, k_lab):
        y0, y1 = ax.row_y(r)
        day = geo.day0 + timedelta(days=r)
        lab = f"{day:%Y-%m-%d}"
        if geo.zoom and w_end > 86400.0:  # a short window across midnight
            lab += f"/{day + timedelta(days=1):%d}"
        text(sheet.draw, (ax.left - 12 * U, (y0 + y1) / 2), lab, f_row, TEXT, anchor="rm")


def _time_axis(sheet: Sheet, ax: _Axis) -> None:
    """Tick marks and hour (or hh:mm when zoomed) labels under the rows."""
    draw, U, geo = sheet.draw, sheet.u, ax.geo
    f_tick = font(16 * U)
    rows_bottom = ax.rows_bottom
    y_tick = rows_bottom + 6 * U

    def tick_label(t):
        t = t % 86400.0
        if not geo.zoom:
            return f"{int(round(t / 3600)):02d}"
        return f"{int(t // 3600):02d}:{int(t % 3600 // 60):02d}"

    ticks = ax.ticks()
    lab_w = draw.textlength("00:00" if geo.zoom else "00", font=f_tick) + 10 * U
    every = max(1, int(math.ceil(lab_w / (ax.width / (len(ticks) - 1)))))
    for i, t in enumerate(ticks):
        x = ax.xs(t)
        draw.line((x, rows_bottom - 2 * U, x, rows_bottom + 3 * U), fill=RIM, width=sheet.px(1.2))
        if i % every == 0:
            s_lab = "24" if (not geo.zoom and i == len(ticks) - 1) else tick_label(t)
            text(draw, (x, y_tick), s_lab, f_tick, TEXT_SOFT, anchor="mt")
    text(draw, (ax.left - 30 * U, y_tick), "UTC", f_tick, TEXT_SOFT, anchor="rt")


def _fmt_minutes(m: float) -> str:
    return f"{m:.1f}" if m < 9.95 else f"{m:.0f}"


def _hour_chart(sheet: Sheet, ax: _Axis, out: _Outages) -> None:
    """Down minutes per hour of day (per tick when zoomed) on the same time
    axis, each bar with its value; with no drop-outs, say so on the rows."""
    draw, U, geo = sheet.draw, sheet.u, ax.geo
    L, R = ax.left, ax.right
    lw = sheet.px(1.2)
    f_small = font(15 * U)
    rows_bottom = ax.rows_bottom
    c_top, c_bot = rows_bottom + 58 * U, rows_bottom + 108 * U
    if geo.zoom:
        what = f"Down minutes per {fmt_num(geo.tick_s / 60.0)} min"  # a bin: whole minutes, as the scale
    else:
        what = "Down minutes per hour of day" + (f", summed over the {geo.rows} days" if geo.rows > 1 else "")
    text(draw, (L, rows_bottom + 40 * U), what, f_small, TEXT, anchor="lm")
    bins_min = out.bins_min
    # Head room above the tallest bar for its value label.
    top_val = nice_ceil(max(1.2 * float(bins_min.max()), 0.5)) if bins_min.size else 1.0
    draw.line((L, c_top, R, c_top), fill=RULE, width=lw)
    text(draw, (L - 8 * U, c_top), f"{fmt_num(top_val)} min", f_small, TEXT_SOFT, anchor="rm")
    text(draw, (L - 8 * U, c_bot), "0", f_small, TEXT_SOFT, anchor="rm")
    bin_px = ax.width / max(bins_min.size, 1)
    f_val = font(13 * U)
    for i, v in enumerate(bins_min.tolist()):
        if v <= 0:
            continue
        x0 = L + i * bin_px + 0.15 * bin_px
        x1 = L + (i + 1) * bin_px - 0.15 * bin_px
        y = c_bot - (c_bot - c_top) * v / top_val
        draw.rectangle((x0, min(y, c_bot - 1.5 * U), x1, c_bot), fill=DOWN_BAR)
        vt = f"{v * 60:.0f} s" if v < 1 else _fmt_minutes(v)
        if draw.textlength(vt, font=f_val) < bin_px - 2 * U:
            text(draw, ((x0 + x1) / 2, y - 3 * U), vt, f_val, TEXT, anchor="md", halo=sheet.px(2))
    draw.line((L, c_bot, R, c_bot), fill=RIM, width=sheet.px(1.6))
    if out.count:
        return
    fr = ax.fr
    # Sized to sit inside a single row.
    f_msg = font(min(18 * U, max(12 * U, (fr.row_height * SS - 14 * U) / 0.8)))
    msg = "No drop-outs in this window"
    cy = (fr.rows_top + fr.rows * fr.row_pitch / 2.0) * SS
    bb = draw.textbbox(((L + R) / 2, cy), msg, font=f_msg, anchor="mm")
    pad = 6 * U
    text(draw, ((L + R) / 2, (c_top + c_bot) / 2), "no down time in any hour" if not geo.zoom else "no down time",
         f_small, TEXT_SOFT, anchor="mm")
    draw.rounded_rectangle((bb[0] - pad, bb[1] - pad, bb[2] + pad, bb[3] + pad),
                           radius=5 * U, fill=WHITE, outline=RIM, width=lw)
    text(draw, ((L + R) / 2, cy), msg, f_msg, TEXT, anchor="mm")


def _caption(geo: _Geometry, out: _Outages, widened_below_s: float | None) -> str:
    """How many drop-outs, how long in all and at the longest, how often a day;
    ``widened_below_s``: the shortest drawn width, when a bar was widened."""
    days = geo.span_s / 86400.0
    length = f"{geo.span_s / 3600:g} h" if geo.span_s < 86400 * 2 else f"{days:g} days"
    n = out.count
    if not n:
        cap = f"No drop-outs: the link stays up for all {length} of the window"
    else:
        cap = (f"{n} drop-out{'s' if n != 1 else ''}, {duration(out.total_s)} down in {length}"
               f"; longest {duration(out.longest_s)}")
        if days >= 1.5:
            per_day = n / days
            cap += f"; {per_day:.1f} a day" if per_day < 10 else f"; {per_day:.0f} a day"
    cap += "."
    if widened_below_s is not None:
        cap += f" Drop-outs shorter than {duration(widened_below_s)} are drawn that wide so they show."
    return cap
