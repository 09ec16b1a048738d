"""Benchmark: ``leosite batch`` against one ``leosite assess`` per site.

Prints, from one run on this machine (README, "Batch runs", figures there):
  - the whole ``leosite batch`` command (start-up included) on N invented sites
    (default 1,000; default shells, 24 h at 30 s, ``--workers 2``): target
    under 60 s;
  - one ``leosite assess --json`` process per site, timed on a sample of sites
    and scaled to N, and the ratio (target >= 10x);
  - the split inside: the shared propagation (once per window) against the
    per-site work (tracks cut from the shared sky, then the mask, the
    scheduling model and the figures), per site and in sites per second;
  - with ``--cluster``: the same batch on a Dask LocalCluster of two worker
    processes, to show what the cluster costs over local processes;
  - a projection to 10,000 and 100,000 sites from the measured split.

Usage: python bench/bench_batch.py [--sites 1000] [--sample 8] [--workers 2] [--cluster]
"""

from __future__ import annotations

import argparse
import os
import platform
import random
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from survey.batch.inputs import read_sites_csv  # noqa: E402
from survey.batch.sky import SharedTracks, propagate  # noqa: E402
from survey.pipeline import FleetChoice, run_site  # noqa: E402
from survey.window import resolve_window  # noqa: E402

WINDOW = ["--start", "2026-06-01T00:00:00Z", "--hours", "24", "--step", "30"]
HEADER = "id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
LEOSITE = [sys.executable, "-c", "import sys; from tui.launch import main; sys.exit(main())"]


def invented_sites(n: int, seed: int = 16) -> str:
    """N invented sites between 60 S and 60 N, each with eight horizon readings
    (a bench's data, not real places)."""
    rng = random.Random(seed)
    rows = []
    for i in range(n):
        pts = ";".join(f"{az:.0f}:{rng.uniform(0, 45):.0f}" for az in range(0, 360, 45))
        rows.append(f"site-{i:06d},{rng.uniform(-60, 60):.5f},{rng.uniform(-180, 180):.5f},"
                    f"{rng.uniform(0, 800):.0f},{rng.choice((3, 5, 6.5, 9)):g},25,"
                    f"{rng.choice(('true', 'magnetic'))},{pts}")
    return HEADER + "\n".join(rows) + "\n"


def timed(cmd) -> tuple[float, str]:
    t0 = time.perf_counter()
    done = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
    took = time.perf_counter() - t0
    if done.returncode not in (0, 3):
        sys.exit(f"{' '.join(cmd[3:])}: exit {done.returncode}\n{done.stderr}")
    return took, done.stderr


def split_in_process(csv_path: Path, sample: int) -> tuple[float, float, float]:
    """(shared propagation s, per-site s of which tracks s) in this process, one core."""
    rows = read_sites_csv(csv_path)[:sample * 8]
    source = FleetChoice().as_embedded()
    window = resolve_window(rows[0].site, *(_window()))
    fleet = FleetChoice(embedded=source).load(window.start)
    t0 = time.perf_counter()
    sky = propagate(fleet, window, source)
    shared = time.perf_counter() - t0
    cache = SharedTracks({window: sky}, source)
    t0 = time.perf_counter()
    for r in rows:
        sky.tracks(*_observer_terminal(r.site))
    tracks = (time.perf_counter() - t0) / len(rows)
    t0 = time.perf_counter()
    for r in rows:
        run_site(r.site, FleetChoice(embedded=source), *(_window()), cache=cache)
    per_site = (time.perf_counter() - t0) / len(rows)
    return shared, per_site, tracks


def _window():
    from datetime import datetime, timezone

    return datetime(2026, 6, 1, tzinfo=timezone.utc), 24.0, 30.0


def _observer_terminal(site):
    from survey.pipeline import site_observer

    return site_observer(site), site.terminal


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--sites", type=int, default=1000)
    p.add_argument("--sample", type=int, default=8, help="sites timed as one assess process each")
    p.add_argument("--workers", type=int, default=2)
    p.add_argument("--cluster", action="store_true", help="also run the batch on a Dask LocalCluster")
    args = p.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        sites = tmp / "sites.csv"
        sites.write_text(invented_sites(args.sites), "utf-8")
        took, err = timed(LEOSITE + ["batch", str(sites), "--out", str(tmp / "r.csv"), "--workers",
                                     str(args.workers), *WINDOW])
        prop = float(re.search(r"once for [\d,]+ sites in ([\d.]+) s", err).group(1))
        import resource

        peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
        rate = args.sites / took
        print(f"leosite batch, {args.sites:,} sites, --workers {args.workers} (proc): {took:8.2f} s   "
              f"{rate:6.1f} sites/s  (target < 60 s for 1,000)")
        print(f"  of which the shared propagation         : {prop:8.2f} s (once for the window)")
        print(f"  peak memory of one process of it        : {peak_mb:8.0f} MB")
        # One assess per site, on a sample of the same sites written as site files.
        rows = read_sites_csv(sites)[:args.sample]
        per = []
        for r in rows:
            path = tmp / f"{r.id}.toml"
            cells = r.source
            pts = [[float(x) for x in pair.split(":")] for pair in cells["horizon"].split(";")]
            path.write_text(f'[site]\nname = "{r.id}"\nlatitude = {cells["latitude"]}\nlongitude = '
                            f'{cells["longitude"]}\nelevation_m = {cells["elevation_m"]}\n[mount]\nheight_m = '
                            f'{cells["height_m"]}\n[terminal]\nmin_elevation_deg = {cells["min_elevation_deg"]}\n'
                            f'[horizon]\nreference = "{cells["reference"]}"\npoints = {pts}\n', "utf-8")
            per.append(timed(LEOSITE + ["assess", str(path), "--json", *WINDOW])[0])
        one = sum(per) / len(per)
        scaled = one * args.sites
        print(f"leosite assess per site (proc, {len(per)} timed)   : {one:8.2f} s each, {scaled:8.1f} s for "
              f"{args.sites:,} (scaled)   ratio {scaled / took:5.1f}x (target >= 10x)")
        shared, per_site, tracks = split_in_process(sites, args.sample)
        print(f"in one process: shared propagation        : {shared:8.2f} s")
        print(f"                per site                  : {per_site * 1e3:8.1f} ms ({1 / per_site:5.1f} sites/s "
              f"a core); tracks cut from the shared sky {tracks * 1e3:.1f} ms, the rest (declination, mask, "
              "scheduling model, figures) "
              f"{(per_site - tracks) * 1e3:.1f} ms")
        overhead = took - prop - args.sites * per_site / args.workers
        print(f"  start-up, reading, CSV and pool (rest)  : {overhead:8.2f} s")
        for n in (n for n in (10_000, 100_000) if n > args.sites):
            est = prop + overhead + n * per_site / args.workers
            print(f"projected {n:>7,} sites, {args.workers} cores          : {est:8.1f} s "
                  f"({est / 60:.1f} min; the shared part stays {prop:.1f} s)")
        if args.cluster:
            from distributed import LocalCluster

            with LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=True,
                              dashboard_address=None) as cluster:
                ctook, _ = timed(LEOSITE + ["batch", str(sites), "--out", str(tmp / "c.csv"), "--scheduler",
                                            cluster.scheduler_address, *WINDOW])
            same = (tmp / "c.csv").read_bytes() == (tmp / "r.csv").read_bytes()
            print(f"on a Dask LocalCluster, {args.workers} workers (proc)   : {ctook:8.2f} s   "
                  f"(+{ctook - took:.2f} s over local processes; same CSV: {same})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
