"""The route map of a vehicle or vessel: its track (longitude across, latitude
up, equirectangular at the route's mid-latitude so distances read true) drawn
sample by sample, coloured by link state (up: blue; down: vermillion, thicker,
so it reads in black-and-white print too), each outage ringed, start and end
marked (README, "Moving installs: figures").  Layers: header, frame and
graticule, track, outages, ends, legend, caption."""

from __future__ import annotations

import math

import numpy as np
from PIL import Image

from ..geometry import nice_ceil
from ..palette import BLACK, BLUE, DOWN_BAR, PLAN_GRID, RIM, TEXT, TEXT_SOFT, WHITE
from .canvas import SS, Sheet, caption, check_size, fmt_num, font, header, text
from .legend import legend_flow, sw_box, sw_line


def route_map(*, latitude_deg, longitude_deg, down, title: str, subtitle: str, notes=(),
              size=(1400, 1100)) -> Image.Image:
    """The track of per-sample positions with ``down`` (bool per sample)."""
    w, h = check_size(size, 400, 300)
    sheet = Sheet((w, h), w / 1000.0)
    U, d = sheet.u, sheet.draw
    m = 40 * U
    header(d, m, m, sheet.width - 2 * m, title, subtitle, U)
    lat = np.asarray(latitude_deg, dtype=np.float64)
    lon = np.unwrap(np.asarray(longitude_deg, dtype=np.float64), period=360.0)
    down = np.asarray(down, dtype=bool)
    k = math.cos(math.radians(float(np.mean(lat)))) if lat.size else 1.0
    x_km, y_km = (lon - lon.mean()) * 111.195 * k, (lat - lat.mean()) * 111.195
    box = (m + 60 * U, 110 * U, sheet.width - m, sheet.img.size[1] - 170 * U)
    bw, bh = box[2] - box[0], box[3] - box[1]
    span = max(float(np.ptp(x_km)) / bw, float(np.ptp(y_km)) / bh, 1e-6) * 1.1  # km per pixel
    cx, cy = (box[0] + box[2]) / 2, (box[1] + box[3]) / 2
    xs = cx + (x_km - (x_km.max() + x_km.min()) / 2) / span
    ys = cy - (y_km - (y_km.max() + y_km.min()) / 2) / span
    d.rectangle(box, outline=RIM, width=max(1, int(U)))
    # Graticule in degrees at nice steps, labelled.
    f_small = font(14 * U)
    for axis, values, lo, to_px in (("lon", lon, float(lon.min()), None), ("lat", lat, float(lat.min()), None)):
        del to_px
        step = nice_ceil(max(float(np.ptp(values)), 1e-4) / 4)
        v = math.floor(lo / step) * step
        while v <= values.max() + step:
            if axis == "lon":
                x = cx + ((v - lon.mean()) * 111.195 * k - (x_km.max() + x_km.min()) / 2) / span
                if box[0] <= x <= box[2]:
                    d.line((x, box[1], x, box[3]), fill=PLAN_GRID, width=max(1, int(U)))
                    text(d, (x, box[3] + 8 * U), fmt_num(round(((v + 180) % 360) - 180, 6)) + "°", f_small,
                         TEXT_SOFT, anchor="ma")
            else:
                y = cy - ((v - lat.mean()) * 111.195 - (y_km.max() + y_km.min()) / 2) / span
                if box[1] <= y <= box[3]:
                    d.line((box[0], y, box[2], y), fill=PLAN_GRID, width=max(1, int(U)))
                    text(d, (box[0] - 8 * U, y), fmt_num(round(v, 6)) + "°", f_small, TEXT_SOFT, anchor="rm")
            v += step
    # Track: up in blue, down in vermillion, drawn as runs.
    if xs.size > 1:
        state_change = np.flatnonzero(np.diff(down.astype(np.int8))) + 1
        bounds = np.concatenate([[0], state_change, [xs.size]])
        for a, b in zip(bounds[:-1], bounds[1:]):
            seg = slice(a, min(b + 1, xs.size))
            colour, wd = (DOWN_BAR, 7.0) if down[a] else (BLUE, 3.0)
            pts = list(zip(xs[seg].tolist(), ys[seg].tolist()))
            if len(pts) == 1:
                pts = pts * 2
            d.line(pts, fill=colour, width=max(1, int(wd * U)), joint="curve")
    # Outages ringed, ends marked.
    r = 10 * U
    starts = np.flatnonzero(down & ~np.concatenate([[False], down[:-1]]))
    for i in starts:
        d.ellipse((xs[i] - r, ys[i] - r, xs[i] + r, ys[i] + r), outline=BLACK, width=max(1, int(2 * U)))
    f_lab = font(16 * U)
    for i, name in ((0, "start"), (xs.size - 1, "end")):
        if xs.size:
            d.rectangle((xs[i] - 7 * U, ys[i] - 7 * U, xs[i] + 7 * U, ys[i] + 7 * U), fill=WHITE, outline=BLACK,
                        width=max(1, int(2 * U)))
            text(d, (xs[i] + 12 * U, ys[i] - 12 * U), name, f_lab, TEXT, anchor="lb", halo=int(3 * U))
    # Scale bar.
    bar_km = nice_ceil(span * bw / 5)
    bx, by = box[0] + 20 * U, box[3] - 24 * U
    d.line((bx, by, bx + bar_km / span, by), fill=BLACK, width=max(1, int(3 * U)))
    text(d, (bx, by - 6 * U), f"{fmt_num(bar_km)} km", f_small, TEXT, anchor="lb", halo=int(2 * U))
    items = [(sw_line(BLUE, 3.0), "Link up"), (sw_line(DOWN_BAR, 7.0), "Link down"),
             (sw_box(WHITE, BLACK), "Start and end")]
    foot = sheet.img.size[1]
    legend_flow(d, items, m, foot - 120 * U, sheet.width - m, font(16 * U), U, sw_w=40.0)
    n_out = int(starts.size)
    caption(d, m, [foot - 88 * U + i * 24 * U for i in range(len(notes) + 1)],
            [f"{n_out} outage{'s' if n_out != 1 else ''} ringed where each began; longitude across, latitude up, "
             "to scale at the route's mean latitude."] + list(notes), font(16 * U), sheet.width - 2 * m)
    return sheet.img.resize((w, h), Image.Resampling.LANCZOS) if SS != 1 else sheet.img
