"""``leosite terrain SITE [--json] [--plot PNG]``: the terrain horizon at a
site from its ``[terrain]`` elevation model (README, "Terrain horizons").
Nothing is propagated."""

from __future__ import annotations

import json
from pathlib import Path

from ..cli import Command


def _add_arguments(p) -> None:
    p.add_argument("site", metavar="SITE", help="site file (site.toml) with a [terrain] table")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--plot", metavar="PNG", type=Path,
                   help="write the terrain horizon as a panorama, the measured horizon over it (PNG)")


def _run(args) -> int:
    from ..errors import InputError, Problems
    from ..fileio import atomic_write_bytes
    from ..site import load_site
    from . import ground_warning, site_terrain

    problems = Problems("command line")
    plot = args.plot
    if plot is not None:
        folder = plot.parent if str(plot.parent) else Path(".")
        if plot.suffix.lower() != ".png":
            problems.add("--plot", f"{plot}: expected a .png file name")
        elif not folder.is_dir():
            problems.add("--plot", f"{plot}: folder {plot.parent} does not exist")
    problems.raise_if_any()
    site = load_site(args.site)
    if site.terrain is None:
        raise InputError(f"{site.path}: terrain: missing: add a [terrain] table with dem = \"...\" (an SRTM .hgt "
                         "or GeoTIFF file, or a folder of tiles)")
    th = site_terrain(site)
    warnings = list(th.warnings) + ground_warning(site, th)
    if plot is not None:
        from ..figures import terrain_panorama_png
        from ..mask import measured_mask, site_declination

        dec = site_declination(site).declination_deg if site.horizon.reference == "magnetic" else 0.0
        atomic_write_bytes(plot, terrain_panorama_png(site, th, measured_mask(site.horizon, dec)))
    if args.json:
        out = th.as_dict()
        out["warnings"] = warnings
        print(json.dumps(out))
        return 0
    print(format_terrain(site, th, warnings))
    if plot is not None:
        print(f"\n  panorama written to {plot}")
    return 0


def format_terrain(site, th, warnings) -> str:
    """The terrain horizon for an 80-column terminal: where it comes from, the
    highest point, and the horizon every 10 degrees."""
    import math
    import textwrap

    import numpy as np

    el = np.nan_to_num(th.elevation_deg, nan=-90.0)
    k = int(np.argmax(el))
    me = site.terminal.min_elevation_deg
    above = int(np.count_nonzero(el > me))
    lines = [f"{site.name}: terrain horizon from {th.source}",
             f"  model       {th.resolution}, to {th.max_distance_m / 1000:g} km "
             f"(curvature and refraction k = 0.13 applied)",
             f"  ground      {th.ground_m:.1f} m (the model's), antenna {th.eye_m - th.ground_m:g} m above it",
             f"  highest     {el[k]:.1f}° at {k}°, {th.distance_m[k] / 1000:.2f} km away",
             f"  above the minimum elevation {me:g}°: {above} of 360 degrees of azimuth",
             "", "  azimuth  elevation  distance (true azimuths)"]
    for row in range(0, 360, 30):
        cells = []
        for a in range(row, row + 30, 10):
            d = th.distance_m[a]
            cells.append(f"{a:3d}° {th.elevation_deg[a]:5.1f}° {d / 1000:5.1f} km" if math.isfinite(d)
                         else f"{a:3d}°    --        ")
        lines.append("  " + "   ".join(cells))
    if warnings:
        lines += ["", "  warnings"]
        for w in warnings:
            lines += textwrap.wrap(w, 80, initial_indent="    - ", subsequent_indent="      ")
    return "\n".join(lines)


COMMAND = Command(
    name="terrain",
    help="the terrain horizon at the site from its elevation model ([terrain])",
    description="Compute the terrain horizon at a site from the [terrain] elevation model (SRTM .hgt or "
                "GeoTIFF): per degree of true azimuth the highest elevation angle of the terrain, with the "
                "antenna height, Earth curvature and refraction (k = 0.13).",
    add_arguments=_add_arguments,
    run=_run,
)
