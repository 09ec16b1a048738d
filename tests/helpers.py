"""What several test modules share: the paths and the small site file they
build on, the scheduling rule written out as a plain loop, and the table of bad
site-file values.  Fixtures stay in conftest.py."""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_sites"
START = datetime(2026, 6, 1, tzinfo=timezone.utc)

MINIMAL_SITE = """\
[site]
name = "Test yard"
latitude = 45.0
longitude = -73.0
elevation_m = 100.0

[mount]
kind = "fixed"
height_m = 5.0

[terminal]
min_elevation_deg = 25.0
"""


def reassignment_instant(k, step_s, reassign_s):
    """README, "What the figures mean": a reassignment falls on the first sample at
    or after each multiple of reassign_s from the window start."""
    return k == 0 or np.floor(k * step_s / reassign_s + 1e-9) != np.floor((k - 1) * step_s / reassign_s + 1e-9)


def plain_loop_down(reference, count, step_s, reassign_s, is_blocked):
    """The scheduling rule as the README words it, one sample time at a time, over
    the skyfield positions of the ``reference`` fixture (not the code's tracks):

    - at each reassignment instant the highest usable satellite is assigned (none:
      the link is down until one is usable);
    - when the assigned satellite leaves usable sky, it is replaced at that sample
      by the highest usable satellite: that is a new assignment;
    - when the assigned satellite is blocked, the link is down until the next
      assignment."""
    sat, k_of, az, el = reference
    usable = {}  # time -> {satellite: (az, el)}
    for i in range(sat.size):
        usable.setdefault(int(k_of[i]), {})[int(sat[i])] = (az[i], el[i])
    down = np.zeros(count, bool)
    assigned, latched = None, False
    for k in range(count):
        here = usable.get(k, {})
        if reassignment_instant(k, step_s, reassign_s) or assigned not in here:
            assigned = max(here, key=lambda s: here[s][1]) if here else None
            latched = False
        if assigned is None:
            down[k] = True
            continue
        latched = latched or is_blocked(*here[assigned])
        down[k] = latched
    return down


BAD_CASES = [
    # (description, replacement in MINIMAL_SITE or extra text, expected fragments)
    ("latitude out of range", ("latitude = 45.0", "latitude = 95.0"), ["site.latitude", "outside -90.0 to 90.0"]),
    ("longitude out of range", ("longitude = -73.0", "longitude = -190"), ["site.longitude", "outside"]),
    ("latitude wrong type", ("latitude = 45.0", 'latitude = "45 N"'), ["site.latitude", "expected a number"]),
    ("unknown mount kind", ('kind = "fixed"', 'kind = "tripod"'), ["mount.kind", "'tripod' is not one of: fixed, vehicle, marine"]),
    ("negative height", ("height_m = 5.0", "height_m = -2.0"), ["mount.height_m", "outside"]),
    ("min elevation above 90", ("min_elevation_deg = 25.0", "min_elevation_deg = 95.0"),
     ["terminal.min_elevation_deg", "outside 0.0 to 90.0"]),
    ("min elevation negative", ("min_elevation_deg = 25.0", "min_elevation_deg = -5"), ["terminal.min_elevation_deg"]),
    ("missing latitude", ("latitude = 45.0\n", ""), ["site.latitude", "missing"]),
    ("unknown key", ("elevation_m = 100.0", "elevation_m = 100.0\naltitude = 3"), ["site.altitude", "unknown key"]),
    ("boolean is not a number", ("height_m = 5.0", "height_m = true"), ["mount.height_m", "expected a number"]),
]


HORIZON_CASES = [
    ('reference = "grid"\npoints = []', ["horizon.reference", "'grid' is not one of: true, magnetic"]),
    ("points = [[10]]", ["horizon.points[0]", "expected [azimuth_deg, elevation_deg"]),
    ("points = [[10, 95]]", ["horizon.points[0]", "elevation 95 is outside 0 to 90"]),
    ('points = [[10, "high"]]', ["horizon.points[0]", "elevation must be a number"]),
    ("points = [[10, 20, -4.0]]", ["horizon.points[0]", "distance must be a positive number"]),
    ("points = 5", ["horizon.points", "expected a list"]),
]
