"""Benchmark: spot search over 1,000 candidate points (target: a few seconds).

One run on this machine, Alder Brook demo site, the default (illustrative) fleet
and the site's own window (24 h at 15 s).  The demo plan's candidates plus a
bench-only yard grid make about 1,000 points.  Prints:
  - the site run (tracks computed once, at the site point) for context,
  - rank_spots end to end over the candidates, and candidates per second,
  - its parts: the evaluator set-up (the run's mask-free scheduling assignment reused), the derived horizons of all
    candidates (vectorised), and the re-masking of the cached tracks,
  - the plain way for comparison: assess.assess with each candidate's mask
    (timed on a sample of candidates, scaled to all of them).

Usage: python bench/bench_spots.py [--site demo_sites/alder-brook-farm/site.toml]
"""

from __future__ import annotations

import argparse
import platform
import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from survey.assess import assess  # noqa: E402
from survey.pipeline import run_site  # noqa: E402
from survey.plan import Area  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.spots import SpotEvaluator, candidate_points, rank_spots  # noqa: E402

# 14 m x 14 m of yard north of the house at 0.5 m: 28 x 28 = 784 points.
YARD = Area("bench yard grid", ((4.0, 4.0), (18.0, 4.0), (18.0, 18.0), (4.0, 18.0)), 4.0)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--site", default=str(ROOT / "demo_sites/alder-brook-farm/site.toml"))
    args = ap.parse_args()
    site = load_site(args.site)
    t0 = time.perf_counter()
    run = run_site(site)
    t_run = time.perf_counter() - t0
    plan = replace(site.plan, areas=site.plan.areas + (YARD,))
    cands = candidate_points(plan)
    n = len(cands)

    t0 = time.perf_counter()
    ranking = rank_spots(run, plan=plan)
    t_rank = time.perf_counter() - t0

    t0 = time.perf_counter()
    ev = SpotEvaluator(run, plan)
    t_setup = time.perf_counter() - t0
    e = np.array([c.east_m for c in cands])
    nn = np.array([c.north_m for c in cands])
    z = np.array([c.height_m for c in cands])
    t0 = time.perf_counter()
    masks = ev.masks(e, nn, z)
    t_horizons = time.perf_counter() - t0
    t0 = time.perf_counter()
    for m in masks:
        ev.figures_for_mask(m)
    t_mask = time.perf_counter() - t0
    distinct = len(ev._cache)

    sample = list(range(0, n, max(1, n // 40)))
    t0 = time.perf_counter()
    for i in sample:
        assess(run.tracks, ev.mask_for(e[i], nn[i], z[i]), site.criteria, site.schedule)
    t_plain = (time.perf_counter() - t0) / len(sample) * n

    print(f"machine: {platform.machine()}, {platform.python_version()}, numpy {np.__version__}")
    print(f"site {site.name!r}: {len(run.fleet):,} satellites, {run.window.hours:g} h at {run.window.step_s:g} s, "
          f"{len(run.tracks):,} usable samples")
    print(f"site run (tracks, once)     : {t_run:8.2f} s")
    print(f"rank_spots, {n:,} candidates : {t_rank:8.2f} s   {n / t_rank:,.0f} candidates/s  (target: a few seconds)")
    print(f"  evaluator set-up          : {t_setup * 1e3:8.1f} ms (the run's scheduling assignment reused)")
    print(f"  derived horizons          : {t_horizons * 1e3:8.1f} ms ({t_horizons / n * 1e6:.0f} us each, vectorised)")
    print(f"  re-masking the tracks     : {t_mask * 1e3:8.1f} ms ({t_mask / n * 1e3:.2f} ms each; "
          f"{distinct:,} distinct masks)")
    print(f"plain assess() per candidate: {t_plain:8.2f} s   ratio {t_plain / t_rank:5.1f}x "
          f"(estimated from {len(sample)} candidates)")
    b = ranking.best
    print(f"best: {b.candidate.name} at ({b.candidate.east_m:.2f}, {b.candidate.north_m:.2f}) m, "
          f"{b.candidate.height_m:g} m: blocked {b.blocked_fraction:.2%}, interruption {b.interruption:.2%}")


if __name__ == "__main__":
    main()
