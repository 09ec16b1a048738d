"""Benchmark: leosite's sky tracks against a plain per-satellite skyfield loop.

Prints, from one run on this machine:
  - the plain loop ``(sat - site).at(t).altaz()`` over every satellite (reference),
  - ``compute_tracks`` (engine only) and the ratio (target >= 25x),
  - the whole ``leosite assess --json`` process and the ratio (target >= 20x),
    with its peak resident memory (target < 400 MB),
  - agreement with the reference (same visible samples; max az/el difference),
  - re-assessment after a horizon edit with tracks cached (target < 0.2 s).

Usage: python bench/bench_tracks.py [--site demo_sites/alder-brook-farm/site.toml]
"""

from __future__ import annotations

import argparse
import json
import platform
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from survey.assess import assess  # noqa: E402
from survey.horizon import HorizonMask, HorizonPoint  # noqa: E402
from survey.pipeline import FleetChoice, site_observer  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.tracks import compute_tracks  # noqa: E402
from survey.window import resolve_window  # noqa: E402


def skyfield_loop(fleet, site, window):
    """The plain reference: one skyfield call per satellite over all sample times."""
    from skyfield.api import EarthSatellite, load, wgs84

    ts = load.timescale(builtin=True)
    s = window.start
    t = ts.utc(s.year, s.month, s.day, s.hour, s.minute, s.second + np.arange(window.count) * window.step_s)
    topos = wgs84.latlon(site.latitude_deg, site.longitude_deg, elevation_m=site.antenna_height_m)
    out = []
    for i, sat in enumerate(fleet.satrecs):
        alt, az, _ = (EarthSatellite.from_satrec(sat, ts) - topos).at(t).altaz()
        keep = np.flatnonzero(alt.degrees >= site.terminal.min_elevation_deg)
        out.append((i, keep, alt.degrees[keep], az.degrees[keep]))
    return out


def peak_memory_mb(site: str) -> float:
    """Peak resident memory of one ``leosite assess --json`` process, read from
    its own /proc/self/status (VmHWM) at exit.  (getrusage of a child would also
    count the benchmark's own memory, inherited by fork before exec.)"""
    probe = ("import atexit, runpy, sys\n"
             "def hwm():\n"
             "    for line in open('/proc/self/status'):\n"
             "        if line.startswith('VmHWM:'):\n"
             "            sys.stderr.write('\\n' + line)\n"
             "atexit.register(hwm)\n"
             f"sys.argv = ['leosite', 'assess', {site!r}, '--json']\n"
             "runpy.run_module('survey.cli', run_name='__main__')\n")
    proc = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, cwd=ROOT)
    for line in proc.stderr.splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024.0
    return float("nan")


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--site", default=str(ROOT / "demo_sites/alder-brook-farm/site.toml"))
    args = ap.parse_args()
    site = load_site(args.site)
    window = resolve_window(site)
    fleet = FleetChoice().load(window.start)
    print(f"machine: {platform.machine()}, {platform.processor() or 'cpu'}, "
          f"{__import__('os').cpu_count()} cores, Python {platform.python_version()}, numpy {np.__version__}")
    print(f"site: {site.name}; {len(fleet)} satellites; {window.hours:g} h at {window.step_s:g} s "
          f"({window.count} samples each, {len(fleet) * window.count:,} in all)")

    # Warm-up: imports and first-touch costs are not the engine's (they are in
    # the whole-process figure below).
    compute_tracks(fleet, site_observer(site), window, site.terminal)
    t0 = time.perf_counter()
    tracks = compute_tracks(fleet, site_observer(site), window, site.terminal)
    t_engine = time.perf_counter() - t0

    t0 = time.perf_counter()
    ref = skyfield_loop(fleet, site, window)
    t_ref = time.perf_counter() - t0

    # Agreement, sample by sample.
    max_del = max_daz = 0.0
    mismatched = 0
    for i, keep, alt, az in ref:
        m = tracks.sat == i
        mine_t = tracks.time_index[m]
        if not np.array_equal(np.sort(mine_t), keep):
            mismatched += len(set(mine_t.tolist()) ^ set(keep.tolist()))
            continue
        if keep.size:
            order = np.argsort(mine_t)
            max_del = max(max_del, float(np.abs(tracks.el_deg[m][order] - alt).max()))
            max_daz = max(max_daz, float(np.abs((tracks.az_deg[m][order] - az + 180) % 360 - 180).max()))

    cmd = [sys.executable, "-m", "survey.cli", "assess", args.site, "--json"]
    # The whole process, start to exit: the best of three runs (the first one
    # also pays for a cold file cache).
    runs = []
    for _ in range(3):
        t0 = time.perf_counter()
        proc = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT)
        runs.append(time.perf_counter() - t0)
        if proc.returncode != 0:
            print(proc.stderr)
            return 1
        json.loads(proc.stdout)
    t_cli = min(runs)
    peak_mb = peak_memory_mb(args.site)

    mask = HorizonMask.from_points([HorizonPoint(a, 20.0 + 15.0 * np.sin(np.radians(a) * 3)) for a in range(0, 360, 10)])
    t0 = time.perf_counter()
    reps = 20
    for _ in range(reps):
        assess(tracks, mask, site.criteria, site.schedule)
    t_reassess = (time.perf_counter() - t0) / reps

    print(f"skyfield per-satellite loop : {t_ref:8.2f} s")
    print(f"compute_tracks (engine)     : {t_engine:8.2f} s   ratio {t_ref / t_engine:6.1f}x  (target >= 25x)")
    print(f"leosite assess --json (proc): {t_cli:8.2f} s   ratio {t_ref / t_cli:6.1f}x  (target >= 20x; "
          f"runs {', '.join(f'{x:.2f}' for x in runs)} s)")
    print(f"peak memory of that process : {peak_mb:8.0f} MB  (target < 400 MB)")
    print(f"SGP4 evaluations            : {tracks.propagated:,} of {len(fleet) * window.count:,} "
          f"({100 * tracks.propagated / (len(fleet) * window.count):.1f} %), {len(tracks):,} visible samples")
    print(f"agreement with skyfield     : {mismatched} samples differ in visibility; "
          f"max |d el| {max_del:.2e} deg, max |d az| {max_daz:.2e} deg (target 0.01)")
    print(f"re-assess after mask edit   : {1000 * t_reassess:8.1f} ms (target < 200 ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
