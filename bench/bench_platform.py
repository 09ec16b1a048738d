"""Benchmark: moving installs against a fixed-site assessment of the same window
(README, "Moving installs: benchmark").  One run; ratios, not timed assertions.

- fixed: ``run_site`` of the camper demo's place as a fixed mount (24 h at 15 s,
  the default shells);
- uniform headings: the camper van demo (all headings, a canyon, the 36-sector table);
- 24 h route: the sloop demo (a GPX passage at 5.5 knots, heel and a moderate sea,
  the sea-state table);
- a faster route: the same passage replayed at road speed (80 km/h), generated here;
- how exact the alternative is: the fixed tracks of the route's first point used for
  the whole route, against the tracks computed for the moving observer.
"""

from __future__ import annotations

import sys
import tempfile
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "bench"))

from timing import timed  # noqa: E402

from survey.pipeline import run_site  # noqa: E402
from survey.platform import read_route  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.tracks import Observer, compute_tracks  # noqa: E402


def road_speed_gpx(folder: Path) -> Path:
    """The sloop's passage replayed eastward at 80 km/h (a point a minute)."""
    start = read_route(ROOT / "demo_sites/tern-sloop/passage.gpx")
    t0 = start.times_s[0]
    rows, lat, lon = [], 46.1, -74.0
    for i in range(24 * 60 + 1):
        when = np.datetime64(int(t0 + 60 * i), "s").astype(str) + "Z"
        rows.append(f'<trkpt lat="{lat:.6f}" lon="{lon:.6f}"><time>{when}</time></trkpt>')
        lon += np.degrees(80_000 / 60 / (6_371_008.8 * np.cos(np.radians(lat))))
        lon = (lon + 180) % 360 - 180
    path = folder / "road.gpx"
    path.write_text('<?xml version="1.0"?><gpx version="1.1" creator="bench" xmlns="http://www.topografix.com/GPX/1/1">'
                    "<trk><trkseg>" + "".join(rows) + "</trkseg></trk></gpx>", encoding="utf-8")
    return path


def main() -> None:
    camper = load_site(ROOT / "demo_sites/wren-camper/site.toml")
    sloop = load_site(ROOT / "demo_sites/tern-sloop/site.toml")
    fixed_site = replace(camper, mount=replace(camper.mount, kind="fixed"), platform=None,
                         horizon=replace(camper.horizon, points=()))
    t_fixed, fixed = timed(lambda: run_site(fixed_site))
    t_uni, uni = timed(lambda: run_site(camper))
    t_route, route = timed(lambda: run_site(sloop))
    with tempfile.TemporaryDirectory() as tmp:
        road = replace(sloop, platform=replace(sloop.platform, route=read_route(road_speed_gpx(Path(tmp)))),
                       mount=replace(sloop.mount, kind="marine"))
        t_road, _ = timed(lambda: run_site(road), repeat=1)
    n = fixed.window.count * len(fixed.fleet)
    print(f"window: 24 h at 15 s, {len(fixed.fleet)} satellites ({n:,} satellite-samples)")
    print(f"fixed-site run_site            : {t_fixed:7.2f} s")
    print(f"uniform headings (camper demo) : {t_uni:7.2f} s   ratio {t_uni / t_fixed:4.2f}x  (target <= 3x)")
    print(f"24 h route (sloop demo, 244 km): {t_route:7.2f} s   ratio {t_route / t_fixed:4.2f}x  (target <= 3x)")
    print(f"24 h route at 80 km/h (1,920 km): {t_road:6.2f} s   ratio {t_road / t_fixed:4.2f}x  (one run)")
    # The alternative: one fixed point's tracks for the whole route.
    r = sloop.platform.route
    obs = Observer(r.latitude_deg[0], r.longitude_deg[0], sloop.mount.height_m)
    moving = route.platform
    at_start = compute_tracks(route.fleet, obs, route.window, replace(sloop.terminal, scan_half_angle_deg=None))
    from survey.platform.moving import platform_tracks

    exact = platform_tracks(route.fleet, sloop, route.window)
    key = lambda t: t.time_index.astype(np.int64) * len(route.fleet) + t.sat  # noqa: E731
    a, b = key(exact), key(at_start)
    common, ia, ib = np.intersect1d(a, b, return_indices=True)
    d_el = np.abs(exact.el_deg[ia].astype(float) - at_start.el_deg[ib])
    last = exact.time_index[ia] > route.window.count - 240  # the last hour, far from the start point
    print(f"route tracks from the start point's fixed tracks: {np.setxor1d(a, b).size:,} of {a.size:,} samples "
          f"differ in visibility; |d el| median {np.median(d_el):.2f} deg, last hour max {d_el[last].max():.2f} deg")
    print(f"  -> so the route run uses tracks {moving.tracks_method}")
    print(f"  headline: camper blocked {uni.assessment.blocked_fraction:.4f}; sloop blocked "
          f"{route.assessment.blocked_fraction:.4f}, interruption {route.assessment.interruption:.4f}")


if __name__ == "__main__":
    main()
