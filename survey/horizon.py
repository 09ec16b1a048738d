"""Horizon profile: measured obstruction points and the continuous mask between them.

The mask is piecewise-linear in azimuth between measured points, wrapping through
360 degrees; with no points the sky is clear (mask 0 everywhere).  Azimuths here
are degrees clockwise from *true* north; compass bearings are turned into true
bearings by :func:`HorizonProfile.to_true` with the WMM declination.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from .errors import InputError, Problems
from .fileio import read_text
from .tables import csv_header, is_number


@dataclass(frozen=True)
class HorizonPoint:
    """One measured obstruction top: bearing and elevation in degrees, optional
    distance in metres (used by spot search) and a free-text label."""

    azimuth_deg: float
    elevation_deg: float
    distance_m: float | None = None
    label: str = ""


@dataclass(frozen=True)
class HorizonProfile:
    """Measured points as typed, with the bearing reference they were taken in."""

    points: tuple[HorizonPoint, ...] = ()
    reference: str = "true"  # "true" | "magnetic"

    def to_true(self, declination_deg: float) -> HorizonProfile:
        """Bearings referred to true north.  A compass bearing plus the (east
        positive) declination is the true bearing; true bearings pass unchanged."""
        if self.reference == "true":
            return self
        pts = tuple(
            replace(p, azimuth_deg=(p.azimuth_deg + declination_deg) % 360.0) for p in self.points
        )
        return HorizonProfile(pts, "true")

    def mask(self) -> HorizonMask:
        if self.reference != "true":
            raise ValueError("convert compass bearings with to_true() before building a mask")
        return HorizonMask.from_points(self.points)


class HorizonMask:
    """Obstruction elevation as a function of true azimuth (degrees).

    Stored as knots sorted by azimuth; evaluation is linear interpolation with
    wrap-around, vectorised over numpy arrays.
    """

    def __init__(self, az_deg: np.ndarray, el_deg: np.ndarray, labels: tuple[str, ...] = ()):
        order = np.argsort(az_deg, kind="stable")
        self.az_deg = np.asarray(az_deg, dtype=np.float64)[order]
        self.el_deg = np.asarray(el_deg, dtype=np.float64)[order]
        self.labels = tuple(labels[i] for i in order) if labels else ("",) * len(order)

    @classmethod
    def from_points(cls, points) -> HorizonMask:
        az = np.array([p.azimuth_deg % 360.0 for p in points], dtype=np.float64)
        el = np.array([min(max(p.elevation_deg, 0.0), 90.0) for p in points], dtype=np.float64)
        return cls(az, el, tuple(p.label for p in points))

    @classmethod
    def clear(cls) -> HorizonMask:
        return cls(np.zeros(0), np.zeros(0))

    @property
    def is_clear(self) -> bool:
        return self.az_deg.size == 0 or not np.any(self.el_deg > 0)

    def _knots(self) -> tuple[np.ndarray, np.ndarray]:
        """Knots extended by one period either side so np.interp wraps through 360."""
        az, el = self.az_deg, self.el_deg
        return np.concatenate([az - 360.0, az, az + 360.0]), np.concatenate([el, el, el])

    def elevation_at(self, azimuth_deg) -> np.ndarray:
        """Mask elevation (degrees) at the given true azimuths (degrees)."""
        a = np.asarray(azimuth_deg, dtype=np.float64) % 360.0
        if self.az_deg.size == 0:
            return np.zeros_like(a)
        if self.az_deg.size == 1:
            return np.full_like(a, self.el_deg[0])
        xp, fp = self._knots()
        return np.interp(a, xp, fp)

    def with_sector_cleared(self, start_deg: float, end_deg: float) -> HorizonMask:
        """This mask with its knots in the sector [start, end) (clockwise, see
        :func:`in_sector`; (0, 360) is all round) set to 0: what the site would
        see if that obstruction were gone.  For a sector from :meth:`sectors_above`,
        the knots just outside it are at or below the threshold, so no azimuth
        inside the sector stays above the threshold."""
        inside = in_sector(self.az_deg, start_deg, end_deg)
        return HorizonMask(self.az_deg.copy(), np.where(inside, 0.0, self.el_deg), self.labels)

    def sectors_above(self, threshold_deg: float) -> list[tuple[float, float]]:
        """Maximal azimuth intervals (start, end), degrees, where the mask is above
        ``threshold_deg``; each has positive width, none overlap.  An interval may
        wrap through north (start > end); (0, 360) means all round.  Computed
        exactly from the knots and the linear crossings.

        The walk starts at a knot at or below the threshold, so no interval can
        straddle the walk's start and end: an interval through north is found in
        one piece wherever the first knot lies."""
        n = self.az_deg.size
        above = self.el_deg > threshold_deg
        if n == 0 or not above.any():
            return []
        if above.all():
            return [(0.0, 360.0)]
        j = int(np.flatnonzero(~above)[0])
        idx = np.concatenate([np.arange(j, n), np.arange(0, j + 1)])
        az = self.az_deg[idx] + np.where(np.arange(n + 1) >= n - j, 360.0, 0.0)
        el = self.el_deg[idx]
        runs: list[tuple[float, float]] = []
        start = None
        for i in range(n):
            a0, a1, e0, e1 = az[i], az[i + 1], el[i], el[i + 1]
            if (e0 > threshold_deg) == (e1 > threshold_deg):
                continue
            cross = a0 + (threshold_deg - e0) / (e1 - e0) * (a1 - a0)
            if e1 > threshold_deg:
                start = cross
            else:
                if cross > start:  # a spike of zero width covers no azimuth
                    runs.append((start, cross))
                start = None
        if len(runs) == 1 and runs[0][1] - runs[0][0] >= 360.0:
            return [(0.0, 360.0)]  # above everywhere but at one touching knot
        return [(float(a % 360.0), float(b % 360.0)) for a, b in runs]


def in_sector(azimuth_deg: np.ndarray, start_deg: float, end_deg: float) -> np.ndarray:
    """True where azimuths lie in [start, end), going clockwise, wrapping through
    north when start > end.  A width of a whole turn (end = start + 360, such as
    (0, 360)) is all round; start == end is empty."""
    a = np.asarray(azimuth_deg) % 360.0
    if end_deg - start_deg >= 360.0:
        return np.ones(a.shape, dtype=bool)
    width = (end_deg - start_deg) % 360.0
    return ((a - start_deg) % 360.0) < width


def parse_point(raw, where: str, problems: Problems) -> HorizonPoint | None:
    """A point as typed in site.toml: [azimuth_deg, elevation_deg, (distance_m), (label)]."""
    if not isinstance(raw, (list, tuple)) or len(raw) < 2 or len(raw) > 4:
        problems.add(where, "expected [azimuth_deg, elevation_deg, (distance_m), (label)]")
        return None
    az, el = raw[0], raw[1]
    dist = raw[2] if len(raw) >= 3 else None
    label = raw[3] if len(raw) == 4 else ""
    if len(raw) == 3 and isinstance(dist, str):  # [az, el, "label"] reads naturally too
        dist, label = None, raw[2]
    return _check_point(az, el, dist, label, where, problems)


def _check_point(az, el, dist, label, where, problems: Problems) -> HorizonPoint | None:
    ok = True
    if not is_number(az):
        problems.add(where, f"azimuth must be a number of degrees, got {az!r}")
        ok = False
    elif not -360.0 <= az < 720.0:  # a bearing is taken modulo 360 only within one turn either side
        problems.add(where, f"azimuth {az:g} is outside -360 to 720 degrees")
        ok = False
    if not is_number(el):
        problems.add(where, f"elevation must be a number of degrees, got {el!r}")
        ok = False
    elif not 0.0 <= el <= 90.0:
        problems.add(where, f"elevation {el} is outside 0 to 90 degrees")
        ok = False
    if dist is not None and (not is_number(dist) or dist <= 0):
        problems.add(where, f"distance must be a positive number of metres, got {dist!r}")
        ok = False
    if not isinstance(label, str):
        problems.add(where, f"label must be text, got {label!r}")
        ok = False
    if not ok:
        return None
    return HorizonPoint(float(az) % 360.0, float(el), None if dist is None else float(dist), label)


def _without_comment(line: str) -> str:
    """``line`` up to a ``#`` that stands outside double quotes (so a quoted
    label such as "oak #2" keeps its mark)."""
    quoted = False
    for i, ch in enumerate(line):
        if ch == '"':
            quoted = not quoted
        elif ch == "#" and not quoted:
            return line[:i]
    return line


MAX_HORIZON_POINTS = 20_000  # README, "Limits": a reading every 0.02 degrees; the mask works per point


def too_many_points() -> str:
    return (f"more than the limit of {MAX_HORIZON_POINTS:,} horizon points: keep one reading every "
            "degree or so (the profile is interpolated between readings)")


def read_horizon_csv(path: str | Path) -> tuple[HorizonPoint, ...]:
    """Read a horizon CSV: header ``azimuth_deg,elevation_deg`` with optional
    ``distance_m`` and ``label`` columns; ``#`` outside quotes starts a comment."""
    path = Path(path)
    text = read_text(path, "horizon CSV")
    problems = Problems(str(path))
    lines = []
    for n, line in enumerate(text.splitlines(), start=1):
        body = _without_comment(line).strip()
        if body:
            lines.append((n, body))
    if not lines:
        raise InputError(f"{path}: empty: expected a header azimuth_deg,elevation_deg")
    if len(lines) - 1 > MAX_HORIZON_POINTS:
        raise InputError(f"{path}: {len(lines) - 1:,} rows, {too_many_points()}")
    cols = csv_header(str(path), *lines[0], ("azimuth_deg", "distance_m", "elevation_deg", "label"),
                      ("azimuth_deg", "elevation_deg"))
    points = []
    for n, body in lines[1:]:
        if "\x00" in body:
            problems.add(f"line {n}", "holds a NUL character (not a text CSV line)")
            continue
        if body.count('"') % 2:
            problems.add(f"line {n}", "a quote is opened and not closed")
            continue
        try:
            row = next(csv.reader(io.StringIO(body)))
        except csv.Error as exc:  # e.g. a field over the csv module's size limit
            problems.add(f"line {n}", f"not a CSV row: {exc}")
            continue
        where = f"line {n}"
        if len(row) != len(cols):
            problems.add(where, f"expected {len(cols)} values ({','.join(cols)}), got {len(row)}")
            continue
        rec = dict(zip(cols, (v.strip() for v in row)))
        vals = {}
        for key in ("azimuth_deg", "elevation_deg", "distance_m"):
            v = rec.get(key, "")
            if key == "distance_m" and v == "":
                vals[key] = None
                continue
            try:
                vals[key] = float(v)
            except ValueError:
                vals[key] = v  # reported as not-a-number below
        p = _check_point(vals["azimuth_deg"], vals["elevation_deg"], vals["distance_m"],
                         rec.get("label", ""), where, problems)
        if p is not None:
            points.append(p)
    problems.raise_if_any()
    return tuple(points)

